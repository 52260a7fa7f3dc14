"""The strategy registry: every plan the chain (pacing.plan.race) can make, for both sports.

One entry per (sport, key): what it is, the published basis, what it needs from the request,
where it is valid, and three small functions the chain calls — make the plan, give its target
rows, tell its notices. The command line's choices, the app's menu, the docs and the tests read
this one list.

Reading the list is cheap: each of those functions imports the planning module it calls when it
is called (a cycling plan needs neither the running modules nor the other way round, and the
command line builds its --strategy choices from the keys alone).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any

import numpy as np

from pacing.errors import InputError
from pacing.notices import Notice, note, warning

if TYPE_CHECKING:
    from pacing.plan.cycling import RacePlan
    from pacing.plan.prediction import Prediction
    from pacing.plan.race import RaceRequest
    from pacing.plan.running_plan import RunningPlan
    from pacing.plan.targets import SegmentTarget
    from pacing.weather.conditions import CourseAir

SPORTS = ("cycling", "running")


@dataclass(frozen=True)
class Strategy:
    """A plan the chain can make.

    Attributes
    ----------
    sport : "cycling" or "running".
    key : the name on the command line and in saved plans ("fastest").
    title : what it does, in a few words.
    source : the published basis (or "common practice").
    needs : the request fields it cannot do without (e.g. "mean_power").
    validity : where its answer holds.
    make : (RaceRequest, CourseAir) → the sport's plan.
    targets : (RaceRequest, plan) → one SegmentTarget per segment.
    notices : (RaceRequest, plan) → what the user must be told.
    """

    sport: str
    key: str
    title: str
    source: str
    needs: tuple[str, ...]
    validity: str
    make: Callable[[RaceRequest, CourseAir], Any]
    targets: Callable[[RaceRequest, Any], Sequence[SegmentTarget]]
    notices: Callable[[RaceRequest, Any], Sequence[Notice]]


# ------------------------------------------------------------------------------------ cycling

def _make_cycling(request: RaceRequest, air: CourseAir) -> RacePlan:
    from pacing.plan.cycling import make_plan

    assert request.rider is not None  # RaceRequest refuses a cycling request without a rider
    asked = replace(request.cycling, strategy=request.strategy)
    return make_plan(request.course, np.asarray(request.bounds), request.rider, air, asked,
                     request.options)


def _cycling_targets(request: RaceRequest, plan: RacePlan) -> list[SegmentTarget]:
    from pacing.plan.targets import target_table

    return target_table(request.course, plan.bounds, plan)


def walking_distance(prediction: Prediction) -> float:
    """Course distance of the pieces walked or ridden below walking pace [m].

    Parameters
    ----------
    prediction : Prediction
        An inertial simulation (pacing.plan.simulate).

    Returns
    -------
    float
        Sum of the lengths of the pieces flagged as walking [m].
    """
    pieces = np.diff(np.asarray(prediction.distance, dtype=float))
    return float(np.sum(pieces[np.asarray(prediction.walking, dtype=bool)]))


def _cycling_notices(request: RaceRequest, plan: RacePlan) -> list[Notice]:
    notices = []
    if plan.binding:
        notices.append(note("limits-reached", limits=list(plan.binding)))
    if plan.solver.method.endswith("+blend"):
        notices.append(note("fastest-plan-blended"))
    walked = walking_distance(plan.prediction)
    if walked > 0:
        distance = np.asarray(plan.prediction.distance, dtype=float)
        total = float(distance[-1] - distance[0])
        made = warning if walked >= 0.999 * total else note
        notices.append(made("walking", walking_distance_m=walked, distance_m=total))
    if request.strategy == "target-time" and not plan.request.uses_w_prime:
        notices.append(warning("target-time-unchecked",
                               power_w=float(np.max(plan.segment_power))))
    return notices


# ------------------------------------------------------------------------------------ running

def _air_arguments(request: RaceRequest, air: CourseAir) -> dict:
    return dict(air_density=air.density, headwind=air.headwind, crosswind=air.crosswind,
                bounds=np.asarray(request.bounds))


def _flat_speed(request: RaceRequest) -> float:
    if request.running.flat_speed is None:
        raise InputError(f"the {request.strategy} plan needs a flat-ground pace")
    return float(request.running.flat_speed)


def _make_equal_effort(request: RaceRequest, air: CourseAir) -> RunningPlan:
    from pacing.plan.running import plan_equal_effort

    asked = request.running
    assert request.runner is not None  # RaceRequest refuses a running request without one
    return plan_equal_effort(request.course, request.runner, _flat_speed(request),
                             downhill_speed_ratio_cap=asked.downhill_speed_ratio_cap,
                             critical_speed=asked.critical_speed, d_prime=asked.d_prime,
                             **_air_arguments(request, air))


def _make_even_pace(request: RaceRequest, air: CourseAir) -> RunningPlan:
    from pacing.plan.running import plan_even_pace

    asked = request.running
    assert request.runner is not None
    return plan_even_pace(request.course, request.runner, _flat_speed(request),
                          critical_speed=asked.critical_speed, d_prime=asked.d_prime,
                          **_air_arguments(request, air))


def _make_fastest_run(request: RaceRequest, air: CourseAir) -> RunningPlan:
    from pacing.plan.running import plan_fastest

    asked = request.running
    assert request.runner is not None
    if asked.critical_speed is None or asked.d_prime is None:
        raise InputError("the fastest running plan needs critical speed and D′")
    return plan_fastest(request.course, request.runner, asked.critical_speed, asked.d_prime,
                        downhill_speed_ratio_cap=asked.downhill_speed_ratio_cap,
                        d_prime_reserve=asked.d_prime_reserve, **_air_arguments(request, air))


def _running_targets(request: RaceRequest, plan: RunningPlan) -> list[SegmentTarget]:
    from pacing.plan.running_plan import running_targets
    from pacing.plan.targets import with_gap_lengths

    return with_gap_lengths(running_targets(plan), request.course.gaps)


def _running_notices(request: RaceRequest, plan: RunningPlan) -> tuple[Notice, ...]:
    return plan.notes


# ----------------------------------------------------------------------------------- registry

_MARTIN = "Martin et al. (1998), J Appl Biomech 14(3):276-291, doi:10.1123/jab.14.3.276"
_MINETTI = ("Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, "
            "doi:10.1152/japplphysiol.01177.2001")

STRATEGIES: dict[str, dict[str, Strategy]] = {
    "cycling": {
        "constant": Strategy(
            "cycling", "constant", "the same power on every segment",
            f"common practice; power balance of {_MARTIN}", ("mean_power",),
            "any course; the athlete's limits are checked, not enforced",
            _make_cycling, _cycling_targets, _cycling_notices),
        "fastest": Strategy(
            "cycling", "fastest", "quickest plan of the same mean power within CP, W′ and "
            "power bounds",
            "Atkinson, Peacock & Passfield (2007), J Sports Sci 25(9):1001-1009 (variable "
            "power on hills and in wind); Skiba et al. (2012) W′ balance; solved as in "
            f"Bos et al. (2024), arXiv:2403.03363; {_MARTIN}",
            ("mean_power",),
            "steady-state segment model verified by the inertial simulation; W′ reserve only "
            "with CP and W′",
            _make_cycling, _cycling_targets, _cycling_notices),
        "target-time": Strategy(
            "cycling", "target-time", "the constant power that finishes in a given time",
            f"common practice; {_MARTIN}", ("target_time",),
            "refused beyond what CP and W′ allow (when given) or 2000 W",
            _make_cycling, _cycling_targets, _cycling_notices),
    },
    "running": {
        "equal-effort": Strategy(
            "running", "equal-effort", "the metabolic power of the flat pace on every piece",
            f"{_MINETTI}; air resistance after Pugh (1971), J Physiol 213(2):255-276",
            ("flat_speed",), "grades within the cost model's range (−45 % to +45 %); descent "
            "speed capped", _make_equal_effort, _running_targets, _running_notices),
        "even-pace": Strategy(
            "running", "even-pace", "one speed everywhere at the same mean effort",
            f"common practice; {_MINETTI}", ("flat_speed",),
            "meets the effort only on average: above it on climbs and into the wind",
            _make_even_pace, _running_targets, _running_notices),
        "fastest": Strategy(
            "running", "fastest", "the highest equal effort critical speed and D′ allow",
            f"{_MINETTI}; critical speed and D′ (Poole et al. 2016, Med Sci Sports Exerc "
            "48(11):2320-2334); D′ balance by analogy with Skiba et al. (2015)",
            ("critical_speed", "d_prime"),
            "D′ recovery below CS uses cycling's constants (an analogy, not a measurement)",
            _make_fastest_run, _running_targets, _running_notices),
    },
}
"""Sport → strategy key → Strategy."""


def strategy_for(sport: str, key: str) -> Strategy:
    """The registered strategy, or a one-line InputError naming the choices.

    Parameters
    ----------
    sport : str
        "cycling" or "running".
    key : str
        Strategy key, e.g. "fastest".

    Returns
    -------
    Strategy
    """
    if sport not in STRATEGIES:
        raise InputError(f"unknown sport {sport!r}; choose one of {', '.join(SPORTS)}")
    try:
        return STRATEGIES[sport][key]
    except KeyError:
        raise InputError(f"unknown {sport} plan {key!r}; choose one of "
                         f"{', '.join(STRATEGIES[sport])}") from None
