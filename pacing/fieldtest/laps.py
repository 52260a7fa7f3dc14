"""The laps of a test ride: finding them, and what each contributes to the fit.

`detect_laps` finds laps from the positions (each pass near the start point closes one),
`laps_from_bounds` and `indices_at_times` take them as marked by sample or by time;
`build_laps` turns each lap of a position test into `LapTerms`: the cumulative
virtual-elevation terms along it (Chung; pacing.fieldtest.virtual_elevation), its distance, its
measured or known elevation and its regression row (Lim et al. 2011), from which each method
makes its least-squares columns (pacing.fieldtest.fit, pacing.fieldtest.methods).

Conventions: point arrays have length N, piece arrays N-1, laps are (start, end) sample index
pairs.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
Gløersen, Ø., Kocbach, J. & Gilgien, M. (2018). Tracking performance in endurance racing
sports: evaluation of the accuracy offered by three commercial GNSS receivers aimed at the
sports market. Front Physiol 9:1425. doi:10.3389/fphys.2018.01425
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import STANDARD_GRAVITY
from pacing.errors import InputError
from pacing.fieldtest.ride import MAX_GAP, Ride, local_position
from pacing.fieldtest.virtual_elevation import elevation_terms, unit_rider
from pacing.physics.cycling import Rider, aerodynamic_force, bearing_force, rolling_force

if TYPE_CHECKING:  # both modules import this one
    from pacing.fieldtest.estimate import PositionTest
    from pacing.fieldtest.methods import FieldTestMethod

LAP_RADIUS = 20.0
"""A lap ends when the rider passes within this distance of the start point [m]."""


# ---------------------------------------------------------------------------------------------
# Finding the laps
# ---------------------------------------------------------------------------------------------


def detect_laps(
    latitude: ArrayLike,
    longitude: ArrayLike,
    radius: float = LAP_RADIUS,
    start: tuple[float, float] | None = None,
) -> list[tuple[int, int]]:
    """Laps of a ride from its positions: each pass near the start point closes a lap.

    A pass is a stretch closer than `radius` to the start point, entered after the rider has
    been farther than 2·radius; its sample nearest the start marks the lap boundary. The part
    before the first and after the last boundary is left out.

    Parameters
    ----------
    latitude : array_like
        Latitude of each sample [deg], length N.
    longitude : array_like
        Longitude of each sample [deg], length N.
    radius : float
        Capture radius around the start point [m] (common practice: larger than the GNSS
        horizontal error, ~5 m for a watch, Gløersen et al. 2018).
    start : tuple of float or None
        (latitude, longitude) of the start/finish point [deg]; default the first sample.

    Returns
    -------
    list of (int, int)
        (start, end) sample indices, one pair per lap.

    References
    ----------
    Gløersen, Ø., Kocbach, J. & Gilgien, M. (2018). Tracking performance in endurance racing
    sports: evaluation of the accuracy offered by three commercial GNSS receivers aimed at the
    sports market. Front Physiol 9:1425. doi:10.3389/fphys.2018.01425
    """
    latitude = np.asarray(latitude, dtype=float)
    longitude = np.asarray(longitude, dtype=float)
    if radius <= 0:
        raise InputError(f"lap radius must be positive, got {radius}")
    origin = start if start is not None else (float(latitude[0]), float(longitude[0]))
    east, north = local_position(latitude, longitude, origin)
    boundaries = _pass_boundaries(np.hypot(east, north), radius)
    if len(boundaries) < 2:
        raise InputError(
            f"no lap found: the ride never comes back within {radius:g} m of its start; "
            "give lap boundaries instead"
        )
    return list(zip(boundaries[:-1], boundaries[1:], strict=True))


def _pass_boundaries(gap: np.ndarray, radius: float) -> list[int]:
    """Sample nearest the start point of each pass within `radius` [m] (see `detect_laps`);
    `gap` is each sample's distance from the start point [m]."""
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
    return boundaries


