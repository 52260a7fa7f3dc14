"""``pacing plan ROUTE.gpx --sport running …``: running paces on a course (pacing.physics.running).

The effort is a flat-ground pace in still air (``--flat-pace M:SS`` per km), or critical speed
and D′ (``--critical-speed``, ``--d-prime``). Strategies: equal-effort (default), even-pace,
fastest (needs critical speed and D′). Prints a table in min/km and min/mile, or JSON.

The running modules are imported by the functions that use them: ``pacing plan`` for cycling
reads this module's flag checks (`warn_flags_of_other_sport`) without loading them.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
import warnings
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from pacing.cli.common import (
    RUNNING_CAUTION,
    conditions_from_args,
    load_course_and_bounds,
    notices_as_json,
    report_notices,
    warnings_as_text,
)
from pacing.cli.plan import RUNNING_STRATEGIES, add_plan_flags
from pacing.cli.plan_cycling import gap_marked
from pacing.cli.race_day_flags import (
    add_segment_weather,
    plan_the_day,
    race_day_as_json,
    race_day_from_args,
    race_day_lines,
    with_weather_columns,
)
from pacing.display import units
from pacing.display.notices import describe_all
from pacing.errors import InputError
from pacing.physics.running import RUNNING_SPEED_RANGE
from pacing.plan.targets import segment_gap_lengths

if TYPE_CHECKING:
    from pacing.course.geometry import Course
    from pacing.course.recording import Gap
    from pacing.physics.running import Runner
    from pacing.plan.best_start import BestStart
    from pacing.plan.race import RaceRequest, RaceResult
    from pacing.plan.running_plan import RunningPlan

SHARED_FLAGS = frozenset({"strategy", "cda", "drafting"})
"""Destinations of the cycling and rider groups' flags that running uses too."""

_GROUPS_OF_SPORT = {"cycling": ("cycling plan", "rider and bike"), "running": ("running plan",)}
"""Titles of the plan command's argument groups that belong to each sport."""

FLAT_PACE_RANGE = (1000.0 / RUNNING_SPEED_RANGE[1], 1000.0 / RUNNING_SPEED_RANGE[0])
"""Flat paces accepted, 1:24-33:20 per km [s/km] (pacing.physics.running.RUNNING_SPEED_RANGE,
as pacing.physics.running.flat_effort)."""


def flags_of_other_sport(args: argparse.Namespace, sport: str) -> list[str]:
    """The flags given (not at their default) that only the other sport uses.

    Read from the plan command's own parser (pacing.cli.plan.add_plan_flags), so a flag added
    to a sport's group is covered without a list here.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags [-].
    sport : str
        The sport being planned, "cycling" or "running" [-].

    Returns
    -------
    list of str
        The flags as typed, e.g. ["--power", "--cp"] [-].
    """
    parser = argparse.ArgumentParser(add_help=False)
    add_plan_flags(parser)
    other = "cycling" if sport == "running" else "running"
    given = []
    for group in parser._action_groups:  # argparse keeps its groups here (no public API)
        if group.title not in _GROUPS_OF_SPORT[other]:
            continue
        for action in group._group_actions:
            if action.dest in SHARED_FLAGS or not hasattr(args, action.dest):
                continue
            if getattr(args, action.dest) != parser.get_default(action.dest):
                given.append(action.option_strings[0])
    return given


def warn_flags_of_other_sport(args: argparse.Namespace, sport: str) -> None:
    """Warn in one line about the given flags that the planned sport ignores.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags [-].
    sport : str
        The sport being planned, "cycling" or "running" [-].
    """
    given = flags_of_other_sport(args, sport)
    if not given:
        return
    hint = " (the runner's mass is --body-mass)" if sport == "running" and "--mass" in given \
        else ""
    other = "cycling" if sport == "running" else "running"
    warnings.warn(f"{', '.join(given)} {'is a' if len(given) == 1 else 'are'} {other} "
                  f"flag{'' if len(given) == 1 else 's'}, ignored for {sport}{hint}",
                  stacklevel=2)


