"""Setups side by side on one course: finish times, where time is won or lost, break-even
figures, and a plan that changes position by segment.

Every setup (a riding position or a set of equipment) rides the SAME race request
(pacing.plan.race.RaceRequest) through the one planning chain (pacing.plan.race.plan_race_in_air,
one air shared by all): the request's rider is replaced by the setup's, and its power figures
(mean power, critical power, effort cap) are multiplied by the setup's power share, the share
of the athlete's power the position allows (e.g. 1.0 upright, 0.95 in a low aero position);
W′ is left as it is. Each plan is verified by the inertial simulation (pacing.plan.simulate),
so the times compared include accelerations, corner limits and braking, and each setup's result
carries the chain's notices (e.g. "w-prime-exhausted").

Sign convention everywhere in this module: a time difference is setup − baseline [s], so a
positive number means the setup is SLOWER than the baseline.

Break-even figures hold the setup's planned power profile (its shape; only a scale changes)
and find by root finding on the simulation (scipy.optimize.brentq) the power, drag area or
mass at which the setup's finish time equals the baseline's.

The mixed plan picks, for every segment, the position (among setups of the same bike: equal
in every rider parameter but the drag area) with the shortest steady-state segment time at its
planned power (pacing.plan.steady_model.steady_segment_times), then rides the whole course once
with the inertial simulation, the drag area and power given per piece, and reports whether the
mix is faster than every single position.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4 (scipy brentq).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass, fields, replace
from typing import TYPE_CHECKING, cast

import numpy as np
from scipy import optimize

from pacing.errors import InputError
from pacing.notices import Notice
from pacing.physics.cycling import Rider
from pacing.plan.cycling import RacePlan
from pacing.plan.prediction import Prediction
from pacing.plan.race import RaceRequest, RaceResult, plan_race_in_air
from pacing.plan.request import PlanRequest
from pacing.plan.simulate import simulate
from pacing.plan.steady_model import segment_model, steady_segment_times
from pacing.weather.conditions import CourseAir, air_along_course

if TYPE_CHECKING:
    from pacing.athlete import Athlete, Setup

MAX_SETUPS = 12
"""Most setups compared at once."""

COMPARE_STRATEGIES = ("constant", "fastest")
"""Strategies a comparison can use (a target time fixes the finish, so there is nothing to
compare)."""


@dataclass(frozen=True)
class RiderSetup:
    """One setup as the power balance sees it.

    Attributes
    ----------
    name : str
        Label shown to the user, unique within a comparison [-].
    rider : Rider
        pacing.physics.cycling.Rider: mass is rider + bike + kit [kg], drag_area [m²],
        rolling_coefficient [-], optional yaw_drag_table.
    power_share : float
        Share of the athlete's power this setup allows, 0.3..1.2 [-].

    Raises
    ------
    InputError
        Without a name, or with a power share out of range.
    """

    name: str
    rider: Rider
    power_share: float = 1.0

    def __post_init__(self) -> None:
        if not str(self.name).strip():
            raise InputError("a setup needs a name")
        if not (math.isfinite(self.power_share) and 0.3 <= self.power_share <= 1.2):
            raise InputError(f"setup {self.name!r}: power share must be 0.3-1.2, "
                             f"got {self.power_share:g}")


def from_athlete(athlete: Athlete, setups: Iterable[Setup]) -> list[RiderSetup]:
    """RiderSetups of an athlete on each of their setups.

    Parameters
    ----------
    athlete : pacing.athlete.Athlete
        The person (body mass [kg]).
    setups : iterable of pacing.athlete.Setup
        Bikes and positions (bike mass [kg], CdA [m²], power share [-], Crr [-]).

    Returns
    -------
    list of RiderSetup
        One per setup, named as the setup, mass = body mass + bike mass [kg].
    """
    from pacing.athlete import rider_for

    return [RiderSetup(setup.name, rider_for(athlete, setup), setup.power_share)
            for setup in setups]


@dataclass(frozen=True, eq=False)
class SetupResult:
    """One setup ridden through the planning chain with the comparison's strategy.

    Attributes
    ----------
    setup : RiderSetup
        The setup.
    race : RaceResult
        The chain's result for this setup (pacing.plan.race.RaceResult): its plan (power
        scaled by the power share), target rows and notices.
    finish_time : float
        Verified finish time [s].
    delta : float
        finish_time − the baseline's [s] (positive = slower).
    segment_time : np.ndarray
        Time on each segment [s], length K.
    segment_delta : np.ndarray
        segment_time − the baseline's [s], length K (positive = time lost).
    delta_along : np.ndarray
        Time at each point − the baseline's time at that point [s], length N: the cumulative
        gap along the course, for a plot (last value = delta).
    """

    setup: RiderSetup
    race: RaceResult
    finish_time: float
    delta: float
    segment_time: np.ndarray
    segment_delta: np.ndarray
    delta_along: np.ndarray

    @property
    def name(self) -> str:
        """The setup's name."""
        return self.setup.name

    @property
    def plan(self) -> RacePlan:
        """The verified cycling plan (pacing.plan.cycling.RacePlan)."""
        return cast(RacePlan, self.race.plan)  # compare_setups rides cycling requests only

    @property
    def prediction(self) -> Prediction:
        """The plan's inertial simulation (pacing.plan.prediction.Prediction)."""
        return self.plan.prediction

    @property
    def notices(self) -> tuple[Notice, ...]:
        """What the chain says of this setup's plan (e.g. "w-prime-exhausted")."""
        return self.race.notices

    @property
    def mean_power(self) -> float:
        """Time-weighted mean crank power of the verified ride [W]."""
        return float(self.prediction.average_power)


