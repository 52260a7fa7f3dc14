"""The one planning chain, for both sports: a RaceRequest in, a RaceResult out.

The app, the command line, the setup comparison and the library's "work it out again" all call
`plan_race`; nobody wires course → air → athlete → plan on the side. The chain:

1. the air on every piece of the course from the day's conditions
   (pacing.weather.conditions.air_along_course);
2. the plan of the strategy the request names, from the registry (pacing.plan.strategies):
   for cycling a verified RacePlan (pacing.plan.cycling.make_plan), for running a RunningPlan
   (pacing.plan.running);
3. the segment target rows (pacing.plan.targets.SegmentTarget);
4. the notices: what the user must be told beside the numbers (pacing.notices), made here once
   so the page, the terminal and every export say the same — the course's own first (gaps,
   missing or constant elevations, what cleaning removed), then the plan's.

Every plan goes through the race day (pacing.plan.race_day; a request without a `RaceDay`
gets the default one): heat (WBGT) and altitude lower the athlete's limits relative to where
they were measured (20 °C, 50 %, sea level unless said). With a weather table through the
race it is solved to a fixed point: plan → passing times → weather at each piece → air →
plan …, until the finish time moves less than 0.1 s; one weather all day is one pass.
`plan_race_in_air` is the bare chain (the athlete's limits as given) for callers that share
one air. docs/race_day_weather.md describes the race day.

Everything is SI; words and units are the edges' business (pacing.display).
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING, cast

import numpy as np

from pacing.errors import InputError
from pacing.notices import Notice, warning
from pacing.plan.prediction import SimulationOptions
from pacing.plan.request import PlanRequest
from pacing.plan.running import DOWNHILL_SPEED_RATIO_CAP
from pacing.plan.strategies import SPORTS, strategy_for

if TYPE_CHECKING:  # each sport's plan module is imported by its strategy, when it plans
    from pacing.course.geometry import Course
    from pacing.physics.cycling import Rider
    from pacing.physics.running import Runner
    from pacing.plan.cycling import RacePlan
    from pacing.plan.race_day import RaceDay, RaceDayResult
    from pacing.plan.running_plan import RunningPlan
    from pacing.plan.targets import SegmentTarget
    from pacing.weather.conditions import Conditions, CourseAir


@dataclass(frozen=True)
class RunningRequest:
    """What a running plan needs besides the runner.

    Attributes
    ----------
    flat_speed : speed held on flat ground in still air [m/s] (equal effort, even pace).
    critical_speed : CS [m/s]; None if unknown (needed by the fastest plan).
    d_prime : D′ [m]; None if unknown (needed by the fastest plan).
    downhill_speed_ratio_cap : highest descent speed as a multiple of the flat speed [-];
        None for no cap.
    d_prime_reserve : D′ balance the fastest plan never goes below [m].
    """

    flat_speed: float | None = None
    critical_speed: float | None = None
    d_prime: float | None = None
    downhill_speed_ratio_cap: float | None = DOWNHILL_SPEED_RATIO_CAP
    d_prime_reserve: float = 0.0


@dataclass(frozen=True, eq=False)
class RaceRequest:
    """Everything a plan is computed from (SI).

    Attributes
    ----------
    course : the course.
    bounds : segment boundary point indices (increasing, first 0, last N-1).
    conditions : the day's air and wind.
    sport : "cycling" or "running".
    strategy : key of pacing.plan.strategies.STRATEGIES[sport].
    rider : the cycling power-balance parameters (cycling).
    cycling : the cycling plan's power, target time and limits; its `strategy` is replaced by
        this request's (cycling).
    options : the inertial simulation's options (cycling).
    runner : the running energy-balance parameters (running).
    running : the running plan's pace, critical speed and D′ (running).
    race_day : the start time, weather through the race, heat and altitude; None for one
        weather all day and the athlete's limits as given.
    """

    course: Course
    bounds: np.ndarray
    conditions: Conditions
    sport: str = "cycling"
    strategy: str = "constant"
    rider: Rider | None = None
    cycling: PlanRequest = field(default_factory=PlanRequest)
    options: SimulationOptions = field(default_factory=SimulationOptions)
    runner: Runner | None = None
    running: RunningRequest = field(default_factory=RunningRequest)
    race_day: RaceDay | None = None

    def __post_init__(self) -> None:
        if self.sport not in SPORTS:
            raise InputError(f"unknown sport {self.sport!r}; choose one of {', '.join(SPORTS)}")
        strategy_for(self.sport, self.strategy)  # an unknown strategy is refused here
        if self.sport == "cycling" and self.rider is None:
            raise InputError("a cycling plan needs the rider's parameters")
        if self.sport == "running" and self.runner is None:
            raise InputError("a running plan needs the runner's parameters")


@dataclass(frozen=True, eq=False)
class RaceResult:
    """What the chain returns (SI).

    Attributes
    ----------
    request : the RaceRequest.
    air : the air on every piece of the course.
    plan : the sport's plan: RacePlan (cycling, with its verified Prediction) or RunningPlan.
    targets : one SegmentTarget row per segment.
    notices : what the user must be told beside the numbers, in order.
    race_day : the clock, the weather met, heat and altitude (RaceDayResult); None
        without a race day.
    """

    request: RaceRequest
    air: CourseAir
    plan: RacePlan | RunningPlan
    targets: tuple[SegmentTarget, ...]
    notices: tuple[Notice, ...]
    race_day: RaceDayResult | None = None

    @property
    def sport(self) -> str:
        """"cycling" or "running"."""
        return self.request.sport

    @property
    def finish_time(self) -> float:
        """Predicted finish time [s]."""
        return float(self.plan.finish_time)

    @property
    def exhausted_at(self) -> float | None:
        """Where the W′ (cycling) or D′ (running) balance first falls below zero [m] from the
        course's first point, or None when it never does (or is unknown)."""
        return exhausted_at(self)


