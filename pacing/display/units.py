"""Metric and imperial units at the edges (app, exports, command line).

Inside the package every number is SI (m, s, kg, m/s) with temperature in °C (DEVELOPERS.md).
This module converts those numbers to what a person reads and back, and formats clock times
and paces. Nothing else in the package converts units.

Exact factors (international yard and pound, 1959; NIST SP 811 (2008), Appendix B.8):
1 ft = 0.3048 m, 1 mi = 1609.344 m, 1 lb = 0.45359237 kg, 1 mph = 0.44704 m/s;
°F = °C·9/5 + 32.

A *quantity* names what a number measures (``"speed"``, ``"distance"``, ``"elevation"``,
``"mass"``, ``"temperature"``, ``"wind_speed"``); a *system* is ``"metric"`` or ``"imperial"``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import overload

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError

FOOT = 0.3048
"""[m] (exact)."""
MILE = 1609.344
"""[m] (exact)."""
POUND = 0.45359237
"""[kg] (exact)."""
MILE_PER_HOUR = MILE / 3600.0
"""[m/s] (exact: 0.44704)."""
KILOMETRE_PER_HOUR = 1000.0 / 3600.0
"""[m/s]."""

SYSTEMS = ("metric", "imperial")
"""The unit systems offered at the edges."""


@dataclass(frozen=True)
class DisplayUnit:
    """How one quantity is shown: label, and the linear map display = si / scale + offset.

    Attributes
    ----------
    label : str
        Unit symbol shown beside numbers ("km/h") [-].
    scale : float
        Size of one display unit in SI units (1 km/h = 0.2778 m/s) [SI per display unit].
    offset : float
        Added after scaling (only temperatures use it) [display unit].
    """

    label: str
    scale: float
    offset: float = 0.0


UNITS: dict[str, dict[str, DisplayUnit]] = {
    "speed": {
        "metric": DisplayUnit("km/h", KILOMETRE_PER_HOUR),
        "imperial": DisplayUnit("mph", MILE_PER_HOUR),
    },
    "wind_speed": {
        "metric": DisplayUnit("km/h", KILOMETRE_PER_HOUR),
        "imperial": DisplayUnit("mph", MILE_PER_HOUR),
    },
    "distance": {
        "metric": DisplayUnit("km", 1000.0),
        "imperial": DisplayUnit("mi", MILE),
    },
    "elevation": {
        "metric": DisplayUnit("m", 1.0),
        "imperial": DisplayUnit("ft", FOOT),
    },
    "mass": {
        "metric": DisplayUnit("kg", 1.0),
        "imperial": DisplayUnit("lb", POUND),
    },
    "temperature": {
        "metric": DisplayUnit("°C", 1.0),
        "imperial": DisplayUnit("°F", 5.0 / 9.0, 32.0),
    },
}
"""Display unit of each quantity in each system."""

PACE_LABELS = {"metric": "min/km", "imperial": "min/mi"}
"""Label of a pace in each system."""


def _unit(quantity: str, system: str) -> DisplayUnit:
    if system not in SYSTEMS:
        raise InputError(f"unit system must be one of {', '.join(SYSTEMS)}, got {system!r}")
    try:
        return UNITS[quantity][system]
    except KeyError:
        raise InputError(f"unknown quantity {quantity!r}") from None


def unit_label(quantity: str, system: str) -> str:
    """Unit symbol of a quantity in a system.

    Parameters
    ----------
    quantity : str
        A key of UNITS, or "pace" [-].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    str
        The symbol, e.g. "km/h"; "min/km" or "min/mi" for a pace.

    Examples
    --------
    >>> unit_label("speed", "imperial"), unit_label("pace", "metric")
    ('mph', 'min/km')
    """
    if quantity == "pace":
        _unit("speed", system)
        return PACE_LABELS[system]
    return _unit(quantity, system).label


@overload
def to_display(value: float, quantity: str, system: str) -> float: ...
@overload
def to_display(value: np.ndarray, quantity: str, system: str) -> np.ndarray: ...
@overload
def to_display(value: ArrayLike, quantity: str, system: str) -> float | np.ndarray: ...
def to_display(value: ArrayLike, quantity: str, system: str) -> float | np.ndarray:
    """SI value → the number shown in `system`: display = value / scale + offset.

    Parameters
    ----------
    value : float or array_like
        Value in SI units, temperature in °C [SI].
    quantity : str
        One of UNITS' keys [-].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    float or numpy.ndarray
        The displayed number, a float for a scalar [display unit].

    References
    ----------
    NIST SP 811 (2008), Appendix B.8 (exact factors).

    Examples
    --------
    10 m/s is 36 km/h and 22.369 mph (1 mph = 0.44704 m/s exactly); 20 °C is 68 °F:

    >>> to_display(10.0, "speed", "metric"), round(to_display(10.0, "speed", "imperial"), 3)
    (36.0, 22.369)
    >>> to_display(20.0, "temperature", "imperial")
    68.0
    """
    unit = _unit(quantity, system)
    result = np.asarray(value, dtype=float) / unit.scale + unit.offset
    return float(result) if result.ndim == 0 else result


@overload
def from_display(value: float, quantity: str, system: str) -> float: ...
@overload
def from_display(value: np.ndarray, quantity: str, system: str) -> np.ndarray: ...
@overload
def from_display(value: ArrayLike, quantity: str, system: str) -> float | np.ndarray: ...
def from_display(value: ArrayLike, quantity: str, system: str) -> float | np.ndarray:
    """Number shown in `system` → SI value: value_SI = (display − offset) · scale.

    The inverse of `to_display`.

    Parameters
    ----------
    value : float or array_like
        The displayed number [display unit].
    quantity : str
        One of UNITS' keys [-].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    float or numpy.ndarray
        The value in SI units, temperature in °C [SI].

    Examples
    --------
    1000 ft is 304.8 m exactly:

    >>> from_display(1000.0, "elevation", "imperial")
    304.8
    """
    unit = _unit(quantity, system)
    result = (np.asarray(value, dtype=float) - unit.offset) * unit.scale
    return float(result) if result.ndim == 0 else result


@overload
def pace_from_speed(speed: float, system: str) -> float: ...
@overload
def pace_from_speed(speed: np.ndarray, system: str) -> np.ndarray: ...
@overload
def pace_from_speed(speed: ArrayLike, system: str) -> float | np.ndarray: ...
def pace_from_speed(speed: ArrayLike, system: str) -> float | np.ndarray:
    """Time to cover one display distance unit (km or mile) at a speed [s per km or s per mi].

    Parameters
    ----------
    speed : float or array_like
        Speed, > 0 [m/s].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    float or numpy.ndarray
        Pace [s/km or s/mi].

    Examples
    --------
    >>> pace_from_speed(1000.0 / 300.0, "metric")
    300.0
    """
    speed = np.asarray(speed, dtype=float)
    if np.any(~np.isfinite(speed)) or np.any(speed <= 0):
        raise InputError("pace needs a positive, finite speed")
    result = _unit("distance", system).scale / speed
    return float(result) if result.ndim == 0 else result


@overload
def speed_from_pace(pace: float, system: str) -> float: ...
@overload
def speed_from_pace(pace: np.ndarray, system: str) -> np.ndarray: ...
@overload
def speed_from_pace(pace: ArrayLike, system: str) -> float | np.ndarray: ...
def speed_from_pace(pace: ArrayLike, system: str) -> float | np.ndarray:
    """Speed from a pace in seconds per km or per mile [m/s]; the inverse of pace_from_speed.

    Parameters
    ----------
    pace : float or array_like
        Pace, > 0 [s/km or s/mi].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    float or numpy.ndarray
        Speed [m/s].

    Examples
    --------
    A 4:00 mile is 1609.344/240 = 6.7056 m/s:

    >>> speed_from_pace(240.0, "imperial")
    6.7056
    """
    pace = np.asarray(pace, dtype=float)
    if np.any(~np.isfinite(pace)) or np.any(pace <= 0):
        raise InputError("pace must be a positive time per distance")
    result = _unit("distance", system).scale / pace
    return float(result) if result.ndim == 0 else result


def pace_per_km_to_display(pace_per_km: ArrayLike | None, system: str) -> np.ndarray:
    """A pace in s/km (the package's pace unit) → s per display unit (km or mile).

    Parameters
    ----------
    pace_per_km : float, array_like or None
        Pace; None (no pace) gives NaN [s/km].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    numpy.ndarray
        Pace [s/km or s/mi].

    Examples
    --------
    5:00 per km is 482.8 s per mile:

    >>> float(pace_per_km_to_display(300.0, "imperial"))
    482.8032
    """
    return np.asarray(pace_per_km, dtype=float) * (_unit("distance", system).scale / 1000.0)


def _check_finite(seconds: float, what: str) -> float:
    try:
        seconds = float(seconds)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {seconds!r}") from None
    if not math.isfinite(seconds):
        raise InputError(f"{what} is not a finite number")
    if seconds < 0:
        raise InputError(f"{what} must not be negative, got {seconds}")
    return seconds


def format_duration(seconds: float) -> str:
    """Seconds → "H:MM:SS" (whole seconds, rounded half up; hours not wrapped at 24).

    Parameters
    ----------
    seconds : float
        Duration, ≥ 0 [s].

    Returns
    -------
    str
        "H:MM:SS".

    Examples
    --------
    >>> format_duration(3725.4)
    '1:02:05'
    """
    total = int(math.floor(_check_finite(seconds, "a duration") + 0.5))
    hours, rest = divmod(total, 3600)
    minutes, secs = divmod(rest, 60)
    return f"{hours}:{minutes:02d}:{secs:02d}"


def format_pace(seconds_per_unit: float) -> str:
    """Seconds per km or mile → "M:SS" (rounded to whole seconds).

    Parameters
    ----------
    seconds_per_unit : float
        Pace, ≥ 0 [s/km or s/mi].

    Returns
    -------
    str
        "M:SS".

    Examples
    --------
    >>> format_pace(299.6)
    '5:00'
    """
    total = int(math.floor(_check_finite(seconds_per_unit, "a pace") + 0.5))
    minutes, secs = divmod(total, 60)
    return f"{minutes}:{secs:02d}"


LONGEST_CLOCK = 1000 * 3600.0
"""Longest clock time `parse_clock` accepts [s]: 1000 hours, beyond any race or pace."""


def parse_clock(text: str, what: str = "time") -> float:
    """"H:MM:SS", "M:SS" or plain seconds → seconds (> 0); InputError otherwise [s].

    Parameters
    ----------
    text : str
        The clock time as typed; two digits after each colon [-].
    what : str, optional
        How the value is named in the error message [-].

    Returns
    -------
    float
        Seconds [s].

    Examples
    --------
    >>> parse_clock("1:02:05"), parse_clock("4:30"), parse_clock("90")
    (3725.0, 270.0, 90.0)
    """
    raw = str(text).strip()
    shown = repr(raw if len(raw) <= 24 else raw[:20] + "…")  # never echo a flood of digits
    fields = raw.split(":")
    if any(len(field.strip().split(".")[0]) != 2 for field in fields[1:]):
        raise InputError(f"{what} must look like H:MM:SS or M:SS (two digits after each "
                         f"colon), got {shown}")
    try:
        parts = [float(part) for part in fields]
    except ValueError:
        raise InputError(f"{what} must look like H:MM:SS or M:SS, got {shown}") from None
    if not 1 <= len(parts) <= 3 or any(not math.isfinite(p) or p < 0 for p in parts):
        raise InputError(f"{what} must look like H:MM:SS or M:SS, got {shown}")
    if len(parts) > 1 and any(p >= 60 for p in parts[1:]):
        raise InputError(f"{what}: minutes and seconds must be below 60, got {shown}")
    seconds = 0.0
    for part in parts:
        seconds = seconds * 60.0 + part
    if seconds <= 0:
        raise InputError(f"{what} must be positive, got {shown}")
    if seconds > LONGEST_CLOCK:
        raise InputError(f"{what} must be at most {LONGEST_CLOCK / 3600:g} hours, got {shown}")
    return seconds


def format_quantity(value: float | None, quantity: str, system: str, digits: int = 1) -> str:
    """SI value → "12.3 km/h" style text in `system`; "–" for None or a non-finite value.

    Parameters
    ----------
    value : float or None
        Value in SI units, temperature in °C [SI].
    quantity : str
        One of UNITS' keys [-].
    system : {"metric", "imperial"}
        The unit system [-].
    digits : int, optional
        Decimals shown [-].

    Returns
    -------
    str
        Number and unit symbol.

    Examples
    --------
    >>> format_quantity(10.0, "speed", "metric"), format_quantity(None, "speed", "metric")
    ('36.0 km/h', '–')
    """
    if value is None:
        return "–"
    shown = to_display(float(value), quantity, system)
    if not math.isfinite(shown):
        return "–"
    return f"{shown:.{digits}f} {unit_label(quantity, system)}"
