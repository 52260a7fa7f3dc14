"""Read test rides (for pacing.fieldtest.estimate) and race files (for pacing.review) from CSV
and GPX files.

Race files (`read_race`) are read with the same columns and elements, and also cadence and
heart rate; they keep their stops and recording gaps (pacing.review.recording) and need only
time and power (speed may come from the distance or the positions).

CSV
---
One row per sample, a header row naming the columns. Names are matched without regard to
case, surrounding spaces, and spaces/dashes versus underscores. Required: time, speed, power;
optional: elevation, distance, latitude, longitude, heading.

=============  ==================================================================  ===========
quantity       accepted column names                                               unit
=============  ==================================================================  ===========
time           time_s, time, seconds, secs, elapsed_s, elapsed_time                s
               timestamp, datetime, time_utc, or a time column holding dates       ISO 8601
speed          speed_mps, speed_m_s, speed, velocity                               m/s
               speed_kmh, speed_kph, speed_km_h                                    km/h
               speed_mph                                                           mph
power          power_w, power, watts                                               W
elevation      elevation_m, elevation, altitude_m, altitude, alt, ele,             m
               enhanced_altitude
               elevation_ft, altitude_ft                                           ft
distance       distance_m, distance                                                m
               distance_km                                                         km
latitude       latitude, lat, position_lat                                         deg
longitude      longitude, lon, lng, long, position_long                            deg
heading        heading_deg, heading, bearing, course                               deg
=============  ==================================================================  ===========

Timestamps become seconds from the first sample. Without a speed column, speed is taken from
the distance column (central differences). Empty cells are missing values: short gaps in power
are interpolated, long ones are an error; 0 W logged for a second or two while the rider
pedals at speed is a dropout, bridged the same way and counted in a warning (see
pacing.fieldtest.ride.make_ride).

The dialect is sniffed from the text (pacing.io.csv_dialect.sniff_csv): encoding, separator
and decimal mark. A file that cannot be read (binary data such as a FIT file, one column only,
mixed decimal marks, a header without data rows) is refused with one line naming what was
found.

GPX
---
Track points (all tracks and segments, in file order) with <time>, optional <ele>, and the
power and speed in extension elements: any element named ``power`` (or ``watts``) below the
point gives power [W]; any element named ``speed`` below the point (GPX 1.0 carries it directly,
GPX 1.1 files in a track-point extension) gives speed [m/s]. Namespaces are ignored. Without
speed elements, speed comes from the positions (GNSS speed is noisier than a wheel sensor; a
note says so). The XML is parsed by defusedxml (no DTDs, entities or external references).
"""

from __future__ import annotations

import io
import os
import re
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from pacing.errors import InputError, first_line
from pacing.fieldtest.ride import MIN_SAMPLES, Ride, local_position, make_ride
from pacing.io.csv_dialect import BYTE_ORDER_MARKS, CsvDialect, sniff_csv
from pacing.io.files import read_bounded
from pacing.io.safe_xml import local_name, parse_xml
from pacing.notices import Notice, note
from pacing.review.recording import RaceRecording, make_race_recording

MAX_RIDE_BYTES = 100 * 1024 * 1024
"""Largest ride file accepted [bytes]."""

CSV_COLUMNS: dict[str, dict[str, float | None]] = {
    "time": {"time_s": 1.0, "time": 1.0, "seconds": 1.0, "secs": 1.0, "elapsed_s": 1.0,
             "elapsed_time": 1.0, "timestamp": None, "datetime": None, "time_utc": None},
    "speed": {"speed_mps": 1.0, "speed_m_s": 1.0, "speed": 1.0, "velocity": 1.0,
              "speed_kmh": 1 / 3.6, "speed_kph": 1 / 3.6, "speed_km_h": 1 / 3.6,
              "speed_mph": 0.44704},
    "power": {"power_w": 1.0, "power": 1.0, "watts": 1.0},
    "elevation": {"elevation_m": 1.0, "elevation": 1.0, "altitude_m": 1.0, "altitude": 1.0,
                  "alt": 1.0, "ele": 1.0, "enhanced_altitude": 1.0, "elevation_ft": 0.3048,
                  "altitude_ft": 0.3048},
    "distance": {"distance_m": 1.0, "distance": 1.0, "distance_km": 1000.0},
    "latitude": {"latitude": 1.0, "lat": 1.0, "position_lat": 1.0},
    "longitude": {"longitude": 1.0, "lon": 1.0, "lng": 1.0, "long": 1.0, "position_long": 1.0},
    "heading": {"heading_deg": 1.0, "heading": 1.0, "bearing": 1.0, "course": 1.0},
}
"""Accepted CSV column names per quantity, with the factor to SI (None: a timestamp).
Units follow common practice: 1 mph = 0.44704 m/s, 1 ft = 0.3048 m (exact, 1959 agreement)."""

