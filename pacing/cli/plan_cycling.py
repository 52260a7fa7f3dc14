"""``pacing plan ROUTE.gpx --power W …``: predict a cycling race on a GPX course.

Steps: validate the flags → a RaceRequest (course and segments, air, rider, plan request,
simulation options) → the one planning chain (pacing.plan.race.plan_race) → segment summaries
→ table or JSON (pacing.cli.plan_cycling_output), with the chain's notices (JSON "notices";
lines under the table).

Units on the command line are SI except --humidity [%] and --drafting [%]; the table shows km,
km/h, % and H:MM:SS, the JSON SI numbers with the unit in each key. Every segment row carries
the band around its target power (±3 % unless the request says otherwise; JSON power_low_w and
power_high_w). --max-descent-speed and --coasting-speed [m/s] go to SimulationOptions. Where
the power cannot hold walking pace the rider walks the bike (pacing.plan.simulate): the output says
how far (JSON walking_distance_m). A target-time plan above HUMAN_POWER_CEILING is refused.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from pacing.cli.common import (
    CAUTION,
    conditions_from_args,
    load_course_and_bounds,
    notices_as_json,
    report_notices,
)
from pacing.cli.race_day_flags import (
    add_segment_weather,
    plan_the_day,
    race_day_as_json,
    race_day_from_args,
    race_day_lines,
    with_weather_columns,
)
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SegmentResult, SimulationOptions, segment_results
from pacing.plan.targets import segment_gap_lengths

if TYPE_CHECKING:
    from pacing.course.recording import Gap
    from pacing.plan.best_start import BestStart
    from pacing.plan.cycling import RacePlan
    from pacing.plan.race import RaceRequest, RaceResult
    from pacing.plan.request import PlanRequest

MASS_RANGE = (20.0, 300.0)
"""Accepted rider + bike mass [kg]."""

POWER_RANGE = (0.0, 3000.0)
"""Accepted crank power [W]: above the first, at most the second."""

EFFICIENCY_RANGE = (0.5, 1.0)
"""Accepted drivetrain efficiency [-], as pacing.athlete.Setup accepts it: chain drives
measured 81-99 % (Spicer et al. 2001, J Mech Des 123(4):598-605, doi:10.1115/1.1412848);
below one half the plan's crank power would mostly heat the chain."""

HUMAN_POWER_CEILING = 2000.0
"""No rider holds more crank power than this over a race [W]. World-class track sprinters'
fatigue-free peak power, held for a few seconds, is 1600 ± 116 W (Dorel et al. 2005, Int J
Sports Med 26(9):739-746, doi:10.1055/s-2004-830493); 2000 W is above all of them."""


def _number(value: float | None, flag: str) -> float | None:
    """The flag's value as a float, None when absent; InputError when not finite."""
    if value is None:
        return None
    if not math.isfinite(value):
        raise InputError(f"{flag} must be a finite number, got {value!r}")
    return float(value)


def _check(condition: bool, message: str) -> None:
    """InputError(message) unless condition holds."""
    if not condition:
        raise InputError(message)


