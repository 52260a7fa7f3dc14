"""Checks of what goes into the library, and conversions between values and table rows.

Each check raises InputError with a one-line message naming the field. Numbers are stored as
given, in SI (kg, W, J, m, s, m/s, m²; flat pace in s/km).
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

#: Number fields of pacing.athlete.Athlete, as the athletes table stores them.
ATHLETE_NUMBERS = ("body_mass", "critical_power", "w_prime", "height", "flat_pace",
                   "critical_speed", "d_prime")
#: Number fields of pacing.athlete.Setup, as the setups table stores them.
SETUP_NUMBERS = ("bike_mass", "drag_area", "power_share", "rolling_coefficient",
                 "drivetrain_efficiency")


# ---------------------------------------------------------------------------------------------
# checks and conversions between values and rows

def check_name(name: Any, what: str) -> str:
    """A valid entry name: non-empty text of at most NAME_LENGTH characters, no control
    characters, stripped of surrounding blanks.

    Parameters
    ----------
    name : Any
        The name given.
    what : str
        What is named, for the message (e.g. ``"an athlete"``).

    Returns
    -------
    str
        The name without surrounding blanks.

    Raises
    ------
    InputError
        Not text, empty, too long or holding control characters (tabs, line breaks).
    """
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{what} needs a name (non-empty text)")
    name = name.strip()
    if any(ord(character) < 32 or ord(character) == 127 for character in name):
        raise InputError(f"{what} name must not hold control characters (tabs, line breaks)")
    if len(name) > NAME_LENGTH:
        raise InputError(f"{what} name is longer than {NAME_LENGTH} characters")
    return name


def check_id(value: Any, what: str) -> int:
    """A library id (or revision): a positive whole number.

    Parameters
    ----------
    value : Any
        The value given (a bool is refused although Python counts it as an int).
    what : str
        What it is, for the message (e.g. ``"athlete id"``).

    Returns
    -------
    int
        The value.

    Raises
    ------
    InputError
        Not a positive int.
    """
    if isinstance(value, bool) or not isinstance(value, int) or value < 1:
        raise InputError(f"{what} must be a positive whole number, got {value!r}")
    return value


def _optional_finite(value: Any, what: str) -> float | None:
    """A finite number as float, or None when `value` is None."""
    return None if value is None else _finite(value, what)


def _finite(value: Any, what: str) -> float:
    """A finite number as float (InputError naming `what` otherwise)."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(f"{what} must be a number, got {value!r}")
    if not math.isfinite(value):
        raise InputError(f"{what} must be a finite number, got {value}")
    return float(value)


def athlete_row(athlete: Athlete) -> dict[str, Any]:
    """Column values of an athlete (checked: name, finite numbers).

    Parameters
    ----------
    athlete : pacing.athlete.Athlete
        The athlete (SI values; only body_mass is required).

    Returns
    -------
    dict
        ``name`` and the ATHLETE_NUMBERS as floats (None where unknown).

    Raises
    ------
    InputError
        Not an Athlete, a bad name or a number that is not finite.
    """
    if not isinstance(athlete, Athlete):
        raise InputError(f"expected an Athlete, got {type(athlete).__name__}")
    row: dict[str, Any] = {"name": check_name(athlete.name, "an athlete")}
    for field in ATHLETE_NUMBERS:
        what = field.replace("_", " ")
        value = getattr(athlete, field)
        row[field] = _finite(value, what) if field == "body_mass" \
            else _optional_finite(value, what)
    return row


def setup_row(setup: Setup) -> dict[str, Any]:
    """Column values of a setup (checked: name, finite numbers, yaw table).

    Parameters
    ----------
    setup : pacing.athlete.Setup
        The setup (SI values; yaw drag table as (yaw [deg], CdA multiplier [-]) pairs).

    Returns
    -------
    dict
        ``name``, the SETUP_NUMBERS as floats and ``yaw_drag_table`` as JSON text (or None).

    Raises
    ------
    InputError
        Not a Setup, a bad name, a number that is not finite or a yaw table entry that is not
        a pair of finite numbers.
    """
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
    """The Athlete of a row of the athletes table (or any object with its columns).

    Parameters
    ----------
    row : Any
        A database row with ``name`` and the ATHLETE_NUMBERS (SI).

    Returns
    -------
    pacing.athlete.Athlete
        The athlete.
    """
    return Athlete(name=row.name, **{field: getattr(row, field) for field in ATHLETE_NUMBERS})


def setup_from_row(row: Any) -> Setup:
    """The Setup of a row of the setups table.

    Parameters
    ----------
    row : Any
        A database row with ``name``, the SETUP_NUMBERS (SI) and ``yaw_drag_table`` (JSON
        text of [yaw [deg], CdA multiplier [-]] pairs, or None).

    Returns
    -------
    pacing.athlete.Setup
        The setup, its yaw drag table as a tuple of float pairs.
    """
    table = None
    if row.yaw_drag_table is not None:
        table = tuple((float(yaw), float(factor))
                      for yaw, factor in jsontext.loads(row.yaw_drag_table))
    return Setup(name=row.name, yaw_drag_table=table,
                 **{field: getattr(row, field) for field in SETUP_NUMBERS})


def athlete_record(row: Any) -> AthleteRecord:
    """The AthleteRecord of a row.

    Parameters
    ----------
    row : Any
        A database row of the athletes table.

    Returns
    -------
    AthleteRecord
        The record, times timezone-aware (UTC).
    """
    return AthleteRecord(id=row.id, athlete=athlete_from_row(row), revision=row.revision,
                         created_at=as_utc(row.created_at), updated_at=as_utc(row.updated_at))


