"""``pacing review ROUTE.gpx RIDE.(csv|gpx) …``: a ridden race against its plan.

The plan is described by the same flags as ``pacing plan`` (athlete, setup, air and weather,
strategy; they are the plan's, made through the same chain, pacing.cli.plan_cycling); the ride
is read by pacing.io.rides.read_race. The review (pacing.review.race.review_race) places the
ride on the course, fits CdA, Crr and — unless the day's wind is given with --day-wind-speed —
the wind on the day, compares segment by segment and splits the time difference by cause.

Output: a table (segments, the split, the fitted drag area; warnings on stderr, notes under
it), or with --json the numbers: planned_time_s, actual_time_s, segments, attribution, fitted,
warnings (every notice: code, level, values, text), and alignment, day_conditions,
attribution_detail. --csv FILE and --xlsx FILE write the review table (pacing.io.review_file).
--save-to-plan ID keeps that JSON, with the race file's name and SHA-256, with a saved plan of
the library (pacing.store.library_reviews; see ``pacing library show plan ID``);
--keep-cda-on-setup ID stores the CdA on the day on a setup of the library, with its interval
and the race it came from (see ``pacing library show setup ID``).
"""

from __future__ import annotations

import argparse
import json
import math
import sys
from typing import TYPE_CHECKING, Any

from pacing.cli import COMMANDS
from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.review.race import RaceReview
    from pacing.weather.conditions import Conditions

BOOTSTRAP_LIMIT = 10_000
"""Most bootstrap draws of the drag-area fit accepted on the command line."""


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``review`` command: the plan's flags (as ``plan``), the ride and the day's.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The subcommands of ``pacing`` [-].
    """
    from pacing.cli.plan import add_plan_flags

    parser = subparsers.add_parser(
        "review", help=COMMANDS["review"],
        description="Review a ridden race against its plan: where time was won or lost, why, "
                    "and the drag area on the day. The plan's flags are those of 'pacing plan'.")
    add_plan_flags(parser)
    parser.add_argument("ride", help="the race file: CSV (as the field test reads) or GPX with "
                                     "power (and speed) in the track-point extensions")
    day = parser.add_argument_group(
        "the day", "the weather met, when known (else the wind is estimated from the ride)")
    day.add_argument("--day-wind-speed", type=float, default=None,
                     help="wind speed on the day at --wind-height [m/s]")
    day.add_argument("--day-wind-from", type=float, default=None,
                     help="direction the day's wind blew FROM [deg clockwise from north]")
    day.add_argument("--day-temperature", type=float, default=None,
                     help="air temperature on the day at the start [°C]")
    day.add_argument("--no-fit", action="store_true",
                     help="keep the planned CdA and Crr (no fit of the drag area on the day)")
    day.add_argument("--bootstrap", type=int, default=200,
                     help="bootstrap draws of the fit's intervals (default 200; 0: none)")
    parser.add_argument("--csv", default=None, metavar="FILE",
                        help="also write the review table as CSV")
    parser.add_argument("--xlsx", default=None, metavar="FILE",
                        help="also write the review table as an Excel workbook")
    keep = parser.add_argument_group("the library", "keep the review with the saved plan")
    keep.add_argument("--save-to-plan", type=int, default=None, metavar="ID",
                      help="keep the review (its JSON, the race file's name and SHA-256) with "
                           "this saved plan of the library")
    keep.add_argument("--keep-cda-on-setup", type=int, default=None, metavar="ID",
                      help="store the CdA on the day on this setup of the library, with its "
                           "95 %% interval and the race it came from")
    keep.add_argument("--database", metavar="URL_OR_PATH", default=None,
                      help="the library (default: $PACING_DATABASE_URL, else the user's "
                           "library file)")
    parser.set_defaults(run=run)


def _checked_day_flags(args: argparse.Namespace) -> None:
    """Refuse the day's flags out of range, in one line."""
    for flag in ("day_wind_speed", "day_wind_from", "day_temperature"):
        value = getattr(args, flag)
        if value is not None and not math.isfinite(value):
            raise InputError(f"--{flag.replace('_', '-')} must be a finite number")
    if args.day_wind_speed is not None and args.day_wind_speed < 0:
        raise InputError(f"--day-wind-speed must be >= 0 m/s, got {args.day_wind_speed:g}")
    if (args.day_wind_speed or 0.0) > 0 and args.day_wind_from is None:
        raise InputError("give --day-wind-from (the direction the wind blew FROM) with "
                         "--day-wind-speed")
    if not 0 <= args.bootstrap <= BOOTSTRAP_LIMIT:
        raise InputError(f"--bootstrap must be 0-{BOOTSTRAP_LIMIT}, got {args.bootstrap}")


