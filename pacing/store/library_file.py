"""The library file: the whole library, or one athlete's part of it, as one JSON document, for
backup and for moving between machines. This module defines the format and reads and checks a
file (read_library_file); pacing.store.library_export writes one and
pacing.store.library_import adds one to a library. A format of our own design:

```
{
  "format": "pacing library",          # marks the file
  "format_version": 3,                 # FORMAT_VERSION; files from a newer pacing are refused
  "exported_at": "2026-12-01T22:30:00+00:00",
  "exported_by": "pacing 0.1.0",
  "athletes": [{"id": 1, "name": "Ann", "body_mass": 61.0, "critical_power": 250.0,
                "w_prime": 18000.0, "height": 1.68, "flat_pace": null,
                "critical_speed": null, "d_prime": null,
                "created_at": "...", "updated_at": "...",
                "setups": [{"id": 4, "name": "TT bike", "bike_mass": 8.9, "drag_area": 0.23,
                            "power_share": 0.95, "rolling_coefficient": 0.003,
                            "drivetrain_efficiency": 0.976, "yaw_drag_table": null,
                            "drag_area_origin": {"low_m2": 0.22, "high_m2": 0.24,
                                  "source": "race review of Hill TT.csv, 2026-12-05"},
                            "created_at": "...", "updated_at": "..."}]}],
  "courses": [{"id": 2, "name": "Hill loop", "distance_m": 41250.0, "ascent_m": 610.0,
               "gpx_sha256": "<hex>", "gpx_base64": "<the original GPX file>",
               "created_at": "...", "updated_at": "..."}],
  "plans": [{"id": 9, "name": "Race day", "inputs": {"athlete_id": 1, "setup_id": 4,
                                                   "course_id": 2, ...},
             "strategy": ..., "weather": ..., "targets": [{...}, ...],
             "time_saved": 41.5, "finish_time": 3725.0, "library_version": "0.1.0",
             "notes": "", "created_at": "...", "updated_at": "...",
             "reviews": [{"ride_name": "Hill TT.csv", "ride_sha256": "<hex>",
                          "review": {"planned_time_s": 3725.0, ...},
                          "created_at": "...", "updated_at": "..."}]}],
  "teams": [{"id": 3, "name": "Pursuit A", "riders": [{"name": "Ann", "mass": 72.0,
             "drag_area": 0.19, "critical_power": 380.0, "w_prime": 22000.0,
             "max_power": null, "rolling_coefficient": 0.0025}, ...],
             "drafting": [0.0, 0.32, 0.39], "counts_rider": 3,
             "created_at": "...", "updated_at": "..."}]
}
```

Version 2 added "teams" (optional: version 1 files have none; a whole-library export writes
them, one athlete's export does not). Version 3 added the setups' "drag_area_origin" (the drag
area's 95 % interval [m²] and source, pacing.store.drag_origin; null or absent when typed in)
and the plans' "reviews" (the race reviews kept with the plan, pacing.store.library_reviews;
absent in older files).

Ids are those of the exporting library; the plans' link keys (``athlete_id``, ``setup_id``,
``course_id`` in their inputs) refer to them. Import gives every entry a new id and rewrites
those links. Units: SI as everywhere in pacing (kg, W, J, m, s/km for flat pace, m/s, m², s).

Import reads and checks the whole file first (its size, at most FILE_SIZE_LIMIT, nesting, at
most DEPTH_LIMIT, and times within TIME_RANGE: pacing.store.library_file_json; structure,
numbers and their physical ranges, names, the GPX checksums, every link) and refuses a bad
file with a one-line InputError naming the place; only then does it write everything in one
transaction, so the database is either unchanged or holds the whole file. A course whose GPX
file and name are already in the library is not stored twice.
"""

from __future__ import annotations

