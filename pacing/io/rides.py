"""Read test rides (for pacing.fieldtest.estimate) from CSV and GPX files.

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
are interpolated, long ones are an error (see pacing.fieldtest.ride.make_ride).

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
from pacing.fieldtest.ride import Ride, local_position, make_ride
from pacing.io.safe_xml import local_name, parse_xml
from pacing.notices import Notice, note

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

REQUIRED = ("time", "speed", "power")


def _read_bytes(source: Any) -> tuple[bytes, str]:
    """The file's bytes and a name, from a path, bytes or a file-like object."""
    if isinstance(source, bytes | bytearray | memoryview):
        return bytes(source), ""
    if isinstance(source, str | os.PathLike):
        path = Path(source)
        if not path.exists():
            raise InputError(f"ride file not found: {path}")
        if path.is_dir():
            raise InputError(f"{path} is a folder, not a ride file")
        if path.stat().st_size > MAX_RIDE_BYTES:
            raise InputError(f"ride file is too large (limit {MAX_RIDE_BYTES // 2**20} MiB)")
        try:
            return path.read_bytes(), path.stem
        except OSError as error:
            raise InputError(f"cannot read {path}: {error.strerror}") from None
    if hasattr(source, "read"):
        data = source.read(MAX_RIDE_BYTES + 1)
        if isinstance(data, str):
            data = data.encode("utf-8")
        if len(data) > MAX_RIDE_BYTES:
            raise InputError(f"ride file is too large (limit {MAX_RIDE_BYTES // 2**20} MiB)")
        return data, Path(str(getattr(source, "name", ""))).stem
    raise InputError(f"cannot read a ride from {type(source).__name__}")


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
        kind = "gpx" if data.lstrip()[:200].lower().startswith((b"<?xml", b"<gpx")) else "csv"
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


def _csv_frame(data: bytes) -> pd.DataFrame:
    """The CSV text as a table, or a one-line InputError."""
    try:
        return pd.read_csv(io.BytesIO(data), skipinitialspace=True)
    except pd.errors.EmptyDataError:
        raise InputError("the CSV file is empty") from None
    except (pd.errors.ParserError, UnicodeDecodeError) as error:
        first = first_line(error)
        raise InputError(f"the CSV file does not parse: {first}") from None


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


def _csv_quantities(frame: pd.DataFrame, columns: dict[str, str]) -> dict[str, np.ndarray]:
    """Each quantity of CSV_COLUMNS found in the table (the first alias present), in SI."""
    found: dict[str, np.ndarray] = {}
    for quantity, aliases in CSV_COLUMNS.items():
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
    frame = _csv_frame(data)
    columns = {_normalise(c): c for c in frame.columns}
    found = _csv_quantities(frame, columns)
    if "speed" not in found and "distance" in found and "time" in found:
        if np.all(np.isfinite(found["distance"])) and np.all(np.diff(found["time"]) > 0):
            found["speed"] = np.gradient(found["distance"], found["time"])
    missing = [q for q in REQUIRED if q not in found]
    if missing:
        wanted = ", ".join(f"{q} (e.g. {next(iter(CSV_COLUMNS[q]))})" for q in missing)
        have = ", ".join(str(c) for c in frame.columns) or "none"
        raise InputError(f"missing column(s) {wanted}; the file has: {have}")
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


def _gpx_point(point: Any) -> tuple[float, float, str | None, float, float, float]:
    """(lat [deg], lon [deg], time text, elevation [m], power [W], speed [m/s]) of one
    track point; NaN (or None for the time) where absent."""
    stamp: str | None = None
    values = {"ele": np.nan, "power": np.nan, "speed": np.nan}
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
    return (_number(point.get("lat")), _number(point.get("lon")), stamp, values["ele"],
            values["power"], values["speed"])


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
    time = _seconds(pd.Series(stamps), "time")
    latitude, longitude, elevation, power, speed = (
        np.array([row[k] for row in rows], dtype=float) for k in (0, 1, 3, 4, 5))
    if np.isnan(power).all():
        raise InputError("the GPX track carries no power values (a <power> element in the "
                         "track-point extensions)")
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