def validate_args(args: argparse.Namespace) -> None:
    """Check the cycling flags before any file is read.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags: --mass [kg], --cda [m²], --crr [-], --efficiency [-],
        --drafting [%], --power [W], --humidity [%], speeds [m/s], heights and lengths [m].

    Raises
    ------
    InputError
        For the first flag that is not finite or out of its range, in one line.
    """
    for flag in ("mass", "cda", "crr", "efficiency", "drafting", "power", "start_speed",
                 "temperature", "humidity", "sea_level_pressure", "wind_speed", "wind_from",
                 "wind_height", "roughness", "step", "segment_length", "max_descent_speed",
                 "coasting_speed"):
        _number(getattr(args, flag, None), "--" + flag.replace("_", "-"))
    low, high = MASS_RANGE
    _check(low <= args.mass <= high,
           f"--mass (rider + bike) must be {low:g}-{high:g} kg, got {args.mass:g}")
    cda = 0.30 if args.cda is None else args.cda
    _check(0.0 < cda <= 2.0, f"--cda must be above 0 and at most 2 m², got {cda:g}")
    _check(0.0 <= args.crr <= 0.1, f"--crr must be 0-0.1, got {args.crr:g}")
    low, high = EFFICIENCY_RANGE
    _check(low <= args.efficiency <= high,
           f"--efficiency must be {low:g}-{high:g}, got {args.efficiency:g}")
    _check(0.0 <= args.drafting <= 99.0, f"--drafting must be 0-99 %, got {args.drafting:g}")
    _check(0.0 <= args.humidity <= 100.0,
           f"--humidity must be 0-100 %, got {args.humidity:g}")
    _check(args.start_speed >= 0.0, f"--start-speed must be >= 0 m/s, got {args.start_speed:g}")
    _check(args.wind_speed >= 0.0, f"--wind-speed must be >= 0 m/s, got {args.wind_speed:g}")
    _check(args.wind_height > 0.0, f"--wind-height must be > 0 m, got {args.wind_height:g}")
    _check(args.roughness > 0.0, f"--roughness must be > 0 m, got {args.roughness:g}")
    for flag in ("max_descent_speed", "coasting_speed"):
        value = getattr(args, flag, None)
        if value is not None:
            _check(value > 0.0, f"--{flag.replace('_', '-')} must be above 0 m/s, got {value:g}")
    if args.power is not None:
        low, high = POWER_RANGE
        _check(low < args.power <= high, f"--power must be above {low:g} and at most "
                                         f"{high:g} W, got {args.power:g}")


def rider_from_args(args: argparse.Namespace) -> Rider:
    """The Rider of the flags.

    Parameters
    ----------
    args : argparse.Namespace
        --mass, rider + bike [kg]; --cda [m²] (default 0.30); --crr [-]; --efficiency [-];
        --drafting [%].

    Returns
    -------
    pacing.physics.cycling.Rider
        The power-balance parameters, drafting as a fraction [-].
    """
    return Rider(
        mass=args.mass,
        drag_area=0.30 if args.cda is None else args.cda,
        rolling_coefficient=args.crr,
        drivetrain_efficiency=args.efficiency,
        drafting_reduction=args.drafting / 100.0,
    )


def race_request_from_args(args: argparse.Namespace) -> RaceRequest:
    """The request for the one planning chain from the cycling flags (after checking them).

    Without --strategy a constant plan at --power (CP and W′ checked when both are given),
    else the strategy's request (`request_from_args`).

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.plan.add_plan_flags with --sport cycling [-].

    Returns
    -------
    pacing.plan.race.RaceRequest
        Course, segment bounds, conditions, rider, plan request and simulation options
        (SI) [-].

    Raises
    ------
    InputError
        When a flag is out of range, a flag the plan needs is missing, or the course cannot
        be read.
    """
    from pacing.plan.race import RaceRequest
    from pacing.plan.request import PlanRequest

    validate_args(args)
    if args.strategy is None:
        if args.power is None:
            raise InputError("a constant plan needs --power W (crank power)")
        request = PlanRequest(strategy="constant", mean_power=float(args.power),
                              critical_power=args.cp if args.w_prime is not None else None,
                              w_prime=args.w_prime if args.cp is not None else None)
    else:
        request = request_from_args(args)
    course, bounds = load_course_and_bounds(args)
    return RaceRequest(course=course, bounds=bounds, conditions=conditions_from_args(args),
                       sport="cycling", strategy=request.strategy, rider=rider_from_args(args),
                       cycling=request, options=simulation_options_from_args(args),
                       race_day=race_day_from_args(args))


def plan_from_args(args: argparse.Namespace) -> tuple[RaceResult, list[SegmentResult]]:
    """`plan_day_from_args` without the best start (see there)."""
    result, segments, _ = plan_day_from_args(args)
    return result, segments


