"""The library file: the whole library, or one athlete's part of it, as one JSON document, for
backup and for moving between machines. A format of our own design:

```
{
  "format": "pacing library",          # marks the file
  "format_version": 1,                 # FORMAT_VERSION; files from a newer pacing are refused
  "exported_at": "2026-12-01T22:30:00+00:00",
  "exported_by": "pacing 0.1.0",
  "athletes": [{"id": 1, "name": "Ann", "body_mass": 61.0, "critical_power": 250.0,
                "w_prime": 18000.0, "height": 1.68, "flat_pace": null,
                "critical_speed": null, "d_prime": null,
                "created_at": "...", "updated_at": "...",
                "setups": [{"id": 4, "name": "TT bike", "bike_mass": 8.9, "drag_area": 0.23,
                            "power_share": 0.95, "rolling_coefficient": 0.003,
                            "drivetrain_efficiency": 0.976, "yaw_drag_table": null,
                            "created_at": "...", "updated_at": "..."}]}],
  "courses": [{"id": 2, "name": "Hill loop", "distance_m": 41250.0, "ascent_m": 610.0,
               "gpx_sha256": "<hex>", "gpx_base64": "<the original GPX file>",
               "created_at": "...", "updated_at": "..."}],
  "plans": [{"id": 9, "name": "Race day", "inputs": {"athlete_id": 1, "setup_id": 4,
                                                   "course_id": 2, ...},
             "strategy": ..., "weather": ..., "targets": [{...}, ...],
             "time_saved": 41.5, "finish_time": 3725.0, "library_version": "0.1.0",
             "notes": "", "created_at": "...", "updated_at": "..."}]
}
```

Ids are those of the exporting library; the plans' link keys (``athlete_id``, ``setup_id``,
``course_id`` in their inputs) refer to them. Import gives every entry a new id and rewrites
those links. Units: SI as everywhere in pacing (kg, W, J, m, s/km for flat pace, m/s, m², s).

Import reads and checks the whole file first (structure, numbers, athlete and setup ranges,
the GPX checksums, every link) and refuses a bad file with a one-line InputError naming the
place; only then does it write everything in one transaction, so the database is either
unchanged or holds the whole file. A course whose GPX file and name are already in the library
is not stored twice.
"""

from __future__ import annotations

import base64
import binascii
import datetime
import hashlib
import json
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection

import pacing
from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.store import jsontext
from pacing.store.database import as_utc
from pacing.store.library import Library, insert_row, resolve_plan_links
from pacing.store.records import PLAN_LINK_KEYS, PLAN_RESULT_KEYS
from pacing.store.rows import (
    ATHLETE_NUMBERS,
    SETUP_NUMBERS,
    athlete_from_row,
    athlete_row,
    check_id,
    check_name,
    course_row,
    plan_inputs_text,
    plan_result_values,
    plural,
    setup_from_row,
    setup_row,
)
from pacing.store.schema import athletes, courses, plans, setups

#: Value of the file's "format" field.
FORMAT_NAME = "pacing library"
#: Version of the format this pacing writes; it reads this one and older.
FORMAT_VERSION = 1

_STAMPS = ("created_at", "updated_at")
_ATHLETE_KEYS = {"id", "name", *ATHLETE_NUMBERS, "setups", *_STAMPS}
_SETUP_KEYS = {"id", "name", *SETUP_NUMBERS, "yaw_drag_table", *_STAMPS}
_COURSE_KEYS = {"id", "name", "distance_m", "ascent_m", "gpx_sha256", "gpx_base64", *_STAMPS}
_PLAN_KEYS = {"id", "name", "inputs", *PLAN_RESULT_KEYS, "library_version", "notes", *_STAMPS}
_TOP_KEYS = {"format", "format_version", "exported_at", "exported_by", "athletes", "courses",
             "plans"}


