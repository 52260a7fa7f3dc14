"""The weather through the race: a table of rows in time (and, optionally, in space).

A `WeatherTable` holds what a forecast gives hour by hour: clock time, air temperature
[°C], relative humidity [0..1], wind speed [m/s at 10 m] and the direction it blows FROM
[deg clockwise from north], optionally a pressure [Pa] (sea-level as weather reports publish
it, or station pressure measured at the start's elevation; `pressure_kind` says which) and a
place (latitude, longitude [deg]) for long courses.

Clock times are seconds since 1970-01-01 00:00 in one *frame*: UTC when the race's offset
from UTC is known (`utc_offset`), else the race's local wall clock (a naive time is local to
the race; `time_frame` decides once for the table and the start together).

Interpolation (`weather_at`):

- in time, linear between the rows around each moment; the wind as a vector (east and north
  components of speed·direction), so a wind turning from 350° to 10° passes north, not south;
  its speed at the midpoint of a turn is the vector mean (5 m/s from 350° and from 10° give
  4.92 m/s from 0°; a wind reversing passes through calm);
- in space, when rows carry places: each place's rows are interpolated in time, then the
  places are weighted by inverse distance squared (Shepard 1968) on the sphere (haversine,
  mean Earth radius 6371.0088 km); a point within 1 m of a place takes that place's weather.
  Temperature, humidity, pressure and the wind vector are weighted alike.

Checks (`WeatherTable.__post_init__`, `check_covers`) raise a one-line InputError naming the
row (rows counted from 1, the first row under a file's header).

References
----------
Shepard, D. (1968), A two-dimensional interpolation function for irregularly-spaced data,
Proc. 23rd ACM National Conference, 517-524, doi:10.1145/800186.810616.
WMO (2018), Guide to Instruments and Methods of Observation (WMO-No. 8), vol. I ch. 5: wind
direction is where the wind blows from, speed at 10 m.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta, timezone

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.physics.inputs import TEMPERATURE_RANGE
from pacing.weather.conditions import (
    SEA_LEVEL_PRESSURE_RANGE,
    STATION_PRESSURE_RANGE,
    WIND_SPEED_LIMIT,
)

TABLE_PRESSURE_KINDS = ("sea-level", "station")
"""What a table's pressure column means: "sea-level" (mean-sea-level pressure as weather
services publish it, MSLP) or "station" (measured at the start's elevation). The ranges
accepted are pacing.weather.conditions'."""

EARTH_MEAN_RADIUS = 6371008.8
"""Mean Earth radius R1 = (2a + b)/3 of the GRS80 ellipsoid (WGS84 agrees to 0.1 mm) [m]
(Moritz 2000, Geodetic Reference System 1980, J Geodesy 74:128-133), for distances between
a course point and a weather place."""

SAME_PLACE_DISTANCE = 1.0
"""A point within this distance of a weather place takes that place's weather alone [m]."""

EPOCH = datetime(1970, 1, 1)
"""Where clock seconds count from (naive: the frame says whether it is UTC or local)."""


class WeatherSpanError(InputError):
    """The race runs outside the times the weather table covers (a best-start search skips
    such starts)."""


@dataclass(frozen=True)
class WeatherAt:
    """The weather at some moments (and places): arrays of one shape.

    Attributes
    ----------
    temperature : numpy.ndarray
        Air temperature [°C].
    relative_humidity : numpy.ndarray
        Relative humidity as a fraction [-].
    wind_speed : numpy.ndarray
        Wind speed at the table's measurement height (10 m) [m/s].
    wind_from : numpy.ndarray
        Direction the wind blows from [deg clockwise from north, 0..360).
    pressure : numpy.ndarray or None
        Pressure of the table's kind [Pa]; None when the table has no pressure.
    """

    temperature: np.ndarray
    relative_humidity: np.ndarray
    wind_speed: np.ndarray
    wind_from: np.ndarray
    pressure: np.ndarray | None = None


@dataclass(frozen=True, eq=False)
class WeatherTable:
    """Weather rows in time, optionally at places.

    Attributes
    ----------
    time : numpy.ndarray
        Clock time of each row, seconds since 1970-01-01 00:00 in the table's frame (UTC when
        `utc_offset` is known, else local wall clock) [s].
    temperature : numpy.ndarray
        Air temperature at the start's elevation (or the place's ground), -60..60 [°C].
    relative_humidity : numpy.ndarray
        Relative humidity as a fraction 0..1 [-].
    wind_speed : numpy.ndarray
        Mean wind speed at 10 m, 0..60 [m/s].
    wind_from : numpy.ndarray
        Direction the wind blows FROM, 0..360 [deg clockwise from north].
    pressure : numpy.ndarray or None
        Pressure of `pressure_kind` [Pa]; None to use the single pressure of the Conditions.
    pressure_kind : str
        "sea-level" or "station" (TABLE_PRESSURE_KINDS) [-].
    latitude, longitude : numpy.ndarray or None
        Place of each row [deg]; both or neither.
    utc_offset : float or None
        The race's offset from UTC [s]; None when no time carries one (local frame).
    """

    time: np.ndarray
    temperature: np.ndarray
    relative_humidity: np.ndarray
    wind_speed: np.ndarray
    wind_from: np.ndarray
    pressure: np.ndarray | None = None
    pressure_kind: str = "sea-level"
    latitude: np.ndarray | None = None
    longitude: np.ndarray | None = None
    utc_offset: float | None = None

    def __post_init__(self) -> None:
        rows = np.asarray(self.time).size
        if rows < 2:
            raise InputError("the weather table needs at least two rows (a time before and "
                             "after the race)")
        for name in ("time", "temperature", "relative_humidity", "wind_speed", "wind_from",
                     "pressure", "latitude", "longitude"):
            value = getattr(self, name)
            if value is not None:
                _check_column(value, rows, name)
        if (self.latitude is None) != (self.longitude is None):
            raise InputError("the weather table needs both latitude and longitude, or neither")
        if self.pressure_kind not in TABLE_PRESSURE_KINDS:
            raise InputError(f"unknown pressure kind {self.pressure_kind!r}; choose one of "
                             f"{', '.join(TABLE_PRESSURE_KINDS)}")
        self._check_values()
        for indices in self.places():
            _check_times(np.asarray(self.time, dtype=float), indices)

    def _check_values(self) -> None:
        low, high = TEMPERATURE_RANGE
        _check_rows(self.temperature, low, high,
                    f"temperature must be between {low:g} and {high:g} °C")
        _check_rows(self.relative_humidity, 0.0, 1.0, "relative humidity must be 0-100 %",
                    scale=100.0)
        _check_rows(self.wind_speed, 0.0, WIND_SPEED_LIMIT,
                    f"wind speed must be between 0 and {WIND_SPEED_LIMIT:g} m/s")
        _check_rows(self.wind_from, 0.0, 360.0, "wind direction must be 0-360 degrees from north")
        if self.pressure is not None:
            low, high = (SEA_LEVEL_PRESSURE_RANGE if self.pressure_kind == "sea-level"
                         else STATION_PRESSURE_RANGE)
            _check_rows(self.pressure, low, high,
                        f"{self.pressure_kind} pressure must be between {low / 100:g} and "
                        f"{high / 100:g} hPa", scale=0.01)
        if self.latitude is not None and self.longitude is not None:
            _check_rows(self.latitude, -90.0, 90.0, "latitude must be -90 to 90 degrees")
            _check_rows(self.longitude, -180.0, 180.0, "longitude must be -180 to 180 degrees")

    def places(self) -> list[np.ndarray]:
        """Row indices of each place, in order of first appearance (one place without
        latitude and longitude).

        Returns
        -------
        list of numpy.ndarray
            Indices into the rows [-].
        """
        rows = np.asarray(self.time).size
        if self.latitude is None or self.longitude is None:
            return [np.arange(rows)]
        pairs = np.column_stack([np.asarray(self.latitude, dtype=float),
                                 np.asarray(self.longitude, dtype=float)])
        _, first, inverse = np.unique(pairs, axis=0, return_index=True, return_inverse=True)
        inverse = np.ravel(inverse)
        return [np.flatnonzero(inverse == k) for k in np.argsort(first)]

    @property
    def span(self) -> tuple[float, float]:
        """The times every place covers: (latest first row, earliest last row) [s]."""
        time = np.asarray(self.time, dtype=float)
        places = self.places()
        return (max(float(time[i[0]]) for i in places), min(float(time[i[-1]]) for i in places))


def _row_error(index: int, message: str) -> InputError:
    return InputError(f"weather row {index + 1}: {message}")


def _check_column(value: ArrayLike, rows: int, name: str) -> None:
    array = np.asarray(value)
    if array.shape != (rows,):
        raise InputError(f"weather column {name} has {array.size} values for {rows} rows")
    try:
        numbers = array.astype(float)
    except (TypeError, ValueError):
        raise InputError(f"weather column {name} must hold numbers") from None
    bad = ~np.isfinite(numbers)
    if np.any(bad):
        raise _row_error(int(np.argmax(bad)), f"{name.replace('_', ' ')} must be a finite number")


def _check_rows(value: ArrayLike, low: float, high: float, message: str,
                scale: float = 1.0) -> None:
    array = np.asarray(value, dtype=float)
    bad = (array < low) | (array > high)
    if np.any(bad):
        index = int(np.argmax(bad))
        raise _row_error(index, f"{message}, got {scale * array[index]:g}")


def _check_times(time: np.ndarray, indices: np.ndarray) -> None:
    steps = np.diff(time[indices])
    bad = steps <= 0
    if np.any(bad):
        k = int(np.argmax(bad))
        what = "repeats the time of" if steps[k] == 0 else "comes before"
        raise _row_error(int(indices[k + 1]), f"time {what} row {int(indices[k]) + 1} "
                                              "(rows must go forward in time)")


# ------------------------------------------------------------------------------ clock frames

def time_frame(moments: Sequence[datetime]) -> float | None:
    """The race's offset from UTC: that of the first moment carrying one, else None.

    Parameters
    ----------
    moments : sequence of datetime.datetime
        The table's times and the start, naive or aware [-].

    Returns
    -------
    float or None
        Offset from UTC [s]; None when every moment is naive (the local frame).
    """
    for moment in moments:
        offset = moment.utcoffset()
        if offset is not None:
            return offset.total_seconds()
    return None


def clock_seconds(moment: datetime, utc_offset: float | None) -> float:
    """A moment as seconds since 1970-01-01 00:00 in the frame of `utc_offset`.

    A naive moment is local to the race (it takes `utc_offset`); in the local frame (None) an
    aware moment keeps its wall clock.

    Parameters
    ----------
    moment : datetime.datetime
        The moment [-].
    utc_offset : float or None
        The frame: the race's offset from UTC, or None for the local wall clock [s].

    Returns
    -------
    float
        Seconds in the frame [s].

    Examples
    --------
    >>> from datetime import datetime
    >>> clock_seconds(datetime(1970, 1, 1, 10, 0), 3600.0)
    32400.0
    """
    aware = moment.utcoffset() is not None
    if utc_offset is None:
        return (moment.replace(tzinfo=None) - EPOCH).total_seconds()
    if aware:
        return moment.timestamp()
    return (moment - EPOCH).total_seconds() - utc_offset


def clock_text(seconds: float, utc_offset: float | None) -> str:
    """ISO 8601 text of clock seconds: with the offset ("2026-07-14T14:05:00+02:00") when the
    frame knows it, else the local wall clock without one.

    Parameters
    ----------
    seconds : float
        Seconds in the frame (rounded to the second) [s].
    utc_offset : float or None
        The frame's offset from UTC, or None [s].

    Returns
    -------
    str

    Examples
    --------
    >>> clock_text(32400.0, 3600.0)
    '1970-01-01T10:00:00+01:00'
    >>> clock_text(32400.0, None)
    '1970-01-01T09:00:00'
    """
    whole = timedelta(seconds=round(float(seconds)))
    if utc_offset is None:
        return (EPOCH + whole).isoformat()
    zone = timezone(timedelta(seconds=utc_offset))
    return (datetime(1970, 1, 1, tzinfo=UTC) + whole).astimezone(zone).isoformat()


# ---------------------------------------------------------------------------- interpolation

def wind_vector(speed: ArrayLike, wind_from: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """East and north components of the vector pointing where the wind comes FROM [m/s].

    Parameters
    ----------
    speed : array_like
        Wind speed [m/s].
    wind_from : array_like
        Direction it blows from [deg clockwise from north].

    Returns
    -------
    tuple of numpy.ndarray
        (east, north) [m/s].
    """
    angle = np.radians(np.asarray(wind_from, dtype=float))
    speed = np.asarray(speed, dtype=float)
    return speed * np.sin(angle), speed * np.cos(angle)


def wind_from_vector(east: ArrayLike, north: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Speed [m/s] and direction FROM [deg, 0..360) of the vector of `wind_vector`.

    Examples
    --------
    >>> speed, direction = wind_from_vector(*wind_vector([5.0, 5.0], [350.0, 10.0]))
    >>> direction.round(6).tolist()
    [350.0, 10.0]
    """
    east = np.asarray(east, dtype=float)
    north = np.asarray(north, dtype=float)
    direction = np.mod(np.degrees(np.arctan2(east, north)), 360.0)
    return np.hypot(east, north), np.where(np.isclose(direction, 360.0), 0.0, direction)


def _in_time(table: WeatherTable, indices: np.ndarray, time: np.ndarray) -> dict[str, np.ndarray]:
    """Each quantity of one place at `time`, linear in time (wind as a vector)."""
    rows = np.asarray(table.time, dtype=float)[indices]

    def at(column: ArrayLike) -> np.ndarray:
        return np.interp(time, rows, np.asarray(column, dtype=float)[indices])

    east, north = wind_vector(table.wind_speed, table.wind_from)
    values = {"temperature": at(table.temperature),
              "relative_humidity": at(table.relative_humidity),
              "east": at(east), "north": at(north)}
    if table.pressure is not None:
        values["pressure"] = at(table.pressure)
    return values


def place_weights(table: WeatherTable, latitude: ArrayLike,
                  longitude: ArrayLike) -> np.ndarray:
    """Inverse-distance-squared weights of the table's places at points (Shepard 1968).

    Parameters
    ----------
    table : WeatherTable
        A table with places.
    latitude, longitude : array_like
        The points [deg], one shape M.

    Returns
    -------
    numpy.ndarray
        Weights, shape (places, M), each column summing to 1 [-]. A point within
        SAME_PLACE_DISTANCE of a place has weight 1 there.
    """
    assert table.latitude is not None and table.longitude is not None
    places = table.places()
    lat = np.array([float(np.asarray(table.latitude)[i[0]]) for i in places])[:, None]
    lon = np.array([float(np.asarray(table.longitude)[i[0]]) for i in places])[:, None]
    distance = haversine(lat, lon, np.asarray(latitude, dtype=float)[None, :],
                         np.asarray(longitude, dtype=float)[None, :])
    near = distance < SAME_PLACE_DISTANCE
    inverse = 1.0 / np.maximum(distance, SAME_PLACE_DISTANCE) ** 2
    inverse = np.where(np.any(near, axis=0), near.astype(float), inverse)
    return inverse / np.sum(inverse, axis=0)


def haversine(lat1: ArrayLike, lon1: ArrayLike, lat2: ArrayLike, lon2: ArrayLike) -> np.ndarray:
    """Great-circle distance on a sphere of EARTH_MEAN_RADIUS [m] (haversine formula).

    Examples
    --------
    One degree of longitude on the equator: 6371008.8·π/180 = 111195.08 m.

    >>> round(float(haversine(0.0, 0.0, 0.0, 1.0)), 2)
    111195.08
    """
    phi1, phi2 = np.radians(lat1), np.radians(lat2)
    dphi = phi2 - phi1
    dlambda = np.radians(np.asarray(lon2, dtype=float) - np.asarray(lon1, dtype=float))
    a = np.sin(dphi / 2) ** 2 + np.cos(phi1) * np.cos(phi2) * np.sin(dlambda / 2) ** 2
    return 2.0 * EARTH_MEAN_RADIUS * np.arcsin(np.sqrt(np.clip(a, 0.0, 1.0)))


def weather_at(table: WeatherTable, time: ArrayLike, latitude: ArrayLike | None = None,
               longitude: ArrayLike | None = None) -> WeatherAt:
    """The weather at moments (and places): linear in time, inverse distance in space.

    Moments outside the table's span take its first or last row (`check_covers` refuses a
    race outside it first).

    Parameters
    ----------
    table : WeatherTable
        The weather rows.
    time : array_like
        Moments in the table's frame [s].
    latitude, longitude : array_like, optional
        Where each moment is [deg]; needed when the table has places.

    Returns
    -------
    WeatherAt
        The weather, the shape of `time`.

    Examples
    --------
    Halfway between 5 m/s from 350° and 5 m/s from 10° the wind blows from the north:

    >>> table = WeatherTable(time=np.array([0.0, 3600.0]), temperature=np.array([10.0, 20.0]),
    ...                      relative_humidity=np.array([0.5, 0.5]),
    ...                      wind_speed=np.array([5.0, 5.0]), wind_from=np.array([350.0, 10.0]))
    >>> at = weather_at(table, [1800.0])
    >>> at.temperature.tolist(), at.wind_from.round(6).tolist(), at.wind_speed.round(3).tolist()
    ([15.0], [0.0], [4.924])
    """
    time = np.atleast_1d(np.asarray(time, dtype=float))
    places = table.places()
    if len(places) == 1:
        mixed = _in_time(table, places[0], time)
    else:
        if latitude is None or longitude is None:
            raise InputError("a weather table with places needs the course's positions")
        weights = place_weights(table, np.broadcast_to(latitude, time.shape),
                                np.broadcast_to(longitude, time.shape))
        per_place = [_in_time(table, indices, time) for indices in places]
        mixed = {key: np.sum([w * values[key] for w, values in zip(weights, per_place,
                                                                   strict=True)], axis=0)
                 for key in per_place[0]}
    speed, direction = wind_from_vector(mixed["east"], mixed["north"])
    return WeatherAt(temperature=mixed["temperature"],
                     relative_humidity=np.clip(mixed["relative_humidity"], 0.0, 1.0),
                     wind_speed=speed, wind_from=direction, pressure=mixed.get("pressure"))


def check_covers(table: WeatherTable, start: float, finish: float) -> None:
    """Refuse a race outside the times the table covers (at every place), in one line.

    Parameters
    ----------
    table : WeatherTable
        The weather rows.
    start, finish : float
        Clock times of the start and the finish in the table's frame [s].

    Raises
    ------
    WeatherSpanError
        An InputError naming the race's times and the table's first or last row.
    """
    first, last = table.span
    if start < first - 1e-6:
        raise WeatherSpanError(f"the race starts at {clock_text(start, table.utc_offset)}, before "
                         f"the weather table's first row ({clock_text(first, table.utc_offset)})"
                         "; add a row at or before the start")
    if start > last + 1e-6:
        raise WeatherSpanError(f"the race starts at {clock_text(start, table.utc_offset)}, after "
                         f"the weather table's last row ({clock_text(last, table.utc_offset)})"
                         "; add rows from the start to the finish, or start earlier")
    if finish > last + 1e-6:
        raise WeatherSpanError(f"the race is predicted to finish at "
                         f"{clock_text(finish, table.utc_offset)}, after the weather table's "
                         f"last row ({clock_text(last, table.utc_offset)}); add a row at or "
                         "after the finish")


def framed_table(moments: Sequence[datetime], start: datetime | None = None, *,
                 temperature: ArrayLike, relative_humidity: ArrayLike, wind_speed: ArrayLike,
                 wind_from: ArrayLike, pressure: ArrayLike | None = None,
                 pressure_kind: str = "sea-level", latitude: ArrayLike | None = None,
                 longitude: ArrayLike | None = None) -> tuple[WeatherTable, float | None]:
    """A WeatherTable from clock times as datetimes, and the start in its frame.

    The frame is the offset of the first aware time among the rows and the start
    (`time_frame`); naive times are local to the race.

    Parameters
    ----------
    moments : sequence of datetime.datetime
        The rows' clock times, naive or aware [-].
    start : datetime.datetime, optional
        The race's start [-].
    temperature, relative_humidity, wind_speed, wind_from, pressure, pressure_kind,
    latitude, longitude
        The columns of WeatherTable: [°C], [-], [m/s at 10 m], [deg], [Pa], [-], [deg].

    Returns
    -------
    tuple of (WeatherTable, float or None)
        The table and the start in its frame [s], None without a start.
    """
    utc_offset = time_frame([*moments, *([start] if start is not None else [])])
    table = WeatherTable(
        time=np.array([clock_seconds(moment, utc_offset) for moment in moments]),
        temperature=np.asarray(temperature, dtype=float),
        relative_humidity=np.asarray(relative_humidity, dtype=float),
        wind_speed=np.asarray(wind_speed, dtype=float),
        wind_from=np.asarray(wind_from, dtype=float),
        pressure=None if pressure is None else np.asarray(pressure, dtype=float),
        pressure_kind=pressure_kind,
        latitude=None if latitude is None else np.asarray(latitude, dtype=float),
        longitude=None if longitude is None else np.asarray(longitude, dtype=float),
        utc_offset=utc_offset)
    return table, None if start is None else clock_seconds(start, utc_offset)


TABLE_FIELDS = ("time", "temperature", "relative_humidity", "wind_speed", "wind_from",
                "pressure", "latitude", "longitude")
"""The array fields of WeatherTable, in their JSON order."""


def table_as_dict(table: WeatherTable) -> dict[str, object]:
    """A weather table as JSON values (SI, lists of numbers; null for absent columns), for a
    saved plan's inputs.

    Parameters
    ----------
    table : WeatherTable
        The table.

    Returns
    -------
    dict
        time [s in the frame], temperature [°C], relative_humidity [-], wind_speed [m/s],
        wind_from [deg], pressure [Pa], latitude and longitude [deg] as lists or None;
        pressure_kind and utc_offset [s].
    """
    values: dict[str, object] = {}
    for name in TABLE_FIELDS:
        column = getattr(table, name)
        values[name] = None if column is None else np.asarray(column, dtype=float).tolist()
    values["pressure_kind"] = table.pressure_kind
    values["utc_offset"] = table.utc_offset
    return values


def table_from_dict(values: dict[str, object]) -> WeatherTable:
    """The weather table of `table_as_dict`, checked again.

    Parameters
    ----------
    values : dict
        As `table_as_dict` returns.

    Returns
    -------
    WeatherTable

    Raises
    ------
    InputError
        For a missing column or any check of WeatherTable.
    """
    if not isinstance(values, dict):
        raise InputError("a saved weather table must be an object of columns")
    missing = [name for name in TABLE_FIELDS[:5] if values.get(name) is None]
    if missing:
        raise InputError(f"the saved weather table lacks {', '.join(missing)}")
    columns = {name: None if values.get(name) is None else np.asarray(values[name], dtype=float)
               for name in TABLE_FIELDS}
    offset = values.get("utc_offset")
    return WeatherTable(**columns,  # type: ignore[arg-type]
                        pressure_kind=str(values.get("pressure_kind", "sea-level")),
                        utc_offset=None if offset is None else float(offset))  # type: ignore[arg-type]