def plan_day_from_args(args: argparse.Namespace
                       ) -> tuple[RaceResult, list[SegmentResult], BestStart | None]:
    """Check the flags, load the course and plan through the one chain.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.plan.add_plan_flags with --sport cycling [-].

    Returns
    -------
    tuple of (pacing.plan.race.RaceResult, list of SegmentResult, BestStart or None)
        The result of pacing.plan.race.plan_race, the segment summaries of its verified
        prediction and the best-start search of --best-start-between [-].

    Raises
    ------
    InputError
        When the flags or the course cannot be used, or a target time needs more than
        HUMAN_POWER_CEILING [W].
    """
    from pacing.plan.cycling import RacePlan

    result, best = plan_the_day(race_request_from_args(args), args)
    plan = result.plan
    assert isinstance(plan, RacePlan)  # a cycling request makes a cycling plan
    if result.request.strategy == "target-time":
        check_target_time_plan(plan, args.target_time)
    return result, segment_results(result.request.course, plan.prediction,
                                   result.request.bounds), best


def simulation_options_from_args(args: argparse.Namespace) -> SimulationOptions:
    """The inertial simulation's options of the flags.

    Parameters
    ----------
    args : argparse.Namespace
        --start-speed [m/s]; --max-descent-speed and --coasting-speed [m/s], optional on the
        namespace (for commands without them).

    Returns
    -------
    pacing.plan.prediction.SimulationOptions
        The options [-].
    """
    return SimulationOptions(start_speed=args.start_speed,
                             max_descent_speed=getattr(args, "max_descent_speed", None),
                             coasting_speed=getattr(args, "coasting_speed", None))


def gap_marked(rows: list[str], ends: Sequence[float], gaps: Sequence[Gap]) -> list[str]:
    """The table rows with "  <- joined gap 12.7 km" after each row whose segment holds a
    joined gap of the recording (pacing.plan.targets.segment_gap_lengths).

    Parameters
    ----------
    rows : list of str
        One table line per segment [-].
    ends : sequence of float
        Course distance of each segment's end [m].
    gaps : sequence of pacing.course.recording.Gap
        The course's gaps (Course.gaps) [-].

    Returns
    -------
    list of str
        The rows, marked where a segment holds a joined gap [-].
    """
    if not gaps:
        return rows
    lengths = segment_gap_lengths(gaps, ends)
    return [row + (f"  {GAP_MARK} joined gap {length / 1000:.1f} km" if length > 0 else "")
            for row, length in zip(rows, lengths, strict=True)]


GAP_MARK = "<-"
"""Mark at the end of a table row whose segment holds a joined gap of the recording."""


def run(args: argparse.Namespace) -> int:
    """Run ``pacing plan`` for cycling: print the table or JSON, notices on stderr.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.plan.add_plan_flags with --sport cycling [-].

    Returns
    -------
    int
        The exit code, 0 [-].

    Raises
    ------
    InputError
        When the flags, the course or the plan cannot be used.
    """
    from pacing.cli.plan_cycling_output import (
        limits_as_dict,
        plan_as_dict,
        plan_as_table,
        prediction_as_dict,
        prediction_as_table,
    )
    from pacing.cli.plan_running import warn_flags_of_other_sport
    from pacing.plan.cycling import RacePlan

    warn_flags_of_other_sport(args, "cycling")
    result, segments, best = plan_day_from_args(args)
    plan = result.plan
    assert isinstance(plan, RacePlan)  # a cycling request makes a cycling plan
    gaps = result.request.course.gaps
    if args.json:
        output = (prediction_as_dict(plan.prediction, segments, target_power=args.power,
                                     gaps=gaps)
                  if args.strategy is None else plan_as_dict(plan, segments, gaps=gaps))
        output.update(limits_as_dict(result))
        if result.race_day is not None:
            add_segment_weather(output["segments"], result.targets)
            output.update(race_day_as_json(result, best))
        output["notices"] = notices_as_json(result.notices)
        report_notices(result.notices, table=False)
        # whole or not at all: a value JSON cannot hold never leaves half a document
        sys.stdout.write(json.dumps(output, indent=2, allow_nan=False) + "\n")
        return 0
    table = (prediction_as_table(plan.prediction, segments, target_power=args.power, gaps=gaps)
             if args.strategy is None else plan_as_table(plan, segments, gaps=gaps))
    print(with_weather_columns(table, result.targets))
    for line in (*race_day_lines(result, best), *report_notices(result.notices, table=True)):
        print(line)
    print(CAUTION)
    return 0


