"""``pacing library …``: look into the coach's library, back it up, move it between machines.

    pacing library [--database URL_OR_PATH] list
    pacing library [--database URL_OR_PATH] show athlete|setup|course|plan|review ID [--gpx FILE]
    pacing library [--database URL_OR_PATH] export [--athlete ID] [-o FILE]
    pacing library [--database URL_OR_PATH] import FILE [--on-existing refuse|keep-both]

The library is the SQLite file in the user's data directory unless --database or the
environment variable PACING_DATABASE_URL names another (a file path or an SQLAlchemy URL).
Values are shown in SI units, times as H:MM:SS. ``list`` counts each saved plan's race reviews
and lists every review with its id. Saved plans show the version of pacing that made them, with
the race reviews kept with them (``show review ID`` prints one as JSON); setups
show where their CdA came from (its 95 % interval and the race review) when it was measured.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Any

from pacing.cli import COMMANDS
from pacing.errors import ConflictError, InputError

if TYPE_CHECKING:  # the store (SQLAlchemy) is imported only when a library command runs
    from pacing.store.library import Library
    from pacing.store.records import PlanRecord

#: What `show` can show.
KINDS = ("athlete", "setup", "course", "plan", "review")


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add ``library`` and its actions (list, show, export, import) to the command line.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The ``pacing`` parser's subcommands.
    """
    parser = subparsers.add_parser(
        "library",
        help=COMMANDS["library"],
        description="The coach's library of athletes, setups, courses and saved plans.",
    )
    parser.add_argument("--database", metavar="URL_OR_PATH", default=None,
                        help="SQLite file or SQLAlchemy URL of the library (default: "
                             "$PACING_DATABASE_URL, else library.sqlite3 in the user's data "
                             "folder)")
    actions = parser.add_subparsers(dest="action", required=True, metavar="ACTION")
    actions.add_parser("list", help="list athletes, setups, courses, saved plans and the race "
                                    "reviews kept with them")
    show = actions.add_parser("show", help="show one entry")
    show.add_argument("kind", choices=KINDS)
    show.add_argument("id", type=int)
    show.add_argument("--gpx", metavar="FILE", default=None,
                      help="course: also write its original GPX file here")
    export = actions.add_parser("export", help="write the library (or one athlete) as JSON")
    export.add_argument("--athlete", type=int, default=None, metavar="ID",
                        help="only this athlete with their setups, plans and the plans' courses")
    export.add_argument("-o", "--output", default=None, metavar="FILE",
                        help="write to FILE instead of standard output")
    import_ = actions.add_parser("import", help="add the entries of a library file")
    import_.add_argument("file", help="library file (JSON); '-' reads standard input")
    import_.add_argument("--on-existing", choices=("refuse", "keep-both"), default="refuse",
                         help="when a name of the file is already in the library: refuse the "
                              "file (default) or keep both, the file's entry named "
                              "'NAME (2)'")
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Open the library and run the chosen action.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed command line (``database``, ``action`` and the action's own flags).

    Returns
    -------
    int
        The exit code: 0; a refusal raises InputError (exit code 2 in pacing.cli.main).
    """
    from pacing.store.library import open_library

    try:
        with open_library(args.database) as library:
            return ACTIONS[args.action](library, args)
    except ConflictError as error:
        raise InputError(str(error)) from None


# ---------------------------------------------------------------------------------------------

def clock(seconds: float | None) -> str:
    """A duration as H:MM:SS, rounded to the second; negative values keep their sign.

    Parameters
    ----------
    seconds : float or None
        The duration [s]; None for unknown.

    Returns
    -------
    str
        E.g. ``"1:02:05"``; ``"-"`` for None.
    """
    if seconds is None:
        return "-"
    sign = "-" if seconds < 0 else ""
    total = round(abs(seconds))
    return f"{sign}{total // 3600}:{total % 3600 // 60:02d}:{total % 60:02d}"


def number(value: float | None, digits: int = 1) -> str:
    """A number with a fixed count of decimals, ``"-"`` for None.

    Parameters
    ----------
    value : float or None
        The number, in the unit its label names.
    digits : int
        Decimals shown [-].

    Returns
    -------
    str
        The number as text.
    """
    return "-" if value is None else f"{value:.{digits}f}"


def table(headers: list[str], rows: list[list[str]]) -> str:
    """Plain text columns, left-aligned, two spaces apart.

    Parameters
    ----------
    headers : list of str
        Column titles (with their units).
    rows : list of list of str
        The cells, one list per row, as many as `headers`.

    Returns
    -------
    str
        The lines of the table, without trailing blanks or a final newline.
    """
    cells = [headers] + rows
    widths = [max(len(row[i]) for row in cells) for i in range(len(headers))]
    lines = ["  ".join(cell.ljust(width) for cell, width in zip(row, widths, strict=True))
                       .rstrip()
             for row in cells]
    return "\n".join(lines)


def _section(title: str, headers: list[str], rows: list[list[str]]) -> None:
    """Print a titled table with its entry count (the title alone when it is empty)."""
    print(f"\n{title} ({len(rows)})")
    if rows:
        print(table(headers, rows))


def _list(library: Library, _args: argparse.Namespace) -> int:
    """``library list``: every athlete, setup, course and saved plan, one table each, then
    every race review kept with a plan.

    A saved plan's row counts its reviews (which plans were raced, at a glance); the race
    reviews follow in a table of their own, plan by plan, with their ids for ``show review``
    and the numbers a coach looks for first (planned, ridden, the difference, the CdA on the
    day), so a race is found by its plan or its file without opening every plan."""
    athletes = library.athletes()
    names = {record.id: record.athlete.name for record in athletes}
    courses = library.courses()
    course_names = {course.id: course.name for course in courses}
    print(f"library: {library.location}")
    _section("athletes", ["id", "name", "body mass [kg]", "critical power [W]", "W' [J]"],
             [[str(r.id), r.athlete.name, number(r.athlete.body_mass),
               number(r.athlete.critical_power, 0), number(r.athlete.w_prime, 0)]
              for r in athletes])
    _section("setups", ["id", "athlete", "name", "bike mass [kg]", "CdA [m²]", "Crr"],
             [[str(r.id), names.get(r.athlete_id, str(r.athlete_id)), r.setup.name,
               number(r.setup.bike_mass), number(r.setup.drag_area, 3),
               number(r.setup.rolling_coefficient, 4)] for r in library.setups()])
    _section("courses", ["id", "name", "distance [m]", "ascent [m]", "GPX [bytes]"],
             [[str(c.id), c.name, number(c.distance_m, 0), number(c.ascent_m, 0),
               str(c.gpx_size)] for c in courses])
    plans = library.plans()
    counts = library.review_counts()
    _section("saved plans", ["id", "name", "athlete", "course", "finish", "saved [s]",
                             "race reviews", "updated (UTC)", "made by pacing"],
             [[str(p.id), p.name, names.get(p.athlete_id, "-") if p.athlete_id else "-",
               course_names.get(p.course_id, "-") if p.course_id else "-",
               clock(p.finish_time), number(p.time_saved), str(counts.get(p.id, 0)),
               p.updated_at.strftime("%Y-%m-%d %H:%M"), p.library_version]
              for p in plans])
    plan_names = {p.id: p.name for p in plans}
    rows = []
    for record in library.plan_reviews():
        review_id, *rest = _review_row(record)
        rows.append([review_id, f"{record.plan_id} {plan_names.get(record.plan_id, '')}"
                     .rstrip(), *rest])
    _section("race reviews", ["id", "saved plan", *REVIEW_HEADERS[1:]], rows)
    return 0


def _fields(pairs: list[tuple[str, Any]]) -> str:
    """Label and value pairs, one per line, the values aligned."""
    width = max(len(label) for label, _ in pairs)
    return "\n".join(f"{label.ljust(width)}  {value}" for label, value in pairs)


def _stamps(record: Any) -> list[tuple[str, Any]]:
    """The revision and times of a record (or summary) as _fields pairs."""
    return [("revision", record.revision),
            ("created (UTC)", record.created_at.strftime("%Y-%m-%d %H:%M:%S")),
            ("updated (UTC)", record.updated_at.strftime("%Y-%m-%d %H:%M:%S"))]


def _show(library: Library, args: argparse.Namespace) -> int:
    """``library show KIND ID``: one entry, every value with its unit."""
    if args.gpx is not None and args.kind != "course":
        raise InputError("--gpx only goes with 'show course'")
    SHOW[args.kind](library, args)
    return 0


def _show_athlete(library: Library, args: argparse.Namespace) -> None:
    """An athlete's values, revision and times, setups and saved plans."""
    record = library.athlete(args.id)
    athlete = record.athlete
    print(_fields([
        ("athlete", f"{record.id}  {athlete.name}"),
        ("body mass [kg]", number(athlete.body_mass)),
        ("critical power [W]", number(athlete.critical_power, 0)),
        ("W' [J]", number(athlete.w_prime, 0)),
        ("height [m]", number(athlete.height, 2)),
        ("flat pace [s/km]", number(athlete.flat_pace)),
        ("critical speed [m/s]", number(athlete.critical_speed, 2)),
        ("D' [m]", number(athlete.d_prime, 0)),
        *_stamps(record),
        ("setups", ", ".join(f"{s.id} {s.setup.name}" for s in library.setups(record.id))
         or "-"),
        ("saved plans", ", ".join(f"{p.id} {p.name}" for p in
                                  library.plans(athlete_id=record.id)) or "-"),
    ]))


def _show_setup(library: Library, args: argparse.Namespace) -> None:
    """A setup's values, its athlete, revision and times."""
    record = library.setup(args.id)
    setup = record.setup
    print(_fields([
        ("setup", f"{record.id}  {setup.name}"),
        ("athlete", f"{record.athlete_id}  {library.athlete(record.athlete_id).athlete.name}"),
        ("bike mass [kg]", number(setup.bike_mass, 2)),
        ("CdA [m²]", number(setup.drag_area, 4)),
        *_origin_fields(record),
        ("power share", number(setup.power_share, 3)),
        ("Crr", number(setup.rolling_coefficient, 5)),
        ("drivetrain efficiency", number(setup.drivetrain_efficiency, 3)),
        ("yaw drag table [deg, x]", setup.yaw_drag_table or "-"),
        *_stamps(record),
    ]))


def _origin_fields(record: Any) -> list[tuple[str, Any]]:
    """Where a setup's CdA came from, as _fields pairs ("-" when it was typed in)."""
    origin = record.drag_area_origin
    if origin is None:
        return [("CdA from", "-")]
    return [("CdA 95 % interval [m²]", f"{origin.low_m2:.4f}-{origin.high_m2:.4f}"),
            ("CdA from", origin.source)]


def _show_course(library: Library, args: argparse.Namespace) -> None:
    """A course's summary; with --gpx its original file is written out too."""
    record = library.course(args.id)
    summary = record.summary
    print(_fields([
        ("course", f"{record.id}  {record.name}"),
        ("distance [m]", number(summary.distance_m, 1)),
        ("ascent [m]", number(summary.ascent_m, 1)),
        ("GPX [bytes]", summary.gpx_size),
        ("GPX SHA-256", summary.gpx_sha256),
        *_stamps(summary),
    ]))
    if args.gpx is not None:
        Path(args.gpx).write_bytes(record.gpx)
        print(f"wrote the original GPX file to {args.gpx}")


def _show_saved_plan(library: Library, args: argparse.Namespace) -> None:
    """A saved plan (see _show_plan) and the race reviews kept with it."""
    _show_plan(library.plan(args.id))
    reviews = library.plan_reviews(args.id)
    _section("race reviews", REVIEW_HEADERS, [_review_row(r) for r in reviews])


#: Columns of a table of kept race reviews (_review_row).
REVIEW_HEADERS = ["id", "race file", "SHA-256", "kept (UTC)", "planned", "ridden",
                  "ridden − planned [s]", "CdA on the day [m²]"]


def _review_row(record: Any) -> list[str]:
    """One kept race review as a row of the saved plan's review table."""
    review = record.review
    fitted = review.get("fitted") or {}
    planned, ridden = review["planned_time_s"], review["actual_time_s"]
    return [str(record.id), record.ride_name, record.ride_sha256[:12] + "…",
            record.created_at.strftime("%Y-%m-%d %H:%M"), clock(planned), clock(ridden),
            f"{ridden - planned:+.1f}", number(fitted.get("cda_m2"), 4)]


def _show_review(library: Library, args: argparse.Namespace) -> None:
    """A kept race review: its plan, race file, then the review's JSON as the review command
    prints it."""
    record = library.plan_review(args.id)
    print(_fields([
        ("race review", record.id),
        ("saved plan", f"{record.plan_id}  {library.plan(record.plan_id).name}"),
        ("race file", record.ride_name),
        ("race file SHA-256", record.ride_sha256),
        *_stamps(record),
    ]))
    print("\n" + json.dumps(record.review, indent=2, ensure_ascii=False, allow_nan=False))


def _show_plan(plan: PlanRecord) -> None:
    """A saved plan: links, finish, pacing version, notes, inputs, strategy, weather and its
    target table."""
    summary = plan.summary
    print(_fields([
        ("saved plan", f"{plan.id}  {plan.name}"),
        ("athlete id", summary.athlete_id if summary.athlete_id is not None else "-"),
        ("setup id", summary.setup_id if summary.setup_id is not None else "-"),
        ("course id", summary.course_id if summary.course_id is not None else "-"),
        ("finish time", clock(summary.finish_time)),
        ("time saved [s]", number(summary.time_saved)),
        ("made by pacing", summary.library_version),
        ("notes", summary.notes or "-"),
        *_stamps(summary),
    ]))
    print("\ninputs\n" + json.dumps(plan.inputs, indent=2, ensure_ascii=False, allow_nan=False))
    print("\nstrategy\n" + json.dumps(plan.strategy, indent=2, ensure_ascii=False, allow_nan=False))
    print("\nweather\n" + json.dumps(plan.weather, indent=2, ensure_ascii=False, allow_nan=False))
    print(f"\ntargets ({len(plan.targets)} segments)")
    if plan.targets:
        headers: list[str] = []
        for record in plan.targets:
            headers += [key for key in record if key not in headers]
        print(table(headers, [[_cell(record.get(key)) for key in headers]
                              for record in plan.targets]))


def _cell(value: Any) -> str:
    """A target table cell: 6 significant digits for floats, JSON for lists and dicts."""
    if value is None:
        return "-"
    if isinstance(value, float):
        return f"{value:.6g}"
    if isinstance(value, (dict, list)):
        return json.dumps(value, ensure_ascii=False, allow_nan=False)
    return str(value)


def _export(library: Library, args: argparse.Namespace) -> int:
    """``library export``: the library file to standard output or to -o FILE."""
    from pacing.store.library_export import dump_library_file

    text = dump_library_file(library, args.athlete)
    if args.output is None or args.output == "-":
        sys.stdout.write(text)
    else:
        write_private(Path(args.output), text.encode("utf-8"))
        print(f"wrote {args.output}")
    return 0


def write_private(path: Path, data: bytes) -> None:
    """Write `data` to `path`; a new file is readable by its owner only (0600: a library
    file holds athletes' body mass and physiology), an existing one keeps its permissions.

    Parameters
    ----------
    path : pathlib.Path
        Where to write [-].
    data : bytes
        What to write [bytes].

    Raises
    ------
    InputError
        The file cannot be written, in one line.
    """
    try:
        descriptor = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
        with os.fdopen(descriptor, "wb") as stream:
            stream.write(data)
    except OSError as error:
        raise InputError(f"cannot write {path}: {error.strerror}") from None


def _import(library: Library, args: argparse.Namespace) -> int:
    """``library import FILE``: add a library file's entries ('-' reads standard input).

    The size is checked before the file is read whole (FILE_SIZE_LIMIT), so a file too large
    is refused at once with little memory."""
    from pacing.store.library_file_json import FILE_SIZE_LIMIT, check_file_size
    from pacing.store.library_import import import_library
    from pacing.store.statements import NameTaken

    if args.file == "-":
        data = sys.stdin.buffer.read(FILE_SIZE_LIMIT + 1)
        check_file_size(len(data), exact=False)
    else:
        path = Path(args.file)
        if not path.is_file():
            raise InputError(f"no such file: {args.file}")
        try:
            with path.open("rb") as stream:
                check_file_size(os.fstat(stream.fileno()).st_size)
                data = stream.read(FILE_SIZE_LIMIT + 1)
        except OSError as error:
            raise InputError(f"cannot read {args.file}: {error.strerror}") from None
        check_file_size(len(data))
    try:
        summary = import_library(library, data, on_existing=args.on_existing)
    except NameTaken as taken:
        raise InputError(f"nothing imported: {taken.kind} {taken.name!r} is already in the "
                         "library; import with --on-existing keep-both to add the file's "
                         f"entry as {taken.name + ' (2)'!r}") from None
    print(summary.message())
    return 0


#: What ``library show KIND`` prints, by kind.
SHOW: dict[str, Callable[[Library, argparse.Namespace], None]] = {
    "athlete": _show_athlete, "setup": _show_setup, "course": _show_course,
    "review": _show_review,
    "plan": _show_saved_plan}

#: The function of each action.
ACTIONS: dict[str, Callable[[Library, argparse.Namespace], int]] = {
    "list": _list, "show": _show, "export": _export, "import": _import}
