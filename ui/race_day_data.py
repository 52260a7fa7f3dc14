"""The race-day panel's data, without Streamlit: the weather table's columns and headers, rows
as the editable table holds them, their check (one line naming the row), the request's
race-day inputs, and what the page shows after a plan (best-start curve, environment summary).

The panel (ui/race_day_panel.py) draws it; the planning chain reads the inputs with
pacing.io.weather_file.race_day_from_inputs.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from datetime import datetime, timedelta
from typing import Any

from pacing.errors import InputError

WEATHER_COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("time", "time (ISO 8601, local or +HH:MM)", "text"),
    ("temperature_c", "temperature [°C]", "number"),
    ("relative_humidity_pct", "relative humidity [%]", "number"),
    ("wind_speed_mps", "wind speed at 10 m [m/s]", "number"),
    ("wind_from_deg", "wind from [deg, clockwise from north]", "number"),
    ("sea_level_pressure_hpa", "sea-level pressure, MSLP [hPa] (optional)", "number"),
    ("station_pressure_hpa", "pressure at the start [hPa] (optional)", "number"),
    ("latitude", "latitude [deg] (optional)", "number"),
    ("longitude", "longitude [deg] (optional)", "number"),
)
"""(CSV column, header with its unit, kind) of the editable weather table: the columns of
pacing.io.weather_file, in its units."""

COLUMN_NAMES = tuple(name for name, _, _ in WEATHER_COLUMNS)

DEFAULT_START = "09:00"
"""The start time the panel offers first (local to the race)."""

ROWS = "race_day_rows"
"""Session key: the weather rows the panel's editable table starts from (the panel's own
state; an upload or a reopened plan replaces them, the editor's edits apply on top)."""

ROWS_TO_SHOW = "race_day:rows_to_show"
"""Session key: rows put into the panel from elsewhere (a reopened plan); the panel takes
them into ROWS with a fresh editor the next time it is drawn."""

PANEL_KEYS = {
    "date": "race_day_date", "time": "race_day_time", "table": "race_day_table",
    "heat": "race_day_heat", "altitude": "race_day_altitude",
    "limits_temperature_c": "race_day_test_temperature",
    "limits_humidity_pct": "race_day_test_humidity",
    "limits_elevation_m": "race_day_test_elevation",
    "spread_wind_speed_mps": "race_day_sd_wind", "spread_wind_from_deg": "race_day_sd_direction",
    "spread_temperature_c": "race_day_sd_temperature"}
"""The panel's inputs → their widget keys (session state) in ui/race_day_panel.py."""

SPREAD_FIELDS = ("wind_speed_mps", "wind_from_deg", "temperature_c")
"""The forecast spread's standard deviations the panel asks for [m/s, deg, °C]."""