# ------------------------------------------------------------------ --strategy (issue 4)

def request_from_args(args: argparse.Namespace) -> PlanRequest:
    """The cycling plan request of --strategy and its flags.

    Parameters
    ----------
    args : argparse.Namespace
        --strategy, --power [W], --target-time [H:MM:SS], --cp [W], --w-prime [J],
        --w-prime-reserve [J] and --max-power-ratio [-].

    Returns
    -------
    pacing.plan.request.PlanRequest
        The strategy with its mean power [W] or target time [s] and limits [-].

    Raises
    ------
    InputError
        When the strategy is unknown, a flag it needs is missing, or a value is out of range.
    """
    from pacing.cli.plan import CYCLING_STRATEGIES
    from pacing.display.units import parse_clock
    from pacing.plan.request import PlanRequest

    strategy = args.strategy
    _check(strategy in CYCLING_STRATEGIES,
           f"--strategy must be one of {', '.join(CYCLING_STRATEGIES)} for cycling, "
           f"got {strategy!r}")
    for flag in ("cp", "w_prime", "w_prime_reserve", "max_power_ratio"):
        _number(getattr(args, flag, None), "--" + flag.replace("_", "-"))
    if strategy in ("constant", "fastest"):
        _check(args.power is not None,
               f"--strategy {strategy} needs --power W (the mean power to match)")
    if strategy == "target-time":
        _check(args.target_time is not None, "--strategy target-time needs --target-time H:MM:SS")
    _check(args.w_prime is None or args.cp is not None, "--w-prime needs --cp")
    for flag, value in (("--cp", args.cp), ("--w-prime", args.w_prime),
                        ("--max-power-ratio", args.max_power_ratio)):
        if value is not None:
            _check(value > 0, f"{flag} must be positive, got {value:g}")
    _check(args.w_prime_reserve >= 0,
           f"--w-prime-reserve must be >= 0 J, got {args.w_prime_reserve:g}")
    return PlanRequest(
        strategy=strategy,
        mean_power=args.power if strategy != "target-time" else None,
        target_time=(parse_clock(args.target_time, "--target-time")
                     if strategy == "target-time" else None),
        critical_power=args.cp,
        w_prime=args.w_prime,
        w_prime_reserve=args.w_prime_reserve,
        max_power_ratio=args.max_power_ratio,
    )


def check_target_time_plan(plan: RacePlan, clock: str) -> None:
    """Refuse a target-time plan beyond what any rider holds (HUMAN_POWER_CEILING).

    Without CP and W′ the chain's notice "target-time-unchecked" says the power is not
    checked against the athlete.

    Parameters
    ----------
    plan : pacing.plan.cycling.RacePlan
        The target-time plan [-].
    clock : str
        The --target-time as typed, for the message [H:MM:SS].

    Raises
    ------
    InputError
        When a segment needs more than HUMAN_POWER_CEILING [W].
    """
    power = float(np.max(plan.segment_power))
    if power > HUMAN_POWER_CEILING:
        raise InputError(f"--target-time {clock} is not reachable: it needs {power:.0f} W, "
                         f"beyond the {HUMAN_POWER_CEILING:g} W no rider holds over a race; "
                         "give a longer time")

