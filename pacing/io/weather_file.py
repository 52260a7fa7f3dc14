"""Weather tables read from CSV files: the weather through the race, row by row.

Columns, named exactly so in a header row (any order):

- ``time``: ISO 8601, with an offset from UTC ("2026-07-14T14:00+02:00", "…Z") or without
  one (local to the race);
- ``temperature_c`` [°C], ``relative_humidity_pct`` [%], ``wind_speed_mps`` [m/s at 10 m,
  or at the height ``--wind-height`` states],
  ``wind_from_deg`` [deg clockwise from north, where the wind blows FROM];
- optional: ``sea_level_pressure_hpa`` (as weather reports publish it) or
  ``station_pressure_hpa`` (measured at the start's elevation), not both [hPa];
  ``latitude`` and ``longitude`` [deg], both or neither (a long course's places).

The file is read through pacing.io.files (a regular file of at most WEATHER_FILE_LIMIT bytes),
as UTF-8 (a byte-order mark is skipped), comma separated. A bad file is refused in one line
naming the row (rows counted from 1 under the header) and the column.
"""

from __future__ import annotations

import csv
import io
import math
from datetime import datetime
from typing import TYPE_CHECKING, Any

import numpy as np

from pacing.errors import InputError
from pacing.io.files import read_bounded
from pacing.weather.timeline import WeatherTable, framed_table

if TYPE_CHECKING:
    from pacing.plan.race_day import RaceDay

WEATHER_FILE_LIMIT = 2 * 2**20
"""Largest weather file accepted [bytes] (2 MiB: hourly rows for years)."""

WEATHER_ROW_LIMIT = 10000
"""Most rows accepted in a weather file [-]."""

REQUIRED_COLUMNS = ("time", "temperature_c", "relative_humidity_pct", "wind_speed_mps",
                    "wind_from_deg")
"""Columns every weather file has."""

OPTIONAL_COLUMNS = ("sea_level_pressure_hpa", "station_pressure_hpa", "latitude", "longitude")
"""Columns a weather file may have."""


def parse_moment(text: str, what: str) -> datetime:
    """An ISO 8601 date and time, with or without an offset from UTC.

    Parameters
    ----------
    text : str
        E.g. "2026-07-14T14:00", "2026-07-14 14:00:00+02:00", "2026-07-14T12:00Z" [-].
    what : str
        How the value is named in the one-line error [-].

    Returns
    -------
    datetime.datetime
        Naive (local to the race) or aware [-].

    Raises
    ------
    InputError
        When the text is not an ISO 8601 date and time.
    """
    try:
        return datetime.fromisoformat(text.strip())
    except ValueError:
        raise InputError(f"{what} must be an ISO 8601 date and time like 2026-07-14T14:00 "
                         f"(or with an offset, 2026-07-14T14:00+02:00), got {text.strip()!r}"
                         ) from None


def _header(reader: Any) -> list[str]:
    try:
        header = [name.strip() for name in next(reader)]
    except StopIteration:
        raise InputError("the weather file is empty; it needs a header row and rows") from None
    missing = [name for name in REQUIRED_COLUMNS if name not in header]
    if missing:
        raise InputError(f"the weather file lacks the column(s) {', '.join(missing)} "
                         f"(needs {', '.join(REQUIRED_COLUMNS)})")
    unknown = [name for name in header if name not in REQUIRED_COLUMNS + OPTIONAL_COLUMNS]
    if unknown:
        raise InputError(f"the weather file has unknown column(s) {', '.join(unknown)}; "
                         f"known: {', '.join(REQUIRED_COLUMNS + OPTIONAL_COLUMNS)}")
    if len(set(header)) != len(header):
        raise InputError("the weather file names a column twice")
    if {"sea_level_pressure_hpa", "station_pressure_hpa"} <= set(header):
        raise InputError("give sea_level_pressure_hpa or station_pressure_hpa in the weather "
                         "file, not both")
    if ("latitude" in header) != ("longitude" in header):
        raise InputError("the weather file needs both latitude and longitude, or neither")
    return header


