"""A test ride as arrays: cleaning, direction of travel, air along it, and laps.

`make_ride` checks and cleans the samples of a recorded ride (time, speed, power, optional
elevation, positions, heading) into a `Ride`; `ride_air` and `ride_wind` give the air density
and wind components on each piece; `detect_laps`, `laps_from_bounds` and `indices_at_times`
mark its laps. The estimation of CdA and Crr from rides is in pacing.fieldtest.estimate.

Conventions: point arrays (one value per sample) have length N, piece arrays (between samples
i and i+1) length N-1. Laps are (start, end) pairs of sample indices.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.physics.air import AIR_DENSITY_MODELS, standard_pressure, temperature_at_elevation
from pacing.physics.wind import wind_components
from pacing.weather.conditions import Conditions

STOP_SPEED = 1.0
"""Samples slower than this are a stop and are dropped [m/s]."""

MAX_GAP = 5.0
"""Largest time step accepted while moving [s]."""

MAX_POWER_FILL = 3.0
"""Missing power readings up to this long are filled by interpolation [s]."""

ZERO_POWER_DROPOUT = 10.0
"""Shortest stretch of 0 W with the speed holding that is noted as a possible dropout [s]."""

LAP_RADIUS = 20.0
"""A lap ends when the rider passes within this distance of the start point [m]."""

EARTH_RADIUS = 6371008.8
"""Mean Earth radius (IUGG) for local positions [m]."""


@dataclass(frozen=True, eq=False)
class Ride:
    """A test ride as arrays, cleaned (see `make_ride`).

    Attributes
    ----------
    time : time of each sample from the start [s], strictly increasing, length N.
    speed : ground speed [m/s], length N.
    power : crank power [W], length N.
    distance : distance ridden [m], length N.
    elevation : measured elevation [m] or None.
    latitude, longitude : position [deg] or None.
    heading : direction of travel [deg clockwise from north] or None, length N.
    pause : True for a piece that bridges a dropped stop, length N-1.
    notes : what cleaning did (one line each).
    name : label.
    """

    time: np.ndarray
    speed: np.ndarray
    power: np.ndarray
    distance: np.ndarray
    elevation: np.ndarray | None = None
    latitude: np.ndarray | None = None
    longitude: np.ndarray | None = None
    heading: np.ndarray | None = None
    pause: np.ndarray | None = None
    notes: tuple[str, ...] = ()
    name: str = "ride"

    @property
    def has_position(self) -> bool:
        return self.latitude is not None and self.longitude is not None


def _array(values, name: str, length: int | None = None) -> np.ndarray:
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numbers") from None
    if array.ndim != 1:
        raise InputError(f"{name} must be a 1-D series of numbers")
    if length is not None and array.size != length:
        raise InputError(f"{name} has {array.size} values, time has {length}")
    return array


def _fill_short(values: np.ndarray, time: np.ndarray, longest: float) -> tuple[np.ndarray, float]:
    """Interpolate missing (NaN) runs no longer than `longest` seconds; return the filled array
    and the duration of the longest missing run [s] (inf if a run is longer than `longest`)."""
    missing = np.isnan(values)
    if not missing.any():
        return values, 0.0
    if missing.all():
        return values, np.inf
    worst = 0.0
    edges = np.flatnonzero(np.diff(np.concatenate(([0], missing.astype(int), [0]))))
    for start, stop in zip(edges[::2], edges[1::2], strict=True):
        before = time[start - 1] if start > 0 else time[start]
        after = time[stop] if stop < time.size else time[stop - 1]
        worst = max(worst, after - before)
    if worst > longest:
        return values, worst
    good = ~missing
    return np.interp(time, time[good], values[good]), worst


def _first_bad_sample(values: np.ndarray, time: np.ndarray, name: str, unit: str) -> str | None:
    """One line naming the first sample of `values` that is not finite or is negative (its
    1-based number, which is the data row of a CSV file, its time and value), or None."""
    bad = ~np.isfinite(values) | (values < 0)
    if not bad.any():
        return None
    i = int(np.argmax(bad))
    value = values[i]
    what = f"is negative ({value:g} {unit})" if np.isfinite(value) else f"is not finite ({value})"
    more = int(bad.sum()) - 1
    tail = f"; {more} more sample{'s' if more != 1 else ''} like it" if more else ""
    return (f"{name} {what} at sample {i + 1} (t = {time[i]:g} s){tail}: {name} must be finite "
            "and not negative")


def _first_missing_run(values: np.ndarray, time: np.ndarray) -> tuple[float, float]:
    missing = np.isnan(values)
    start = int(np.argmax(missing))
    stop = start
    while stop < values.size and missing[stop]:
        stop += 1
    return float(time[start]), float(time[min(stop, time.size - 1)] - time[start])


def _zero_power_holding_speed(time: np.ndarray, speed: np.ndarray, power: np.ndarray,
                              shortest: float = ZERO_POWER_DROPOUT) -> tuple[float, float] | None:
    """(start [s], duration [s]) of the first stretch of exactly 0 W lasting at least
    `shortest` seconds over which the speed does not fall, else None. Coasting slows a rider
    on level road; holding speed at 0 W for that long suggests a lost power signal (or a
    descent)."""
    zero = (power == 0).astype(int)
    edges = np.flatnonzero(np.diff(np.concatenate(([0], zero, [0]))))
    for start, stop in zip(edges[::2], edges[1::2], strict=True):
        last = stop - 1
        if time[last] - time[start] >= shortest and speed[last] >= speed[start] > 0:
            return float(time[start]), float(time[last] - time[start])
    return None


def make_ride(
    time,
    speed,
    power,
    elevation=None,
    latitude=None,
    longitude=None,
    heading=None,
    distance=None,
    name: str = "ride",
    notes: Sequence[str] = (),
    stop_speed: float = STOP_SPEED,
    max_gap: float = MAX_GAP,
    max_power_fill: float = MAX_POWER_FILL,
) -> Ride:
    """Check and clean the arrays of a test ride.

    Missing power readings (NaN) up to `max_power_fill` seconds are interpolated; longer ones
    are a power-meter dropout and an error. Samples slower than `stop_speed` are dropped with a
    note (the pieces that bridge them become pauses). A time step longer than `max_gap` while
    moving is an error (a recording gap breaks the energy balance).

    Parameters
    ----------
    time [s], speed [m/s], power [W] : length N; elevation [m], latitude, longitude [deg],
        heading [deg], distance [m] : optional, length N.

    Raises
    ------
    InputError : with a one-line message naming the problem and where it is.
    """
    time = _array(time, "time")
    n = time.size
    if n < 10:
        raise InputError(f"a test ride needs at least 10 samples, got {n}")
    if not np.all(np.isfinite(time)):
        raise InputError("time has missing or non-numeric values")
    steps = np.diff(time)
    if np.any(steps <= 0):
        i = int(np.argmax(steps <= 0)) + 1
        raise InputError(
            f"time does not increase at sample {i + 1} (t = {time[i]:g} s): sort the file or "
            "remove repeated rows"
        )
    speed = _array(speed, "speed", n)
    power = _array(power, "power", n)
    notes = list(notes)
    if np.isnan(speed).any():
        speed, worst = _fill_short(speed, time, max_power_fill)
        if np.isnan(speed).any():
            at, _ = _first_missing_run(speed, time)
            raise InputError(f"speed is missing for {worst:g} s from t = {at:g} s")
        notes.append("filled short gaps in speed by interpolation")
    problem = _first_bad_sample(speed, time, "speed", "m/s")
    if problem:
        raise InputError(problem)
    if np.isnan(power).any():
        filled, worst = _fill_short(power, time, max_power_fill)
        if np.isnan(filled).any():
            at, _ = _first_missing_run(power, time)
            raise InputError(
                f"power is missing for {worst:g} s from t = {at:g} s (power-meter dropout): "
                "cut that part out or mark laps around it"
            )
        notes.append(f"filled power dropouts up to {worst:g} s by interpolation")
        power = filled
    problem = _first_bad_sample(power, time, "power", "W")
    if problem:
        raise InputError(problem)
    suspect = _zero_power_holding_speed(time, speed, power)
    if suspect is not None:
        notes.append(
            f"power reads 0 W for {suspect[1]:g} s from t = {suspect[0]:g} s while the speed "
            "holds: a power-meter dropout? Leave that stretch out of the laps"
        )
    optional = {}
    for label, values in (("elevation", elevation), ("latitude", latitude),
                          ("longitude", longitude), ("heading", heading),
                          ("distance", distance)):
        if values is None:
            optional[label] = None
            continue
        array = _array(values, label, n)
        if np.isnan(array).all():
            optional[label] = None
            notes.append(f"{label} column is empty: ignored")
            continue
        if np.isnan(array).any():
            good = ~np.isnan(array)
            array = np.interp(time, time[good], array[good])
            notes.append(f"filled {int((~good).sum())} missing {label} values by interpolation")
        optional[label] = array
    if (optional["latitude"] is None) != (optional["longitude"] is None):
        raise InputError("give both latitude and longitude, or neither")
    if optional["latitude"] is not None and (
        np.any(np.abs(optional["latitude"]) > 90) or np.any(np.abs(optional["longitude"]) > 180)
    ):
        raise InputError("latitude must be within ±90° and longitude within ±180°")

    moving = speed >= stop_speed
    if moving.sum() < 10:
        raise InputError(f"fewer than 10 samples faster than {stop_speed:g} m/s: nothing to fit")
    if not moving.all():
        dropped = int((~moving).sum())
        notes.append(
            f"dropped {dropped} samples slower than {stop_speed:g} m/s (stops); the energy "
            "balance restarts after each"
        )
    index = np.flatnonzero(moving)
    pause = np.diff(index) > 1
    kept_steps = np.diff(time[index])
    gap = (kept_steps > max_gap) & ~pause
    if gap.any():
        i = int(np.argmax(gap))
        raise InputError(
            f"recording gap of {kept_steps[i]:g} s at t = {time[index[i]]:g} s while moving: "
            "split the file there or mark laps around it"
        )
    time, speed, power = time[index], speed[index], power[index]
    for label in optional:
        if optional[label] is not None:
            optional[label] = optional[label][index]
    if optional["distance"] is None:
        step = 0.5 * (speed[1:] + speed[:-1]) * np.diff(time)
        optional["distance"] = np.concatenate(([0.0], np.cumsum(np.where(pause, 0.0, step))))
    return Ride(time=time, speed=speed, power=power, pause=pause, notes=tuple(notes), name=name,
                **optional)


# ---------------------------------------------------------------------------------------------
# Geometry: headings, laps
# ---------------------------------------------------------------------------------------------


def local_position(latitude: np.ndarray, longitude: np.ndarray, origin: tuple[float, float]):
    """East and north offsets from an origin on a local flat map [m] (equirectangular)."""
    lat0 = np.radians(origin[0])
    east = EARTH_RADIUS * np.cos(lat0) * np.radians(
        (np.asarray(longitude) - origin[1] + 180.0) % 360.0 - 180.0
    )
    north = EARTH_RADIUS * np.radians(np.asarray(latitude) - origin[0])
    return east, north


def piece_heading(ride: Ride) -> np.ndarray:
    """Direction of travel of each piece [deg clockwise from north], length N-1.

    From the heading column when present (circular mean of the two ends), else from the
    positions (local flat map; the heading of a piece without movement repeats the previous).
    """
    if ride.heading is not None:
        radians = np.radians(ride.heading)
        east = np.sin(radians[1:]) + np.sin(radians[:-1])
        north = np.cos(radians[1:]) + np.cos(radians[:-1])
        return np.degrees(np.arctan2(east, north)) % 360.0
    if not ride.has_position:
        raise InputError("wind needs the direction of travel: the ride has no heading or "
                         "latitude/longitude columns")
    east, north = local_position(ride.latitude, ride.longitude,
                                  (float(ride.latitude[0]), float(ride.longitude[0])))
    de, dn = np.diff(east), np.diff(north)
    heading = np.degrees(np.arctan2(de, dn)) % 360.0
    still = np.hypot(de, dn) < 1e-6
    if still.all():
        raise InputError("the positions never change: cannot tell the direction of travel")
    index = np.where(still, 0, np.arange(heading.size))
    np.maximum.accumulate(index, out=index)
    first = int(np.argmax(~still))
    heading = heading[index]
    heading[:first] = heading[first]
    return heading


def ride_wind(ride: Ride, wind_speed: float, wind_from: float) -> tuple[np.ndarray, np.ndarray]:
    """Headwind and crosswind on each piece of a ride for a steady wind [m/s], length N-1.

    Parameters
    ----------
    wind_speed : wind at rider height [m/s] (reduce a 10 m report with pacing.physics.wind).
    wind_from : direction the wind blows from [deg clockwise from north].
    """
    if wind_speed == 0:
        zeros = np.zeros(ride.time.size - 1)
        return zeros, zeros.copy()
    return wind_components(piece_heading(ride), wind_from, wind_speed)


def ride_air(ride: Ride, conditions: Conditions,
             density_model: str = "cipm_2007") -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Air density, headwind and crosswind on each piece of a ride, length N-1.

    Pressure from the sea-level pressure and the ride's elevation (ICAO standard atmosphere;
    sea level when the ride has no elevation), temperature given at the start elevation with
    the standard lapse rate, humid-air density by CIPM-2007 (pacing.physics.air); wind reduced to
    rider height by the log profile and split by the direction of travel (pacing.physics.wind).

    Returns
    -------
    (density [kg/m³], headwind [m/s], crosswind [m/s])
    """
    if density_model not in AIR_DENSITY_MODELS:
        raise InputError(f"unknown air density model {density_model!r}")
    if ride.elevation is None:
        elevation = np.zeros(ride.time.size - 1)
    else:
        elevation = 0.5 * (ride.elevation[1:] + ride.elevation[:-1])
    pressure = standard_pressure(elevation, conditions.sea_level_pressure)
    temperature = temperature_at_elevation(elevation, conditions.temperature,
                                           float(elevation[0]))
    density = np.asarray(AIR_DENSITY_MODELS[density_model](
        temperature, pressure, conditions.relative_humidity), dtype=float)
    headwind, crosswind = ride_wind(ride, conditions.wind_at_rider, conditions.wind_from)
    return density, np.asarray(headwind, dtype=float), np.asarray(crosswind, dtype=float)


