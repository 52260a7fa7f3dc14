"""Where a setup's drag area came from (migration 0004): its 95 % interval and its source, kept
when the drag area was measured on a race (the race review's fit, pacing.fieldtest.race_fit).

The setups table holds them in three nullable columns (``drag_area_low``, ``drag_area_high``
[m²] and ``drag_area_source``, text), all None or all set; the library file in an optional
``"drag_area_origin": {"low_m2": …, "high_m2": …, "source": "…"}`` of the setup entry.
The checks raise InputError with one line naming the field.
"""

from __future__ import annotations

import datetime
import math
from collections.abc import Mapping
from typing import Any

from pacing.errors import InputError
from pacing.store.records import DragAreaOrigin
from pacing.store.rows import BIDI_CONTROLS, _finite, origin_from_row

__all__ = ["check_origin", "check_source", "fitted_drag_area", "origin_columns", "origin_entry",
           "origin_from_entry", "origin_from_row", "race_review_source"]

#: Largest end of a drag area interval [m²]: far above any rider's CdA (0.15-0.5 m², common
#: practice), so a wide interval from a short race is kept as fitted.
INTERVAL_LIMIT = 10.0
#: Longest source text [characters] (a label, as a name: NAME_LENGTH is 200).
SOURCE_LENGTH = 300
#: Columns of the setups table added by migration 0004.
ORIGIN_COLUMNS = ("drag_area_low", "drag_area_high", "drag_area_source")
#: Keys of the library file's "drag_area_origin" object.
ORIGIN_KEYS = frozenset({"low_m2", "high_m2", "source"})


def check_source(source: Any) -> str:
    """The source of a drag area: one line of text, trimmed, 1..SOURCE_LENGTH characters.

    Raises
    ------
    InputError
        Not text, empty, too long, or holding a control or direction-changing character.
    """
    if not isinstance(source, str):
        raise InputError(f"the drag area's source must be text, got {type(source).__name__}")
    text = source.strip()
    if not text or len(text) > SOURCE_LENGTH:
        raise InputError(f"the drag area's source must be 1-{SOURCE_LENGTH} characters, "
                         f"got {len(text)}")
    if any(ord(c) < 32 or 127 <= ord(c) < 160 or c in BIDI_CONTROLS for c in text):
        raise InputError("the drag area's source must be one line without control characters")
    return text


def check_origin(origin: Any, drag_area: float) -> DragAreaOrigin:
    """A checked DragAreaOrigin: 0 < low <= `drag_area` <= high <= INTERVAL_LIMIT [m²].

    Parameters
    ----------
    origin : DragAreaOrigin
        The interval and source given.
    drag_area : float
        The setup's drag area it belongs to [m²].

    Returns
    -------
    DragAreaOrigin
        Numbers as floats, the source trimmed.

    Raises
    ------
    InputError
        Not a DragAreaOrigin, a number that is not finite, an interval that does not hold the
        drag area, or a bad source.
    """
    if not isinstance(origin, DragAreaOrigin):
        raise InputError(f"expected a DragAreaOrigin, got {type(origin).__name__}")
    low = _finite(origin.low_m2, "the drag area interval's low end")
    high = _finite(origin.high_m2, "the drag area interval's high end")
    if not 0.0 < low <= drag_area <= high <= INTERVAL_LIMIT:
        raise InputError(f"the drag area interval must hold the drag area within "
                         f"(0, {INTERVAL_LIMIT:g}] m²: got {low:g}-{high:g} m² for "
                         f"{drag_area:g} m²")
    return DragAreaOrigin(low, high, check_source(origin.source))


def origin_columns(origin: DragAreaOrigin | None, drag_area: float) -> dict[str, Any]:
    """The three origin columns of a setup row (all None when `origin` is None), checked."""
    if origin is None:
        return dict.fromkeys(ORIGIN_COLUMNS)
    checked = check_origin(origin, drag_area)
    return {"drag_area_low": checked.low_m2, "drag_area_high": checked.high_m2,
            "drag_area_source": checked.source}


def origin_entry(origin: DragAreaOrigin | None) -> dict[str, Any] | None:
    """The library file's "drag_area_origin" value (None when there is none)."""
    if origin is None:
        return None
    return {"low_m2": origin.low_m2, "high_m2": origin.high_m2, "source": origin.source}


def origin_from_entry(entry: Any, where: str, drag_area: float) -> DragAreaOrigin | None:
    """A file's "drag_area_origin" value (None or the object), checked.

    Raises
    ------
    InputError
        Not an object with exactly ORIGIN_KEYS, or bad values; the message names `where`.
    """
    if entry is None:
        return None
    if not isinstance(entry, Mapping) or set(entry) != ORIGIN_KEYS:
        raise InputError(f"{where}.drag_area_origin must be an object with low_m2, high_m2 "
                         f"and source")
    try:
        return check_origin(DragAreaOrigin(entry["low_m2"], entry["high_m2"], entry["source"]),
                            drag_area)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None


def race_review_source(ride_name: str, day: datetime.date | None = None) -> str:
    """The source text of a drag area fitted on a race: "race review of <ride>, <date>".

    Parameters
    ----------
    ride_name : str
        The race file's name (or the plan's name).
    day : datetime.date or None
        The day of the race or of the review; None for today (UTC).
    """
    when = day or datetime.datetime.now(datetime.UTC).date()
    name = " ".join(str(ride_name).split())[: SOURCE_LENGTH - 40] or "a race"
    return f"race review of {name}, {when.isoformat()}"


def fitted_drag_area(cda_m2: float, ci95: Any, source: str
                     ) -> tuple[float, DragAreaOrigin | None]:
    """A fitted CdA as a setup keeps it: rounded to 0.0001 m², its 95 % interval widened
    outward to 0.0001 m² (so it still holds the rounded value).

    Parameters
    ----------
    cda_m2 : float
        The fitted drag area [m²].
    ci95 : sequence of two floats or None
        Its 95 % interval [m²] (None when the fit gave none).
    source : str
        Where it came from (race_review_source).

    Returns
    -------
    tuple
        (CdA [m²], DragAreaOrigin or None when there is no interval).
    """
    cda = round(float(cda_m2), 4)
    if not ci95:
        return cda, None
    low = min(math.floor(float(ci95[0]) * 1e4) / 1e4, cda)
    high = max(math.ceil(float(ci95[1]) * 1e4) / 1e4, cda)
    return cda, DragAreaOrigin(low, high, check_source(source))
