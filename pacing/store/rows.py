"""Checks of what goes into the library, and conversions between values and table rows.

Each check raises InputError with a one-line message naming the field. Numbers are stored as
given, in SI (kg, W, J, m, s, m/s, m²; flat pace in s/km), once they are within physical
ranges (NUMBER_RANGES; the athlete's body mass and every setup number are checked by
pacing.athlete itself). Names are normalised (check_name): trimmed, at most NAME_LENGTH
characters, no control or direction-changing characters.
"""

from __future__ import annotations

import hashlib
import math
import numbers
import unicodedata
from collections.abc import Mapping
from typing import Any

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.physics.running import RUNNING_SPEED_RANGE
from pacing.store import jsontext
from pacing.store.database import as_utc
from pacing.store.records import (
    PLAN_LINK_KEYS,
    PLAN_RESULT_KEYS,
    AthleteRecord,
    CourseSummary,
    DragAreaOrigin,
    PlanRecord,
    PlanSummary,
    SetupRecord,
)

#: Longest name of an entry [characters].
NAME_LENGTH = 200
#: Largest GPX file the library keeps [bytes].
GPX_SIZE_LIMIT = 64 * 1024 * 1024
#: Largest library id: the schema's ids are INTEGER, 32 bits on PostgreSQL [-].
ID_LIMIT = 2**31 - 1

#: Physical ranges (low, high, unit) of the numbers the library keeps, each low <= x <= high
#: (low < x where low is 0 and the quantity must be positive, POSITIVE_NUMBERS). Wide enough
#: for any athlete or race, narrow enough that no stored number overflows what shows it.
#: Sources: critical power up to the plan command's largest power, 3000 W
#: (pacing.cli.plan_cycling.POWER_RANGE); flat pace and critical speed within
#: pacing.physics.running.RUNNING_SPEED_RANGE; W′ (typically 10-35 kJ), D′ (typically
#: 100-400 m), height, course length (longer than any race), ascent and times: generous
#: bounds, from memory and common practice.
NUMBER_RANGES: dict[str, tuple[float, float, str]] = {
    "critical_power": (0.0, 3000.0, "W"),
    "w_prime": (0.0, 200_000.0, "J"),
    "height": (0.5, 2.75, "m"),
    "flat_pace": (1000.0 / RUNNING_SPEED_RANGE[1], 1000.0 / RUNNING_SPEED_RANGE[0], "s/km"),
    "critical_speed": (RUNNING_SPEED_RANGE[0], RUNNING_SPEED_RANGE[1], "m/s"),
    "d_prime": (0.0, 5000.0, "m"),
    "yaw": (-180.0, 180.0, "deg"),
    "CdA multiplier": (0.0, 10.0, "-"),
    "course distance": (0.0, 1.0e7, "m"),
    "course ascent": (0.0, 1.0e6, "m"),
    "finish time": (0.0, 1.0e7, "s"),
    "time saved": (-1.0e7, 1.0e7, "s"),
}
#: Keys of NUMBER_RANGES whose low bound 0 itself is refused.
POSITIVE_NUMBERS = frozenset({"critical_power", "w_prime", "d_prime", "CdA multiplier",
                              "course distance", "finish time"})
#: Unicode characters refused in names besides control characters: the bidirectional
#: embeddings, overrides and isolates (U+202A-U+202E, U+2066-U+2069), which make a name show
#: other than it reads (Unicode Standard Annex #9; CVE-2021-42574, "Trojan Source").
BIDI_CONTROLS = frozenset(chr(c) for c in (*range(0x202A, 0x202F), *range(0x2066, 0x206A)))

#: Number fields of pacing.athlete.Athlete, as the athletes table stores them.
ATHLETE_NUMBERS = ("body_mass", "critical_power", "w_prime", "height", "flat_pace",
                   "critical_speed", "d_prime")
#: Number fields of pacing.athlete.Setup, as the setups table stores them.
SETUP_NUMBERS = ("bike_mass", "drag_area", "power_share", "rolling_coefficient",
                 "drivetrain_efficiency")


# ---------------------------------------------------------------------------------------------
# checks and conversions between values and rows

