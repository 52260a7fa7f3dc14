"""Why the race took longer or shorter than planned: the difference split among its causes.

The model (pacing.plan.simulate, Martin et al. 1998 with inertia) is replayed with the plan's
inputs replaced, cause by cause, by what happened on the day:

========  =================================================================================
power     the plan's power on each piece → the rider's mean power while moving on it
drag      the planned CdA → the day's (fitted) CdA
rolling   the planned Crr → the day's (fitted) Crr
wind      the planned air and wind → the day's (given or estimated)
stops     none → the day's stops and braking: the replay slows down to the lowest speed of each
          braking stretch and to a standstill at each stop, where the day did (speed limits at
          those course points, met with the model's braking as a corner's limit), and the time
          stationary is added to its finish time
========  =================================================================================

v(S) is the replayed finish time with the causes of S switched to the day's. The part of cause
i is its Shapley value, the mean over all orders of taking the causes of what switching i adds:

    φ_i = Σ_{S ⊆ C∖{i}} |S|!·(n − |S| − 1)!/n! · (v(S ∪ {i}) − v(S))

which does not depend on an order, and whose parts add up to v(C) − v(∅) (efficiency). What
the model with every cause switched still misses is "other" = actual − planned − Σ φ_i,
computed as that remainder so that the parts add up to the total difference exactly (to the
last bit of the subtraction). With n = 5 causes v is needed on 2⁵ = 32 sets: 32 simulations.

References
----------
Shapley, L.S. (1953). A value for n-person games. In Kuhn & Tucker (eds.), Contributions to
the Theory of Games II, Annals of Mathematics Studies 28, 307-317. doi:10.1515/9781400881970-018
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import Course
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.weather.conditions import CourseAir

CAUSES = ("power", "drag", "rolling", "wind", "stops")
"""The causes of a time difference, in the order of the JSON keys (`<cause>_s`)."""


@dataclass(frozen=True)
class Attribution:
    """The difference actual − planned finish time split by cause [s] (positive: slower).

    Attributes
    ----------
    power_s, drag_s, rolling_s, wind_s, stops_s : float
        Shapley value of each cause [s].
    other_s : float
        What the model with every cause switched still misses [s].
    total_s : float
        actual − planned finish time [s]; the parts add up to it.
    stopped_s : float
        Time stationary [s] (part of stops_s; the rest is slowing down and starting again).
    replays : tuple of (tuple of str, float)
        Each set of causes switched and its replayed finish time [s].
    """

    power_s: float
    drag_s: float
    rolling_s: float
    wind_s: float
    stops_s: float
    other_s: float
    total_s: float
    stopped_s: float = 0.0
    replays: tuple[tuple[tuple[str, ...], float], ...] = ()

    def parts(self) -> dict[str, float]:
        """The six parts by JSON key (`power_s` … `other_s`) [s]."""
        return {f"{cause}_s": getattr(self, f"{cause}_s") for cause in (*CAUSES, "other")}


def shapley_values(value: Callable[[frozenset[str]], float],
                   players: Sequence[str]) -> dict[str, float]:
    """Shapley value of each player of a cooperative game given by its value function.

    Parameters
    ----------
    value : callable
        v(S) for a frozenset S of players (called once per subset: 2ⁿ calls).
    players : sequence of str
        The players, distinct.

    Returns
    -------
    dict
        φ_i for each player; Σ φ_i = v(all) − v(∅).

    References
    ----------
    Shapley (1953), Contributions to the Theory of Games II, 307-317.

    Examples
    --------
    Two causes that only act together share their effect equally:

    >>> shapley_values(lambda s: 10.0 if len(s) == 2 else 0.0, ["a", "b"])
    {'a': 5.0, 'b': 5.0}
    """
    n = len(players)
    cache = {frozenset(s): value(frozenset(s))
             for size in range(n + 1) for s in itertools.combinations(players, size)}
    values = {}
    for player in players:
        others = [p for p in players if p != player]
        total = 0.0
        for size in range(n):
            weight = math.factorial(size) * math.factorial(n - size - 1) / math.factorial(n)
            for subset in itertools.combinations(others, size):
                s = frozenset(subset)
                total += weight * (cache[s | {player}] - cache[s])
        values[player] = total
    return values


@dataclass(frozen=True, eq=False)
class Replay:
    """The plan's and the day's inputs of the model (see the module docstring).

    Attributes
    ----------
    course : pacing.course.geometry.Course
        The planned course.
    stops_course : pacing.course.geometry.Course
        The course with the day's braking and stops as speed limits (`with_slow_points`).
    options : pacing.plan.prediction.SimulationOptions
    rider : pacing.physics.cycling.Rider
        The planned rider.
    plan_power, day_power : numpy.ndarray
        Power on each piece, planned and ridden [W].
    day_drag_area : float
        The day's CdA [m²] (the planned one when unknown).
    day_rolling_coefficient : float
        The day's Crr [-] (the planned one when unknown).
    plan_air, day_air : pacing.weather.conditions.CourseAir
        Planned air and the day's.
    stopped_time : float
        Time stationary [s].
    """

    course: Course
    stops_course: Course
    options: SimulationOptions
    rider: Rider
    plan_power: np.ndarray
    day_power: np.ndarray
    day_drag_area: float
    day_rolling_coefficient: float
    plan_air: CourseAir
    day_air: CourseAir
    stopped_time: float

    def finish_time(self, switched: frozenset[str]) -> float:
        """v(S): the model's finish time with the causes of `switched` taken from the day [s]."""
        rider = self.rider
        if "drag" in switched:
            rider = dataclasses.replace(rider, drag_area=self.day_drag_area)
        if "rolling" in switched:
            rider = dataclasses.replace(rider, rolling_coefficient=self.day_rolling_coefficient)
        power = self.day_power if "power" in switched else self.plan_power
        air = self.day_air if "wind" in switched else self.plan_air
        if "stops" in switched:
            ride = simulate(self.stops_course, power, rider, air, self.options)
            return ride.finish_time + self.stopped_time
        return simulate(self.course, power, rider, air, self.options).finish_time