@dataclass(frozen=True)
class FileAthlete:
    """An athlete read from a library file.

    Attributes
    ----------
    id : int
        Id in the exporting library (plan links refer to it).
    athlete : pacing.athlete.Athlete
        The athlete's values (SI), checked.
    created_at : datetime.datetime
        When the exporting library stored it (naive UTC).
    updated_at : datetime.datetime
        When it was last changed there (naive UTC).
    """

    id: int
    athlete: Athlete
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class FileSetup:
    """A setup read from a library file.

    Attributes
    ----------
    id : int
        Id in the exporting library.
    athlete_id : int
        File id of the athlete it is listed under.
    setup : pacing.athlete.Setup
        The setup's values (SI), checked.
    created_at : datetime.datetime
        When the exporting library stored it (naive UTC).
    updated_at : datetime.datetime
        When it was last changed there (naive UTC).
    """

    id: int
    athlete_id: int
    setup: Setup
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class FileCourse:
    """A course read from a library file, its GPX file checked against its SHA-256.

    Attributes
    ----------
    id : int
        Id in the exporting library.
    name : str
        Label.
    gpx : bytes
        The original GPX file.
    distance_m : float
        Course length [m].
    ascent_m : float
        Total climbing [m].
    created_at : datetime.datetime
        When the exporting library stored it (naive UTC).
    updated_at : datetime.datetime
        When it was last changed there (naive UTC).
    """

    id: int
    name: str
    gpx: bytes
    distance_m: float
    ascent_m: float
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class FilePlan:
    """A saved plan read from a library file.

    Attributes
    ----------
    id : int
        Id in the exporting library.
    name : str
        Label.
    inputs : dict
        The plan's inputs; its link keys hold file ids.
    result : dict
        The saved numbers (the keys of PLAN_RESULT_KEYS present in the file).
    library_version : str
        ``pacing.__version__`` of the pacing that made the plan.
    notes : str
        The coach's free text.
    created_at : datetime.datetime
        When the exporting library stored it (naive UTC).
    updated_at : datetime.datetime
        When it was last changed there (naive UTC).
    """

    id: int
    name: str
    inputs: dict[str, Any]
    result: dict[str, Any]
    library_version: str
    notes: str
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class LibraryFile:
    """A library file, read and fully checked (read_library_file).

    Attributes
    ----------
    format_version : int
        The file's format version (at most FORMAT_VERSION).
    exported_at : datetime.datetime or None
        When it was written (naive UTC), if the file says.
    exported_by : str
        Which pacing wrote it (e.g. ``"pacing 0.1.0"``), or "".
    athletes : tuple of FileAthlete
        In file order.
    setups : tuple of FileSetup
        In file order, athlete by athlete.
    courses : tuple of FileCourse
        In file order.
    plans : tuple of FilePlan
        In file order.
    """

    format_version: int
    exported_at: datetime.datetime | None
    exported_by: str
    athletes: tuple[FileAthlete, ...]
    setups: tuple[FileSetup, ...]
    courses: tuple[FileCourse, ...]
    plans: tuple[FilePlan, ...]


@dataclass(frozen=True)
class ImportSummary:
    """What an import added.

    Attributes
    ----------
    athletes : int
        New athletes [-].
    setups : int
        New setups [-].
    courses : int
        New courses [-].
    courses_already_stored : int
        Courses of the file whose GPX file and name were already stored, reused [-].
    plans : int
        New saved plans [-].
    """

    athletes: int
    setups: int
    courses: int
    courses_already_stored: int
    plans: int

    def message(self) -> str:
        """One line for the user, e.g. "imported 1 athlete, 2 setups, 1 course and 3 saved
        plans"."""
        reused = (f" ({self.courses_already_stored} already in the library)"
                  if self.courses_already_stored else "")
        return (f"imported {plural(self.athletes, 'athlete')}, {plural(self.setups, 'setup')}, "
                f"{plural(self.courses, 'course')}{reused} and "
                f"{plural(self.plans, 'saved plan')}")


# ---------------------------------------------------------------------------------------------
# export

def _stamp(value: datetime.datetime) -> str:
    """A stored time as ISO 8601 text with its UTC offset."""
    return as_utc(value).isoformat()


