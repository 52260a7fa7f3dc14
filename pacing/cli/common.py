"""Flags shared by several commands, and their conversion to library objects.

Units on the command line are SI unless a flag says otherwise (`--humidity` in percent,
`--temperature` in °C, `--flat-pace` as M:SS per km, `--target-time` as H:MM:SS).
"""

from __future__ import annotations

import argparse
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.course.geometry import Course
    from pacing.notices import Notice
    from pacing.weather.conditions import Conditions

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
    """Add the GPX file and how it becomes a course and segments (course, plan, compare).

    Parameters
    ----------
    parser : argparse.ArgumentParser
        The command's parser: gets ROUTE, --step [m], --segment-length [m], --flat,
        --track N[,N], --gaps join|drop|refuse and --json [-].
    """
    from pacing.course.gaps import GAP_CHOICES

    parser.add_argument("route", help="GPX file of the course")
    parser.add_argument("--step", type=float, default=None,
                        help="resampling step of the course [m] (default 10)")
    parser.add_argument("--segment-length", type=float, default=None,
                        help="split into segments of this length [m] instead of by terrain "
                             "(grade, turnarounds, at most 2 km)")
    parser.add_argument("--flat", action="store_true",
                        help="treat a course without elevation as flat (with a warning)")
    parser.add_argument("--track", default=None, metavar="N[,N]",
                        help="the tracks of the file that make the course, numbered from 1, "
                             "in this order (default: all, in file order)")
    parser.add_argument("--gaps", choices=GAP_CHOICES, default="join",
                        help="gaps in the recording: join them with a straight line "
                             "(default, with a warning), drop their distance, or refuse "
                             "the file")
    parser.add_argument("--json", action="store_true", help="print JSON instead of a table")


def add_simulation_flags(group: argparse._ActionsContainer) -> None:
    """Add the start speed, descent speed limit and coasting speed of the inertial simulation.

    Parameters
    ----------
    group : argparse parser or argument group
        Gets --start-speed, --max-descent-speed and --coasting-speed, all in [m/s].
    """
    group.add_argument("--start-speed", type=float, default=0.0,
                       help="speed at the start line [m/s] (default 0, standing start)")
    group.add_argument("--max-descent-speed", type=float, default=None,
                       help="speed the rider never exceeds, braking on descents [m/s] "
                            "(default: no limit)")
    group.add_argument("--coasting-speed", type=float, default=None,
                       help="above this speed the rider stops pedalling [m/s] "
                            "(default: always pedal)")


