"""A test ride as arrays: cleaning, direction of travel, and the air along it.

`make_ride` checks and cleans the samples of a recorded ride (time, speed, power, optional
elevation, positions, heading) into a `Ride`; `ride_air` gives the air density and wind
components on each piece (a pacing.weather.conditions.CourseAir), `ride_wind` the wind alone.
Its laps are marked by pacing.fieldtest.laps; the estimation of CdA and Crr from rides is in
pacing.fieldtest.estimate.

What cleaning did comes back as `Ride.notes`, notices (pacing.notices, codes "test-ride-…";
sentences in pacing.display.fieldtest_words): notes of what was filled or dropped (stops),
warnings of power dropouts (left out of the energy balance and counted) and long 0 W stretches.

Conventions: point arrays (one value per sample) have length N, piece arrays (between samples
i and i+1) length N-1. Laps are (start, end) pairs of sample indices.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.notices import Notice, note, warning
from pacing.physics.air import DEFAULT_AIR_DENSITY_MODEL
from pacing.physics.wind import wind_components
from pacing.weather.conditions import Conditions, CourseAir, density_along

STOP_SPEED = 1.0
"""Samples slower than this are a stop and are dropped [m/s]."""

MAX_GAP = 5.0
"""Largest time step accepted while moving [s]."""

MAX_POWER_FILL = 3.0
"""Missing power readings up to this long are filled by interpolation [s]."""

ZERO_POWER_DROPOUT = 10.0
"""Shortest stretch of 0 W with the speed holding that is warned of as a possible dropout [s]."""

DROPOUT_SPEED = 4.0
"""Speed from which a short run of 0 W between pedalling readings is a lost power signal, not
coasting [m/s] (our choice: well above walking pace, below the laps of any test ride)."""

DROPOUT_PEDALLING = 50.0
"""Power of the readings on either side of such a run that shows the rider pedalling [W]."""

STOPS_SHOWN = 5
"""Stopped stretches whose start the stops note gives; more are counted."""

EARTH_RADIUS = 6371008.8
"""Mean Earth radius (IUGG) for local positions [m]."""

MIN_SAMPLES = 10
"""Fewest samples of a test ride, and fewest moving ones."""

OPTIONAL_COLUMNS = ("elevation", "latitude", "longitude", "heading", "distance")
"""The optional series of a ride, in the order they are checked."""


@dataclass(frozen=True, eq=False)
class Ride:
    """A test ride as arrays, cleaned (see `make_ride`).

    Attributes
    ----------
    time : numpy.ndarray
        Time of each sample from the start [s], strictly increasing, length N.
    speed : numpy.ndarray
        Ground speed [m/s], length N.
    power : numpy.ndarray
        Crank power [W], length N.
    distance : numpy.ndarray
        Distance ridden [m], length N.
    elevation : numpy.ndarray or None
        Measured elevation [m], length N.
    latitude : numpy.ndarray or None
        Latitude [deg], length N.
    longitude : numpy.ndarray or None
        Longitude [deg], length N.
    heading : numpy.ndarray or None
        Direction of travel [deg clockwise from north], length N.
    pause : numpy.ndarray or None
        True for a piece that bridges a dropped stop, length N-1.
    notes : tuple of pacing.notices.Notice
        What reading and cleaning did (codes "test-ride-…"): notes, and warnings where the
        data may mislead (power dropouts).
    name : str
        Label.
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
    notes: tuple[Notice, ...] = ()
    name: str = "ride"

    @property
    def has_position(self) -> bool:
        """True when the ride has latitude and longitude."""
        return self.latitude is not None and self.longitude is not None


# ---------------------------------------------------------------------------------------------
# Cleaning
# ---------------------------------------------------------------------------------------------


def _array(values: ArrayLike, name: str, length: int | None = None) -> np.ndarray:
    """`values` as a 1-D float array of `length` values, or a one-line InputError."""
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numbers") from None
    if array.ndim != 1:
        raise InputError(f"{name} must be a 1-D series of numbers")
    if length is not None and array.size != length:
        raise InputError(f"{name} has {array.size} values, time has {length}")
    return array


