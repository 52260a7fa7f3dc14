"""Segment target rows as the exports read them: numbers by name, checked, and the short texts
every export shares (target, pace, joined gap).

Input rows are segment targets as made by ``pacing.plan.targets.target_table`` (objects with the
attributes below, or dicts with the same keys), all in SI units:

    index, start, end, length [m], grade [-], target_power, power_low, power_high [W] or None,
    target_pace [s/km] or None, speed [m/s], time, cumulative_time [s],
    w_prime_balance [J] or None, headwind [m/s], walking_distance [m] (optional),
    gap_length [m] (optional: the recording's gaps joined by a straight line in the segment),
    clock_time (ISO 8601 text), temperature [°C], wind_speed [m/s], wind_from [deg]
    (optional: a race day's weather met)

Used by pacing.io.exports (table, CSV, XLSX), pacing.io.target_gpx (GPX waypoints) and
pacing.io.target_card (the printable card). Units are converted through pacing.display.units.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

from pacing.display.units import format_pace, pace_per_km_to_display, to_display, unit_label
from pacing.errors import InputError


def row_value(row: Any, name: str) -> Any:
    """The row's value of `name`, from a mapping or an attribute; None when absent."""
    if isinstance(row, Mapping):
        return row.get(name)
    return getattr(row, name, None)


def row_number(row: Any, name: str) -> float | None:
    """The row's value of `name` as a float; None when absent or not finite."""
    value = row_value(row, name)
    if value is None:
        return None
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise InputError(f"segment {name.replace('_', ' ')} is not a number: {value!r}") from None
    return value if math.isfinite(value) else None


def row_required(row: Any, name: str) -> float:
    """A number every segment row has (start, end, time, cumulative time)."""
    value = row_number(row, name)
    if value is None:
        raise InputError(f"segment {name.replace('_', ' ')} is missing or not finite")
    return value


def checked_rows(rows: Iterable[Any]) -> list[Any]:
    """The rows as a list, refused when empty or missing start, end or times."""
    rows = list(rows)
    if not rows:
        raise InputError("there are no segments to export")
    for row in rows:
        for name in ("start", "end", "time", "cumulative_time"):
            if row_number(row, name) is None:
                raise InputError(f"a segment has no {name.replace('_', ' ')}; cannot export")
    return rows


def row_has(rows: Sequence[Any], name: str) -> bool:
    """Whether some row has a finite number for `name`."""
    return any(row_number(row, name) is not None for row in rows)


def gap_length(row: Any) -> float:
    """The row's joined gap length, 0 when it has none [m]."""
    return row_number(row, "gap_length") or 0.0


def gap_text(row: Any, system: str) -> str | None:
    """"joined gap 12.7 km" (or mi) for a row holding a joined gap; None without one."""
    length = gap_length(row)
    if length <= 0:
        return None
    return (f"joined gap {to_display(length, 'distance', system):.1f} "
            f"{unit_label('distance', system)}")


def pace_text(row: Any, system: str) -> str | None:
    """"4:35" of the row's target pace in `system` (per km or per mile); None without one."""
    pace = row_number(row, "target_pace")
    if pace is None:
        return None
    return format_pace(float(pace_per_km_to_display(pace, system)))


def target_text(row: Any, system: str) -> str:
    """"285 W", "4:35 min/km", both joined by " · ", or "steady" without a target."""
    power = row_number(row, "target_power")
    pace = pace_text(row, system)
    parts = []
    if power is not None:
        parts.append(f"{power:.0f} W")
    if pace is not None:
        parts.append(f"{pace} {unit_label('pace', system)}")
    return " · ".join(parts) if parts else "steady"
