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
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sqlalchemy as sa

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

FORMAT_NAME = "pacing library"
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
    id: int
    athlete: Athlete
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class FileSetup:
    id: int
    athlete_id: int
    setup: Setup
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class FileCourse:
    id: int
    name: str
    gpx: bytes
    distance_m: float
    ascent_m: float
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class FilePlan:
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
    """A library file, read and fully checked (read_library_file)."""

    format_version: int
    exported_at: datetime.datetime | None
    exported_by: str
    athletes: tuple[FileAthlete, ...]
    setups: tuple[FileSetup, ...]
    courses: tuple[FileCourse, ...]
    plans: tuple[FilePlan, ...]


@dataclass(frozen=True)
class ImportSummary:
    """What an import added: counts of new entries, and courses found already stored."""

    athletes: int
    setups: int
    courses: int
    courses_already_stored: int
    plans: int

    def message(self) -> str:
        reused = (f" ({self.courses_already_stored} already in the library)"
                  if self.courses_already_stored else "")
        return (f"imported {plural(self.athletes, 'athlete')}, {plural(self.setups, 'setup')}, "
                f"{plural(self.courses, 'course')}{reused} and "
                f"{plural(self.plans, 'saved plan')}")


# ---------------------------------------------------------------------------------------------
# export

def _stamp(value: datetime.datetime) -> str:
    return as_utc(value).isoformat()