def detect_laps(
    latitude,
    longitude,
    radius: float = LAP_RADIUS,
    start: tuple[float, float] | None = None,
) -> list[tuple[int, int]]:
    """Laps of a ride from its positions: each pass near the start point closes a lap.

    A pass is a stretch closer than `radius` to the start point, entered after the rider has
    been farther than 2·radius; its sample nearest the start marks the lap boundary. The part
    before the first and after the last boundary is left out.

    Parameters
    ----------
    latitude, longitude : positions [deg], length N.
    radius : capture radius around the start point [m] (common practice: larger than the
        GNSS horizontal error, ~5 m for a watch, Gløersen et al. 2018).
    start : (latitude, longitude) of the start/finish point [deg]; default the first sample.

    Returns
    -------
    list of (start, end) sample indices, one pair per lap.
    """
    latitude = np.asarray(latitude, dtype=float)
    longitude = np.asarray(longitude, dtype=float)
    if radius <= 0:
        raise InputError(f"lap radius must be positive, got {radius}")
    origin = start if start is not None else (float(latitude[0]), float(longitude[0]))
    east, north = local_position(latitude, longitude, origin)
    gap = np.hypot(east, north)
    near = gap < radius
    far = gap > 2.0 * radius
    boundaries = []
    armed = True
    i, n = 0, gap.size
    while i < n:
        if near[i] and armed:
            j = i
            while j < n and not far[j]:
                j += 1
            boundaries.append(i + int(np.argmin(np.where(near[i:j], gap[i:j], np.inf))))
            armed = False
            i = j
            continue
        if far[i]:
            armed = True
        i += 1
    if len(boundaries) < 2:
        raise InputError(
            f"no lap found: the ride never comes back within {radius:g} m of its start; "
            "give lap boundaries instead"
        )
    return list(zip(boundaries[:-1], boundaries[1:], strict=True))


def laps_from_bounds(bounds: Sequence[int], size: int) -> list[tuple[int, int]]:
    """Consecutive laps (start, end) from increasing boundary sample indices."""
    bounds = [int(b) for b in bounds]
    if len(bounds) < 2:
        raise InputError("give at least two lap boundaries")
    if any(b < 0 or b >= size for b in bounds) or any(
        b1 <= b0 for b0, b1 in zip(bounds[:-1], bounds[1:], strict=True)
    ):
        raise InputError(f"lap boundaries must increase and lie within the ride (0..{size - 1})")
    return list(zip(bounds[:-1], bounds[1:], strict=True))


def indices_at_times(ride: Ride, times: Sequence[float]) -> list[int]:
    """Sample index nearest to each time [s] (for lap boundaries given as times)."""
    times = np.asarray(times, dtype=float)
    if np.any(times < ride.time[0] - MAX_GAP) or np.any(times > ride.time[-1] + MAX_GAP):
        raise InputError(
            f"lap times must lie within the ride ({ride.time[0]:g}-{ride.time[-1]:g} s)"
        )
    return [int(np.argmin(np.abs(ride.time - t))) for t in times]