def day_conditions_from_args(args: argparse.Namespace, plan: Conditions) -> Conditions | None:
    """The day's conditions: the plan's with the day's flags, None when none is given.

    Parameters
    ----------
    args : argparse.Namespace
        --day-wind-speed [m/s], --day-wind-from [deg], --day-temperature [°C].
    plan : pacing.weather.conditions.Conditions
        The plan's conditions.

    Returns
    -------
    pacing.weather.conditions.Conditions or None
    """
    import dataclasses

    changes: dict[str, Any] = {}
    if args.day_wind_speed is not None:
        changes["wind_speed"] = args.day_wind_speed
        changes["wind_from"] = args.day_wind_from if args.day_wind_from is not None else 0.0
    if args.day_temperature is not None:
        changes["temperature"] = args.day_temperature
    return dataclasses.replace(plan, **changes) if changes else None


def review_as_dict(review: RaceReview) -> dict[str, Any]:
    """The review's JSON (module docstring), SI with the unit in each key.

    Parameters
    ----------
    review : pacing.review.race.RaceReview
        The review.

    Returns
    -------
    dict
        JSON-ready, no NaN.
    """
    from pacing.cli.common import notices_as_json

    return review.as_json(notices_as_json)


def review_as_table(review: RaceReview) -> str:
    """The review for the terminal: the segments, the split and the drag area on the day."""
    from pacing.display.units import format_duration

    lines = [f"planned {format_duration(review.planned_time)}   ridden "
             f"{format_duration(review.actual_time)}   "
             f"{review.actual_time - review.planned_time:+.1f} s",
             "",
             f"{'from km':>8} {'to km':>7} {'planned':>8} {'ridden':>8} {'lost s':>7} "
             f"{'plan W':>6} {'ridden W':>8}"]
    for s in review.segments:
        lines.append(f"{s.start / 1000:8.2f} {s.end / 1000:7.2f} "
                     f"{format_duration(s.planned_time):>8} {format_duration(s.actual_time):>8} "
                     f"{s.delta:+7.1f} {s.planned_power:6.0f} {s.actual_power:8.0f}")
    lines += ["", "where the time went (s, positive: slower than planned):"]
    for key, value in review.attribution.parts().items():
        lines.append(f"  {key.removesuffix('_s'):<8} {value:+8.1f}")
    if review.fitted is not None:
        fit = review.fitted.as_json()
        interval = fit["cda_ci95"]
        shown = f" (95 % {interval[0]:.3f}-{interval[1]:.3f})" if interval else ""
        lines += ["", f"CdA on the day {fit['cda_m2']:.3f} m²{shown}, Crr {fit['crr']:.4f}, "
                      f"wind {fit['wind_speed_mps']:.1f} m/s from {fit['wind_from_deg']:.0f}°",
                  f"plan the next race with it: pacing plan … --cda {fit['cda_m2']:.3f}"]
    return "\n".join(lines)


def review_from_args(args: argparse.Namespace) -> RaceReview:
    """Plan as ``pacing plan`` would, read the ride and review it.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of `add_parser`.

    Returns
    -------
    pacing.review.race.RaceReview

    Raises
    ------
    InputError
        For bad flags, files, a running plan or a ride that cannot be placed on the course.
    """
    from pacing.cli.plan_cycling import plan_day_from_args
    from pacing.io.rides import read_race
    from pacing.review.race import review_race

    if args.sport != "cycling":
        raise InputError("the race review is for cycling: --sport running is not reviewed")
    _checked_day_flags(args)
    recording = read_race(args.ride)
    result, _, _ = plan_day_from_args(args)
    day = day_conditions_from_args(args, result.request.conditions)
    return review_race(result, recording, day_conditions=day, fit=not args.no_fit,
                       bootstrap=args.bootstrap)