def setup_record(row: Any) -> SetupRecord:
    """The SetupRecord of a row.

    Parameters
    ----------
    row : Any
        A database row of the setups table.

    Returns
    -------
    SetupRecord
        The record, times timezone-aware (UTC).
    """
    return SetupRecord(id=row.id, athlete_id=row.athlete_id, setup=setup_from_row(row),
                       revision=row.revision, created_at=as_utc(row.created_at),
                       updated_at=as_utc(row.updated_at))


def course_summary(row: Any) -> CourseSummary:
    """The CourseSummary of a row (the GPX bytes, if selected, are not read).

    Parameters
    ----------
    row : Any
        A database row of the courses table.

    Returns
    -------
    CourseSummary
        The record, times timezone-aware (UTC).
    """
    return CourseSummary(id=row.id, name=row.name, distance_m=row.distance_m,
                         ascent_m=row.ascent_m, gpx_size=row.gpx_size,
                         gpx_sha256=row.gpx_sha256, revision=row.revision,
                         created_at=as_utc(row.created_at), updated_at=as_utc(row.updated_at))


def plan_summary(row: Any) -> PlanSummary:
    """The PlanSummary of a row (the JSON columns, if selected, are not read).

    Parameters
    ----------
    row : Any
        A database row of the plans table.

    Returns
    -------
    PlanSummary
        The record, times timezone-aware (UTC).
    """
    return PlanSummary(id=row.id, name=row.name, athlete_id=row.athlete_id,
                       setup_id=row.setup_id, course_id=row.course_id,
                       finish_time=row.finish_time, time_saved=row.time_saved,
                       library_version=row.library_version, notes=row.notes,
                       revision=row.revision, created_at=as_utc(row.created_at),
                       updated_at=as_utc(row.updated_at))


def plan_record(row: Any) -> PlanRecord:
    """The PlanRecord of a row, its JSON columns read back.

    Parameters
    ----------
    row : Any
        A database row of the plans table.

    Returns
    -------
    PlanRecord
        The record, times timezone-aware (UTC).
    """
    return PlanRecord(summary=plan_summary(row), inputs=jsontext.loads(row.inputs),
                      strategy=jsontext.loads(row.strategy),
                      weather=jsontext.loads(row.weather),
                      targets=jsontext.loads(row.targets))


def course_row(name: Any, gpx: Any, distance_m: Any, ascent_m: Any) -> dict[str, Any]:
    """Column values of a course (checked: name, GPX bytes, summary numbers).

    Parameters
    ----------
    name : Any
        Label (checked by check_name).
    gpx : Any
        The GPX file, bytes-like, not empty, at most GPX_SIZE_LIMIT [bytes].
    distance_m : Any
        Course length, positive [m].
    ascent_m : Any
        Total climbing, not negative [m].

    Returns
    -------
    dict
        ``name``, ``gpx`` (bytes), ``gpx_sha256`` (hex), ``gpx_size`` [bytes],
        ``distance_m`` [m] and ``ascent_m`` [m].

    Raises
    ------
    InputError
        Naming the first bad value.
    """
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

    Parameters
    ----------
    result : Any
        A dict with ``finish_time`` (positive) [s] and ``targets`` (list of dicts), both
        required, and optionally ``strategy``, ``weather`` (JSON values) and ``time_saved``
        (or None) [s].

    Returns
    -------
    dict
        ``strategy``, ``weather`` and ``targets`` as JSON text, ``time_saved`` [s] (or None)
        and ``finish_time`` [s] as floats.

    Raises
    ------
    InputError
        Not a dict, unknown or missing keys, a finish time that is not positive, targets that
        are not a list of dicts, or a value JSON cannot hold (NaN, infinity, other types).
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
        "time_saved": _optional_finite(result.get("time_saved"), "time saved"),
        "finish_time": finish,
    }


def plan_inputs_text(inputs: Any) -> tuple[str, dict[str, int | None]]:
    """Stored text of plan inputs and the library links they name.

    Parameters
    ----------
    inputs : Any
        A dict of JSON values (SI numbers); its optional keys PLAN_LINK_KEYS hold library ids.

    Returns
    -------
    tuple of (str, dict)
        The JSON text of `inputs`, and ``{key: id or None}`` for each of PLAN_LINK_KEYS.

    Raises
    ------
    InputError
        Not a dict, a link that is not a positive whole number, or a value JSON cannot hold.
    """
    if not isinstance(inputs, Mapping):
        raise InputError(f"plan inputs must be a dict, got {type(inputs).__name__}")
    links: dict[str, int | None] = {}
    for key in PLAN_LINK_KEYS:
        value = inputs.get(key)
        links[key] = None if value is None else check_id(value, f"plan input {key}")
    return jsontext.dumps(dict(inputs), "inputs"), links


def check_notes(notes: Any) -> str:
    """A plan's notes: any text without NUL characters (line breaks and tabs are fine).

    Parameters
    ----------
    notes : Any
        The coach's free text.

    Returns
    -------
    str
        The notes as given.

    Raises
    ------
    InputError
        Not text, or holding a NUL character.
    """
    if not isinstance(notes, str):
        raise InputError(f"plan notes must be text, got {type(notes).__name__}")
    if "\x00" in notes:
        raise InputError("plan notes must not hold NUL characters")
    return notes


def plural(count: int, word: str) -> str:
    """A count with its word, plural when the count is not 1: '1 plan', '2 plans'.

    Parameters
    ----------
    count : int
        How many [-].
    word : str
        The singular noun; the plural adds an "s".

    Returns
    -------
    str
        E.g. ``"2 saved plans"``.
    """
    return f"{count} {word}" if count == 1 else f"{count} {word}s"
