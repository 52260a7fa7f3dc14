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
    ("time", "clock time", "text"),
    ("temperature_c", "temp. [°C]", "number"),
    ("relative_humidity_pct", "humidity [%]", "number"),
    ("wind_speed_mps", "wind [m/s]", "number"),
    ("wind_from_deg", "wind from [°]", "number"),
    ("sea_level_pressure_hpa", "sea-level pressure [hPa]", "number"),
    ("station_pressure_hpa", "pressure at start [hPa]", "number"),
    ("latitude", "latitude [°]", "number"),
    ("longitude", "longitude [°]", "number"),
)
"""(CSV column, short header with its unit, kind) of the editable weather table: the columns
of pacing.io.weather_file, in its units (short, so the table fits the page; COLUMN_HELP says
the rest)."""

COLUMN_HELP = {
    "time": "local time of the race, like 2026-07-14 14:00 (or with the offset from UTC, "
            "2026-07-14 14:00+02:00); rows go forward in time",
    "temperature_c": "air temperature in the shade [°C]",
    "relative_humidity_pct": "relative humidity [%], 0 to 100",
    "wind_speed_mps": "wind speed [m/s] at the height set under 'Wind measured at' above "
                      "(10 m, as weather reports give it)",
    "wind_from_deg": "where the wind blows FROM, degrees clockwise from north (0 north, "
                     "90 east, 180 south, 270 west)",
    "sea_level_pressure_hpa": "optional: pressure reduced to sea level as weather reports "
                              "give it (QNH); blank: the sea-level pressure above",
    "station_pressure_hpa": "optional: pressure measured at the start, not reduced to sea "
                            "level; give this or sea-level pressure, not both",
    "latitude": "optional, with longitude: where the row's weather was forecast (long "
                "courses; the weather between places is interpolated)",
    "longitude": "optional, with latitude",
}
"""What each column of the weather table holds, shown when the header is pointed at."""

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


def clock_cell(moment: datetime) -> str:
    """A row's time as the table shows it: "2026-07-14 08:00" (seconds only when there are
    some, the offset from UTC when the time has one) [-]."""
    whole = moment.second == 0 and moment.microsecond == 0
    return moment.isoformat(sep=" ", timespec="minutes" if whole else "seconds")