def laps_from_bounds(bounds: Sequence[int], size: int) -> list[tuple[int, int]]:
    """Consecutive laps from increasing boundary sample indices.

    Parameters
    ----------
    bounds : sequence of int
        Sample index of each lap boundary, increasing, at least two.
    size : int
        Number of samples of the ride.

    Returns
    -------
    list of (int, int)
        (start, end) sample indices of each lap.
    """
    marks = [int(b) for b in bounds]
    if len(marks) < 2:
        raise InputError("give at least two lap boundaries")
    if any(b < 0 or b >= size for b in marks) or any(
        b1 <= b0 for b0, b1 in zip(marks[:-1], marks[1:], strict=True)
    ):
        raise InputError(f"lap boundaries must increase and lie within the ride (0..{size - 1})")
    return list(zip(marks[:-1], marks[1:], strict=True))


def indices_at_times(ride: Ride, times: Sequence[float]) -> list[int]:
    """Sample index nearest to each time, for lap boundaries given as times.

    Parameters
    ----------
    ride : Ride
        The cleaned ride.
    times : sequence of float
        Times from the ride start [s], within MAX_GAP of the ride.

    Returns
    -------
    list of int
        Sample index nearest to each time.
    """
    wanted = np.asarray(times, dtype=float)
    if np.any(wanted < ride.time[0] - MAX_GAP) or np.any(wanted > ride.time[-1] + MAX_GAP):
        raise InputError(
            f"lap times must lie within the ride ({ride.time[0]:g}-{ride.time[-1]:g} s)"
        )
    return [int(np.argmin(np.abs(ride.time - t))) for t in wanted]


@dataclass(frozen=True, eq=False)
class LapTerms:
    """One lap of one position, ready for the fit.

    Attributes
    ----------
    group : int
        Index of the position.
    start : int
        Sample index of the lap start.
    end : int
        Sample index of the lap end.
    time : numpy.ndarray
        Time from the lap start, points [s].
    distance : numpy.ndarray
        Distance from the lap start, points [m].
    known : numpy.ndarray
        Cumulative known rise from the lap start, points [m]
        (pacing.fieldtest.virtual_elevation.ElevationTerms).
    drag : numpy.ndarray
        Cumulative rise per unit CdA from the lap start, points [m/m²].
    rolling : numpy.ndarray
        Cumulative rise per unit Crr from the lap start, points [m].
    measured : numpy.ndarray or None
        Measured elevation relative to the lap start, points [m].
    reference : numpy.ndarray or None
        Methods that need elevation: the known elevation relative to the lap start, points
        [m]; else None.
    start_elevation : float
        Measured elevation at the lap start [m] (0 when unknown).
    run : numpy.ndarray
        Regression row (y [N], x_drag [N/m²], x_rolling [N]), see `regression_row`.
    fraction : numpy.ndarray
        Distance over the lap length, points [-].
    """

    group: int
    start: int
    end: int
    time: np.ndarray
    distance: np.ndarray
    known: np.ndarray
    drag: np.ndarray
    rolling: np.ndarray
    measured: np.ndarray | None
    reference: np.ndarray | None
    start_elevation: float
    run: np.ndarray
    fraction: np.ndarray


# ---------------------------------------------------------------------------------------------
# The laps of a position test and their terms
# ---------------------------------------------------------------------------------------------


def resolve_laps(test: PositionTest, radius: float) -> list[tuple[int, int]]:
    """The test's laps: as marked, else found from the positions, else the whole ride.

    Parameters
    ----------
    test : pacing.fieldtest.estimate.PositionTest
        The position's ride and its marked laps (or None).
    radius : float
        Capture radius of lap detection around the start point [m].

    Returns
    -------
    list of (int, int)
        (start, end) sample indices of each lap; marked laps are checked to lie inside the
        ride.
    """
    ride = test.ride
    n = ride.time.size
    if test.laps is not None:
        laps = [(int(a), int(b)) for a, b in test.laps]
        for a, b in laps:
            if not 0 <= a < b < n:
                raise InputError(
                    f"lap ({a}, {b}) of {test.label!r} is not inside the ride (0..{n - 1})"
                )
        if not laps:
            raise InputError(f"position {test.label!r} has no laps")
        return laps
    if ride.latitude is not None and ride.longitude is not None:
        return detect_laps(ride.latitude, ride.longitude, radius)
    return [(0, n - 1)]