import base64
import binascii
import datetime
import hashlib
from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.store.drag_origin import origin_from_entry
from pacing.store.library_file_json import (
    build_entry,
    checked_at,
    entry_stamps,
    file_time,
    json_list,
    json_object,
    new_id,
    parse_json_text,
)
from pacing.store.records import PLAN_LINK_KEYS, PLAN_RESULT_KEYS, DragAreaOrigin
from pacing.store.rows import (
    ATHLETE_NUMBERS,
    SETUP_NUMBERS,
    athlete_row,
    check_id,
    check_name,
    check_notes,
    course_row,
    plan_inputs_text,
    plan_result_values,
    setup_row,
)

if TYPE_CHECKING:
    from pacing.store.library_teams import FileTeam

#: Value of the file's "format" field.
FORMAT_NAME = "pacing library"
#: Version of the format this pacing writes; it reads this one and older.
FORMAT_VERSION = 3
_STAMPS = ("created_at", "updated_at")
_ATHLETE_KEYS = {"id", "name", *ATHLETE_NUMBERS, "setups", *_STAMPS}
_SETUP_KEYS = {"id", "name", *SETUP_NUMBERS, "yaw_drag_table", "drag_area_origin", *_STAMPS}
_COURSE_KEYS = {"id", "name", "distance_m", "ascent_m", "gpx_sha256", "gpx_base64", *_STAMPS}
_PLAN_KEYS = {"id", "name", "inputs", *PLAN_RESULT_KEYS, "library_version", "notes", "reviews",
              *_STAMPS}
_TOP_KEYS = {"format", "format_version", "exported_at", "exported_by", "athletes", "courses",
             "plans", "teams"}


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
    drag_area_origin : DragAreaOrigin or None
        The drag area's interval and source (format version 3), None when not given.
    """

    id: int
    athlete_id: int
    setup: Setup
    created_at: datetime.datetime
    updated_at: datetime.datetime
    drag_area_origin: DragAreaOrigin | None = None


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
    reviews : tuple of pacing.store.library_reviews.FileReview
        The race reviews kept with the plan (format version 3), in file order.
    """

    id: int
    name: str
    inputs: dict[str, Any]
    result: dict[str, Any]
    library_version: str
    notes: str
    created_at: datetime.datetime
    updated_at: datetime.datetime
    reviews: tuple[Any, ...] = ()


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
    teams : tuple of FileTeam
        In file order (none in version 1 files).
    """

    format_version: int
    exported_at: datetime.datetime | None
    exported_by: str
    athletes: tuple[FileAthlete, ...]
    setups: tuple[FileSetup, ...]
    courses: tuple[FileCourse, ...]
    plans: tuple[FilePlan, ...]
    teams: tuple[FileTeam, ...] = ()


# ---------------------------------------------------------------------------------------------
# reading and checking: the document, entry by entry


def _parse_document(source: str | bytes) -> Mapping[str, Any]:
    """The file's JSON (parse_json_text), marked as a pacing library file."""
    document = parse_json_text(source)
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
    json_object(document, "the library file", _TOP_KEYS,
            {"format", "format_version", "athletes", "courses", "plans"})
    exported_text = document.get("exported_at")
    exported_at = None if exported_text is None else file_time(exported_text, "exported_at")
    exported_by = document.get("exported_by") or ""
    if not isinstance(exported_by, str):
        raise InputError("exported_by must be text")
    return version, exported_at, exported_by


def _read_athlete(entry: Any, where: str, seen: set[int]) -> FileAthlete:
    """One athlete entry (without its setups), checked as the library checks a new one."""
    entry = json_object(entry, where, _ATHLETE_KEYS, {"id", "name", "body_mass", *_STAMPS})
    athlete_id = new_id(entry, where, seen)
    athlete = build_entry(Athlete, {"name": entry["name"],
                               **{f: entry.get(f) for f in ATHLETE_NUMBERS}}, where)
    checked_at(athlete_row, where, athlete)
    return FileAthlete(athlete_id, athlete, *entry_stamps(entry, where))


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
    entry = json_object(entry, where, _SETUP_KEYS, {"id", "name", *SETUP_NUMBERS, *_STAMPS})
    setup_id = check_id(entry["id"], f"{where} id")
    if setup_id in setup_owner:
        raise InputError(f"{where}: setup id {setup_id} appears twice")
    setup_owner[setup_id] = athlete_id
    table = _yaw_table(entry.get("yaw_drag_table"), where)
    setup = build_entry(Setup, {"name": entry["name"], "yaw_drag_table": table,
                           **{f: entry[f] for f in SETUP_NUMBERS}}, where)
    checked_at(setup_row, where, setup)
    origin = origin_from_entry(entry.get("drag_area_origin"), where, setup.drag_area)
    return FileSetup(setup_id, athlete_id, setup, *entry_stamps(entry, where), origin)