RACE_COLUMNS: dict[str, dict[str, float | None]] = {
    "cadence": {"cadence_rpm": 1.0, "cadence": 1.0, "cad": 1.0},
    "heart_rate": {"heart_rate_bpm": 1.0, "heart_rate": 1.0, "heartrate": 1.0, "hr": 1.0},
}
"""Further CSV columns a race file may carry (read by `read_race`), per minute [1/min]."""

REQUIRED = ("time", "speed", "power")

RACE_REQUIRED = ("time", "power")
"""A race file needs time and power; speed may come from the distance or the positions."""


def _read_bytes(source: Any) -> tuple[bytes, str]:
    """The file's bytes and a name (pacing.io.files.read_bounded)."""
    return read_bounded(source, "ride file", MAX_RIDE_BYTES)


def _looks_like_xml(data: bytes) -> bool:
    """True when the text starts with an XML declaration or a <gpx> element (read through a
    byte-order mark when there is one)."""
    head = data[:400]
    for mark, codec in BYTE_ORDER_MARKS:
        if head.startswith(mark):
            head = head.decode(codec, errors="ignore").encode("ascii", errors="ignore")
            break
    return head.lstrip().lower().startswith((b"<?xml", b"<gpx"))


def read_ride(source: Any, name: str | None = None, kind: str | None = None,
              **options: Any) -> Ride:
    """Read a test ride from a CSV or GPX file (by extension, or `kind` "csv"/"gpx").

    Parameters
    ----------
    source : str, os.PathLike, bytes or file-like
        The file, its path or its bytes.
    name : str or None
        Label of the ride (default the file name without extension).
    kind : str or None
        "csv" or "gpx"; default from the file extension, else from the content.
    **options
        Passed to pacing.fieldtest.ride.make_ride: stop_speed [m/s], max_gap [s],
        max_power_fill [s].

    Returns
    -------
    pacing.fieldtest.ride.Ride
        The cleaned ride, its notes (pacing.notices.Notice) saying what was done.
    """
    if kind is None and isinstance(source, str | os.PathLike):
        suffix = Path(source).suffix.lower().lstrip(".")
        kind = suffix if suffix in ("csv", "gpx") else None
    data, stem = _read_bytes(source)
    if kind is None:
        kind = "gpx" if _looks_like_xml(data) else "csv"
    if kind not in ("csv", "gpx"):
        raise InputError(f"unknown ride file type {kind!r}: use CSV or GPX")
    reader = read_ride_csv if kind == "csv" else read_ride_gpx
    return reader(data, name=name or stem or "ride", **options)


def _normalise(label: str) -> str:
    """A column name compared without case, outer spaces, or spaces/dashes for underscores."""
    return re.sub(r"[\s\-]+", "_", str(label).strip().lower())


def _seconds(values: pd.Series, label: str) -> np.ndarray:
    """Timestamps (ISO 8601 text) → seconds from the first one."""
    try:
        stamps = pd.to_datetime(values, utc=True, format="ISO8601")
    except (ValueError, TypeError):
        raise InputError(f"column {label!r} holds neither seconds nor ISO 8601 times") from None
    if stamps.isna().any():
        raise InputError(f"column {label!r} has missing or unreadable times")
    return (stamps - stamps.iloc[0]).dt.total_seconds().to_numpy(dtype=float)