def export_library(library: Library, athlete_id: int | None = None) -> dict[str, Any]:
    """The library (or one athlete: their setups, saved plans and the courses those plans
    use) as a JSON-ready dict in the library file format, read in one transaction."""
    with library.transaction() as connection:
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

    def setup_entry(row: Any) -> dict[str, Any]:
        setup = setup_from_row(row)
        return {"id": row.id, "name": setup.name,
                **{field: getattr(setup, field) for field in SETUP_NUMBERS},
                "yaw_drag_table": (None if setup.yaw_drag_table is None
                                   else [list(pair) for pair in setup.yaw_drag_table]),
                "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at)}

    athletes_out = []
    for row in athlete_rows:
        athlete = athlete_from_row(row)
        athletes_out.append({
            "id": row.id, "name": athlete.name,
            **{field: getattr(athlete, field) for field in ATHLETE_NUMBERS},
            "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
            "setups": [setup_entry(s) for s in setup_rows if s.athlete_id == row.id],
        })
    courses_out = [{
        "id": row.id, "name": row.name, "distance_m": row.distance_m, "ascent_m": row.ascent_m,
        "gpx_sha256": row.gpx_sha256,
        "gpx_base64": base64.b64encode(bytes(row.gpx)).decode("ascii"),
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
    } for row in course_rows]
    plans_out = [{
        "id": row.id, "name": row.name, "inputs": jsontext.loads(row.inputs),
        "strategy": jsontext.loads(row.strategy), "weather": jsontext.loads(row.weather),
        "targets": jsontext.loads(row.targets), "time_saved": row.time_saved,
        "finish_time": row.finish_time, "library_version": row.library_version,
        "notes": row.notes,
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
    } for row in plan_rows]
    return {
        "format": FORMAT_NAME,
        "format_version": FORMAT_VERSION,
        "exported_at": datetime.datetime.now(datetime.UTC).isoformat(),
        "exported_by": f"pacing {pacing.__version__}",
        "athletes": athletes_out,
        "courses": courses_out,
        "plans": plans_out,
    }


def dump_library_file(library: Library, athlete_id: int | None = None) -> str:
    """The library file as text (UTF-8 JSON, indented, ending with a newline)."""
    return json.dumps(export_library(library, athlete_id), ensure_ascii=False, indent=1,
                      allow_nan=False) + "\n"


# ---------------------------------------------------------------------------------------------
# reading and checking

def _object(value: Any, where: str, allowed: set[str], required: set[str]) -> Mapping:
    if not isinstance(value, Mapping):
        raise InputError(f"{where} must be a JSON object")
    unknown = sorted(set(value) - allowed)
    if unknown:
        raise InputError(f"{where} has unknown fields {unknown}")
    missing = sorted(required - set(value))
    if missing:
        raise InputError(f"{where} lacks fields {missing}")
    return value


def _list(value: Any, where: str) -> list:
    if not isinstance(value, list):
        raise InputError(f"{where} must be a JSON list")
    return value


def _time(value: Any, where: str) -> datetime.datetime:
    if not isinstance(value, str):
        raise InputError(f"{where} must be an ISO 8601 time")
    try:
        parsed = datetime.datetime.fromisoformat(value)
    except ValueError:
        raise InputError(f"{where} is not an ISO 8601 time: {value!r}") from None
    if parsed.tzinfo is None:
        parsed = parsed.replace(tzinfo=datetime.UTC)
    return parsed.astimezone(datetime.UTC).replace(tzinfo=None)


def _stamps(entry: Mapping, where: str) -> tuple[datetime.datetime, datetime.datetime]:
    return _time(entry["created_at"], f"{where} created_at"), \
        _time(entry["updated_at"], f"{where} updated_at")


def _new_id(entry: Mapping, where: str, seen: set[int]) -> int:
    entry_id = check_id(entry["id"], f"{where} id")
    if entry_id in seen:
        raise InputError(f"{where}: id {entry_id} appears twice")
    seen.add(entry_id)
    return entry_id


def _build(kind: type, values: dict[str, Any], where: str) -> Any:
    try:
        return kind(**values)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None
    except (TypeError, ValueError) as error:
        raise InputError(f"{where}: {str(error).splitlines()[0]}") from None


def _checked(function, where: str, *args) -> Any:
    try:
        return function(*args)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None


def read_library_file(source: str | bytes) -> LibraryFile:
    """Read and check a library file completely (nothing is written anywhere).

    Raises InputError with a one-line message naming the first problem found.
    """
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
    version = document.get("format_version")
    if isinstance(version, bool) or not isinstance(version, int) or version < 1:
        raise InputError(f"the library file has no valid format_version: {version!r}")
    if version > FORMAT_VERSION:
        raise InputError(f"the library file has format version {version}, newer than this "
                         f"pacing reads ({FORMAT_VERSION}); update pacing")
    _object(document, "the library file", _TOP_KEYS,
            {"format", "format_version", "athletes", "courses", "plans"})
    exported_at = document.get("exported_at")
    exported_at = None if exported_at is None else _time(exported_at, "exported_at")
    exported_by = document.get("exported_by") or ""
    if not isinstance(exported_by, str):
        raise InputError("exported_by must be text")

    file_athletes, file_setups = [], []
    athlete_ids: set[int] = set()
    setup_owner: dict[int, int] = {}
    for index, entry in enumerate(_list(document["athletes"], "athletes")):
        where = f"athletes[{index}]"
        entry = _object(entry, where, _ATHLETE_KEYS, {"id", "name", "body_mass", *_STAMPS})
        athlete_id = _new_id(entry, where, athlete_ids)
        athlete = _build(Athlete, {"name": entry["name"],
                                   **{f: entry.get(f) for f in ATHLETE_NUMBERS}}, where)
        _checked(athlete_row, where, athlete)
        file_athletes.append(FileAthlete(athlete_id, athlete, *_stamps(entry, where)))
        for setup_index, setup_entry in enumerate(_list(entry.get("setups", []),
                                                        f"{where}.setups")):
            setup_where = f"{where}.setups[{setup_index}]"
            setup_entry = _object(setup_entry, setup_where, _SETUP_KEYS,
                                  {"id", "name", *SETUP_NUMBERS, *_STAMPS})
            setup_id = check_id(setup_entry["id"], f"{setup_where} id")
            if setup_id in setup_owner:
                raise InputError(f"{setup_where}: setup id {setup_id} appears twice")
            setup_owner[setup_id] = athlete_id
            table = setup_entry.get("yaw_drag_table")
            if table is not None:
                if not isinstance(table, list) or not all(
                        isinstance(pair, list) and len(pair) == 2 for pair in table):
                    raise InputError(f"{setup_where}: yaw_drag_table must be a list of "
                                     "[yaw, multiplier] pairs")
                table = tuple(tuple(pair) for pair in table)
            setup = _build(Setup, {"name": setup_entry["name"], "yaw_drag_table": table,
                                   **{f: setup_entry[f] for f in SETUP_NUMBERS}}, setup_where)
            _checked(setup_row, setup_where, setup)
            file_setups.append(FileSetup(setup_id, athlete_id, setup,
                                         *_stamps(setup_entry, setup_where)))

    file_courses = []
    course_ids: set[int] = set()
    for index, entry in enumerate(_list(document["courses"], "courses")):
        where = f"courses[{index}]"
        entry = _object(entry, where, _COURSE_KEYS, _COURSE_KEYS)
        course_id = _new_id(entry, where, course_ids)
        if not isinstance(entry["gpx_base64"], str):
            raise InputError(f"{where}: gpx_base64 must be text")
        try:
            gpx = base64.b64decode(entry["gpx_base64"], validate=True)
        except (binascii.Error, ValueError):
            raise InputError(f"{where}: gpx_base64 is not valid base64") from None
        if hashlib.sha256(gpx).hexdigest() != entry["gpx_sha256"]:
            raise InputError(f"{where}: the GPX file is damaged (its SHA-256 does not match "
                             "gpx_sha256)")
        row = _checked(course_row, where, entry["name"], gpx, entry["distance_m"],
                       entry["ascent_m"])
        file_courses.append(FileCourse(course_id, row["name"], gpx, row["distance_m"],
                                       row["ascent_m"], *_stamps(entry, where)))

    file_plans = []
    plan_ids: set[int] = set()
    for index, entry in enumerate(_list(document["plans"], "plans")):
        where = f"plans[{index}]"
        entry = _object(entry, where, _PLAN_KEYS,
                        {"id", "name", "inputs", "finish_time", "targets", "library_version",
                         *_STAMPS})
        plan_id = _new_id(entry, where, plan_ids)
        name = _checked(check_name, where, entry["name"], "a plan")
        _text, links = _checked(plan_inputs_text, where, entry["inputs"])
        result = {key: entry[key] for key in PLAN_RESULT_KEYS if key in entry}
        _checked(plan_result_values, where, result)
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
        version = entry["library_version"]
        notes = entry.get("notes", "")
        if not isinstance(version, str) or not version or len(version) > 50:
            raise InputError(f"{where}: library_version must be short text")
        if not isinstance(notes, str):
            raise InputError(f"{where}: notes must be text")
        file_plans.append(FilePlan(plan_id, name, dict(entry["inputs"]), result, version, notes,
                                   *_stamps(entry, where)))

    return LibraryFile(version, exported_at, exported_by, tuple(file_athletes),
                       tuple(file_setups), tuple(file_courses), tuple(file_plans))


def _refuse_constant(name: str) -> Any:
    raise InputError(f"the library file holds {name}, which is not a number")


# ---------------------------------------------------------------------------------------------
# import

def import_library(library: Library, source: str | bytes | LibraryFile) -> ImportSummary:
    """Add everything in a library file to the library, in one transaction.

    The file is checked completely first; a bad file raises InputError and the database is
    left as it was. Every entry gets a new id; plan inputs' link keys are rewritten to them.
    """
    data = source if isinstance(source, LibraryFile) else read_library_file(source)
    athlete_map: dict[int, int] = {}
    setup_map: dict[int, int] = {}
    course_map: dict[int, int] = {}
    reused = 0
    with library.transaction() as connection:
        for item in data.athletes:
            athlete_map[item.id] = insert_row(connection, athletes, athlete_row(item.athlete),
                                              item.created_at, item.updated_at)
        for item in data.setups:
            setup_map[item.id] = insert_row(
                connection, setups,
                dict(setup_row(item.setup), athlete_id=athlete_map[item.athlete_id]),
                item.created_at, item.updated_at)
        for item in data.courses:
            values = course_row(item.name, item.gpx, item.distance_m, item.ascent_m)
            existing = connection.execute(
                sa.select(courses.c.id).where(courses.c.gpx_sha256 == values["gpx_sha256"],
                                              courses.c.name == values["name"])
                .order_by(courses.c.id)).scalar()
            if existing is not None:
                course_map[item.id] = existing
                reused += 1
            else:
                course_map[item.id] = insert_row(connection, courses, values, item.created_at,
                                                 item.updated_at)
        maps = {"athlete_id": athlete_map, "setup_id": setup_map, "course_id": course_map}
        for item in data.plans:
            inputs = dict(item.inputs)
            for key, mapping in maps.items():
                if inputs.get(key) is not None:
                    inputs[key] = mapping[inputs[key]]
            inputs_text, links = plan_inputs_text(inputs)
            insert_row(connection, plans, dict(
                plan_result_values(item.result), **resolve_plan_links(connection, links),
                name=item.name, inputs=inputs_text, notes=item.notes,
                library_version=item.library_version), item.created_at, item.updated_at)
    return ImportSummary(athletes=len(data.athletes), setups=len(data.setups),
                         courses=len(data.courses) - reused, courses_already_stored=reused,
                         plans=len(data.plans))
