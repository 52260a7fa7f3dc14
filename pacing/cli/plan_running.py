"""``pacing plan ROUTE.gpx --sport running …``: running paces on a course (pacing.running).

The effort is a flat-ground pace in still air (``--flat-pace M:SS`` per km), or critical speed
and D′ (``--critical-speed``, ``--d-prime``). Strategies: equal-effort (default), even-pace,
fastest (needs critical speed and D′). Prints a table in min/km and min/mile, or JSON.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

from pacing import units
from pacing.athlete import Athlete
from pacing.cli.common import CAUTION
from pacing.conditions import Conditions, air_along_course
from pacing.course import split_by_grade, split_every
from pacing.errors import InputError
from pacing.io.gpx import load_course
from pacing.running import (
    RUNNING_STRATEGIES,
    Runner,
    RunningPlan,
    critical_speed_flat_race_time,
    plan_equal_effort,
    plan_even_pace,
    plan_fastest,
)


def runner_from_args(args: argparse.Namespace) -> Runner:
    """The Runner of the flags: --body-mass, --height or --cda, --drafting [%]."""
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


def conditions_from_args(args: argparse.Namespace) -> Conditions:
    """The race-day air of the air and wind flags (humidity given in percent)."""
    return Conditions(
        temperature=args.temperature,
        relative_humidity=args.humidity / 100.0,
        sea_level_pressure=args.sea_level_pressure,
        wind_speed=args.wind_speed,
        wind_from=args.wind_from,
        wind_height=args.wind_height,
        roughness_length=args.roughness,
    )


def validate_args(args: argparse.Namespace) -> None:
    """One-line InputError for flags out of range, before any file is read."""
    for flag in ("body_mass", "height", "cda", "drafting", "critical_speed", "d_prime",
                 "temperature", "humidity", "sea_level_pressure", "wind_speed", "wind_from",
                 "wind_height", "roughness", "step", "segment_length"):
        value = getattr(args, flag, None)
        if value is not None and not math.isfinite(value):
            raise InputError(f"--{flag.replace('_', '-')} must be a finite number, got {value}")
    if not 0.0 <= args.humidity <= 100.0:
        raise InputError(f"--humidity must be 0-100 %, got {args.humidity:g}")


def make_plan(args: argparse.Namespace) -> RunningPlan:
    """Load the course and compute the running plan the flags ask for."""
    validate_args(args)
    strategy = args.strategy or "equal-effort"
    if strategy not in RUNNING_STRATEGIES:
        raise InputError(
            f"--strategy for running must be one of {', '.join(RUNNING_STRATEGIES)}, "
            f"got {strategy!r}"
        )
    runner = runner_from_args(args)
    conditions = conditions_from_args(args)
    course = load_course(args.route, step=args.step, allow_missing_elevation=args.flat)
    air = air_along_course(course, conditions)
    bounds = (split_every(course, args.segment_length) if args.segment_length is not None
              else split_by_grade(course))
    air_args = dict(air_density=air.density, headwind=air.headwind, crosswind=air.crosswind,
                    bounds=bounds)
    has_critical = args.critical_speed is not None and args.d_prime is not None
    if strategy == "fastest":
        if not has_critical:
            raise InputError("--strategy fastest needs --critical-speed and --d-prime")
        return plan_fastest(course, runner, args.critical_speed, args.d_prime, **air_args)
    if args.flat_pace is not None:
        flat_speed = 1000.0 / units.parse_clock(args.flat_pace, "--flat-pace")
    elif has_critical:
        # the pace that spends D′ exactly over this distance on flat ground (CS model)
        flat_speed = course.total_distance / critical_speed_flat_race_time(
            course.total_distance, args.critical_speed, args.d_prime)
    else:
        raise InputError("running needs --flat-pace M:SS (per km), or --critical-speed and "
                         "--d-prime")
    plan = plan_equal_effort if strategy == "equal-effort" else plan_even_pace
    return plan(course, runner, flat_speed, **air_args)


def plan_as_dict(plan: RunningPlan, runner: Runner | None = None) -> dict:
    """JSON-ready numbers (SI units; paces in seconds per km)."""
    about_runner = {} if runner is None else {
        "body_mass_kg": runner.body_mass, "drag_area_m2": runner.drag_area}
    return {
        "sport": "running",
        "strategy": plan.strategy,
        **about_runner,
        "finish_time_s": plan.finish_time,
        "distance_m": plan.distance,
        "average_speed_mps": plan.average_speed,
        "flat_pace_s_per_km": 1000.0 / plan.flat_speed,
        "effort_w_per_kg": plan.effort,
        "mean_effort_ratio": plan.mean_effort_ratio,
        "notes": list(plan.notes),
        "segments": [
            {
                "start_m": row.start,
                "end_m": row.end,
                "grade": row.grade,
                "headwind_mps": row.headwind,
                "speed_mps": row.speed,
                "pace_s_per_km": row.pace,
                "time_s": row.time,
                "cumulative_time_s": row.cumulative_time,
                "effort_ratio": row.effort_ratio,
            }
            for row in plan.segments
        ],
    }


def plan_as_table(plan: RunningPlan, runner: Runner | None = None) -> str:
    """A readable target table: paces in min/km and min/mile."""
    about_runner = "" if runner is None else (
        f"   runner {runner.body_mass:g} kg, CdA {runner.drag_area:.2f} m²")
    lines = [
        f"running plan: {plan.strategy}   flat pace {units.format_pace(1000.0 / plan.flat_speed)}"
        f" /km   effort {plan.effort:.2f} W/kg{about_runner}",
        f"{'from km':>8} {'to km':>7} {'grade':>7} {'wind':>6} {'min/km':>7} {'min/mi':>7} "
        f"{'time':>8} {'elapsed':>8} {'effort':>7}",
    ]
    for row in plan.segments:
        per_mile = float(units.pace_per_km_to_display(row.pace, "imperial"))
        lines.append(
            f"{row.start / 1000:8.2f} {row.end / 1000:7.2f} {row.grade:7.1%} "
            f"{row.headwind:+6.1f} {units.format_pace(row.pace):>7} "
            f"{units.format_pace(per_mile):>7} {units.format_duration(row.time):>8} "
            f"{units.format_duration(row.cumulative_time):>8} {row.effort_ratio:7.0%}"
        )
    lines.append(
        f"finish {units.format_duration(plan.finish_time)} over {plan.distance / 1000:.2f} km "
        f"(mean {units.format_pace(1000.0 / plan.average_speed)} /km, mean effort "
        f"{plan.mean_effort_ratio:.0%}); wind: headwind m/s, + against"
    )
    lines.extend(f"note: {note}" for note in plan.notes)
    return "\n".join(lines)


def run(args: argparse.Namespace) -> int:
    """Run ``pacing plan --sport running``; returns the exit code."""
    plan = make_plan(args)
    runner = runner_from_args(args)
    if args.json:
        json.dump(plan_as_dict(plan, runner), sys.stdout, indent=2)
        sys.stdout.write("\n")
    else:
        print(plan_as_table(plan, runner))
        print(CAUTION)
    return 0