@dataclass(frozen=True, eq=False)
class Comparison:
    """Setups side by side.

    Attributes
    ----------
    results : tuple of SetupResult
        One per setup, in the order given.
    baseline : int
        Index of the baseline setup in `results` [-].
    bounds : np.ndarray
        Segment boundary point indices [-].
    distance : np.ndarray
        Course distance of each point [m], length N (x axis of delta_along).
    race : RaceRequest
        The request every setup rode (its rider and power at power share 1, before each
        setup's rider and power share replace them).
    air : CourseAir
        The air on every piece of the course, shared by every setup.
    """

    results: tuple[SetupResult, ...]
    baseline: int
    bounds: np.ndarray
    distance: np.ndarray
    race: RaceRequest
    air: CourseAir

    @property
    def strategy(self) -> str:
        """The strategy every setup rode ("constant" or "fastest")."""
        return self.race.strategy

    @property
    def baseline_result(self) -> SetupResult:
        """The result of the baseline setup."""
        return self.results[self.baseline]

    @property
    def fastest(self) -> SetupResult:
        """The setup with the shortest finish time."""
        return min(self.results, key=lambda result: result.finish_time)

    def result(self, name: str) -> SetupResult:
        """The result of the setup called `name`.

        Parameters
        ----------
        name : str
            A setup's name [-].

        Returns
        -------
        SetupResult

        Raises
        ------
        InputError
            When no setup has that name.
        """
        for result in self.results:
            if result.name == name:
                return result
        raise InputError(f"no setup called {name!r}; setups: "
                         f"{', '.join(r.name for r in self.results)}")


def setup_request(request: PlanRequest, power_share: float) -> PlanRequest:
    """The plan request with its power figures times power_share.

    Parameters
    ----------
    request : PlanRequest
        The request at power share 1 (mean power, critical power, effort cap [W]).
    power_share : float
        Share of the athlete's power the setup allows [-].

    Returns
    -------
    PlanRequest
        Mean power, critical power and effort-weighted cap scaled [W]; W′ and the rest kept.
    """
    def scaled(value: float | None) -> float | None:
        return None if value is None else float(value) * power_share

    return replace(request, mean_power=scaled(request.mean_power),
                   critical_power=scaled(request.critical_power),
                   effort_weighted_cap=scaled(request.effort_weighted_cap))