def _number(text: str, row: int, column: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise InputError(f"weather row {row}: {column} must be a number, got {text.strip()!r}"
                         ) from None
    if not math.isfinite(value):
        raise InputError(f"weather row {row}: {column} must be a finite number")
    return value


def read_weather_columns(source: Any) -> tuple[list[datetime], dict[str, np.ndarray]]:
    """The rows of a weather CSV: clock times and number columns, as in the file.

    Parameters
    ----------
    source : path, bytes or file-like
        The CSV (pacing.io.files.read_bounded) [-].

    Returns
    -------
    tuple of (list of datetime.datetime, dict of str to numpy.ndarray)
        The times and each number column by its header name, in the file's units [-].

    Raises
    ------
    InputError
        For a file too large, a missing or unknown column, an empty cell, a time or number
        that does not read, or too many rows: one line naming the row.
    """
    data, _ = read_bounded(source, "weather file", WEATHER_FILE_LIMIT)
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("the weather file must be UTF-8 text") from None
    reader = csv.reader(io.StringIO(text))
    header = _header(reader)
    moments: list[datetime] = []
    numbers: dict[str, list[float]] = {name: [] for name in header if name != "time"}
    for row, cells in enumerate((c for c in reader if any(x.strip() for x in c)), start=1):
        if row > WEATHER_ROW_LIMIT:
            raise InputError(f"the weather file has more than {WEATHER_ROW_LIMIT} rows")
        if len(cells) != len(header):
            raise InputError(f"weather row {row}: {len(cells)} cells for {len(header)} columns")
        for name, cell in zip(header, cells, strict=True):
            if not cell.strip():
                raise InputError(f"weather row {row}: {name} is empty")
            if name == "time":
                moments.append(parse_moment(cell, f"weather row {row}: time"))
            else:
                numbers[name].append(_number(cell, row, name))
    if not moments:
        raise InputError("the weather file has a header but no rows")
    return moments, {name: np.array(values) for name, values in numbers.items()}


def weather_table_from_records(records: Any, start: datetime | None = None
                               ) -> tuple[WeatherTable, float | None]:
    """A weather table from rows typed in a table (the app's editable table): mappings with
    the CSV's column names, checked as a file is.

    Parameters
    ----------
    records : iterable of mapping
        One mapping per row: "time" (ISO 8601 text or datetime), the number columns of
        REQUIRED_COLUMNS and OPTIONAL_COLUMNS (numbers or text; a missing optional column is
        absent or None in every row) [file units].
    start : datetime.datetime, optional
        The race's start [-].

    Returns
    -------
    tuple of (pacing.weather.timeline.WeatherTable, float or None)
        As `read_weather_table`.

    Raises
    ------
    InputError
        As `read_weather_table`, naming the row.
    """
    rows = [dict(record) for record in records]
    names = [n for n in (*REQUIRED_COLUMNS, *OPTIONAL_COLUMNS)
             if any(row.get(n) not in (None, "") for row in rows) or n in REQUIRED_COLUMNS]
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(names)
    for row in rows:
        writer.writerow(["" if row.get(n) is None else
                         row[n].isoformat() if isinstance(row[n], datetime) else row[n]
                         for n in names])
    return read_weather_table(out.getvalue().encode("utf-8"), start)


def read_weather_table(source: Any, start: datetime | None = None
                       ) -> tuple[WeatherTable, float | None]:
    """A weather table from a CSV file, and the race's start in its clock frame.

    Parameters
    ----------
    source : path, bytes or file-like
        The CSV [-].
    start : datetime.datetime, optional
        The race's start, naive (local) or aware [-].

    Returns
    -------
    tuple of (pacing.weather.timeline.WeatherTable, float or None)
        The table in SI (humidity as a fraction, pressure in Pa) and the start [s in the
        table's frame], None without one.

    Raises
    ------
    InputError
        As `read_weather_columns`, and for values out of range or times out of order (naming
        the row).
    """
    moments, columns = read_weather_columns(source)
    kind = "station" if "station_pressure_hpa" in columns else "sea-level"
    hectopascals = columns.get(f"{kind.replace('-', '_')}_pressure_hpa")
    return framed_table(
        moments, start,
        temperature=columns["temperature_c"],
        relative_humidity=columns["relative_humidity_pct"] / 100.0,
        wind_speed=columns["wind_speed_mps"], wind_from=columns["wind_from_deg"],
        pressure=None if hectopascals is None else 100.0 * hectopascals,
        pressure_kind=kind, latitude=columns.get("latitude"),
        longitude=columns.get("longitude"))


def weather_table_csv(table: WeatherTable) -> str:
    """A weather table as the CSV this module reads (times ISO 8601 in its frame).

    Parameters
    ----------
    table : pacing.weather.timeline.WeatherTable
        The table [-].

    Returns
    -------
    str
        The CSV text, header first [-].
    """
    from pacing.weather.timeline import clock_text

    header = list(REQUIRED_COLUMNS)
    pressure_column = ("station_pressure_hpa" if table.pressure_kind == "station"
                       else "sea_level_pressure_hpa")
    if table.pressure is not None:
        header.append(pressure_column)
    if table.latitude is not None:
        header += ["latitude", "longitude"]
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(header)
    for k, moment in enumerate(np.asarray(table.time, dtype=float)):
        row = [clock_text(moment, table.utc_offset), repr(float(table.temperature[k])),
               repr(float(100.0 * table.relative_humidity[k])),
               repr(float(table.wind_speed[k])), repr(float(table.wind_from[k]))]
        if table.pressure is not None:
            row.append(repr(float(table.pressure[k] / 100.0)))
        if table.latitude is not None and table.longitude is not None:
            row += [repr(float(table.latitude[k])), repr(float(table.longitude[k]))]
        writer.writerow(row)
    return out.getvalue()


def race_day_from_inputs(inputs: Any) -> RaceDay | None:
    """The race day of JSON inputs (a page's, a saved plan's): None when there is none.

    Parameters
    ----------
    inputs : mapping or None
        {"rows": the weather rows as `weather_table_from_records` reads them (may be empty
        or absent: one weather all day), "start": ISO 8601 text or null,
        "heat_acclimatised": bool, "altitude_acclimatised": bool, and optionally where the
        athlete's limits were measured, "limits_temperature_c", "limits_humidity_pct",
        "limits_elevation_m" (null or absent: the defaults), and the forecast's spread,
        "spread": {"wind_speed_mps", "wind_from_deg", "temperature_c", "samples", "seed"}
        or null} [file units].

    Returns
    -------
    pacing.plan.race_day.RaceDay or None

    Raises
    ------
    InputError
        For a start or rows that do not read (naming the row).
    """
    from pacing.plan.race_day import RaceDay
    from pacing.weather.timeline import clock_seconds, time_frame

    if not inputs:
        return None
    text = inputs.get("start")
    start = None if text in (None, "") else parse_moment(str(text), "start")
    shared = {"heat_acclimatised": bool(inputs.get("heat_acclimatised", False)),
              "altitude_acclimatised": bool(inputs.get("altitude_acclimatised", False)),
              **limits_from_inputs(inputs), "spread": spread_from_inputs(inputs.get("spread"))}
    rows = inputs.get("rows") or []
    if rows:
        table, seconds = weather_table_from_records(rows, start)
        return RaceDay(start=seconds, weather=table, **shared)
    offset = None if start is None else time_frame([start])
    return RaceDay(start=None if start is None else clock_seconds(start, offset),
                   utc_offset=offset, **shared)


def _optional_number(inputs: Any, key: str, low: float, high: float, what: str) -> float | None:
    """A number of the inputs within [low, high], None when absent or empty."""
    value = inputs.get(key)
    if value is None or value == "":
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number, got {value!r}") from None
    if not (math.isfinite(number) and low <= number <= high):
        raise InputError(f"{what} must be between {low:g} and {high:g}, got {value!r}")
    return number


def limits_from_inputs(inputs: Any) -> dict[str, float | None]:
    """Where the athlete's limits were measured, from JSON inputs: RaceDay's
    limits_temperature [°C], limits_relative_humidity [0..1], limits_elevation [m] (None:
    the default)."""
    humidity = _optional_number(inputs, "limits_humidity_pct", 0.0, 100.0,
                                "the test's relative humidity [%]")
    return {"limits_temperature": _optional_number(inputs, "limits_temperature_c", -40.0, 50.0,
                                                   "the test's temperature [°C]"),
            "limits_relative_humidity": None if humidity is None else humidity / 100.0,
            "limits_elevation": _optional_number(inputs, "limits_elevation_m", -500.0, 6000.0,
                                                 "the test's elevation [m]")}


def spread_from_inputs(spread: Any) -> Any:
    """The forecast's spread of JSON inputs ({"wind_speed_mps", "wind_from_deg",
    "temperature_c", "samples", "seed"}, any may be absent), None when there is none or it
    is all zero (pacing.plan.forecast_band.WeatherSpread)."""
    from pacing.plan.forecast_band import DEFAULT_BAND_SAMPLES, WeatherSpread

    if not spread:
        return None
    values = {name: _optional_number(spread, key, 0.0, 1e6, f"the forecast's spread of {what}")
              or 0.0 for name, key, what in (
                  ("wind_speed", "wind_speed_mps", "wind speed [m/s]"),
                  ("wind_from", "wind_from_deg", "wind direction [deg]"),
                  ("temperature", "temperature_c", "temperature [°C]"))}
    if not any(values.values()):
        return None
    samples = _optional_number(spread, "samples", 2, 5000, "the band's samples")
    seed = _optional_number(spread, "seed", 0, 2**32 - 1, "the band's seed")
    return WeatherSpread(**values,
                         samples=DEFAULT_BAND_SAMPLES if samples is None else int(samples),
                         seed=0 if seed is None else int(seed))