def add_air_flags(parser: argparse.ArgumentParser) -> None:
    """Add the air and wind flags, shared by plan, compare and fieldtest.

    Parameters
    ----------
    parser : argparse.ArgumentParser
        Gets a group "air and wind": --temperature [°C], --humidity [%],
        --sea-level-pressure [Pa], --pressure-kind, --wind-speed [m/s], --wind-from [deg],
        --wind-height [m] and --roughness [m].
    """
    group = parser.add_argument_group("air and wind")
    group.add_argument("--temperature", type=float, default=20.0,
                       help="air temperature at the start [°C] (default 20)")
    group.add_argument("--humidity", type=float, default=50.0,
                       help="relative humidity [%%] (default 50)")
    group.add_argument("--sea-level-pressure", type=float, default=101325.0,
                       help="pressure reduced to sea level [Pa] (default 101325), or the "
                            "station pressure with --pressure-kind station")
    group.add_argument("--pressure-kind", choices=("qnh", "mslp", "station"), default="qnh",
                       help="what --sea-level-pressure is: qnh (default; reduced by the "
                            "standard atmosphere, the altimeter setting), mslp (mean-sea-level "
                            "pressure as weather services publish it) or station (measured at "
                            "the start's elevation)")
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
    """Check the shared air and wind flags, for every command that has them.

    A wind speed without its direction is refused (silently taking "from the north" would
    mislead); without wind, --wind-from is set to 0 deg. A humidity of 1 % or less is taken as
    typed, with a warning that the flag is in percent.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags; --wind-from may be filled in [deg].

    Raises
    ------
    InputError
        When --wind-speed is above 0 m/s without --wind-from.
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
    """Add the rider and bike flags (--cda and --drafting serve running too).

    Parameters
    ----------
    parser : argparse.ArgumentParser
        Gets a group "rider and bike": --mass [kg], --cda [m²], --crr [-], --efficiency [-]
        and --drafting [%].
    """
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
    """Refuse bad input in one line.

    Parameters
    ----------
    condition : bool
        What must hold [-].
    message : str
        The one-line refusal when it does not [-].

    Raises
    ------
    InputError
        With `message`, unless `condition` holds.
    """
    if not condition:
        raise InputError(message)


def conditions_from_args(args: argparse.Namespace) -> Conditions:
    """The race-day air of the air and wind flags.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of `add_air_flags`, humidity in percent [%].

    Returns
    -------
    pacing.weather.conditions.Conditions
        Temperature [°C], relative humidity as a fraction [-], sea-level pressure [Pa], wind
        speed [m/s], direction [deg], height [m] and roughness length [m].
    """
    from pacing.weather.conditions import Conditions

    return Conditions(
        temperature=args.temperature,
        relative_humidity=args.humidity / 100.0,
        sea_level_pressure=args.sea_level_pressure,
        wind_speed=args.wind_speed,
        wind_from=args.wind_from,
        wind_height=args.wind_height,
        roughness_length=args.roughness,
        pressure_kind=getattr(args, "pressure_kind", "qnh"),
    )


def load_course_and_bounds(args: argparse.Namespace) -> tuple[Course, np.ndarray]:
    """The course of the GPX file and its segment bounds (by grade, or every N metres).

    Parameters
    ----------
    args : argparse.Namespace
        The flags of `add_course_flags`: route, step [m], segment_length [m], flat, track,
        gaps [-].

    Returns
    -------
    tuple of (Course, numpy.ndarray)
        The course and its segment boundary point indices [-]. What reading found (gaps,
        elevations) is on `course.notices`; the planning chain puts it first among a plan's
        notices, so each command reports it once with the rest.

    Raises
    ------
    InputError
        When the file cannot be read as a course.
    """

    from pacing.course.recording import parse_track_choice
    from pacing.course.segments import split_by_grade, split_every
    from pacing.io.gpx import load_course

    course = load_course(args.route, step=args.step, allow_missing_elevation=args.flat,
                         tracks=parse_track_choice(getattr(args, "track", None)),
                         gaps=getattr(args, "gaps", "join"))
    bounds = (split_every(course, args.segment_length) if args.segment_length is not None
              else split_by_grade(course))
    return course, bounds


def notices_as_json(notices: Iterable[Notice]) -> list[dict[str, Any]]:
    """The planning chain's notices for JSON output.

    Parameters
    ----------
    notices : iterable of pacing.notices.Notice
        What the chain says beside the numbers [-].

    Returns
    -------
    list of dict
        One {"code", "level", "values", "text"} per notice: values in SI, text in metric
        words [-].
    """
    from pacing.display.notices import describe

    return [{**n.as_dict(), "text": describe(n, "metric")} for n in notices]


def warnings_as_text(notices: Iterable[Notice]) -> list[str]:
    """The text of the warning-level notices, for the JSON's "warnings".

    Parameters
    ----------
    notices : iterable of pacing.notices.Notice
        What the chain says beside the numbers [-].

    Returns
    -------
    list of str
        One sentence in metric words per warning, in order (notes left out) [-].
    """
    from pacing.display.notices import describe

    return [describe(n, "metric") for n in notices if n.level == "warning"]


def report_notices(notices: Sequence[Notice], table: bool) -> list[str]:
    """Send the warnings to stderr and give the notes as lines for a table.

    Warnings go to stderr, one line each ("pacing: warning: …", as every warning of the
    command line); notes come back as lines to print under a table ("note: …"), none for
    JSON (the JSON carries every notice under "notices").

    Parameters
    ----------
    notices : sequence of pacing.notices.Notice
        What the chain says beside the numbers [-].
    table : bool
        True for a readable table, False for JSON output [-].

    Returns
    -------
    list of str
        The notes in metric words, "note: …" (empty for JSON) [-].
    """
    import warnings

    from pacing.display.notices import describe, labelled

    for notice in notices:
        if notice.level == "warning":
            warnings.warn(describe(notice, "metric"), UserWarning, stacklevel=2)
    return [labelled(n, "metric") for n in notices if n.level != "warning"] if table else []


# ------------------------------------------------------------------------------ race day