def _csv_frame(data: bytes) -> tuple[pd.DataFrame, CsvDialect]:
    """The CSV text as a table with its dialect, or a one-line InputError."""
    text, dialect = sniff_csv(data)
    try:
        frame = pd.read_csv(io.StringIO(text), sep=dialect.separator, decimal=dialect.decimal,
                            skipinitialspace=True)
    except pd.errors.EmptyDataError:
        raise InputError("the CSV file is empty") from None
    except pd.errors.ParserError as error:
        raise InputError(f"the CSV file ({dialect.describe}) does not parse: "
                         f"{first_line(error)}") from None
    return frame, dialect


def _shown_columns(frame: pd.DataFrame, most: int = 12) -> str:
    """The table's column names for a one-line message: spaces for line breaks, the first
    `most` of them."""
    names = [" ".join(str(c).split()) for c in frame.columns[:most]]
    more = len(frame.columns) - most
    return ", ".join(names) + (f" and {more} more" if more > 0 else "")


def _check_columns(frame: pd.DataFrame, columns: dict[str, str], dialect: CsvDialect,
                   found: dict[str, np.ndarray] | None = None,
                   required: tuple[str, ...] = REQUIRED) -> None:
    """Refuse a table without the `required` quantities (by column name, or among `found`),
    then one without data rows or with a single one; one line each."""
    if found is None:
        found = {q: np.empty(0) for q, aliases in CSV_COLUMNS.items()
                 if any(a in columns for a in aliases)}
        if "distance" in found and "time" in found:
            found["speed"] = found["distance"]
    missing = [q for q in required if q not in found]
    if missing:
        wanted = ", ".join(f"{q} (e.g. {next(iter(CSV_COLUMNS[q]))})" for q in missing)
        have = _shown_columns(frame) or "none"
        raise InputError(f"missing column(s) {wanted}; the file has: {have} "
                         f"({dialect.describe})")
    if len(frame) == 0:
        header = _shown_columns(frame)
        raise InputError(f"the CSV file has a header ({header}) but no data rows")
    if len(frame) == 1:
        raise InputError(f"the CSV file has a single data row: a test ride needs at least "
                         f"{MIN_SAMPLES} samples")


def _csv_column(series: pd.Series, label: str, quantity: str,
                factor: float | None) -> np.ndarray:
    """One column in SI units: numbers times `factor`, or timestamps as seconds."""
    if quantity == "time":
        numbers = pd.to_numeric(series, errors="coerce")
        if factor is None or numbers.isna().all():
            return _seconds(series, label)
        series = numbers
    numbers = pd.to_numeric(series, errors="coerce")
    bad = numbers.isna() & series.notna() & (series.astype(str).str.strip() != "")
    if bad.any():
        row = int(np.argmax(bad.to_numpy()))
        raise InputError(f"column {label!r} has a non-number {series.iloc[row]!r} in data row "
                         f"{row + 1}")
    return numbers.to_numpy(dtype=float) * (1.0 if factor is None else factor)


def _csv_quantities(frame: pd.DataFrame, columns: dict[str, str],
                    table: dict[str, dict[str, float | None]] | None = None
                    ) -> dict[str, np.ndarray]:
    """Each quantity of `table` (default CSV_COLUMNS) found in the table (the first alias
    present), in SI."""
    found: dict[str, np.ndarray] = {}
    for quantity, aliases in (CSV_COLUMNS if table is None else table).items():
        for alias, factor in aliases.items():
            if alias in columns:
                found[quantity] = _csv_column(frame[columns[alias]], columns[alias], quantity,
                                              factor)
                break
    return found