def downhill_cap_from_args(args: argparse.Namespace) -> float | None:
    """The descent cap of --downhill-cap.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags; --downhill-cap as typed: a ratio, "none" or "off" [-].

    Returns
    -------
    float or None
        The highest descent speed over the flat speed, 1..3, default 1.2; None for no
        cap [-].

    Raises
    ------
    InputError
        When the text is not a number 1-3, "none" or "off".
    """
    from pacing.plan.running import DOWNHILL_SPEED_RATIO_CAP

    text = getattr(args, "downhill_cap", None)
    if text is None:
        return DOWNHILL_SPEED_RATIO_CAP
    if str(text).strip().lower() in ("none", "off"):
        return None
    try:
        ratio = float(text)
    except ValueError:
        raise InputError(f"--downhill-cap must be a ratio to the flat speed (e.g. 1.2) or "
                         f"'none', got {text!r}") from None
    if not math.isfinite(ratio) or not 1.0 <= ratio <= 3.0:
        raise InputError(f"--downhill-cap must be 1-3 × the flat speed, or 'none', got {text}")
    return ratio


def flat_speed_from_pace(text: str) -> float:
    """The speed of a --flat-pace.

    Parameters
    ----------
    text : str
        The pace as typed, M:SS per km [s/km].

    Returns
    -------
    float
        The flat-ground speed [m/s].

    Raises
    ------
    InputError
        When the text is not a clock time or the pace is outside 1:24-33:20 per km (said as
        typed).
    """
    pace = units.parse_clock(text, "--flat-pace")
    low, high = FLAT_PACE_RANGE
    if not low <= pace <= high:
        raise InputError(f"--flat-pace: flat pace must be 1:24-33:20 per km, got {text}")
    return 1000.0 / pace


def runner_from_args(args: argparse.Namespace) -> Runner:
    """The Runner of the flags.

    Parameters
    ----------
    args : argparse.Namespace
        --body-mass [kg], --height [m] or --cda [m²] (not both), --drafting [%]; absent
        ones take pacing.athlete.Athlete's defaults [-].

    Returns
    -------
    pacing.physics.running.Runner
        Body mass [kg], drag area [m²] (from height and mass unless --cda) and drafting
        reduction [-].

    Raises
    ------
    InputError
        When both --height and --cda are given, or a value is out of range.
    """
    from pacing.athlete import Athlete
    from pacing.physics.running import Runner

    defaults = Athlete()
    body_mass = defaults.body_mass if args.body_mass is None else args.body_mass
    if args.height is not None and args.cda is not None:
        raise InputError("give the runner's --height or --cda, not both")
    height = defaults.height if args.height is None else args.height
    drafting = getattr(args, "drafting", 0.0) or 0.0
    if not 0.0 <= drafting <= 100.0:
        raise InputError(f"--drafting must be 0-100 %, got {drafting:g}")
    return Runner.from_body(body_mass, height=height, drag_area=args.cda,
                            drafting_reduction=drafting / 100.0)


def validate_args(args: argparse.Namespace) -> None:
    """Check the running flags before any file is read.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags [-].

    Raises
    ------
    InputError
        When a number is not finite or --humidity is outside 0-100 %.
    """
    for flag in ("body_mass", "height", "cda", "drafting", "critical_speed", "d_prime",
                 "temperature", "humidity", "sea_level_pressure", "wind_speed", "wind_from",
                 "wind_height", "roughness", "step", "segment_length"):
        value = getattr(args, flag, None)
        if value is not None and not math.isfinite(value):
            raise InputError(f"--{flag.replace('_', '-')} must be a finite number, got {value}")
    if not 0.0 <= args.humidity <= 100.0:
        raise InputError(f"--humidity must be 0-100 %, got {args.humidity:g}")