def _is_closed(ride: Ride, start: int, end: int, radius: float) -> bool:
    """True when the lap ends within `radius` [m] of where it started (needs positions)."""
    if ride.latitude is None or ride.longitude is None:
        return False
    east, north = local_position(ride.latitude[[end]], ride.longitude[[end]],
                                 (float(ride.latitude[start]), float(ride.longitude[start])))
    return bool(np.hypot(east, north)[0] < radius)


def position_air(test: PositionTest) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Air density, headwind and crosswind of a position test on every piece of its ride.

    Parameters
    ----------
    test : pacing.fieldtest.estimate.PositionTest
        Its air_density [kg/m³], headwind and crosswind [m/s], scalars or per piece.

    Returns
    -------
    tuple of numpy.ndarray
        (density [kg/m³], headwind [m/s], crosswind [m/s]), each of length N-1.

    Raises
    ------
    InputError
        When a density is not between 0 and 2 kg/m³.
    """
    pieces = test.ride.time.size - 1
    density = np.broadcast_to(np.asarray(test.air_density, dtype=float), (pieces,))
    if np.any(~np.isfinite(density)) or np.any(density <= 0) or np.any(density > 2.0):
        raise InputError("air density must be between 0 and 2 kg/m³")
    head = np.broadcast_to(np.asarray(test.headwind, dtype=float), (pieces,))
    cross = np.broadcast_to(np.asarray(test.crosswind, dtype=float), (pieces,))
    return density, head, cross


def lap_distance(ride: Ride, start: int, end: int) -> np.ndarray:
    """Distance ridden from the lap start, by the trapezoid rule on the speed [m], points.

    Parameters
    ----------
    ride : pacing.fieldtest.ride.Ride
        The cleaned ride (pauses add no distance).
    start : int
        Sample index of the lap start.
    end : int
        Sample index of the lap end.

    Returns
    -------
    numpy.ndarray
        Distance at each sample of the lap [m], starting at 0.
    """
    step = 0.5 * (ride.speed[start + 1:end + 1] + ride.speed[start:end]) * np.diff(
        ride.time[start:end + 1])
    if ride.pause is not None:
        step = np.where(ride.pause[start:end], 0.0, step)
    return np.concatenate(([0.0], np.cumsum(step)))


def lap_reference(method: FieldTestMethod, profile: tuple[np.ndarray, np.ndarray] | None,
                  distance: np.ndarray, measured: np.ndarray | None) -> np.ndarray | None:
    """What a lap's virtual elevation must follow, for the methods that need elevation.

    Parameters
    ----------
    method : pacing.fieldtest.methods.FieldTestMethod
        The method (only `needs_elevation` is read).
    profile : tuple of numpy.ndarray or None
        Known elevation: (distance along the lap [m], elevation [m]); None for the ride's own
        elevation.
    distance : numpy.ndarray
        Distance from the lap start, points [m].
    measured : numpy.ndarray or None
        The ride's elevation relative to the lap start, points [m].

    Returns
    -------
    numpy.ndarray or None
        Elevation relative to the lap start [m], points; None for methods that need none.
    """
    if not method.needs_elevation:
        return None
    if profile is not None:
        along, height = profile
        lap_height = np.interp(distance, along, height)
        return lap_height - lap_height[0]
    if measured is not None:
        return measured
    raise InputError(f"method {method.name!r} needs elevation data or a known profile; "
                     "use method 'loop' instead")


def build_laps(test: PositionTest, group: int, rider: Rider, radius: float,
               profile: tuple[np.ndarray, np.ndarray] | None,
               method: FieldTestMethod) -> list[LapTerms]:
    """The laps of one position with their virtual-elevation sums and regression rows.

    Parameters
    ----------
    test : pacing.fieldtest.estimate.PositionTest
        The position's ride, air and laps.
    group : int
        Index of the position.
    rider : pacing.physics.cycling.Rider
        Mass [kg], drivetrain efficiency [-], wheel and bearing parameters.
    radius : float
        Lap capture radius [m].
    profile : tuple of numpy.ndarray or None
        Known elevation (distance along the lap [m], elevation [m]) for methods that need
        elevation; None for the ride's elevation column.
    method : pacing.fieldtest.methods.FieldTestMethod
        The method of the fit.

    Returns
    -------
    list of LapTerms
        One per lap, in ride order.

    References
    ----------
    Chung, R. Estimating CdA with a power meter (virtual elevation).
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860 (regression rows).
    """
    ride = test.ride
    density, head, cross = position_air(test)
    terms = elevation_terms(ride.time, ride.speed, ride.power, density, rider, head, cross,
                            ride.pause)
    laps = []
    for start, end in resolve_laps(test, radius):
        pieces = slice(start, end)
        known, drag, rolling = (np.concatenate(([0.0], np.cumsum(part[pieces])))
                                for part in (terms.known, terms.per_drag_area,
                                             terms.per_rolling_coefficient))
        distance = lap_distance(ride, start, end)
        if distance[-1] <= 0:
            raise InputError(f"lap ({start}, {end}) of {test.label!r} covers no distance")
        measured = None
        start_elevation = 0.0
        if ride.elevation is not None:
            start_elevation = float(ride.elevation[start])
            measured = ride.elevation[start:end + 1] - start_elevation
        reference = lap_reference(method, profile, distance, measured)
        # regression row (Lim et al. 2011): a lap that returns to its start rises by 0, others
        # by their measured rise
        rise = 0.0
        if measured is not None and not _is_closed(ride, start, end, radius):
            rise = float(measured[-1])
        run = regression_row(ride, start, end, distance[-1], rise, density, head, cross, rider)
        laps.append(LapTerms(group, start, end, ride.time[start:end + 1] - ride.time[start],
                             distance, known, drag, rolling, measured, reference,
                             start_elevation, run, distance / distance[-1]))
    return laps


def regression_row(ride: Ride, start: int, end: int, length: float, rise: float,
                   density: np.ndarray, head: np.ndarray, cross: np.ndarray,
                   rider: Rider) -> np.ndarray:
    """One run of the regression: (y, x_drag, x_rolling) with y = CdA·x_drag + Crr·x_rolling.

        y = η·P̄/v̄ − (a + b·v̄) − F_w·q̄ − m·g·rise/length − (m + I/r²)·(v_end − v_start)/T
        x_drag = q̄ = ½·ρ̄·V̄·v̄_a (mean speed and mean wind),  x_rolling = m·g

    P̄, v̄ are time means over the run (Lim et al. 2011 use the means of constant-speed runs).

    Parameters
    ----------
    ride : pacing.fieldtest.ride.Ride
        The cleaned ride.
    start : int
        Sample index where the run starts.
    end : int
        Sample index where the run ends.
    length : float
        Distance of the run [m].
    rise : float
        Rise of the run [m].
    density : numpy.ndarray
        Air density per piece [kg/m³].
    head : numpy.ndarray
        Headwind per piece [m/s].
    cross : numpy.ndarray
        Crosswind per piece [m/s].
    rider : pacing.physics.cycling.Rider
        Mass [kg], drivetrain efficiency [-], bearing and wheel parameters.

    Returns
    -------
    numpy.ndarray
        [y [N], x_drag [N/m²], x_rolling [N]].

    References
    ----------
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860.
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    pieces = slice(start, end)
    duration = np.diff(ride.time[start:end + 1])
    if ride.pause is not None:
        duration = np.where(ride.pause[pieces], 0.0, duration)
    total = float(duration.sum())
    mean_power = float(np.sum(0.5 * (ride.power[start + 1:end + 1] + ride.power[start:end])
                              * duration) / total)
    mean_speed = np.asarray(length / total)

    def mean(values: np.ndarray) -> np.ndarray:
        return np.asarray(float(np.sum(values[pieces] * duration) / total))

    unit = unit_rider(rider)
    q = float(aerodynamic_force(mean_speed, mean(density), unit, mean(head), mean(cross)))
    q_wheel = float(aerodynamic_force(mean_speed, mean(density),
                                      dataclasses.replace(unit, yaw_drag_table=None),
                                      mean(head), mean(cross)))
    weight = rider.mass * STANDARD_GRAVITY
    y = (rider.drivetrain_efficiency * mean_power / mean_speed
         - float(bearing_force(mean_speed, rider)) - rider.wheel_drag_area * q_wheel
         - weight * rise / length
         - rider.effective_mass * (ride.speed[end] - ride.speed[start]) / total)
    return np.array([y, q, float(rolling_force(np.zeros(()), unit))])