def starter_rows(day: datetime, hours: int = 4) -> list[dict[str, Any]]:
    """A first table to edit: the day's single weather every two hours from two hours before
    `day`'s clock (20 °C, 50 %, calm)."""
    first = day - timedelta(hours=2)
    return [{"time": (first + timedelta(hours=2 * k)).isoformat(timespec="minutes"),
             "temperature_c": 20.0, "relative_humidity_pct": 50.0, "wind_speed_mps": 0.0,
             "wind_from_deg": 0.0} for k in range(hours // 2 + 2)]


def _blank(value: Any) -> bool:
    """An empty cell: None, "", whitespace or NaN (pandas' empty number)."""
    if value is None:
        return True
    if isinstance(value, str):
        return not value.strip()
    try:
        return math.isnan(float(value))
    except (TypeError, ValueError):
        return False


def clean_rows(records: Iterable[Mapping[str, Any]]) -> list[dict[str, Any]]:
    """The editor's rows as plain mappings: only the weather columns, empty cells None,
    rows with every cell empty dropped, times as ISO text."""
    rows = []
    for record in records:
        row = {name: None if _blank(record.get(name)) else record.get(name)
               for name in COLUMN_NAMES}
        if isinstance(row["time"], datetime):
            row["time"] = row["time"].isoformat()
        if any(value is not None for value in row.values()):
            rows.append(row)
    return rows


def rows_from_csv(data: bytes) -> list[dict[str, Any]]:
    """The rows of an uploaded weather CSV, for the editable table (checked as a file is).

    Raises
    ------
    InputError
        One line naming the row or column that is wrong.
    """
    from pacing.io.weather_file import read_weather_columns

    times, columns = read_weather_columns(data)
    return [{"time": moment.isoformat(), **{name: float(columns[name][k])
                                            for name in COLUMN_NAMES[1:] if name in columns}}
            for k, moment in enumerate(times)]


def check_rows(rows: Sequence[Mapping[str, Any]], start: str | None) -> str | None:
    """The one-line reason the rows do not make a weather table (naming the row), or None.

    Parameters
    ----------
    rows : sequence of mapping
        Rows as `clean_rows` gives them [file units].
    start : str or None
        The start, ISO 8601 text [-].
    """
    from pacing.io.weather_file import race_day_from_inputs

    if not rows:
        return None
    try:
        race_day_from_inputs({"rows": list(rows), "start": start})
    except InputError as error:
        return str(error)
    return None


def race_day_inputs(rows: Sequence[Mapping[str, Any]], start: str | None, *,
                    heat_acclimatised: bool = False, altitude_acclimatised: bool = False,
                    limits: Mapping[str, float | None] | None = None,
                    spread: Mapping[str, float] | None = None) -> dict[str, Any]:
    """The race-day dict the page passes to the request (read back by
    pacing.io.weather_file.race_day_from_inputs, kept in a saved plan's inputs).

    Parameters
    ----------
    rows : sequence of mapping
        The weather rows [file units]; empty for one weather all day.
    start : str or None
        Start, ISO 8601 text [-].
    heat_acclimatised, altitude_acclimatised : bool
        Acclimatisation [-].
    limits : mapping, optional
        limits_temperature_c [°C], limits_humidity_pct [%], limits_elevation_m [m] where the
        athlete's limits were measured (None: the default) [-].
    spread : mapping, optional
        wind_speed_mps [m/s], wind_from_deg [deg], temperature_c [°C], samples, seed [-].

    Returns
    -------
    dict
        {"rows", "start", "heat_acclimatised", "altitude_acclimatised",
        "limits_temperature_c", "limits_humidity_pct", "limits_elevation_m", "spread"}.
    """
    limits = dict(limits or {})
    return {"rows": [dict(row) for row in rows], "start": start or None,
            "heat_acclimatised": bool(heat_acclimatised),
            "altitude_acclimatised": bool(altitude_acclimatised),
            "limits_temperature_c": limits.get("limits_temperature_c"),
            "limits_humidity_pct": limits.get("limits_humidity_pct"),
            "limits_elevation_m": limits.get("limits_elevation_m"),
            "spread": dict(spread) if spread and any(
                spread.get(k) for k in ("wind_speed_mps", "wind_from_deg", "temperature_c"))
            else None}


def panel_state(race_day: Mapping[str, Any] | None) -> dict[str, Any]:
    """The session state that shows a saved race day in the panel (pure; the library's
    "Show in the page" sets it before the panel is drawn, ui.library_page_state).

    A plan without a race day was planned with one weather all day, not acclimatised, its
    limits measured at the defaults and no forecast band: the panel is set so (its start is
    left as it is).

    Parameters
    ----------
    race_day : mapping or None
        The race-day dict a plan keeps (`race_day_inputs`, the page's weather["race_day"]).

    Returns
    -------
    dict
        Session key → value: the start's date and time (datetime.date, datetime.time), the
        table toggle, the rows to show (ROWS_TO_SHOW, when the plan has a table; empty
        cells left out), the
        acclimatisation boxes, the test conditions [°C, %, m] (None: the default) and the
        forecast's standard deviations [m/s, deg, °C] (0: no band).
    """
    race_day = race_day or {}
    rows = [{name: value for name, value in row.items() if not _blank(value)}
            for row in race_day.get("rows") or []]  # empty cells stay empty in the editor
    spread = race_day.get("spread") or {}
    state: dict[str, Any] = {
        PANEL_KEYS["table"]: bool(rows),
        PANEL_KEYS["heat"]: bool(race_day.get("heat_acclimatised", False)),
        PANEL_KEYS["altitude"]: bool(race_day.get("altitude_acclimatised", False))}
    if rows:
        state[ROWS_TO_SHOW] = rows
    for name in ("limits_temperature_c", "limits_humidity_pct", "limits_elevation_m"):
        value = race_day.get(name)
        state[PANEL_KEYS[name]] = None if value in (None, "") else float(value)
    for name in SPREAD_FIELDS:
        state[PANEL_KEYS[f"spread_{name}"]] = float(spread.get(name) or 0.0)
    start = race_day.get("start")
    if start:
        moment = datetime.fromisoformat(str(start))
        state[PANEL_KEYS["date"]] = moment.date()
        state[PANEL_KEYS["time"]] = moment.time().replace(tzinfo=None)
    return state


def best_start_points(best: Any) -> tuple[list[str], list[float]]:
    """(start clock "HH:MM", finish time [s]) of every start of a best-start search, in time
    order (pacing.plan.race_day.BestStart)."""
    from pacing.weather.timeline import clock_text

    starts = [clock_text(start, best.utc_offset)[11:16] for start, _ in best.grid]
    return starts, [float(finish) for _, finish in best.grid]


def best_start_clock(best: Any) -> str:
    """The best start's clock, "HH:MM" (pacing.plan.race_day.BestStart)."""
    from pacing.weather.timeline import clock_text

    return clock_text(best.start, best.utc_offset)[11:16]


def environment_lines(race_day: Any, system: str = "metric") -> list[str]:
    """The environment summary in words: heat factor and cost, the altitude trade-off, the
    highest WBGT and its band, the test conditions and the forecast band.

    Parameters
    ----------
    race_day : pacing.plan.race_day.RaceDayResult or None
        A result's race day [-].
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    list of str
        One sentence each; none without a race day [-].
    """
    from pacing.display.units import format_duration, format_quantity

    if race_day is None or race_day.environment is None:
        return []
    environment, costs = race_day.environment, race_day.costs
    lines = [f"WBGT up to {format_quantity(environment.wbgt_max_c, 'temperature', system, 1)}:"
             f" {environment.heat_category} heat-illness risk band."]
    heat = 100.0 * (1.0 - environment.heat_power_factor)
    if costs is not None and heat > 0.05:
        watts = f"{costs.heat_power:.0f} W / " if costs.heat_power > 0 else ""
        lines.append(f"Heat lowers the limit by {heat:.1f} %: heat costs about {watts}"
                     f"{costs.heat_time:.0f} s today.")
    if costs is not None and (costs.altitude_power_loss > 0 or costs.altitude_air_gain > 0.5):
        lines.append(f"Altitude: thinner air gains {costs.altitude_air_gain:.0f} s, lower "
                     f"power costs {costs.altitude_power_loss:.0f} s "
                     f"(limit × {environment.altitude_power_factor:.3f}).")
    temperature, humidity, elevation = race_day.limits_measured
    lines.append(f"Relative to limits measured at "
                 f"{format_quantity(temperature, 'temperature', system, 0)}, "
                 f"{100.0 * humidity:.0f} % humidity, "
                 f"{format_quantity(elevation, 'elevation', system, 0)}"
                 + (" (assumed)." if race_day.limits_assumed else "."))
    band = race_day.band
    if band is not None:
        lines.append(f"Forecast band (5-50-95 %): {format_duration(band.p5)} – "
                     f"{format_duration(band.p50)} – {format_duration(band.p95)} "
                     f"({band.samples} sampled weathers, seed {band.seed}).")
    return lines