def race_request_from_args(args: argparse.Namespace) -> RaceRequest:
    """The request for the one planning chain from the running flags (after checking them).

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.plan.add_plan_flags with --sport running [-].

    Returns
    -------
    pacing.plan.race.RaceRequest
        Course, segment bounds, conditions, runner and running request (SI) [-].

    Raises
    ------
    InputError
        When a flag is out of range, a strategy unknown, the course unreadable, or critical
        speed and D′ not given together.
    """
    from pacing.plan.race import RaceRequest, RunningRequest

    validate_args(args)
    strategy = args.strategy or "equal-effort"
    if strategy not in RUNNING_STRATEGIES:
        raise InputError(
            f"--strategy for running must be one of {', '.join(RUNNING_STRATEGIES)}, "
            f"got {strategy!r}"
        )
    warn_flags_of_other_sport(args, "running")
    downhill_cap = downhill_cap_from_args(args)
    if strategy == "even-pace" and getattr(args, "downhill_cap", None) is not None:
        warnings.warn("--downhill-cap does not apply to even pace (one speed everywhere)",
                      stacklevel=2)
    runner = runner_from_args(args)
    conditions = conditions_from_args(args)
    course, bounds = load_course_and_bounds(args)
    if (args.critical_speed is None) != (args.d_prime is None):
        raise InputError("give --critical-speed and --d-prime together")
    has_critical = args.critical_speed is not None
    running = RunningRequest(flat_speed=_flat_speed(args, strategy, course, has_critical),
                             critical_speed=args.critical_speed, d_prime=args.d_prime,
                             downhill_speed_ratio_cap=downhill_cap)
    return RaceRequest(course=course, bounds=bounds, conditions=conditions, sport="running",
                       strategy=strategy, runner=runner, running=running,
                       race_day=race_day_from_args(args))


def _flat_speed(args: argparse.Namespace, strategy: str, course: Course,
                has_critical: bool) -> float | None:
    """The flat-ground speed of --flat-pace, or the pace that spends D′ exactly over the
    course's distance on flat ground (CS model) [m/s]; None for the fastest plan."""
    from pacing.physiology.critical_speed import critical_speed_flat_race_time

    if strategy == "fastest":
        if not has_critical:
            raise InputError("--strategy fastest needs --critical-speed and --d-prime")
        if args.flat_pace is not None:
            warnings.warn("--flat-pace is not used by the fastest plan: its effort comes from "
                          "--critical-speed and --d-prime", stacklevel=2)
        return None
    if args.flat_pace is not None:
        return flat_speed_from_pace(args.flat_pace)
    if has_critical:
        return course.total_distance / critical_speed_flat_race_time(
            course.total_distance, args.critical_speed, args.d_prime)
    raise InputError("running needs --flat-pace M:SS (per km), or --critical-speed and "
                     "--d-prime")


def make_plan(args: argparse.Namespace) -> RaceResult:
    """`make_day_plan` without the best start (see there)."""
    return make_day_plan(args)[0]


def make_day_plan(args: argparse.Namespace) -> tuple[RaceResult, BestStart | None]:
    """Load the course and plan the run the flags ask for, through the one planning chain.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.plan.add_plan_flags with --sport running [-].

    Returns
    -------
    tuple of (pacing.plan.race.RaceResult, pacing.plan.race.BestStart or None)
        The plan (pacing.plan.running_plan.RunningPlan), its target rows and notices, and
        the best-start search of --best-start-between [-].

    Raises
    ------
    InputError
        When the flags, the course or the plan cannot be used.
    """
    return plan_the_day(race_request_from_args(args), args)


TIME_SAVED_MEANING = ("seconds before the even pace with the same time-weighted mean "
                      "metabolic power (negative: that even pace finishes sooner, running "
                      "the climbs above the target effort)")
"""What time_saved_s is measured against (also printed in the JSON)."""


def _optional(value: float | None) -> float | None:
    return None if value is None else float(value)


