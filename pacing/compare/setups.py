"""Setups side by side on one course: finish times and where time is won or lost.

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

What each setup may give away before it stops paying is in pacing.compare.break_even; a plan
that changes position by segment in pacing.compare.mixed.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4 (scipy brentq).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, cast

import numpy as np

from pacing.errors import InputError
from pacing.notices import Notice
from pacing.physics.cycling import Rider
from pacing.plan.cycling import RacePlan
from pacing.plan.prediction import Prediction
from pacing.plan.race import RaceRequest, RaceResult, plan_race_in_air
from pacing.plan.request import PlanRequest
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