def keep_with_plan(review: RaceReview, args: argparse.Namespace) -> str:
    """Keep the review (review_as_dict) with the saved plan --save-to-plan of the library, when
    that plan is the one reviewed: its finish time the planned time of these flags (within
    pacing.store.library_reviews.SAME_PLAN_TOLERANCE; InputError otherwise).

    Parameters
    ----------
    review : pacing.review.race.RaceReview
    args : argparse.Namespace
        ``save_to_plan`` (plan id), ``database`` (None: the default library) and ``ride``.

    Returns
    -------
    str
        One line saying what was kept where.
    """
    from pathlib import Path

    from pacing.display.units import format_duration
    from pacing.errors import ConflictError
    from pacing.store.library import open_library
    from pacing.store.library_reviews import ride_digest, same_plan_time

    ride = Path(args.ride)
    try:
        with open_library(args.database) as library:
            saved = library.plan(args.save_to_plan).summary
            if not same_plan_time(saved.finish_time, review.planned_time):
                raise InputError(
                    f"saved plan {saved.id} ({saved.name!r}) finishes in "
                    f"{format_duration(saved.finish_time)}, the plan of these flags in "
                    f"{format_duration(review.planned_time)}: give the flags the saved plan "
                    "was made with, so the review kept with it is a review of it")
            kept = library.add_plan_review(args.save_to_plan, review_as_dict(review),
                                           ride_name=ride.name,
                                           ride_sha256=ride_digest(ride.read_bytes()))
            plan_name = library.plan(kept.plan_id).name
    except ConflictError as error:
        raise InputError(str(error)) from None
    return (f"kept the review of {ride.name} with saved plan {kept.plan_id} "
            f"({plan_name!r}) as race review {kept.id}")


def keep_cda_on_setup(review: RaceReview, args: argparse.Namespace) -> str:
    """Store the CdA on the day (rounded to 0.0001 m²) on the setup --keep-cda-on-setup, with
    its 95 % interval widened outward to 0.0001 m² and its source "race review of <file>,
    <today>" (pacing.store.drag_origin).

    Returns
    -------
    str
        One line saying what was stored.
    """
    import dataclasses
    import datetime
    from pathlib import Path

    from pacing.errors import ConflictError
    from pacing.store.drag_origin import fitted_drag_area, race_review_source
    from pacing.store.library import open_library

    if review.fitted is None:
        raise InputError("the drag area was not fitted: there is no CdA on the day to keep")
    fit = review.fitted.as_json()
    today = datetime.datetime.now(datetime.UTC).date()
    cda, origin = fitted_drag_area(fit["cda_m2"], fit["cda_ci95"],
                                   race_review_source(Path(args.ride).name, today))
    try:
        with open_library(args.database) as library:
            record = library.setup(args.keep_cda_on_setup)
            stored = library.update_setup(record.id,
                                          dataclasses.replace(record.setup, drag_area=cda),
                                          revision=record.revision, drag_area_origin=origin)
    except ConflictError as error:
        raise InputError(str(error)) from None
    interval = ("" if origin is None
                else f" (95 % interval {origin.low_m2:.4f}-{origin.high_m2:.4f} m²)")
    return f"setup {stored.id} ({stored.setup.name!r}) now has CdA {cda:.4f} m²{interval}"


def run(args: argparse.Namespace) -> int:
    """Run ``pacing review``: the table or JSON on stdout, the CSV when asked.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of `add_parser`.

    Returns
    -------
    int
        0.
    """
    from pacing.cli.common import CAUTION, report_notices

    for flag in ("save_to_plan", "keep_cda_on_setup"):
        if getattr(args, flag) is not None and getattr(args, flag) < 1:
            raise InputError(f"--{flag.replace('_', '-')} must be a library id (1 or more), "
                             f"got {getattr(args, flag)}")
    if args.keep_cda_on_setup is not None and args.no_fit:
        raise InputError("--keep-cda-on-setup needs the fit of the day (drop --no-fit)")
    review = review_from_args(args)
    said = sys.stderr if args.json else sys.stdout
    if args.save_to_plan is not None:
        print(keep_with_plan(review, args), file=said)
    if args.keep_cda_on_setup is not None:
        print(keep_cda_on_setup(review, args), file=said)
    if args.csv:
        from pacing.io.review_file import write_review_csv

        write_review_csv(review, args.csv)
    if args.xlsx:
        from pacing.io.review_file import write_review_xlsx

        write_review_xlsx(review, args.xlsx)
    if args.json:
        json.dump(review_as_dict(review), sys.stdout, indent=2, allow_nan=False)
        print()
        return 0
    notes = report_notices(review.notices, table=True)
    print(review_as_table(review))
    for line in notes:
        print(line)
    print(CAUTION)
    return 0