def _read_athletes(entries: Any
                   ) -> tuple[list[FileAthlete], list[FileSetup], dict[int, int]]:
    """The file's athletes and their setups, and which athlete owns each setup id."""
    file_athletes: list[FileAthlete] = []
    file_setups: list[FileSetup] = []
    athlete_ids: set[int] = set()
    setup_owner: dict[int, int] = {}
    for index, entry in enumerate(json_list(entries, "athletes")):
        where = f"athletes[{index}]"
        athlete = _read_athlete(entry, where, athlete_ids)
        file_athletes.append(athlete)
        for setup_index, setup_entry in enumerate(json_list(entry.get("setups", []),
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
    entry = json_object(entry, where, _COURSE_KEYS, _COURSE_KEYS)
    course_id = new_id(entry, where, seen)
    gpx = _gpx_bytes(entry, where)
    row = checked_at(course_row, where, entry["name"], gpx, entry["distance_m"],
                   entry["ascent_m"])
    return FileCourse(course_id, row["name"], gpx, row["distance_m"], row["ascent_m"],
                      *entry_stamps(entry, where))


def _read_courses(entries: Any) -> list[FileCourse]:
    """The file's courses."""
    course_ids: set[int] = set()
    return [_read_course(entry, f"courses[{index}]", course_ids)
            for index, entry in enumerate(json_list(entries, "courses"))]


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
    entry = json_object(entry, where, _PLAN_KEYS,
                    {"id", "name", "inputs", "finish_time", "targets", "library_version",
                     *_STAMPS})
    plan_id = new_id(entry, where, seen)
    name = checked_at(check_name, where, entry["name"], "a plan")
    _text, links = checked_at(plan_inputs_text, where, entry["inputs"])
    result = {key: entry[key] for key in PLAN_RESULT_KEYS if key in entry}
    checked_at(plan_result_values, where, result)
    _check_plan_links(links, where, athlete_ids, setup_owner, course_ids)
    version = entry["library_version"]
    notes = entry.get("notes", "")
    if not isinstance(version, str) or not version or len(version) > 50:
        raise InputError(f"{where}: library_version must be short text")
    notes = checked_at(check_notes, where, notes)
    from pacing.store.library_reviews import read_file_reviews

    return FilePlan(plan_id, name, dict(entry["inputs"]), result, version, notes,
                    *entry_stamps(entry, where),
                    read_file_reviews(entry.get("reviews", []), f"{where}.reviews"))


def _read_plans(entries: Any, athlete_ids: set[int], setup_owner: Mapping[int, int],
                course_ids: set[int]) -> list[FilePlan]:
    """The file's saved plans."""
    plan_ids: set[int] = set()
    return [_read_plan(entry, f"plans[{index}]", plan_ids, athlete_ids, setup_owner,
                       course_ids)
            for index, entry in enumerate(json_list(entries, "plans"))]


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
    from pacing.store.library_teams import read_file_teams

    file_plans = _read_plans(document["plans"], {a.id for a in file_athletes}, setup_owner,
                             {c.id for c in file_courses})
    return LibraryFile(version, exported_at, exported_by, tuple(file_athletes),
                       tuple(file_setups), tuple(file_courses), tuple(file_plans),
                       read_file_teams(document.get("teams", [])))