def _export_rows(connection: Connection, athlete_id: int | None
                 ) -> tuple[list[Any], list[Any], list[Any], list[Any]]:
    """The rows an export holds, by id: athletes, their setups, courses and plans (of one
    athlete: their plans and only the courses those use)."""
    athlete_query = sa.select(athletes).order_by(athletes.c.id)
    plan_query = sa.select(plans).order_by(plans.c.id)
    if athlete_id is not None:
        check_id(athlete_id, "athlete id")
        athlete_query = athlete_query.where(athletes.c.id == athlete_id)
        plan_query = plan_query.where(plans.c.athlete_id == athlete_id)
    athlete_rows = list(connection.execute(athlete_query))
    if athlete_id is not None and not athlete_rows:
        raise InputError(f"no athlete with id {athlete_id}")
    setup_rows = list(connection.execute(
        sa.select(setups).where(setups.c.athlete_id.in_([r.id for r in athlete_rows]))
        .order_by(setups.c.id)))
    plan_rows = list(connection.execute(plan_query))
    course_query = sa.select(courses).order_by(courses.c.id)
    if athlete_id is not None:
        used = sorted({r.course_id for r in plan_rows if r.course_id is not None})
        course_query = course_query.where(courses.c.id.in_(used))
    course_rows = list(connection.execute(course_query))
    return athlete_rows, setup_rows, course_rows, plan_rows