def setup_race(race: RaceRequest, setup: RiderSetup) -> RaceRequest:
    """The race request of one setup: its rider, and the power figures times its power share.

    Parameters
    ----------
    race : RaceRequest
        The comparison's request (power figures at power share 1 [W]).
    setup : RiderSetup
        The setup (rider, power share [-]).

    Returns
    -------
    RaceRequest
    """
    return replace(race, rider=setup.rider,
                   cycling=setup_request(race.cycling, setup.power_share))


def _check_setups(setups: Iterable[RiderSetup]) -> list[RiderSetup]:
    checked = list(setups)
    if not checked:
        raise InputError("give at least one setup to compare")
    if len(checked) > MAX_SETUPS:
        raise InputError(f"at most {MAX_SETUPS} setups can be compared, got {len(checked)}")
    names = [setup.name for setup in checked]
    repeated = sorted({name for name in names if names.count(name) > 1})
    if repeated:
        raise InputError(f"setup names must differ; repeated: {', '.join(repeated)}")
    return checked


def _check_race(race: RaceRequest) -> None:
    if not isinstance(race, RaceRequest):
        raise InputError("a comparison needs a RaceRequest (pacing.plan.race)")
    if race.sport != "cycling":
        raise InputError("setups are compared for cycling; this request is for "
                         f"{race.sport}")
    if race.strategy not in COMPARE_STRATEGIES:
        raise InputError(f"compare rides every setup with the same strategy: use "
                         f"{' or '.join(COMPARE_STRATEGIES)}, not {race.strategy!r}")


def _baseline_index(setups: Sequence[RiderSetup], baseline: str | int | None) -> int:
    if baseline is None:
        return 0
    if isinstance(baseline, int | np.integer):
        if not 0 <= baseline < len(setups):
            raise InputError(f"baseline index {baseline} is out of range")
        return int(baseline)
    for index, setup in enumerate(setups):
        if setup.name == baseline:
            return index
    raise InputError(f"baseline {baseline!r} is not one of the setups: "
                     f"{', '.join(s.name for s in setups)}")


def compare_setups(race: RaceRequest, setups: Iterable[RiderSetup],
                   baseline: str | int | None = None,
                   air: CourseAir | None = None) -> Comparison:
    """Ride every setup through the planning chain and compare them to a baseline.

    Parameters
    ----------
    race : RaceRequest
        The race: course (N points), bounds, conditions, strategy ("constant" or "fastest"),
        the plan request with its power figures for power share 1 [W], simulation options.
        Its rider is replaced by each setup's.
    setups : iterable of RiderSetup
        1..MAX_SETUPS setups with unique names.
    baseline : str, int or None
        Name or index of the baseline setup; None for the first [-].
    air : CourseAir or None
        The air on every piece of the course; None works it out from race.conditions
        (pacing.weather.conditions.air_along_course).

    Returns
    -------
    Comparison
        Differences are setup − baseline [s], positive = slower.

    Raises
    ------
    InputError
        For no setup, too many, repeated names, an unknown baseline, or a strategy other than
        "constant" and "fastest" (one line).

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276 (the
    power balance of every ride).
    """
    checked = _check_setups(setups)
    _check_race(race)
    base = _baseline_index(checked, baseline)
    if air is None:
        air = air_along_course(race.course, race.conditions)
    race = replace(race, bounds=np.asarray(race.bounds, dtype=int))
    rides = [plan_race_in_air(setup_race(race, setup), air) for setup in checked]
    return _side_by_side(race, air, checked, rides, base)