def starter_rows(day: datetime, hours: int = 4,
                 weather: Mapping[str, Any] | None = None) -> list[dict[str, Any]]:
    """A first table to edit: the page's single weather every two hours from two hours
    before `day`'s clock.

    Parameters
    ----------
    day : datetime.datetime
        The start [-].
    hours : int
        Hours after the start the table covers at least [h].
    weather : mapping, optional
        The page's weather in SI (ui.sections.weather_inputs: temperature [°C],
        relative_humidity [0..1], wind_speed [m/s], wind_from [deg]); None: 20 °C, 50 %,
        calm.

    Returns
    -------
    list of dict
        Rows with the CSV's columns [file units].
    """
    weather = weather or {}
    first = day - timedelta(hours=2)
    cells = {"temperature_c": float(weather.get("temperature", 20.0)),
             "relative_humidity_pct": round(100.0 * float(weather.get("relative_humidity",
                                                                      0.5)), 1),
             "wind_speed_mps": float(weather.get("wind_speed", 0.0)),
             "wind_from_deg": float(weather.get("wind_from", 0.0))}
    return [{"time": clock_cell(first + timedelta(hours=2 * k)), **cells}
            for k in range(hours // 2 + 2)]


def local_clock(text: Any) -> datetime | None:
    """The local clock of a row's time or a start (its offset from UTC dropped: the race's
    own clock), None when it does not read [-]."""
    try:
        return datetime.fromisoformat(str(text).strip()).replace(tzinfo=None)
    except ValueError:
        return None


def table_span(rows: Sequence[Mapping[str, Any]]) -> tuple[datetime, datetime] | None:
    """(first, last) local clock of the rows' times, None when a time does not read or
    there is none [-]."""
    clocks = [local_clock(row.get("time")) for row in rows]
    if not clocks or any(clock is None for clock in clocks):
        return None
    known = [clock for clock in clocks if clock is not None]
    return min(known), max(known)


def start_within_table(rows: Sequence[Mapping[str, Any]], start: datetime
                       ) -> tuple[datetime, str | None]:
    """The start moved into the weather table's span after an upload: the table's first day
    when the start's day is not in the table, and the first row's time when the start's
    clock is still outside; with the one line that says what was moved (None: kept).

    Parameters
    ----------
    rows : sequence of mapping
        The table's rows (times as text) [-].
    start : datetime.datetime
        The panel's start (local, naive) [-].

    Returns
    -------
    tuple of (datetime.datetime, str or None)
        The start to show and what changed [-].
    """
    span = table_span(rows)
    if span is None or span[0] <= start <= span[1]:
        return start, None
    first, last = span
    moved = start
    if not first.date() <= start.date() <= last.date():
        moved = datetime.combine(first.date(), start.time())
    if not first <= moved <= last:
        moved = first
    return moved, (f"Start set to {clock_cell(moved)}, within the weather table "
                   f"({clock_cell(first)} to {clock_cell(last)}); change it above if the "
                   "race starts at another time.")


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
    return [{"time": clock_cell(moment), **{name: float(columns[name][k])
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
    span, begin = table_span(rows), local_clock(start) if start else None
    if span is not None and begin is not None and not span[0] <= begin <= span[1]:
        return (f"the start {clock_cell(begin)} is outside the weather table "
                f"({clock_cell(span[0])} to {clock_cell(span[1])}): set the race date and "
                "start time above within it, or add rows")
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


def request_digest(request: Any, *extra: Any) -> str:
    """A digest of a planning request (pacing.plan.race.RaceRequest) and `extra`: the
    course's arrays and segment bounds by their bytes, every other field by its text; the
    same digest means the same plan (a best start found for it still holds) [-]."""
    import dataclasses
    import hashlib

    import numpy as np

    digest = hashlib.sha1()
    course = request.course
    for array in (course.distance, course.elevation, course.latitude, course.longitude,
                  request.bounds):
        digest.update(np.ascontiguousarray(array, dtype=float).tobytes())
    rest = [(field.name, getattr(request, field.name)) for field in dataclasses.fields(request)
            if field.name not in ("course", "bounds")]
    digest.update(repr((rest, extra)).encode())
    return digest.hexdigest()


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
    """The environment summary in words: the heat (WBGT, its band, the loss of the limit and
    what that loss costs), the altitude trade-off, where the limits were measured and the
    forecast band. What the race day's notices say in full (the heat-illness caution, the
    assumed test conditions) is only pointed at, not said twice.

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
    from pacing.display.units import format_duration

    if race_day is None or race_day.environment is None:
        return []
    lines = [_heat_line(race_day, system)]
    altitude = _altitude_line(race_day)
    if altitude:
        lines.append(altitude)
    codes = {notice.code for notice in race_day.environment.notices}
    if "limits-test-conditions-assumed" not in codes:
        lines.append(_limits_line(race_day, system))
    band = race_day.band
    if band is not None:
        lines.append(f"Forecast band (5-50-95 %): {format_duration(band.p5)} – "
                     f"{format_duration(band.p50)} – {format_duration(band.p95)} "
                     f"({band.samples} sampled weathers, seed {band.seed}).")
    return lines


def _heat_line(race_day: Any, system: str) -> str:
    """WBGT and its band; the heat's loss of the limit and its cost in watts and seconds."""
    from pacing.display.units import format_quantity

    environment, costs = race_day.environment, race_day.costs
    codes = {notice.code for notice in environment.notices}
    wbgt = format_quantity(environment.wbgt_max_c, "temperature", system, 1)
    band = environment.heat_category.replace("-", " ")
    line = (f"Heat: WBGT up to {wbgt}, {band} heat-illness risk"
            + (" (its cautions below)." if "heat-risk" in codes else "."))
    loss = 100.0 * (1.0 - environment.heat_power_factor)
    if costs is None or loss <= 0.05:
        return line
    if costs.heat_power > 0:
        what = (f"power the athlete can sustain by {loss:.1f} % (about "
                f"{costs.heat_power:.0f} W): riding that much less")
        plan = "power"
    else:
        what = f"speed the athlete can sustain by {loss:.1f} %: running that much slower"
        plan = "pace"
    return (f"{line} It lowers the {what} would take about {costs.heat_time:.0f} s longer. "
            f"A plan at a set {plan} keeps it as set (mind the limit); “Quickest within my "
            "limits” plans within the lowered limit.")


def _altitude_line(race_day: Any) -> str | None:
    """The thinner air's gain against the lower aerobic power's loss, None when both are
    negligible."""
    environment, costs = race_day.environment, race_day.costs
    if costs is None or (costs.altitude_power_loss <= 0 and costs.altitude_air_gain <= 0.5):
        return None
    net = costs.altitude_air_gain - costs.altitude_power_loss
    verdict = (f"net {net:.0f} s gained" if net >= 0.5
               else f"net {-net:.0f} s lost" if net <= -0.5 else "about even")
    loss = 100.0 * (1.0 - environment.altitude_power_factor)
    return (f"Altitude: the thinner air saves {costs.altitude_air_gain:.0f} s; the lower "
            f"aerobic power ({loss:.1f} % less) costs {costs.altitude_power_loss:.0f} s: "
            f"{verdict}.")


def _limits_line(race_day: Any, system: str) -> str:
    """Where the athlete's limits count as measured."""
    from pacing.display.units import format_quantity

    temperature, humidity, elevation = race_day.limits_measured
    return (f"Heat and altitude count against limits measured at "
            f"{format_quantity(temperature, 'temperature', system, 0)}, "
            f"{100.0 * humidity:.0f} % humidity, "
            f"{format_quantity(elevation, 'elevation', system, 0)}"
            + (" (assumed)." if race_day.limits_assumed else "."))