def with_slow_points(course: Course, distance: np.ndarray, speed: np.ndarray,
                     options: SimulationOptions) -> Course:
    """The course with a speed limit at given course distances: the corner radius of the
    nearest point lowered to v²/a_lat, so the simulation's speed cap √(a_lat·R) is v there
    (pacing.plan.prediction.speed_limits; a stop's 0 becomes its least speed, 0.1 m/s).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course.
    distance : numpy.ndarray
        Course distances of the limits [m].
    speed : numpy.ndarray
        The limits [m/s].
    options : pacing.plan.prediction.SimulationOptions
        Its lateral_acceleration [m/s²].

    Returns
    -------
    pacing.course.geometry.Course
        A copy with the lowered corner radii.
    """
    radius = np.array(course.corner_radius, dtype=float)
    if np.size(distance):
        index = np.clip(np.searchsorted(course.distance, distance), 0, radius.size - 1)
        np.minimum.at(radius, index, np.asarray(speed) ** 2 / options.lateral_acceleration)
    return dataclasses.replace(course, corner_radius=radius)


def attribute(replay: Replay, planned_time: float, actual_time: float) -> Attribution:
    """Split actual − planned finish time by cause (module docstring).

    Parameters
    ----------
    replay : Replay
        The plan's and the day's inputs.
    planned_time : float
        The plan's finish time [s].
    actual_time : float
        The ridden finish time [s].

    Returns
    -------
    Attribution
        The parts, adding up to actual_time − planned_time.
    """
    cache: dict[frozenset[str], float] = {}

    def value(switched: frozenset[str]) -> float:
        cache[switched] = replay.finish_time(switched)
        return cache[switched]

    phi = shapley_values(value, CAUSES)
    total = actual_time - planned_time
    explained = sum(phi[c] for c in CAUSES)
    other = total - explained
    replays = tuple((tuple(c for c in CAUSES if c in s), t)
                    for s, t in sorted(cache.items(), key=lambda item: len(item[0])))
    return Attribution(**{f"{c}_s": float(phi[c]) for c in CAUSES}, other_s=float(other),
                       total_s=float(total), stopped_s=float(replay.stopped_time),
                       replays=replays)
