"""A ridden race as arrays: what the head unit recorded, checked but not trimmed.

Unlike a test ride (pacing.fieldtest.ride.make_ride), a race keeps its stops (their time is part
of the result) and its recording gaps (a missed stretch is bridged later, by the alignment to
the course). `make_race_recording` checks the arrays, fills short gaps in power, and takes the
speed from the distance or the positions when no speed was recorded.

Conventions: point arrays (one value per sample) have length N; SI units; angles in degrees.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.course.geometry import geodesic_pieces
from pacing.errors import InputError
from pacing.notices import Notice, note, warning

MIN_RACE_SAMPLES = 10
"""Fewest samples of a race recording."""

POWER_FILL = 10.0
"""Missing power readings up to this long are filled by interpolation [s]; longer gaps are
filled the same way with a warning (the power over them is unknown)."""


@dataclass(frozen=True, eq=False)
class RaceRecording:
    """A race as the head unit recorded it (SI), stops and gaps kept.

    Attributes
    ----------
    time : numpy.ndarray
        Time of each sample from the first one [s], strictly increasing, length N.
    power : numpy.ndarray
        Crank power [W], length N, finite, ≥ 0.
    speed : numpy.ndarray
        Ground speed [m/s], length N, finite, ≥ 0.
    distance : numpy.ndarray
        Distance ridden [m], length N, from 0, not decreasing.
    latitude, longitude : numpy.ndarray or None
        Position [deg], length N; NaN at samples without a fix.
    elevation : numpy.ndarray or None
        Recorded elevation [m], length N.
    cadence : numpy.ndarray or None
        Pedalling cadence [1/min], length N.
    heart_rate : numpy.ndarray or None
        Heart rate [1/min], length N.
    notes : tuple of pacing.notices.Notice
        What reading and checking did ("review-ride-…").
    name : str
        Label.
    """

    time: np.ndarray
    power: np.ndarray
    speed: np.ndarray
    distance: np.ndarray
    latitude: np.ndarray | None = None
    longitude: np.ndarray | None = None
    elevation: np.ndarray | None = None
    cadence: np.ndarray | None = None
    heart_rate: np.ndarray | None = None
    notes: tuple[Notice, ...] = ()
    name: str = "race"

    @property
    def has_position(self) -> bool:
        """True when every sample has a latitude and longitude."""
        return self.latitude is not None and self.longitude is not None

    @property
    def duration(self) -> float:
        """Time from the first to the last sample [s]."""
        return float(self.time[-1] - self.time[0])


def _series(values: ArrayLike | None, label: str, size: int) -> np.ndarray | None:
    """`values` as a float array of `size`, None when absent or all blank."""
    if values is None:
        return None
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{label} must be numbers") from None
    if array.shape != (size,):
        raise InputError(f"{label} has {array.size} values, time has {size}")
    return None if np.isnan(array).all() else array


def _checked_time(time: ArrayLike) -> np.ndarray:
    """Time [s] from the first sample: finite, strictly increasing, ≥ MIN_RACE_SAMPLES."""
    seconds = np.asarray(time, dtype=float)
    if seconds.ndim != 1 or seconds.size < MIN_RACE_SAMPLES:
        raise InputError(f"a race recording needs at least {MIN_RACE_SAMPLES} samples, got "
                         f"{seconds.size}")
    if not np.all(np.isfinite(seconds)):
        raise InputError("time has missing or non-numeric values")
    steps = np.diff(seconds)
    if np.any(steps <= 0):
        i = int(np.argmax(steps <= 0)) + 1
        raise InputError(f"time does not increase at sample {i + 1} (t = {seconds[i]:g} s): "
                         "sort the file or remove repeated rows")
    return seconds - seconds[0]


def _filled(values: np.ndarray, time: np.ndarray, label: str,
            notes: list[Notice]) -> np.ndarray:
    """Blank readings interpolated in time; a note, or a warning past POWER_FILL seconds."""
    blank = np.isnan(values)
    if not blank.any():
        return values
    good = ~blank
    edges = np.flatnonzero(np.diff(np.concatenate(([0], blank.astype(np.int8), [0]))))
    starts, stops = edges[::2], edges[1::2]
    spans = time[np.minimum(stops, time.size - 1)] - time[np.maximum(starts - 1, 0)]
    longest = float(spans.max())
    make = warning if longest > POWER_FILL else note
    notes.append(make("review-ride-filled", label=label, count=int(blank.sum()),
                      longest_s=longest))
    return np.interp(time, time[good], values[good])


def _not_negative(values: np.ndarray, label: str, unit: str) -> np.ndarray:
    """Refuse a negative or infinite reading (one line naming the sample)."""
    bad = ~np.isfinite(values) | (values < 0)
    if bad.any():
        i = int(np.argmax(bad))
        raise InputError(f"{label} is {values[i]:g} {unit} at sample {i + 1}: it must be finite "
                         "and not negative")
    return values


def _positions(latitude: np.ndarray | None, longitude: np.ndarray | None,
               notes: list[Notice]) -> tuple[np.ndarray | None, np.ndarray | None]:
    """Latitude and longitude [deg], checked: within range where present; samples without a
    position (a tunnel, a lost fix) keep NaN, counted in a note (the alignment places them by
    the distance ridden)."""
    if latitude is None or longitude is None:
        return None, None
    missing = ~(np.isfinite(latitude) & np.isfinite(longitude))
    if np.any(np.abs(latitude[~missing]) > 90) or np.any(np.abs(longitude[~missing]) > 180):
        raise InputError("latitude must be within ±90° and longitude within ±180°")
    if missing.all():
        return None, None
    if missing.any():
        notes.append(note("review-ride-positions-missing", count=int(missing.sum())))
        latitude = np.where(missing, np.nan, latitude)
        longitude = np.where(missing, np.nan, longitude)
    return latitude, longitude


def _speed_and_distance(time: np.ndarray, speed: np.ndarray | None,
                        distance: np.ndarray | None, latitude: np.ndarray | None,
                        longitude: np.ndarray | None,
                        notes: list[Notice]) -> tuple[np.ndarray, np.ndarray]:
    """Speed [m/s] and distance [m]: as recorded, or one from the other, or from the
    positions (geodesics on WGS84, pacing.course.geometry.geodesic_pieces)."""
    if distance is None and speed is None and latitude is not None and longitude is not None:
        fix = np.isfinite(latitude)
        length, _ = geodesic_pieces(np.interp(time, time[fix], latitude[fix]),
                                    np.interp(time, time[fix], longitude[fix]))
        distance = np.concatenate(([0.0], np.cumsum(length)))
        notes.append(note("review-ride-speed-from-positions"))
    if speed is None:
        if distance is None:
            raise InputError("the race file has no speed, distance or positions: the time "
                             "along the course cannot be known")
        distance = np.maximum.accumulate(_filled(distance, time, "distance", notes))
        speed = np.gradient(distance, time)
    speed = _not_negative(_filled(speed, time, "speed", notes), "speed", "m/s")
    if distance is None:
        steps = 0.5 * (speed[1:] + speed[:-1]) * np.diff(time)
        distance = np.concatenate(([0.0], np.cumsum(steps)))
    distance = np.maximum.accumulate(_filled(distance, time, "distance", notes))
    return speed, distance - distance[0]


def make_race_recording(
    time: ArrayLike,
    power: ArrayLike,
    speed: ArrayLike | None = None,
    distance: ArrayLike | None = None,
    latitude: ArrayLike | None = None,
    longitude: ArrayLike | None = None,
    elevation: ArrayLike | None = None,
    cadence: ArrayLike | None = None,
    heart_rate: ArrayLike | None = None,
    name: str = "race",
    notes: Sequence[Notice] = (),
) -> RaceRecording:
    """Check a race recording's arrays, keeping its stops and gaps.

    Blank power, speed and distance readings are interpolated in time (a note; a warning when a
    gap in power is longer than POWER_FILL seconds). Samples without a position keep NaN (a
    note counts them; the alignment places them by the distance ridden). Speed comes from the
    distance, the distance from the speed (trapezoidal rule), or both from the positions.

    Parameters
    ----------
    time : array_like
        Time of each sample [s], strictly increasing, length N ≥ MIN_RACE_SAMPLES.
    power : array_like
        Crank power [W], length N (NaN for blanks).
    speed, distance : array_like or None
        Ground speed [m/s] and distance ridden [m], length N.
    latitude, longitude : array_like or None
        Position [deg], length N.
    elevation : array_like or None
        Recorded elevation [m], length N.
    cadence, heart_rate : array_like or None
        Cadence and heart rate [1/min], length N.
    name : str
        Label.
    notes : sequence of pacing.notices.Notice
        Notes of reading the file.

    Returns
    -------
    RaceRecording

    Raises
    ------
    InputError
        One line naming what is wrong.
    """
    seconds = _checked_time(time)
    size = seconds.size
    found = {label: _series(values, label, size) for label, values in (
        ("power", power), ("speed", speed), ("distance", distance), ("latitude", latitude),
        ("longitude", longitude), ("elevation", elevation), ("cadence", cadence),
        ("heart rate", heart_rate))}
    if (found["latitude"] is None) != (found["longitude"] is None):
        raise InputError("give both latitude and longitude, or neither")
    said = list(notes)
    lat, lon = _positions(found["latitude"], found["longitude"], said)
    power_read = found["power"]
    if power_read is None:
        raise InputError("the race file has no power readings")
    watts = _not_negative(_filled(power_read, seconds, "power", said), "power", "W")
    moving, along = _speed_and_distance(seconds, found["speed"], found["distance"], lat, lon,
                                        said)
    extras: dict[str, np.ndarray | None] = {}
    for label in ("elevation", "cadence", "heart rate"):
        values = found[label]
        extras[label] = None if values is None else _filled(values, seconds, label, said)
    return RaceRecording(time=seconds, power=watts, speed=moving, distance=along,
                         latitude=lat, longitude=lon, elevation=extras["elevation"],
                         cadence=extras["cadence"], heart_rate=extras["heart rate"],
                         notes=tuple(said), name=name)