def read_ride_csv(source: Any, name: str = "ride", **options: Any) -> Ride:
    """Read a test ride from CSV (columns in the module docstring).

    Parameters
    ----------
    source : bytes, str, os.PathLike or file-like
        The file's bytes, its path or the open file.
    name : str
        Label of the ride.
    **options
        Passed to pacing.fieldtest.ride.make_ride.

    Returns
    -------
    pacing.fieldtest.ride.Ride
        The cleaned ride; a note says when the speed came from the distance column.
    """
    data = source if isinstance(source, bytes) else _read_bytes(source)[0]
    frame, dialect = _csv_frame(data)
    columns = {_normalise(c): c for c in frame.columns}
    _check_columns(frame, columns, dialect)
    found = _csv_quantities(frame, columns)
    if "speed" not in found and "distance" in found and "time" in found:
        if np.all(np.isfinite(found["distance"])) and np.all(np.diff(found["time"]) > 0):
            found["speed"] = np.gradient(found["distance"], found["time"])
    _check_columns(frame, columns, dialect, found)
    notes: list[Notice] = []
    if "speed" in found and not any(a in columns for a in CSV_COLUMNS["speed"]):
        notes.append(note("test-ride-speed-from-distance"))
    return make_ride(found["time"], found["speed"], found["power"],
                     elevation=found.get("elevation"), latitude=found.get("latitude"),
                     longitude=found.get("longitude"), heading=found.get("heading"),
                     distance=found.get("distance"), name=name, notes=notes, **options)


def _local(tag: str) -> str:
    """An XML tag's local name in lower case (namespace dropped)."""
    return local_name(tag).lower()


def _number(text: str | None) -> float:
    """A number from XML text, NaN when absent or unreadable."""
    try:
        return float(text) if text is not None else np.nan
    except ValueError:
        return np.nan


GPX_CADENCE = ("cad", "cadence")
"""Extension elements read as cadence [1/min] (race files)."""

GPX_HEART_RATE = ("hr", "heartrate", "heart_rate")
"""Extension elements read as heart rate [1/min] (race files)."""


def _gpx_point(point: Any) -> tuple[float, float, str | None, float, float, float, float,
                                    float]:
    """(lat [deg], lon [deg], time text, elevation [m], power [W], speed [m/s], cadence
    [1/min], heart rate [1/min]) of one track point; NaN (or None for the time) where
    absent."""
    stamp: str | None = None
    values = {"ele": np.nan, "power": np.nan, "speed": np.nan, "cad": np.nan, "hr": np.nan}
    for element in point.iter():
        tag = _local(element.tag)
        if tag == "time" and stamp is None:
            stamp = (element.text or "").strip()
        elif tag == "ele":
            values["ele"] = _number(element.text)
        elif tag in ("power", "watts"):
            values["power"] = _number(element.text)
        elif tag == "speed":
            values["speed"] = _number(element.text)
        elif tag in GPX_CADENCE:
            values["cad"] = _number(element.text)
        elif tag in GPX_HEART_RATE:
            values["hr"] = _number(element.text)
    return (_number(point.get("lat")), _number(point.get("lon")), stamp, values["ele"],
            values["power"], values["speed"], values["cad"], values["hr"])


def read_ride_gpx(source: Any, name: str = "ride", **options: Any) -> Ride:
    """Read a test ride from GPX track points carrying power and speed (module docstring).

    Parameters
    ----------
    source : bytes, str, os.PathLike or file-like
        The file's bytes, its path or the open file.
    name : str
        Label of the ride.
    **options
        Passed to pacing.fieldtest.ride.make_ride.

    Returns
    -------
    pacing.fieldtest.ride.Ride
        The cleaned ride; a note says when the speed came from the positions.
    """
    track = _gpx_track(source)
    time, latitude, longitude = track["time"], track["latitude"], track["longitude"]
    elevation, power, speed = track["elevation"], track["power"], track["speed"]
    if np.isnan(latitude).any() or np.isnan(longitude).any():
        raise InputError("some GPX track points lack lat/lon")
    notes: list[Notice] = []
    if np.isnan(speed).all():
        if np.any(np.diff(time) <= 0):
            raise InputError("time does not increase along the GPX track")
        east, north = local_position(latitude, longitude, (latitude[0], longitude[0]))
        along = np.concatenate(([0.0], np.cumsum(np.hypot(np.diff(east), np.diff(north)))))
        speed = np.gradient(along, time)
        notes.append(note("test-ride-speed-from-positions"))
    return make_ride(time, speed, power, elevation=None if np.isnan(elevation).all()
                     else elevation, latitude=latitude, longitude=longitude, name=name,
                     notes=notes, **options)