def plan_as_dict(plan: RunningPlan, runner: Runner | None = None,
                 gaps: Sequence[Gap] = ()) -> dict[str, Any]:
    """JSON-ready numbers (SI units; paces in seconds per km).

    Besides the cycling keys (finish_time_s, distance_m, average_speed_mps, max_speed_mps,
    time_saved_s, strategy, segments): effort_w_per_kg and the effort ratios;
    time_saved_s is against the even pace at the same time-weighted mean metabolic power
    (time_saved_against says so), with that pace, its finish time and its peak effort ratio;
    min_d_prime_balance_m and where (fastest, or with --critical-speed and --d-prime; else
    null); limited_even_pace_time_s, the fastest even pace within the same CS and D′ (fastest).
    Per segment: pace_s_per_km, max_speed_mps, d_prime_balance_m (null without CS and D′),
    gap_m (length of the recording's gaps joined by a straight line that start in it).

    Parameters
    ----------
    plan : pacing.plan.running_plan.RunningPlan
        The plan [-].
    runner : pacing.physics.running.Runner or None, optional
        The runner, to add body_mass_kg [kg] and drag_area_m2 [m²] [-].
    gaps : sequence of pacing.course.recording.Gap, optional
        The course's gaps in the recording (Course.gaps), for each segment's gap_m [-].

    Returns
    -------
    dict
        The keys above, each ending with its unit; "notes" holds the plan's notes in metric
        words [-].
    """
    about_runner = {} if runner is None else {
        "body_mass_kg": runner.body_mass, "drag_area_m2": runner.drag_area}
    even_pace = None if plan.even_pace_speed is None else 1000.0 / plan.even_pace_speed
    gap = segment_gap_lengths(gaps, [row.end for row in plan.segments])
    return {
        "sport": "running",
        "strategy": plan.strategy,
        **about_runner,
        "finish_time_s": plan.finish_time,
        "distance_m": plan.distance,
        "average_speed_mps": plan.average_speed,
        "max_speed_mps": plan.max_speed,
        "flat_pace_s_per_km": 1000.0 / plan.flat_speed,
        "effort_w_per_kg": plan.effort,
        "mean_effort_ratio": plan.mean_effort_ratio,
        "peak_effort_ratio": plan.peak_effort_ratio,
        "time_saved_s": _optional(plan.time_saved),
        "time_saved_against": TIME_SAVED_MEANING,
        "even_pace_s_per_km": even_pace,
        "even_pace_time_s": _optional(plan.even_pace_time),
        "even_pace_peak_effort_ratio": _optional(plan.even_pace_peak_effort_ratio),
        "limited_even_pace_time_s": _optional(plan.limited_even_pace_time),
        "min_d_prime_balance_m": plan.min_d_prime_balance,
        "min_d_prime_distance_m": plan.min_d_prime_distance,
        "notes": describe_all(plan.notes, "metric"),
        "segments": [
            {
                "start_m": row.start,
                "end_m": row.end,
                "grade": row.grade,
                "headwind_mps": row.headwind,
                "speed_mps": row.speed,
                "max_speed_mps": row.max_speed,
                "pace_s_per_km": row.pace,
                "time_s": row.time,
                "cumulative_time_s": row.cumulative_time,
                "effort_ratio": row.effort_ratio,
                "d_prime_balance_m": row.d_prime_balance,
                "gap_m": float(gap[k]),
            }
            for k, row in enumerate(plan.segments)
        ],
    }


def _what_the_plan_holds(plan: RunningPlan) -> str:
    """One line on what the plan's strategy holds to, for the table."""
    if plan.strategy == "even-pace":
        return ("even pace: one speed whose time-weighted mean effort equals the target; "
                f"it runs up to {plan.peak_effort_ratio:.0%} of the target on the hardest piece")
    if plan.strategy == "equal-effort":
        return ("equal effort: every piece at the target effort, never above it "
                "(capped descents below it)")
    return ("fastest: the highest equal effort that critical speed and D′ allow "
            "(every piece at that effort, capped descents below it)")