def _runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(first index, index after the last) of each run of True in `mask`."""
    edges = np.flatnonzero(np.diff(np.concatenate(([0], mask.astype(np.int8), [0]))))
    return edges[::2], edges[1::2]


def _fill_short(values: np.ndarray, time: np.ndarray,
                longest: float) -> tuple[np.ndarray, float, float]:
    """(values with missing (NaN) runs interpolated, start [s] and span [s] of the longest
    run): the span runs from the reading before to the reading after; nothing is filled when
    it exceeds `longest` [s]. Some values must be present and some missing."""
    missing = np.isnan(values)
    starts, stops = _runs(missing)
    spans = time[np.minimum(stops, time.size - 1)] - time[np.maximum(starts - 1, 0)]
    worst = int(np.argmax(spans))
    at, span = float(time[starts[worst]]), float(spans[worst])
    if span > longest:
        return values, at, span
    good = ~missing
    return np.interp(time, time[good], values[good]), at, span


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


def _zero_power_holding_speed(time: np.ndarray, speed: np.ndarray, power: np.ndarray,
                              shortest: float = ZERO_POWER_DROPOUT) -> tuple[float, float] | None:
    """(start [s], duration [s]) of the first stretch of exactly 0 W lasting at least
    `shortest` seconds over which the speed does not fall, else None. Coasting slows a rider
    on level road; holding speed at 0 W for that long suggests a lost power signal (or a
    descent)."""
    for start, stop in zip(*_runs(power == 0), strict=True):
        last = stop - 1
        if time[last] - time[start] >= shortest and speed[last] >= speed[start] > 0:
            return float(time[start]), float(time[last] - time[start])
    return None


def zero_power_dropouts(time: np.ndarray, speed: np.ndarray, power: np.ndarray,
                        longest: float = MAX_POWER_FILL,
                        dropout_speed: float = DROPOUT_SPEED) -> np.ndarray:
    """Which 0 W readings are a lost power signal rather than the rider coasting.

    A run of 0 W readings (blanks within it included) is a dropout when the readings on
    either side both reach DROPOUT_PEDALLING and lie at most `longest` seconds apart, and the
    speed stays at least `dropout_speed` from the one to the other: a rider pedalling at speed
    who reads 0 W for a second or two between pedal strokes has lost the signal (head units
    log a missed reading as 0 W). Longer stretches of 0 W may be coasting.

    Parameters
    ----------
    time : numpy.ndarray
        Time of each sample [s], increasing, length N.
    speed : numpy.ndarray
        Ground speed [m/s], length N, finite.
    power : numpy.ndarray
        Power readings [W], length N (NaN for blanks).
    longest : float
        Longest span from the reading before to the reading after a run that counts [s].
    dropout_speed : float
        Slowest speed at which 0 W is taken for a dropout [m/s]; inf turns the test off.

    Returns
    -------
    numpy.ndarray
        True for each 0 W reading taken for a dropout (bool, length N).
    """
    n = power.size
    lost = (power == 0) | np.isnan(power)
    starts, stops = _runs(lost)
    inside = (starts > 0) & (stops < n)
    starts, stops = starts[inside], stops[inside]
    before, after = starts - 1, stops
    slow = np.concatenate(([0], np.cumsum(speed < dropout_speed)))
    dropout = ((time[after] - time[before] <= longest)
               & (np.minimum(power[before], power[after]) >= DROPOUT_PEDALLING)
               & (slow[after + 1] - slow[before] == 0))
    marks = np.zeros(n + 1, dtype=int)
    np.add.at(marks, starts[dropout], 1)
    np.add.at(marks, stops[dropout], -1)
    return (np.cumsum(marks[:n]) > 0) & (power == 0)


def _checked_time(values: ArrayLike) -> np.ndarray:
    """The time column [s]: at least MIN_SAMPLES finite values, strictly increasing."""
    time = _array(values, "time")
    if time.size < MIN_SAMPLES:
        raise InputError(f"a test ride needs at least {MIN_SAMPLES} samples, got {time.size}")
    if not np.all(np.isfinite(time)):
        raise InputError("time has missing or non-numeric values")
    steps = np.diff(time)
    if np.any(steps <= 0):
        i = int(np.argmax(steps <= 0)) + 1
        raise InputError(
            f"time does not increase at sample {i + 1} (t = {time[i]:g} s): sort the file or "
            "remove repeated rows"
        )
    return time


def _cleaned_speed(speed: np.ndarray, time: np.ndarray, longest: float,
                   notes: list[Notice]) -> np.ndarray:
    """Speed [m/s] with gaps up to `longest` [s] filled (noted); refuses longer gaps and
    negative or non-finite values."""
    if np.isnan(speed).all():
        raise InputError("speed has no readings: every value is blank")
    if np.isnan(speed).any():
        speed, at, worst = _fill_short(speed, time, longest)
        if np.isnan(speed).any():
            raise InputError(f"speed is missing for {worst:g} s from t = {at:g} s")
        notes.append(note("test-ride-speed-filled", duration_s=float(worst)))
    problem = _first_bad_sample(speed, time, "speed", "m/s")
    if problem:
        raise InputError(problem)
    return speed


def _cleaned_power(power: np.ndarray, time: np.ndarray, longest: float, zeros: np.ndarray,
                   dropout_speed: float, notes: list[Notice]) -> np.ndarray:
    """Power [W] with dropouts (blank readings, and the 0 W readings marked in `zeros`) up to
    `longest` [s] bridged by interpolation between the real readings on either side (a
    warning counts them, `dropout_speed` [m/s] for its words); refuses longer gaps and
    negative or non-finite values."""
    power = np.where(zeros, np.nan, power)
    if np.isnan(power).all():
        raise InputError("power has no readings: every value is blank")
    if np.isnan(power).any():
        filled, at, worst = _fill_short(power, time, longest)
        if np.isnan(filled).any():
            raise InputError(
                f"power is missing for {worst:g} s from t = {at:g} s (power-meter dropout): "
                "cut that part out or mark laps around it"
            )
        count = int(np.isnan(power).sum())
        notes.append(warning("test-ride-power-dropouts", count=count,
                             zero_count=int(zeros.sum()), share=count / power.size,
                             longest_s=float(worst), speed_mps=float(dropout_speed)))
        power = filled
    problem = _first_bad_sample(power, time, "power", "W")
    if problem:
        raise InputError(problem)
    return power


def _optional_column(values: ArrayLike | None, label: str, time: np.ndarray,
                     notes: list[Notice]) -> np.ndarray | None:
    """An optional column: None when absent or empty (noted), gaps filled by interpolation
    (noted)."""
    if values is None:
        return None
    array = _array(values, label, time.size)
    if np.isnan(array).all():
        notes.append(note("test-ride-column-empty", label=label))
        return None
    if np.isnan(array).any():
        good = ~np.isnan(array)
        array = np.interp(time, time[good], array[good])
        notes.append(note("test-ride-column-filled", label=label, count=int((~good).sum())))
    return array


def _check_positions(latitude: np.ndarray | None, longitude: np.ndarray | None) -> None:
    """Refuse half a position, or one outside ±90° latitude and ±180° longitude."""
    if (latitude is None) != (longitude is None):
        raise InputError("give both latitude and longitude, or neither")
    if latitude is not None and longitude is not None and (
        np.any(np.abs(latitude) > 90) or np.any(np.abs(longitude) > 180)
    ):
        raise InputError("latitude must be within ±90° and longitude within ±180°")


def _stops_note(time: np.ndarray, moving: np.ndarray, stop_speed: float) -> Notice:
    """The note of the stopped stretches: samples dropped, stretches, their total and longest
    time [s] and the start of the first STOPS_SHOWN [s] (a stretch lasts from its first slow
    sample to the next moving one, or to its last sample at the end of the ride)."""
    starts, stops = _runs(~moving)
    ends = time[np.minimum(stops, time.size - 1)]
    lengths = ends - time[starts]
    return note("test-ride-stops-dropped", count=int((~moving).sum()),
                speed_mps=float(stop_speed), stretch_count=int(starts.size),
                duration_s=float(lengths.sum()), longest_s=float(lengths.max()),
                times_s=tuple(float(t) for t in time[starts[:STOPS_SHOWN]]))


def _moving_samples(time: np.ndarray, speed: np.ndarray, stop_speed: float, max_gap: float,
                    notes: list[Notice]) -> tuple[np.ndarray, np.ndarray]:
    """(indices of the samples kept, pause flag of each kept piece): stops are dropped
    (noted); a longer step than `max_gap` [s] while moving is refused."""
    moving = speed >= stop_speed
    if moving.sum() < MIN_SAMPLES:
        raise InputError(f"fewer than {MIN_SAMPLES} samples faster than {stop_speed:g} m/s: "
                         "nothing to fit")
    if not moving.all():
        notes.append(_stops_note(time, moving, stop_speed))
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
    return index, pause


def make_ride(
    time: ArrayLike,
    speed: ArrayLike,
    power: ArrayLike,
    elevation: ArrayLike | None = None,
    latitude: ArrayLike | None = None,
    longitude: ArrayLike | None = None,
    heading: ArrayLike | None = None,
    distance: ArrayLike | None = None,
    name: str = "ride",
    notes: Sequence[Notice] = (),
    stop_speed: float = STOP_SPEED,
    max_gap: float = MAX_GAP,
    max_power_fill: float = MAX_POWER_FILL,
    dropout_speed: float = DROPOUT_SPEED,
) -> Ride:
    """Check and clean the arrays of a test ride.

    Power dropouts are left out of the energy balance: blank power readings (NaN), and short
    runs of 0 W while the rider pedals at speed (`zero_power_dropouts`), are not taken as
    real readings; over up to `max_power_fill` seconds the power is bridged by interpolation
    between the real readings on either side, and a warning counts them (count, share of the
    samples, longest gap). Longer gaps in power are an error; a longer stretch of 0 W over
    which the speed holds is warned of as a possible dropout. Missing speed readings up to
    `max_power_fill` seconds are interpolated (noted). Samples slower than `stop_speed` are
    dropped with a note giving the stopped stretches (the pieces that bridge them become
    pauses). A time step longer than `max_gap` while moving is an error (a recording gap
    breaks the energy balance).

    Parameters
    ----------
    time : array_like
        Time of each sample [s], length N ≥ 10, strictly increasing.
    speed : array_like
        Ground speed [m/s], length N.
    power : array_like
        Crank power [W], length N.
    elevation : array_like or None
        Elevation [m], length N.
    latitude : array_like or None
        Latitude [deg], length N.
    longitude : array_like or None
        Longitude [deg], length N.
    heading : array_like or None
        Direction of travel [deg clockwise from north], length N.
    distance : array_like or None
        Distance ridden [m], length N; None integrates the speed.
    name : str
        Label of the ride.
    notes : sequence of pacing.notices.Notice
        Notes of reading the file, kept ahead of those of cleaning.
    stop_speed : float
        Samples slower than this are dropped [m/s].
    max_gap : float
        Largest time step accepted while moving [s].
    max_power_fill : float
        Longest gap in speed or power filled by interpolation [s].
    dropout_speed : float
        Slowest speed at which a short run of 0 W between pedalling readings is a dropout
        [m/s] (inf: 0 W is always taken as a real reading).

    Returns
    -------
    Ride
        The moving samples, with pauses where stops were dropped and notes of what was done.

    Raises
    ------
    InputError
        With a one-line message naming the problem and where it is.
    """
    seconds = _checked_time(time)
    n = seconds.size
    speed_values = _array(speed, "speed", n)
    power_values = _array(power, "power", n)
    cleaning = list(notes)
    speed_values = _cleaned_speed(speed_values, seconds, max_power_fill, cleaning)
    zeros = zero_power_dropouts(seconds, speed_values, power_values, max_power_fill,
                                dropout_speed)
    power_values = _cleaned_power(power_values, seconds, max_power_fill, zeros, dropout_speed,
                                  cleaning)
    suspect = _zero_power_holding_speed(seconds, speed_values, power_values)
    if suspect is not None:
        cleaning.append(warning("test-ride-zero-power", start_s=suspect[0],
                                duration_s=suspect[1]))
    given = dict(zip(OPTIONAL_COLUMNS, (elevation, latitude, longitude, heading, distance),
                     strict=True))
    columns = {label: _optional_column(given[label], label, seconds, cleaning)
               for label in OPTIONAL_COLUMNS}
    _check_positions(columns["latitude"], columns["longitude"])
    index, pause = _moving_samples(seconds, speed_values, stop_speed, max_gap, cleaning)
    seconds, speed_values, power_values = seconds[index], speed_values[index], power_values[index]
    kept = {label: None if values is None else values[index]
            for label, values in columns.items()}
    ridden = kept["distance"]
    if ridden is None:
        step = 0.5 * (speed_values[1:] + speed_values[:-1]) * np.diff(seconds)
        ridden = np.concatenate(([0.0], np.cumsum(np.where(pause, 0.0, step))))
    return Ride(time=seconds, speed=speed_values, power=power_values, distance=ridden,
                elevation=kept["elevation"], latitude=kept["latitude"],
                longitude=kept["longitude"], heading=kept["heading"], pause=pause,
                notes=tuple(cleaning), name=name)


# ---------------------------------------------------------------------------------------------
# Geometry: positions, headings, air
# ---------------------------------------------------------------------------------------------


def local_position(latitude: ArrayLike, longitude: ArrayLike,
                   origin: tuple[float, float]) -> tuple[np.ndarray, np.ndarray]:
    """East and north offsets from an origin on a local flat map (equirectangular).

    Parameters
    ----------
    latitude : array_like
        Latitude [deg].
    longitude : array_like
        Longitude [deg].
    origin : tuple of float
        (latitude, longitude) of the origin [deg].

    Returns
    -------
    tuple of numpy.ndarray
        (east [m], north [m]), on a sphere of EARTH_RADIUS.
    """
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

    Parameters
    ----------
    ride : Ride
        The cleaned ride, with a heading column or positions.

    Returns
    -------
    numpy.ndarray
        Heading of each piece [deg], 0-360.

    Raises
    ------
    InputError
        When the ride has neither headings nor positions, or its positions never change.
    """
    if ride.heading is not None:
        radians = np.radians(ride.heading)
        east = np.sin(radians[1:]) + np.sin(radians[:-1])
        north = np.cos(radians[1:]) + np.cos(radians[:-1])
        return np.degrees(np.arctan2(east, north)) % 360.0
    latitude, longitude = ride.latitude, ride.longitude
    if latitude is None or longitude is None:
        raise InputError("wind needs the direction of travel: the ride has no heading or "
                         "latitude/longitude columns")
    east, north = local_position(latitude, longitude, (float(latitude[0]), float(longitude[0])))
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
    """Headwind and crosswind on each piece of a ride for a steady wind, length N-1.

    Parameters
    ----------
    ride : Ride
        The cleaned ride (headings or positions are needed unless the air is still).
    wind_speed : float
        Wind at rider height [m/s] (reduce a 10 m report with pacing.physics.wind).
    wind_from : float
        Direction the wind blows from [deg clockwise from north].

    Returns
    -------
    tuple of numpy.ndarray
        (headwind [m/s], crosswind [m/s]) per piece (pacing.physics.wind.wind_components).
    """
    if wind_speed == 0:
        zeros = np.zeros(ride.time.size - 1)
        return zeros, zeros.copy()
    return wind_components(piece_heading(ride), wind_from, wind_speed)