def _side_by_side(race: RaceRequest, air: CourseAir, setups: Sequence[RiderSetup],
                  rides: Sequence[RaceResult], base: int) -> Comparison:
    """Finish, segment and along-the-course differences of each ride to the baseline's."""
    bounds = np.asarray(race.bounds, dtype=int)
    times = [np.asarray(cast(RacePlan, ride.plan).prediction.time, dtype=np.float64)
             for ride in rides]
    base_time = times[base]
    base_finish = rides[base].finish_time
    results = []
    for setup, ride, time in zip(setups, rides, times, strict=True):
        segment_time = np.diff(time[bounds])
        results.append(SetupResult(
            setup=setup,
            race=ride,
            finish_time=ride.finish_time,
            delta=float(ride.finish_time - base_finish),
            segment_time=segment_time,
            segment_delta=segment_time - np.diff(base_time[bounds]),
            delta_along=time - base_time,
        ))
    return Comparison(results=tuple(results), baseline=base, bounds=bounds,
                      distance=np.asarray(race.course.distance, dtype=np.float64).copy(),
                      race=race, air=air)


# ------------------------------------------------------------------------ break-even

@dataclass(frozen=True)
class BreakEven:
    """What a setup may give away (or must gain) to tie with the baseline on this course.

    Each figure holds everything else of the setup (and its planned power profile) fixed.
    None where no value in the searched range ties.

    Attributes
    ----------
    name : str
        The setup's name [-].
    baseline : str
        The baseline's name [-].
    power : float or None
        The setup's time-weighted mean crank power at which it ties [W].
    power_margin : float or None
        Its mean power − `power` [W]: watts it may lose before it is no longer faster
        (negative: watts it must gain to catch up).
    drag_area : float or None
        The setup's CdA at which it ties [m²].
    drag_area_margin : float or None
        `drag_area` − its CdA [m²]: drag area it may add (negative: the CdA it must save,
        e.g. to pay for extra mass).
    mass : float or None
        The setup's total mass (rider + bike + kit) at which it ties [kg].
    mass_margin : float or None
        `mass` − its mass [kg]: mass it may add (negative: mass it must shed).
    """

    name: str
    baseline: str
    power: float | None
    power_margin: float | None
    drag_area: float | None
    drag_area_margin: float | None
    mass: float | None
    mass_margin: float | None


def _secant_step(x0: float, f0: float, x1: float, f1: float, tolerance: float) -> float:
    """The next step of the search for a root: a little past the secant estimate so the root
    gets bracketed, at most 8× the previous step so a flat stretch does not throw the search
    far away."""
    step = -f1 * (x1 - x0) / (f1 - f0) if f1 != f0 else x1 - x0
    limit = 8.0 * abs(x1 - x0)
    return math.copysign(min(max(abs(step) * 1.05, tolerance * 10.0), limit), step)


def _tie(function: Callable[[float], float], start: float, low: float, high: float,
         tolerance: float) -> float | None:
    """Root of a monotone function in [low, high] near `start`; None if none there.

    Secant steps from start (they converge in a few simulations on these smooth responses);
    once a sign change is seen, brentq finishes inside that bracket. Each step goes a little
    past the secant estimate and at most 8× the previous step, clipped to [low, high].

    Parameters
    ----------
    function : callable
        f(x) → gap [s]; its root is the tie.
    start : float
        First guess (the setup's own value) [unit of x].
    low : float
        Lowest x searched [unit of x].
    high : float
        Highest x searched [unit of x].
    tolerance : float
        Absolute tolerance of the root [unit of x].

    Returns
    -------
    float or None
        The root [unit of x], or None when no sign change is found in [low, high].

    References
    ----------
    Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4.
    """
    x0, f0 = start, function(start)
    if f0 == 0.0:
        return x0
    x1 = min(max(start * 1.01 if start else tolerance * 100.0, low), high)
    f1 = function(x1)
    for _ in range(30):
        if f1 == 0.0:
            return x1
        if (f1 > 0) != (f0 > 0):
            return float(optimize.brentq(function, min(x0, x1), max(x0, x1), xtol=tolerance))
        x2 = min(max(x1 + _secant_step(x0, f0, x1, f1, tolerance), low), high)
        if x2 == x1:
            return None
        x0, f0 = x1, f1
        x1, f1 = x2, function(x2)
    return None