def plan_as_table(plan: RunningPlan, runner: Runner | None = None,
                  gaps: Sequence[Gap] = ()) -> str:
    """A readable target table.

    Parameters
    ----------
    plan : pacing.plan.running_plan.RunningPlan
        The plan [-].
    runner : pacing.physics.running.Runner or None, optional
        The runner, to name body mass [kg] and CdA [m²] in the title [-].
    gaps : sequence of pacing.course.recording.Gap, optional
        The course's gaps in the recording (Course.gaps): a segment holding a joined one
        ends with a mark, "<- joined gap 12.7 km" [-].

    Returns
    -------
    str
        Km, grade [%], headwind [m/s], paces in min/km and min/mile, split and elapsed times,
        effort per segment as a share of the target [%], D′ balance at each segment's end
        when known [m], marks on segments holding a joined gap, and a finish line [-].
    """
    about_runner = "" if runner is None else (
        f"   runner {runner.body_mass:g} kg, CdA {runner.drag_area:.2f} m²")
    has_balance = plan.d_prime_balance is not None
    lines = [
        f"running plan: {plan.strategy}   flat pace {units.format_pace(1000.0 / plan.flat_speed)}"
        f" /km   effort {plan.effort:.2f} W/kg{about_runner}",
        _what_the_plan_holds(plan),
        f"{'from km':>8} {'to km':>7} {'grade':>7} {'wind':>6} {'min/km':>7} {'min/mi':>7} "
        f"{'time':>8} {'elapsed':>8} {'effort':>7}" + (f" {'D′ m':>6}" if has_balance else ""),
    ]
    for row in plan.segments:
        per_mile = float(units.pace_per_km_to_display(row.pace, "imperial"))
        line = (
            f"{row.start / 1000:8.2f} {row.end / 1000:7.2f} {row.grade:7.1%} "
            f"{row.headwind:+6.1f} {units.format_pace(row.pace):>7} "
            f"{units.format_pace(per_mile):>7} {units.format_duration(row.time):>8} "
            f"{units.format_duration(row.cumulative_time):>8} {row.effort_ratio:7.0%}"
        )
        if has_balance:
            line += f" {row.d_prime_balance:6.0f}"
        lines.append(line)
    lines[3:] = gap_marked(lines[3:], [row.end for row in plan.segments], gaps)
    lines.append(
        f"finish {units.format_duration(plan.finish_time)} over {plan.distance / 1000:.2f} km "
        f"(mean {units.format_pace(1000.0 / plan.average_speed)} /km, max "
        f"{units.format_pace(1000.0 / plan.max_speed)} /km, mean effort "
        f"{plan.mean_effort_ratio:.0%}, peak {plan.peak_effort_ratio:.0%}); "
        "wind: headwind m/s, + against"
    )
    where = plan.min_d_prime_distance
    if plan.min_d_prime_balance is not None and where is not None:
        lines.append(f"lowest D′ balance {plan.min_d_prime_balance:.0f} m at km "
                     f"{where / 1000:.2f}")
    return "\n".join(lines)


def run(args: argparse.Namespace) -> int:
    """Run ``pacing plan --sport running``: print the table or JSON, notices on stderr.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.plan.add_plan_flags with --sport running [-].

    Returns
    -------
    int
        The exit code, 0 [-].

    Raises
    ------
    InputError
        When the flags, the course or the plan cannot be used.
    """
    from pacing.plan.running_plan import RunningPlan

    result, best = make_day_plan(args)
    plan = result.plan
    assert isinstance(plan, RunningPlan)  # a running request makes a running plan
    runner = result.request.runner
    gaps = result.request.course.gaps
    if args.json:
        output = plan_as_dict(plan, runner, gaps)
        output["d_prime_exhausted_at_m"] = result.exhausted_at
        if result.race_day is not None:
            add_segment_weather(output["segments"], result.targets)
            output.update(race_day_as_json(result, best))
        output["warnings"] = warnings_as_text(result.notices)
        output["notices"] = notices_as_json(result.notices)
        report_notices(result.notices, table=False)
        # whole or not at all: a value JSON cannot hold never leaves half a document
        sys.stdout.write(json.dumps(output, indent=2, allow_nan=False) + "\n")
        return 0
    print(with_weather_columns(plan_as_table(plan, runner, gaps), result.targets, header=2))
    for line in (*race_day_lines(result, best), *report_notices(result.notices, table=True)):
        print(line)
    print(RUNNING_CAUTION)
    return 0