def ride_air(ride: Ride, conditions: Conditions,
             density_model: str = DEFAULT_AIR_DENSITY_MODEL) -> CourseAir:
    """Air density, headwind and crosswind on each piece of a ride.

    Pressure from the sea-level pressure and the ride's elevation (ICAO standard atmosphere,
    pacing.physics.atmosphere; sea level when the ride has no elevation), temperature given at
    the first piece's elevation with the standard lapse rate, humid-air density by CIPM-2007
    (pacing.physics.air); wind
    reduced to rider height by the log profile and split by the direction of travel
    (pacing.physics.wind).

    Parameters
    ----------
    ride : Ride
        The cleaned ride.
    conditions : pacing.weather.conditions.Conditions
        The air and wind of the test day.
    density_model : str
        Key of pacing.physics.air.AIR_DENSITY_MODELS (default CIPM-2007).

    Returns
    -------
    pacing.weather.conditions.CourseAir
        density [kg/m³], headwind and crosswind [m/s], each of length N-1.

    References
    ----------
    Picard, A., Davis, R.S., Gläser, M. & Fujii, K. (2008). Revised formula for the density of
    moist air (CIPM-2007). Metrologia 45:149-155. doi:10.1088/0026-1394/45/2/004
    """
    if ride.elevation is None:
        elevation = np.zeros(ride.time.size - 1)
    else:
        elevation = 0.5 * (ride.elevation[1:] + ride.elevation[:-1])
    density = density_along(elevation, float(elevation[0]), conditions, density_model)
    headwind, crosswind = ride_wind(ride, conditions.wind_at_rider, conditions.wind_from)
    return CourseAir(density=density, headwind=np.asarray(headwind, dtype=float),
                     crosswind=np.asarray(crosswind, dtype=float))
