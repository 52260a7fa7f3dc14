"""Flags shared by several commands, and their conversion to library objects.

Units on the command line are SI unless a flag says otherwise (`--humidity` in percent,
`--temperature` in °C, `--flat-pace` as M:SS per km, `--target-time` as H:MM:SS).
"""

from __future__ import annotations

import argparse

from pacing.errors import InputError

CAUTION = (
    "Caution: predicted speeds, above all on descents, are model estimates, not safe limits. "
    "Ride within your skills and the road; obey traffic law and race rules. Consult a physician "
    "before hard efforts."
)
"""Printed under every human-readable cycling prediction (not in JSON output)."""

RUNNING_CAUTION = (
    "Caution: predicted paces, above all on descents, are model estimates, not safe limits. "
    "Run within your skills and the footing; obey traffic law and race rules. Consult a "
    "physician before hard efforts, and take heat seriously."
)
"""Printed under every human-readable running prediction (not in JSON output)."""


def add_course_flags(parser: argparse.ArgumentParser) -> None:
    """The GPX file and how it becomes a course and segments (course, plan, compare)."""
    parser.add_argument("route", help="GPX file of the course")
    parser.add_argument("--step", type=float, default=None,
                        help="resampling step of the course [m] (default 10)")
    parser.add_argument("--segment-length", type=float, default=None,
                        help="split into segments of this length [m] instead of by terrain "
                             "(grade, turnarounds, at most 2 km)")
    parser.add_argument("--flat", action="store_true",
                        help="treat a course without elevation as flat (with a warning)")
    parser.add_argument("--json", action="store_true", help="print JSON instead of a table")


def add_simulation_flags(group) -> None:
    """Start speed, descent speed limit and coasting speed of the inertial simulation."""
    group.add_argument("--start-speed", type=float, default=0.0,
                       help="speed at the start line [m/s] (default 0, standing start)")
    group.add_argument("--max-descent-speed", type=float, default=None,
                       help="speed the rider never exceeds, braking on descents [m/s] "
                            "(default: no limit)")
    group.add_argument("--coasting-speed", type=float, default=None,
                       help="above this speed the rider stops pedalling [m/s] "
                            "(default: always pedal)")


def add_air_flags(parser: argparse.ArgumentParser) -> None:
    """Air and wind flags (issue: cycling physics), shared by plan, compare and fieldtest."""
    group = parser.add_argument_group("air and wind")
    group.add_argument("--temperature", type=float, default=20.0,
                       help="air temperature at the start [°C] (default 20)")
    group.add_argument("--humidity", type=float, default=50.0,
                       help="relative humidity [%%] (default 50)")
    group.add_argument("--sea-level-pressure", type=float, default=101325.0,
                       help="pressure reduced to sea level [Pa] (default 101325)")
    group.add_argument("--wind-speed", type=float, default=0.0,
                       help="wind speed at the measurement height [m/s] (default 0)")
    group.add_argument("--wind-from", type=float, default=None,
                       help="direction the wind blows FROM [deg clockwise from north, 0-360]; "
                            "required with --wind-speed")
    group.add_argument("--wind-height", type=float, default=10.0,
                       help="height of the wind measurement [m] (default 10, weather reports)")
    group.add_argument("--roughness", type=float, default=0.03,
                       help="terrain roughness length z0 [m] (default 0.03, open terrain)")


def check_shared_flags(args: argparse.Namespace) -> None:
    """Checks of the shared air and wind flags, for every command that has them.

    A wind speed without its direction is refused (silently taking "from the north" would
    mislead); a humidity of 1 % or less is taken as typed, with a warning that the flag is in
    percent.
    """
    import warnings

    if hasattr(args, "wind_from"):
        if args.wind_from is None:
            require(not (args.wind_speed or 0.0) > 0.0,
                    "give --wind-from (the direction the wind blows FROM, degrees from north) "
                    "with --wind-speed")
            args.wind_from = 0.0
    humidity = getattr(args, "humidity", None)
    if humidity is not None and 0.0 < humidity <= 1.0:
        warnings.warn(f"--humidity is in percent: taking {humidity:g} %, not {100 * humidity:g} %",
                      stacklevel=2)


def add_rider_flags(parser: argparse.ArgumentParser) -> None:
    """Cycling rider flags."""
    group = parser.add_argument_group("rider and bike")
    group.add_argument("--mass", type=float, default=80.0,
                       help="rider + bike + kit [kg] (default 80)")
    group.add_argument("--cda", type=float, default=None,
                       help="drag area CdA [m²] (default 0.30 cycling; from height and mass "
                            "running)")
    group.add_argument("--crr", type=float, default=0.0032,
                       help="rolling resistance coefficient (default 0.0032)")
    group.add_argument("--efficiency", type=float, default=0.976,
                       help="drivetrain efficiency (default 0.976)")
    group.add_argument("--drafting", type=float, default=0.0,
                       help="drag reduction from drafting [%%] (default 0)")


def require(condition: bool, message: str) -> None:
    """Raise InputError(message) unless condition holds."""
    if not condition:
        raise InputError(message)


def conditions_from_args(args: argparse.Namespace):
    """The race-day air of the air and wind flags (humidity given in percent)."""
    from pacing.weather.conditions import Conditions

    return Conditions(
        temperature=args.temperature,
        relative_humidity=args.humidity / 100.0,
        sea_level_pressure=args.sea_level_pressure,
        wind_speed=args.wind_speed,
        wind_from=args.wind_from,
        wind_height=args.wind_height,
        roughness_length=args.roughness,
    )


def load_course_and_bounds(args: argparse.Namespace):
    """The course of the GPX file and its segment bounds (by grade, or every N metres)."""
    from pacing.course.segments import split_by_grade, split_every
    from pacing.io.gpx import load_course

    course = load_course(args.route, step=args.step, allow_missing_elevation=args.flat)
    bounds = (split_every(course, args.segment_length) if args.segment_length is not None
              else split_by_grade(course))
    return course, bounds


def notices_as_json(notices) -> list[dict]:
    """The planning chain's notices for JSON output: code, level, values (SI) and text."""
    from pacing.display.notices import describe

    return [{**n.as_dict(), "text": describe(n, "metric")} for n in notices]


def report_notices(notices, table: bool) -> list[str]:
    """Warnings go to stderr, one line each ("pacing: warning: …", as every warning of the
    command line); returns the notes as lines to print under a table ("note: …"), none for
    JSON (the JSON carries every notice under "notices")."""
    import warnings

    from pacing.display.notices import describe, labelled

    for notice in notices:
        if notice.level == "warning":
            warnings.warn(describe(notice, "metric"), UserWarning, stacklevel=2)
    return [labelled(n, "metric") for n in notices if n.level != "warning"] if table else []