def _setup_entry(row: Any) -> dict[str, Any]:
    """A setup as the file holds it."""
    setup = setup_from_row(row)
    return {"id": row.id, "name": setup.name,
            **{field: getattr(setup, field) for field in SETUP_NUMBERS},
            "yaw_drag_table": (None if setup.yaw_drag_table is None
                               else [list(pair) for pair in setup.yaw_drag_table]),
            "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at)}


def _athlete_entry(row: Any, setup_rows: list[Any]) -> dict[str, Any]:
    """An athlete as the file holds it, with their setups among `setup_rows`."""
    athlete = athlete_from_row(row)
    return {
        "id": row.id, "name": athlete.name,
        **{field: getattr(athlete, field) for field in ATHLETE_NUMBERS},
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
        "setups": [_setup_entry(s) for s in setup_rows if s.athlete_id == row.id],
    }


def _course_entry(row: Any) -> dict[str, Any]:
    """A course as the file holds it, the GPX file in base64 (RFC 4648 section 4)."""
    return {
        "id": row.id, "name": row.name, "distance_m": row.distance_m, "ascent_m": row.ascent_m,
        "gpx_sha256": row.gpx_sha256,
        "gpx_base64": base64.b64encode(bytes(row.gpx)).decode("ascii"),
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
    }


def _plan_entry(row: Any) -> dict[str, Any]:
    """A saved plan as the file holds it."""
    return {
        "id": row.id, "name": row.name, "inputs": jsontext.loads(row.inputs),
        "strategy": jsontext.loads(row.strategy), "weather": jsontext.loads(row.weather),
        "targets": jsontext.loads(row.targets), "time_saved": row.time_saved,
        "finish_time": row.finish_time, "library_version": row.library_version,
        "notes": row.notes,
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
    }


def export_library(library: Library, athlete_id: int | None = None) -> dict[str, Any]:
    """The library, or one athlete's part of it, in the library file format.

    Parameters
    ----------
    library : Library
        The open library; everything is read in one transaction.
    athlete_id : int or None
        Only this athlete, their setups, their saved plans and the courses those plans use;
        None for the whole library.

    Returns
    -------
    dict
        The JSON-ready document described at the top of this module (SI numbers, times as
        ISO 8601 text in UTC).

    Raises
    ------
    InputError
        No athlete with `athlete_id`.
    """
    with library.transaction() as connection:
        athlete_rows, setup_rows, course_rows, plan_rows = _export_rows(connection, athlete_id)
    return {
        "format": FORMAT_NAME,
        "format_version": FORMAT_VERSION,
        "exported_at": datetime.datetime.now(datetime.UTC).isoformat(),
        "exported_by": f"pacing {pacing.__version__}",
        "athletes": [_athlete_entry(row, setup_rows) for row in athlete_rows],
        "courses": [_course_entry(row) for row in course_rows],
        "plans": [_plan_entry(row) for row in plan_rows],
    }


def dump_library_file(library: Library, athlete_id: int | None = None) -> str:
    """The library file as text.

    Parameters
    ----------
    library : Library
        The open library.
    athlete_id : int or None
        Only this athlete's part (see export_library); None for the whole library.

    Returns
    -------
    str
        UTF-8 JSON, indented, ending with a newline.
    """
    return json.dumps(export_library(library, athlete_id), ensure_ascii=False, indent=1,
                      allow_nan=False) + "\n"


# ---------------------------------------------------------------------------------------------
# reading and checking: small checks

def _object(value: Any, where: str, allowed: set[str], required: set[str]
            ) -> Mapping[str, Any]:
    """`value` as a JSON object with only `allowed` fields and every `required` one."""
    if not isinstance(value, Mapping):
        raise InputError(f"{where} must be a JSON object")
    unknown = sorted(set(value) - allowed)
    if unknown:
        raise InputError(f"{where} has unknown fields {unknown}")
    missing = sorted(required - set(value))
    if missing:
        raise InputError(f"{where} lacks fields {missing}")
    return value


def _list(value: Any, where: str) -> list[Any]:
    """`value` as a JSON list."""
    if not isinstance(value, list):
        raise InputError(f"{where} must be a JSON list")
    return value


def _time(value: Any, where: str) -> datetime.datetime:
    """An ISO 8601 time as the library stores it (naive UTC; no offset means UTC)."""
    if not isinstance(value, str):
        raise InputError(f"{where} must be an ISO 8601 time")
    try:
        parsed = datetime.datetime.fromisoformat(value)
    except ValueError:
        raise InputError(f"{where} is not an ISO 8601 time: {value!r}") from None
    if parsed.tzinfo is None:
        parsed = parsed.replace(tzinfo=datetime.UTC)
    return parsed.astimezone(datetime.UTC).replace(tzinfo=None)


def _stamps(entry: Mapping[str, Any], where: str
            ) -> tuple[datetime.datetime, datetime.datetime]:
    """An entry's creation and last-change times."""
    return _time(entry["created_at"], f"{where} created_at"), \
        _time(entry["updated_at"], f"{where} updated_at")


def _new_id(entry: Mapping[str, Any], where: str, seen: set[int]) -> int:
    """An entry's id, refused if `seen` already holds it (which it is added to)."""
    entry_id = check_id(entry["id"], f"{where} id")
    if entry_id in seen:
        raise InputError(f"{where}: id {entry_id} appears twice")
    seen.add(entry_id)
    return entry_id


def _build(kind: type, values: dict[str, Any], where: str) -> Any:
    """``kind(**values)``, its refusal as a one-line InputError naming `where`."""
    try:
        return kind(**values)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None
    except (TypeError, ValueError) as error:
        raise InputError(f"{where}: {str(error).splitlines()[0]}") from None


def _checked(function: Callable[..., Any], where: str, *args: Any) -> Any:
    """``function(*args)``, its InputError prefixed with `where`."""
    try:
        return function(*args)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None


def _refuse_constant(name: str) -> Any:
    """Refuse NaN and Infinity, which Python's json reads but JSON does not have (RFC 8259
    section 6)."""
    raise InputError(f"the library file holds {name}, which is not a number")


# ---------------------------------------------------------------------------------------------
# reading and checking: the document, entry by entry

def _parse_document(source: str | bytes) -> Mapping[str, Any]:
    """The file's JSON object, marked as a pacing library file (UTF-8, a BOM allowed)."""
    if isinstance(source, (bytes, bytearray)):
        try:
            source = bytes(source).decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError("the library file is not UTF-8 text") from None
    if not isinstance(source, str):
        raise InputError("a library file is text (JSON)")
    try:
        document = json.loads(source, parse_constant=_refuse_constant)
    except json.JSONDecodeError as error:
        raise InputError(f"the library file is not valid JSON (line {error.lineno}, column "
                         f"{error.colno}: {error.msg})") from None
    if not isinstance(document, Mapping) or document.get("format") != FORMAT_NAME:
        raise InputError(f"not a pacing library file (it lacks \"format\": \"{FORMAT_NAME}\")")
    return document


def _read_header(document: Mapping[str, Any]
                 ) -> tuple[int, datetime.datetime | None, str]:
    """The format version (one this pacing reads), export time and exporter; the top-level
    fields checked."""
    version = document.get("format_version")
    if isinstance(version, bool) or not isinstance(version, int) or version < 1:
        raise InputError(f"the library file has no valid format_version: {version!r}")
    if version > FORMAT_VERSION:
        raise InputError(f"the library file has format version {version}, newer than this "
                         f"pacing reads ({FORMAT_VERSION}); update pacing")
    _object(document, "the library file", _TOP_KEYS,
            {"format", "format_version", "athletes", "courses", "plans"})
    exported_text = document.get("exported_at")
    exported_at = None if exported_text is None else _time(exported_text, "exported_at")
    exported_by = document.get("exported_by") or ""
    if not isinstance(exported_by, str):
        raise InputError("exported_by must be text")
    return version, exported_at, exported_by


def _read_athlete(entry: Any, where: str, seen: set[int]) -> FileAthlete:
    """One athlete entry (without its setups), checked as the library checks a new one."""
    entry = _object(entry, where, _ATHLETE_KEYS, {"id", "name", "body_mass", *_STAMPS})
    athlete_id = _new_id(entry, where, seen)
    athlete = _build(Athlete, {"name": entry["name"],
                               **{f: entry.get(f) for f in ATHLETE_NUMBERS}}, where)
    _checked(athlete_row, where, athlete)
    return FileAthlete(athlete_id, athlete, *_stamps(entry, where))


def _yaw_table(value: Any, where: str) -> tuple[tuple[Any, ...], ...] | None:
    """A setup's yaw drag table: None, or [yaw [deg], CdA multiplier [-]] pairs as tuples."""
    if value is None:
        return None
    if not isinstance(value, list) or not all(
            isinstance(pair, list) and len(pair) == 2 for pair in value):
        raise InputError(f"{where}: yaw_drag_table must be a list of [yaw, multiplier] pairs")
    return tuple(tuple(pair) for pair in value)


def _read_setup(entry: Any, where: str, athlete_id: int, setup_owner: dict[int, int]
                ) -> FileSetup:
    """One setup entry of the athlete `athlete_id`; `setup_owner` (setup id → athlete id)
    gains it."""
    entry = _object(entry, where, _SETUP_KEYS, {"id", "name", *SETUP_NUMBERS, *_STAMPS})
    setup_id = check_id(entry["id"], f"{where} id")
    if setup_id in setup_owner:
        raise InputError(f"{where}: setup id {setup_id} appears twice")
    setup_owner[setup_id] = athlete_id
    table = _yaw_table(entry.get("yaw_drag_table"), where)
    setup = _build(Setup, {"name": entry["name"], "yaw_drag_table": table,
                           **{f: entry[f] for f in SETUP_NUMBERS}}, where)
    _checked(setup_row, where, setup)
    return FileSetup(setup_id, athlete_id, setup, *_stamps(entry, where))


def _read_athletes(entries: Any
                   ) -> tuple[list[FileAthlete], list[FileSetup], dict[int, int]]:
    """The file's athletes and their setups, and which athlete owns each setup id."""
    file_athletes: list[FileAthlete] = []
    file_setups: list[FileSetup] = []
    athlete_ids: set[int] = set()
    setup_owner: dict[int, int] = {}
    for index, entry in enumerate(_list(entries, "athletes")):
        where = f"athletes[{index}]"
        athlete = _read_athlete(entry, where, athlete_ids)
        file_athletes.append(athlete)
        for setup_index, setup_entry in enumerate(_list(entry.get("setups", []),
                                                        f"{where}.setups")):
            file_setups.append(_read_setup(setup_entry, f"{where}.setups[{setup_index}]",
                                           athlete.id, setup_owner))
    return file_athletes, file_setups, setup_owner


def _gpx_bytes(entry: Mapping[str, Any], where: str) -> bytes:
    """A course entry's GPX file, decoded from base64 and checked against its SHA-256
    (hashlib, FIPS 180-4)."""
    if not isinstance(entry["gpx_base64"], str):
        raise InputError(f"{where}: gpx_base64 must be text")
    try:
        gpx = base64.b64decode(entry["gpx_base64"], validate=True)
    except (binascii.Error, ValueError):
        raise InputError(f"{where}: gpx_base64 is not valid base64") from None
    if hashlib.sha256(gpx).hexdigest() != entry["gpx_sha256"]:
        raise InputError(f"{where}: the GPX file is damaged (its SHA-256 does not match "
                         "gpx_sha256)")
    return gpx


def _read_course(entry: Any, where: str, seen: set[int]) -> FileCourse:
    """One course entry, checked as the library checks a new one."""
    entry = _object(entry, where, _COURSE_KEYS, _COURSE_KEYS)
    course_id = _new_id(entry, where, seen)
    gpx = _gpx_bytes(entry, where)
    row = _checked(course_row, where, entry["name"], gpx, entry["distance_m"],
                   entry["ascent_m"])
    return FileCourse(course_id, row["name"], gpx, row["distance_m"], row["ascent_m"],
                      *_stamps(entry, where))


def _read_courses(entries: Any) -> list[FileCourse]:
    """The file's courses."""
    course_ids: set[int] = set()
    return [_read_course(entry, f"courses[{index}]", course_ids)
            for index, entry in enumerate(_list(entries, "courses"))]


def _check_plan_links(links: Mapping[str, int | None], where: str, athlete_ids: set[int],
                      setup_owner: Mapping[int, int], course_ids: set[int]) -> None:
    """A plan's links name entries of the file, and its setup belongs to its athlete."""
    athlete_id, setup_id, course_id = (links[key] for key in PLAN_LINK_KEYS)
    if athlete_id is not None and athlete_id not in athlete_ids:
        raise InputError(f"{where}: inputs name athlete {athlete_id}, not in the file")
    if setup_id is not None and setup_id not in setup_owner:
        raise InputError(f"{where}: inputs name setup {setup_id}, not in the file")
    if course_id is not None and course_id not in course_ids:
        raise InputError(f"{where}: inputs name course {course_id}, not in the file")
    if setup_id is not None and athlete_id is not None \
            and setup_owner[setup_id] != athlete_id:
        raise InputError(f"{where}: setup {setup_id} belongs to athlete "
                         f"{setup_owner[setup_id]}, not {athlete_id}")


def _read_plan(entry: Any, where: str, seen: set[int], athlete_ids: set[int],
               setup_owner: Mapping[int, int], course_ids: set[int]) -> FilePlan:
    """One saved plan entry, checked as the library checks a new one, its links against the
    file's entries."""
    entry = _object(entry, where, _PLAN_KEYS,
                    {"id", "name", "inputs", "finish_time", "targets", "library_version",
                     *_STAMPS})
    plan_id = _new_id(entry, where, seen)
    name = _checked(check_name, where, entry["name"], "a plan")
    _text, links = _checked(plan_inputs_text, where, entry["inputs"])
    result = {key: entry[key] for key in PLAN_RESULT_KEYS if key in entry}
    _checked(plan_result_values, where, result)
    _check_plan_links(links, where, athlete_ids, setup_owner, course_ids)
    version = entry["library_version"]
    notes = entry.get("notes", "")
    if not isinstance(version, str) or not version or len(version) > 50:
        raise InputError(f"{where}: library_version must be short text")
    if not isinstance(notes, str):
        raise InputError(f"{where}: notes must be text")
    return FilePlan(plan_id, name, dict(entry["inputs"]), result, version, notes,
                    *_stamps(entry, where))


def _read_plans(entries: Any, athlete_ids: set[int], setup_owner: Mapping[int, int],
                course_ids: set[int]) -> list[FilePlan]:
    """The file's saved plans."""
    plan_ids: set[int] = set()
    return [_read_plan(entry, f"plans[{index}]", plan_ids, athlete_ids, setup_owner,
                       course_ids)
            for index, entry in enumerate(_list(entries, "plans"))]


def read_library_file(source: str | bytes) -> LibraryFile:
    """Read and check a library file completely (nothing is written anywhere).

    Checked in file order: the text (UTF-8 JSON without NaN), the format and its version, the
    athletes with their setups, the courses (GPX checksums), the saved plans (numbers, and
    links to entries of the file).

    Parameters
    ----------
    source : str or bytes
        The file's text, or its bytes (UTF-8, a byte order mark allowed).

    Returns
    -------
    LibraryFile
        Every entry, checked as the library checks new entries.

    Raises
    ------
    InputError
        One line naming the first problem found (e.g. ``plans[2]: inputs name course 999, not
        in the file``).
    """
    document = _parse_document(source)
    version, exported_at, exported_by = _read_header(document)
    file_athletes, file_setups, setup_owner = _read_athletes(document["athletes"])
    file_courses = _read_courses(document["courses"])
    file_plans = _read_plans(document["plans"], {a.id for a in file_athletes}, setup_owner,
                             {c.id for c in file_courses})
    return LibraryFile(version, exported_at, exported_by, tuple(file_athletes),
                       tuple(file_setups), tuple(file_courses), tuple(file_plans))


# ---------------------------------------------------------------------------------------------
# import

def _import_course(connection: Connection, course: FileCourse) -> tuple[int, bool]:
    """The library id of a file's course, and whether it was stored already (same GPX file
    and name: that course is reused, not stored twice)."""
    values = course_row(course.name, course.gpx, course.distance_m, course.ascent_m)
    existing = connection.execute(
        sa.select(courses.c.id).where(courses.c.gpx_sha256 == values["gpx_sha256"],
                                      courses.c.name == values["name"])
        .order_by(courses.c.id)).scalar()
    if existing is not None:
        return existing, True
    return insert_row(connection, courses, values, course.created_at, course.updated_at), False


def _import_plan(connection: Connection, plan: FilePlan,
                 maps: Mapping[str, Mapping[int, int]]) -> None:
    """Store a file's saved plan, its link keys rewritten from file ids to library ids."""
    inputs = dict(plan.inputs)
    for key, mapping in maps.items():
        if inputs.get(key) is not None:
            inputs[key] = mapping[inputs[key]]
    inputs_text, links = plan_inputs_text(inputs)
    insert_row(connection, plans, dict(
        plan_result_values(plan.result), **resolve_plan_links(connection, links),
        name=plan.name, inputs=inputs_text, notes=plan.notes,
        library_version=plan.library_version), plan.created_at, plan.updated_at)


def import_library(library: Library, source: str | bytes | LibraryFile) -> ImportSummary:
    """Add everything in a library file to the library, in one transaction.

    The file is checked completely first; a bad file raises InputError and the database is
    left as it was. Every entry gets a new id; plan inputs' link keys are rewritten to them.
    Saved plans keep the pacing version that made them.

    Parameters
    ----------
    library : Library
        The open library to add to.
    source : str or bytes or LibraryFile
        The file's text or bytes, or a file already read by read_library_file.

    Returns
    -------
    ImportSummary
        How many entries were added, and how many courses were already stored.

    Raises
    ------
    InputError
        A bad file (nothing written), or a database failure (everything rolled back).
    """
    data = source if isinstance(source, LibraryFile) else read_library_file(source)
    athlete_map: dict[int, int] = {}
    setup_map: dict[int, int] = {}
    course_map: dict[int, int] = {}
    reused = 0
    with library.transaction() as connection:
        for athlete in data.athletes:
            athlete_map[athlete.id] = insert_row(connection, athletes,
                                                 athlete_row(athlete.athlete),
                                                 athlete.created_at, athlete.updated_at)
        for setup in data.setups:
            setup_map[setup.id] = insert_row(
                connection, setups,
                dict(setup_row(setup.setup), athlete_id=athlete_map[setup.athlete_id]),
                setup.created_at, setup.updated_at)
        for course in data.courses:
            course_map[course.id], stored = _import_course(connection, course)
            reused += int(stored)
        maps = {"athlete_id": athlete_map, "setup_id": setup_map, "course_id": course_map}
        for plan in data.plans:
            _import_plan(connection, plan, maps)
    return ImportSummary(athletes=len(data.athletes), setups=len(data.setups),
                         courses=len(data.courses) - reused, courses_already_stored=reused,
                         plans=len(data.plans))
