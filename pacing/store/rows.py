"""Checks of what goes into the library, and conversions between values and table rows.

Each function raises InputError with a one-line message naming the field.
"""

from __future__ import annotations

import hashlib
import math
import numbers
from collections.abc import Mapping
from typing import Any

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.store import jsontext
from pacing.store.database import as_utc
from pacing.store.records import (
    PLAN_LINK_KEYS,
    PLAN_RESULT_KEYS,
    AthleteRecord,
    CourseSummary,
    PlanRecord,
    PlanSummary,
    SetupRecord,
)

#: Longest name of an entry [characters].
NAME_LENGTH = 200
#: Largest GPX file the library keeps [bytes].
GPX_SIZE_LIMIT = 64 * 1024 * 1024

ATHLETE_NUMBERS = ("body_mass", "critical_power", "w_prime", "height", "flat_pace",
                   "critical_speed", "d_prime")
SETUP_NUMBERS = ("bike_mass", "drag_area", "power_share", "rolling_coefficient",
                 "drivetrain_efficiency")


# ---------------------------------------------------------------------------------------------
# checks and conversions between values and rows

def check_name(name: Any, what: str) -> str:
    """A valid entry name (non-empty text of at most NAME_LENGTH characters), stripped."""
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{what} needs a name (non-empty text)")
    name = name.strip()
    if any(ord(character) < 32 or ord(character) == 127 for character in name):
        raise InputError(f"{what} name must not hold control characters (tabs, line breaks)")
    if len(name) > NAME_LENGTH:
        raise InputError(f"{what} name is longer than {NAME_LENGTH} characters")
    return name


def check_id(value: Any, what: str) -> int:
    """A positive integer id."""
    if isinstance(value, bool) or not isinstance(value, int) or value < 1:
        raise InputError(f"{what} must be a positive whole number, got {value!r}")
    return value


def _finite(value: Any, what: str, optional: bool = False) -> float | None:
    if value is None and optional:
        return None
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(f"{what} must be a number, got {value!r}")
    if not math.isfinite(value):
        raise InputError(f"{what} must be a finite number, got {value}")
    return float(value)


def athlete_row(athlete: Athlete) -> dict[str, Any]:
    """Column values of an athlete (checked: name, finite numbers)."""
    if not isinstance(athlete, Athlete):
        raise InputError(f"expected an Athlete, got {type(athlete).__name__}")
    row: dict[str, Any] = {"name": check_name(athlete.name, "an athlete")}
    for field in ATHLETE_NUMBERS:
        row[field] = _finite(getattr(athlete, field), field.replace("_", " "),
                             optional=field != "body_mass")
    return row


def setup_row(setup: Setup) -> dict[str, Any]:
    """Column values of a setup (checked: name, finite numbers, yaw table)."""
    if not isinstance(setup, Setup):
        raise InputError(f"expected a Setup, got {type(setup).__name__}")
    row: dict[str, Any] = {"name": check_name(setup.name, "a setup")}
    for field in SETUP_NUMBERS:
        row[field] = _finite(getattr(setup, field), field.replace("_", " "))
    table = setup.yaw_drag_table
    if table is None:
        row["yaw_drag_table"] = None
    else:
        pairs = []
        for pair in table:
            if len(pair) != 2:
                raise InputError("the yaw drag table needs (yaw [deg], CdA multiplier) pairs")
            pairs.append([_finite(pair[0], "yaw"), _finite(pair[1], "CdA multiplier")])
        row["yaw_drag_table"] = jsontext.dumps(pairs, "yaw drag table")
    return row


def athlete_from_row(row: Any) -> Athlete:
    return Athlete(name=row.name, **{field: getattr(row, field) for field in ATHLETE_NUMBERS})


def setup_from_row(row: Any) -> Setup:
    table = None
    if row.yaw_drag_table is not None:
        table = tuple((float(yaw), float(factor))
                      for yaw, factor in jsontext.loads(row.yaw_drag_table))
    return Setup(name=row.name, yaw_drag_table=table,
                 **{field: getattr(row, field) for field in SETUP_NUMBERS})


def athlete_record(row: Any) -> AthleteRecord:
    return AthleteRecord(id=row.id, athlete=athlete_from_row(row), revision=row.revision,
                         created_at=as_utc(row.created_at), updated_at=as_utc(row.updated_at))


def setup_record(row: Any) -> SetupRecord:
    return SetupRecord(id=row.id, athlete_id=row.athlete_id, setup=setup_from_row(row),
                       revision=row.revision, created_at=as_utc(row.created_at),
                       updated_at=as_utc(row.updated_at))