def plan_race(request: RaceRequest) -> RaceResult:
    """Plan a race: air along the course, the strategy's plan, target rows and notices.

    Parameters
    ----------
    request : RaceRequest
        The course, segments, conditions, athlete and what is asked.

    Returns
    -------
    RaceResult
        The plan with its prediction, the segment target rows and the notices.

    Raises
    ------
    InputError
        When the request cannot be met (a target time beyond what the athlete's limits allow,
        a fastest plan without the limits it needs, …): one line for the user.
    """
    from pacing.plan.race_day import RaceDay, plan_race_day

    if request.race_day is None:  # heat and altitude always count: the day's single weather
        request = replace(request, race_day=RaceDay())
    return plan_race_day(request)


def plan_race_in_air(request: RaceRequest, air: CourseAir) -> RaceResult:
    """`plan_race` with the air along the course already known (the setup comparison shares
    one air among its setups).

    Parameters
    ----------
    request : RaceRequest
        What is asked.
    air : CourseAir
        The air on every piece of request.course.

    Returns
    -------
    RaceResult
    """
    strategy = strategy_for(request.sport, request.strategy)
    plan = strategy.make(request, air)
    targets = tuple(strategy.targets(request, plan))
    # what reading the course found (gaps, elevations) comes first: the plan is made on it
    notices = (*request.course.notices, *strategy.notices(request, plan))
    result = RaceResult(request=request, air=air, plan=plan, targets=targets, notices=notices)
    exhausted = exhausted_at(result)
    if exhausted is not None:
        result = RaceResult(request=request, air=air, plan=plan, targets=targets,
                            notices=(*notices, _exhausted_notice(result, exhausted)))
    return result


def exhausted_at(result: RaceResult) -> float | None:
    """Where the W′ or D′ balance first falls below zero [m from the first point], or None.

    Parameters
    ----------
    result : RaceResult
        A planned race.

    Returns
    -------
    float or None
        Distance [m] of the first point (cycling) or piece end (running) with a negative
        balance.
    """
    if result.sport == "cycling":
        cycling = cast("RacePlan", result.plan)
        balance = cycling.w_prime_balance
        if balance is None or np.min(balance) >= 0:
            return None
        first = int(np.argmax(np.asarray(balance) < 0))
        return float(np.asarray(cycling.prediction.distance)[first])
    running = cast("RunningPlan", result.plan)
    course = result.request.course
    balance = running.d_prime_balance
    if balance is None or np.min(balance) >= 0:
        return None
    first = int(np.argmax(np.asarray(balance) < 0))
    return float(course.distance[first + 1] - course.distance[0])


def _exhausted_notice(result: RaceResult, distance: float) -> Notice:
    if result.sport == "cycling":
        cycling = cast("RacePlan", result.plan)
        return warning("w-prime-exhausted", distance_m=distance,
                       lowest_balance_j=float(np.min(np.asarray(cycling.w_prime_balance))))
    running = cast("RunningPlan", result.plan)
    return warning("d-prime-exhausted", distance_m=distance,
                   lowest_balance_m=float(np.min(np.asarray(running.d_prime_balance))))