def break_even(comparison: Comparison, result: SetupResult | str,
               baseline: SetupResult | None = None) -> BreakEven:
    """Break-even power, drag area and mass of a setup against a baseline (root finding on
    the inertial simulation; the setup's planned power profile is held, only scaled).

    Solves T(q) = T_baseline for q = the scale of the power profile, then CdA, then mass,
    with T the simulated finish time of the setup (pacing.plan.simulate.simulate) on the
    comparison's course, air and simulation options.

    Parameters
    ----------
    comparison : Comparison
        The comparison the setup belongs to.
    result : SetupResult or str
        The setup (or its name).
    baseline : SetupResult or None
        The setup to tie with; None for the comparison's baseline.

    Returns
    -------
    BreakEven
        Power [W], CdA [m²] and mass [kg] at which the setup ties, and their margins.

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276.
    Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4.
    """
    chosen = comparison.result(result) if isinstance(result, str) else result
    against = comparison.baseline_result if baseline is None else baseline
    course, air, options = comparison.race.course, comparison.air, comparison.race.options
    target = against.finish_time
    rider = chosen.setup.rider
    profile = np.asarray(chosen.plan.piece_power, dtype=np.float64)

    def gap(power_scale: float = 1.0, drag_area: float | None = None,
            mass: float | None = None) -> float:
        changed = rider
        if drag_area is not None:
            changed = replace(changed, drag_area=drag_area)
        if mass is not None:
            changed = replace(changed, mass=mass)
        ride = simulate(course, profile * power_scale, changed, air, options)
        return float(ride.finish_time - target)

    mean = chosen.mean_power
    scale = _tie(lambda s: gap(power_scale=s), 1.0, 0.2, 3.0, 1e-5)
    cda = _tie(lambda a: gap(drag_area=a), float(rider.drag_area), 0.02, 2.0, 1e-6)
    mass = _tie(lambda m: gap(mass=m), float(rider.mass), 20.0, 400.0, 1e-3)
    tie_power = None if scale is None else mean * scale
    return BreakEven(
        name=chosen.name,
        baseline=against.name,
        power=tie_power,
        power_margin=None if tie_power is None else mean - tie_power,
        drag_area=cda,
        drag_area_margin=None if cda is None else cda - float(rider.drag_area),
        mass=mass,
        mass_margin=None if mass is None else mass - float(rider.mass),
    )


# ------------------------------------------------------------------------ mixed positions

@dataclass(frozen=True, eq=False)
class MixedPlan:
    """A position chosen for every segment, verified by the inertial simulation.

    Attributes
    ----------
    names : tuple of str
        Setup name ridden on each segment, length K [-].
    choice : np.ndarray
        Index into `candidates` per segment, length K [-].
    candidates : tuple of str
        Names of the setups the choice was made among [-].
    piece_power : np.ndarray
        Crank power per piece [W], length N-1 (each segment at its setup's plan).
    prediction : Prediction
        The verified ride (pacing.plan.simulate.simulate with the chosen drag area per piece).
    finish_time : float
        Its finish time [s].
    best_single : str
        Name of the fastest single candidate [-].
    best_single_time : float
        Its finish time [s].
    gain : float
        best_single_time − finish_time [s] (positive: the mix is faster).
    """

    names: tuple[str, ...]
    choice: np.ndarray
    candidates: tuple[str, ...]
    piece_power: np.ndarray
    prediction: Prediction
    finish_time: float
    best_single: str
    best_single_time: float
    gain: float

    @property
    def faster(self) -> bool:
        """Whether the verified mix beats every single candidate."""
        return self.gain > 0


SWAPPABLE_FIELDS = tuple(field.name for field in fields(Rider) if field.name != "drag_area")
"""Rider parameters two setups must share to be swapped during a ride: everything but the
drag area (the same bike, tyres, wheels and yaw response; only the position changes)."""