def course_summary(row: Any) -> CourseSummary:
    return CourseSummary(id=row.id, name=row.name, distance_m=row.distance_m,
                         ascent_m=row.ascent_m, gpx_size=row.gpx_size,
                         gpx_sha256=row.gpx_sha256, revision=row.revision,
                         created_at=as_utc(row.created_at), updated_at=as_utc(row.updated_at))


def plan_summary(row: Any) -> PlanSummary:
    return PlanSummary(id=row.id, name=row.name, athlete_id=row.athlete_id,
                       setup_id=row.setup_id, course_id=row.course_id,
                       finish_time=row.finish_time, time_saved=row.time_saved,
                       library_version=row.library_version, notes=row.notes,
                       revision=row.revision, created_at=as_utc(row.created_at),
                       updated_at=as_utc(row.updated_at))


def plan_record(row: Any) -> PlanRecord:
    return PlanRecord(summary=plan_summary(row), inputs=jsontext.loads(row.inputs),
                      strategy=jsontext.loads(row.strategy),
                      weather=jsontext.loads(row.weather),
                      targets=jsontext.loads(row.targets))


def course_row(name: Any, gpx: Any, distance_m: Any, ascent_m: Any) -> dict[str, Any]:
    """Column values of a course (checked: name, GPX bytes, summary numbers)."""
    if not isinstance(gpx, (bytes, bytearray, memoryview)):
        raise InputError(f"the GPX file must be bytes, got {type(gpx).__name__}")
    gpx = bytes(gpx)
    if not gpx:
        raise InputError("the GPX file is empty")
    if len(gpx) > GPX_SIZE_LIMIT:
        raise InputError(f"the GPX file is larger than {GPX_SIZE_LIMIT // 2**20} MiB")
    distance = _finite(distance_m, "course distance")
    ascent = _finite(ascent_m, "course ascent")
    if distance <= 0:
        raise InputError(f"course distance must be positive, got {distance} m")
    if ascent < 0:
        raise InputError(f"course ascent must not be negative, got {ascent} m")
    return {"name": check_name(name, "a course"), "gpx": gpx,
            "gpx_sha256": hashlib.sha256(gpx).hexdigest(), "gpx_size": len(gpx),
            "distance_m": distance, "ascent_m": ascent}


def plan_result_values(result: Any) -> dict[str, Any]:
    """Column values of a plan result (checked): the PLAN_RESULT_KEYS of `result`.

    `finish_time` [s] and `targets` (list of dicts) are required; `strategy`, `weather` and
    `time_saved` [s] may be missing (None).
    """
    if not isinstance(result, Mapping):
        raise InputError(f"a plan result must be a dict, got {type(result).__name__}")
    unknown = sorted(set(result) - set(PLAN_RESULT_KEYS))
    if unknown:
        raise InputError(f"a plan result has unknown keys {unknown}; expected "
                         f"{list(PLAN_RESULT_KEYS)}")
    for key in ("finish_time", "targets"):
        if key not in result:
            raise InputError(f"a plan result needs {key!r}")
    finish = _finite(result["finish_time"], "finish time")
    if finish <= 0:
        raise InputError(f"finish time must be positive, got {finish} s")
    targets = result["targets"]
    if not isinstance(targets, (list, tuple)) or not all(
            isinstance(record, Mapping) for record in targets):
        raise InputError("a plan's targets must be a list of records (dicts)")
    return {
        "strategy": jsontext.dumps(result.get("strategy"), "strategy"),
        "weather": jsontext.dumps(result.get("weather"), "weather"),
        "targets": jsontext.dumps([dict(record) for record in targets], "targets"),
        "time_saved": _finite(result.get("time_saved"), "time saved", optional=True),
        "finish_time": finish,
    }


def plan_inputs_text(inputs: Any) -> tuple[str, dict[str, int | None]]:
    """Stored text of plan inputs (a dict) and the library links it names (PLAN_LINK_KEYS)."""
    if not isinstance(inputs, Mapping):
        raise InputError(f"plan inputs must be a dict, got {type(inputs).__name__}")
    links: dict[str, int | None] = {}
    for key in PLAN_LINK_KEYS:
        value = inputs.get(key)
        links[key] = None if value is None else check_id(value, f"plan input {key}")
    return jsontext.dumps(dict(inputs), "inputs"), links


def check_notes(notes: Any) -> str:
    if not isinstance(notes, str):
        raise InputError(f"plan notes must be text, got {type(notes).__name__}")
    if "\x00" in notes:
        raise InputError("plan notes must not hold NUL characters")
    return notes


def plural(count: int, word: str) -> str:
    """'1 plan', '2 plans'."""
    return f"{count} {word}" if count == 1 else f"{count} {word}s"