def check_name(name: Any, what: str) -> str:
    """A valid entry name, normalised: Unicode NFC, surrounding blanks trimmed, non-empty, at
    most NAME_LENGTH characters, no control characters (Unicode category Cc: tabs, line
    breaks, C1 controls), no embedding, override or isolate characters (BIDI_CONTROLS). Other
    format characters stay: the zero-width non-joiner belongs in Persian names.

    Parameters
    ----------
    name : Any
        The name given [-].
    what : str
        What is named, for the message (e.g. ``"an athlete"``) [-].

    Returns
    -------
    str
        The normalised name [-].

    Raises
    ------
    InputError
        Not text, empty, too long or holding a refused character, in one line.
    """
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{what} needs a name (non-empty text)")
    if len(name) > 4 * NAME_LENGTH:  # before any work on a huge text
        raise InputError(f"{what} name is longer than {NAME_LENGTH} characters")
    name = unicodedata.normalize("NFC", name).strip()
    if any(unicodedata.category(character) == "Cc" for character in name):
        raise InputError(f"{what} name must not hold control characters (tabs, line breaks)")
    if any(character in BIDI_CONTROLS for character in name):
        raise InputError(f"{what} name must not hold direction-changing characters "
                         "(U+202A-U+202E, U+2066-U+2069)")
    if len(name) > NAME_LENGTH:
        raise InputError(f"{what} name is longer than {NAME_LENGTH} characters")
    return name


def check_id(value: Any, what: str) -> int:
    """A library id (or revision): a positive whole number.

    Parameters
    ----------
    value : Any
        The value given (a bool is refused although Python counts it as an int) [-].
    what : str
        What it is, for the message (e.g. ``"athlete id"``) [-].

    Returns
    -------
    int
        The value [-].

    Raises
    ------
    InputError
        Not a positive int of at most ID_LIMIT.
    """
    if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= ID_LIMIT:
        shown = repr(value) if len(repr(value)) <= 40 else repr(value)[:37] + "..."
        raise InputError(f"{what} must be a positive whole number up to {ID_LIMIT}, "
                         f"got {shown}")
    return value


def _optional_finite(value: Any, what: str) -> float | None:
    """A finite number as float, or None when `value` is None."""
    return None if value is None else _finite(value, what)


def _finite(value: Any, what: str) -> float:
    """A finite number as float (InputError naming `what` otherwise)."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        shown = repr(value) if len(repr(value)) <= 40 else repr(value)[:37] + "..."
        raise InputError(f"{what} must be a number, got {shown}")
    try:
        number = float(value)
    except OverflowError:  # an int too large for a float
        raise InputError(f"{what} must be a finite number, got a number too large") from None
    if not math.isfinite(number):
        raise InputError(f"{what} must be a finite number, got {number}")
    return number


def _in_range(value: Any, what: str, key: str | None = None) -> float:
    """A finite number within NUMBER_RANGES[key] (key defaults to `what`) as float."""
    number = _finite(value, what)
    low, high, unit = NUMBER_RANGES[key or what]
    opened = (key or what) in POSITIVE_NUMBERS
    if not ((low < number) if opened else (low <= number)) or not number <= high:
        bracket = "(" if opened else "["
        raise InputError(f"{what} must be in {bracket}{low:g}, {high:g}] {unit}, "
                         f"got {number:g}")
    return number


def _optional_in_range(value: Any, what: str, key: str) -> float | None:
    """None, or a number within NUMBER_RANGES[key]."""
    return None if value is None else _in_range(value, what, key)


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
            else _optional_in_range(value, what, field)
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
            pairs.append([_in_range(pair[0], "yaw"), _in_range(pair[1], "CdA multiplier")])
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


def origin_from_row(row: Any) -> DragAreaOrigin | None:
    """The DragAreaOrigin of a setups row (migration 0004), None when its origin columns are
    empty (the drag area was typed in)."""
    low = getattr(row, "drag_area_low", None)
    high = getattr(row, "drag_area_high", None)
    source = getattr(row, "drag_area_source", None)
    if low is None or high is None or source is None:
        return None
    return DragAreaOrigin(float(low), float(high), str(source))


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
                       updated_at=as_utc(row.updated_at),
                       drag_area_origin=origin_from_row(row))


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
    distance = _in_range(distance_m, "course distance")
    ascent = _in_range(ascent_m, "course ascent")
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
    finish = _in_range(result["finish_time"], "finish time")
    targets = result["targets"]
    if not isinstance(targets, (list, tuple)) or not all(
            isinstance(record, Mapping) for record in targets):
        raise InputError("a plan's targets must be a list of records (dicts)")
    return {
        "strategy": jsontext.dumps(result.get("strategy"), "strategy"),
        "weather": jsontext.dumps(result.get("weather"), "weather"),
        "targets": jsontext.dumps([dict(record) for record in targets], "targets"),
        "time_saved": _optional_in_range(result.get("time_saved"), "time saved", "time saved"),
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