def _same_value(name: str, mine: object, theirs: object) -> bool:
    """Whether one rider parameter is the same (per-piece values compared whole)."""
    if name != "yaw_drag_table":
        return bool(np.array_equal(np.asarray(mine, dtype=np.float64),
                                   np.asarray(theirs, dtype=np.float64)))
    if mine is None or theirs is None:
        return mine is None and theirs is None
    return bool(np.array_equal(np.asarray(sorted(cast(Iterable, mine)), dtype=np.float64),
                               np.asarray(sorted(cast(Iterable, theirs)), dtype=np.float64)))


def _same_bike(rider: Rider, other: Rider) -> bool:
    """Whether two riders differ at most in drag area."""
    return all(_same_value(name, getattr(rider, name), getattr(other, name))
               for name in SWAPPABLE_FIELDS)


def mix_candidates(comparison: Comparison) -> list[SetupResult]:
    """Setups that can be swapped during a ride.

    Parameters
    ----------
    comparison : Comparison
        Setups side by side.

    Returns
    -------
    list of SetupResult
        Those equal to the fastest setup in every rider parameter but the drag area
        (SWAPPABLE_FIELDS: positions on one bike).
    """
    best = comparison.fastest.setup.rider
    return [result for result in comparison.results if _same_bike(result.setup.rider, best)]


def _chosen_candidates(comparison: Comparison,
                       candidates: Iterable[str] | None) -> list[SetupResult]:
    if candidates is None:
        return mix_candidates(comparison)
    chosen = [comparison.result(name) for name in candidates]
    for result in chosen[1:]:
        if not _same_bike(result.setup.rider, chosen[0].setup.rider):
            raise InputError(f"setups {chosen[0].name!r} and {result.name!r} differ in more "
                             f"than CdA; only positions on one bike can be mixed")
    return chosen


def mixed_plan(comparison: Comparison,
               candidates: Iterable[str] | None = None) -> MixedPlan | None:
    """Choose the position per segment where it is faster, and verify the whole ride.

    For each segment k and candidate j the steady-state segment time t_kj at the candidate's
    planned segment power (pacing.plan.steady_model.steady_segment_times) is computed; segment
    k is ridden with argmin_j t_kj. The whole course is then ridden once by the inertial
    simulation with that setup's drag area and planned power on each piece (the candidates
    share every other rider parameter), so speed carries over segment ends and look-ahead
    braking sees the whole course.

    Parameters
    ----------
    comparison : Comparison
        Setups side by side (its course, air and simulation options are used).
    candidates : iterable of str or None
        Names of the setups to mix; None for `mix_candidates(comparison)`. Named setups must
        differ only in drag area (InputError otherwise).

    Returns
    -------
    MixedPlan or None
        None when fewer than two candidates are available.

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276.
    """
    chosen = _chosen_candidates(comparison, candidates)
    if len(chosen) < 2:
        return None
    course, air = comparison.race.course, comparison.air
    bounds = comparison.bounds
    times = np.vstack([
        steady_segment_times(segment_model(course, bounds, result.setup.rider, air),
                             result.plan.segment_power)[0]
        for result in chosen
    ])
    choice = np.argmin(times, axis=0)
    segment_of_piece = np.repeat(np.arange(bounds.size - 1), np.diff(bounds))
    pieces = np.arange(segment_of_piece.size)
    powers = np.vstack([result.plan.piece_power for result in chosen])
    piece_power = powers[choice[segment_of_piece], pieces]
    areas = np.vstack([np.broadcast_to(np.asarray(result.setup.rider.drag_area,
                                                  dtype=np.float64), pieces.shape)
                       for result in chosen])
    rider = replace(chosen[0].setup.rider, drag_area=areas[choice[segment_of_piece], pieces])
    prediction = simulate(course, piece_power, rider, air, comparison.race.options)
    best = min(chosen, key=lambda result: result.finish_time)
    return MixedPlan(
        names=tuple(chosen[j].name for j in choice),
        choice=choice,
        candidates=tuple(result.name for result in chosen),
        piece_power=piece_power,
        prediction=prediction,
        finish_time=prediction.finish_time,
        best_single=best.name,
        best_single_time=best.finish_time,
        gain=best.finish_time - prediction.finish_time,
    )