def _gpx_track(source: Any) -> dict[str, np.ndarray]:
    """The track points of a GPX file as arrays: time [s] from the first point, latitude and
    longitude [deg], elevation [m], power [W], speed [m/s], cadence and heart rate [1/min]
    (NaN where absent); refuses a file without track points, times or power."""
    data = source if isinstance(source, bytes) else _read_bytes(source)[0]
    root = parse_xml(data, "GPX file")
    if _local(root.tag) != "gpx":
        raise InputError(f"not a GPX file: the root element is <{_local(root.tag)}>")
    rows = [_gpx_point(point) for point in root.iter() if _local(point.tag) == "trkpt"]
    if not rows:
        raise InputError("the GPX file has no track points")
    stamps = [row[2] for row in rows]
    if any(s is None or s == "" for s in stamps):
        raise InputError("every GPX track point needs a <time>: some have none")
    track = {"time": _seconds(pd.Series(stamps), "time")}
    for key, k in (("latitude", 0), ("longitude", 1), ("elevation", 3), ("power", 4),
                   ("speed", 5), ("cadence", 6), ("heart_rate", 7)):
        track[key] = np.array([row[k] for row in rows], dtype=float)
    if np.isnan(track["power"]).all():
        raise InputError("the GPX track carries no power values (a <power> element in the "
                         "track-point extensions)")
    return track


# ---------------------------------------------------------------------------------------------
# Race files (pacing.review): stops and gaps kept, speed optional
# ---------------------------------------------------------------------------------------------


def read_race(source: Any, name: str | None = None, kind: str | None = None) -> RaceRecording:
    """Read a race file (CSV or GPX, as a test ride) for the race review.

    Unlike `read_ride`, stops and recording gaps are kept (pacing.review.recording): the
    review counts their time. A CSV needs time and power; speed may come from the distance
    or the positions. Cadence and heart rate are read when present (CSV columns of
    RACE_COLUMNS; GPX extension elements named in GPX_CADENCE and GPX_HEART_RATE).

    Parameters
    ----------
    source : str, os.PathLike, bytes or file-like
        The file, its path or its bytes.
    name : str or None
        Label of the race (default the file name without extension).
    kind : str or None
        "csv" or "gpx"; default from the file extension, else from the content.

    Returns
    -------
    pacing.review.recording.RaceRecording
    """
    if kind is None and isinstance(source, str | os.PathLike):
        suffix = Path(source).suffix.lower().lstrip(".")
        kind = suffix if suffix in ("csv", "gpx") else None
    data, stem = _read_bytes(source)
    if kind is None:
        kind = "gpx" if _looks_like_xml(data) else "csv"
    if kind not in ("csv", "gpx"):
        raise InputError(f"unknown race file type {kind!r}: use CSV or GPX")
    label = name or stem or "race"
    if kind == "gpx":
        track = _gpx_track(data)
        if np.isnan(track["latitude"]).any() or np.isnan(track["longitude"]).any():
            raise InputError("some GPX track points lack lat/lon")
        speed = track["speed"]
        return make_race_recording(
            track["time"], track["power"], speed=None if np.isnan(speed).all() else speed,
            latitude=track["latitude"], longitude=track["longitude"],
            elevation=track["elevation"], cadence=track["cadence"],
            heart_rate=track["heart_rate"], name=label)
    frame, dialect = _csv_frame(data)
    columns = {_normalise(c): c for c in frame.columns}
    _check_columns(frame, columns, dialect, required=RACE_REQUIRED)
    found = _csv_quantities(frame, columns, {**CSV_COLUMNS, **RACE_COLUMNS})
    return make_race_recording(
        found["time"], found["power"], speed=found.get("speed"),
        distance=found.get("distance"), latitude=found.get("latitude"),
        longitude=found.get("longitude"), elevation=found.get("elevation"),
        cadence=found.get("cadence"), heart_rate=found.get("heart_rate"), name=label)
