"""Least squares of CdA and Crr over the laps of test rides, and its bootstrap.

The machinery behind pacing.fieldtest.estimate.estimate_drag: each lap's virtual-elevation sums
(Chung) or regression row (Lim et al. 2011), the normal equations of a fit with one CdA per
position and one common Crr (or Crr held), their scaled solution, the correlation of the two
estimates, the change of CdA per unit of held Crr, and a bootstrap over laps (Efron &
Tibshirani 1993). Every fit is linear: y = CdA·a + Crr·b, with a the drag column and b the
rolling column of a lap.

Per lap the three columns have the shape (laps, G): G = 1 for methods "loop" (the lap's total
rise, which loop closure sets to 0) and "regression" (one row of lap means), G = GRID_POINTS for
method "profile" (the virtual elevation on a common grid of lap-distance fraction, centred per
lap, since each lap keeps its own offset). Conventions as in pacing.fieldtest.estimate: point
arrays have length N, piece arrays N-1, laps are (start, end) sample index pairs.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from pacing.constants import STANDARD_GRAVITY
from pacing.errors import InputError
from pacing.fieldtest.ride import Ride, detect_laps, local_position
from pacing.fieldtest.virtual_elevation import elevation_terms, unit_rider
from pacing.physics.cycling import Rider, aerodynamic_force, bearing_force, rolling_force

if TYPE_CHECKING:  # pacing.fieldtest.estimate imports this module
    from pacing.fieldtest.estimate import PositionTest


GRID_POINTS = 200
"""Points per lap on the common grid of lap-distance fraction."""

Columns = tuple[np.ndarray, np.ndarray, np.ndarray]
"""One position's least-squares columns (y, drag a, rolling b), each of shape (laps, G)."""


@dataclass(frozen=True, eq=False)
class LapTerms:
    """One lap of one position, ready for the fit.

    group : index of the position; start, end : sample indices;
    time, distance : from the lap start, points [s], [m];
    known, drag, rolling : cumulative sums of the virtual-elevation terms from the lap start,
        points (pacing.fieldtest.virtual_elevation.ElevationTerms: known rise [m], rise per unit CdA
        [m/m²], rise per unit Crr [m]);
    measured : measured elevation relative to the lap start, points [m], or None;
    reference : method "profile": known elevation relative to the lap start [m], else None;
    start_elevation : measured elevation at the lap start [m] (0 when unknown);
    run : regression row (y [N], x_drag [N/m²], x_rolling [N]), see `regression_row`;
    fraction : distance / lap length, points [-].
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


def resolve_laps(test: PositionTest, radius: float) -> list[tuple[int, int]]:
    """The test's laps: as marked (checked to lie inside the ride), else detected from the
    positions within `radius` [m], else the whole ride as one lap."""
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
    if ride.has_position:
        return detect_laps(ride.latitude, ride.longitude, radius)
    return [(0, n - 1)]


def _is_closed(ride: Ride, start: int, end: int, radius: float) -> bool:
    """True when the lap ends within `radius` of where it started (needs positions)."""
    if not ride.has_position:
        return False
    east, north = local_position(ride.latitude[[end]], ride.longitude[[end]],
                                  (float(ride.latitude[start]), float(ride.longitude[start])))
    return bool(np.hypot(east, north)[0] < radius)


def build_laps(test: PositionTest, group: int, rider: Rider, radius: float,
               profile: tuple[np.ndarray, np.ndarray] | None, method: str) -> list[LapTerms]:
    """The laps of one position with their virtual-elevation sums and regression rows.

    Parameters
    ----------
    test : pacing.fieldtest.estimate.PositionTest; group : its index; rider : mass [kg], drivetrain
    efficiency and wheel parameters; radius : lap capture radius [m]; profile : known elevation
    (distance along the lap [m], elevation [m]) for method "profile", or None for the ride's
    elevation column; method : "loop", "profile" or "regression".
    """
    ride = test.ride
    n = ride.time.size
    density = np.broadcast_to(np.asarray(test.air_density, dtype=float), (n - 1,))
    if np.any(~np.isfinite(density)) or np.any(density <= 0) or np.any(density > 2.0):
        raise InputError("air density must be between 0 and 2 kg/m³")
    head = np.broadcast_to(np.asarray(test.headwind, dtype=float), (n - 1,))
    cross = np.broadcast_to(np.asarray(test.crosswind, dtype=float), (n - 1,))
    terms = elevation_terms(ride.time, ride.speed, ride.power, density, rider, head, cross,
                            ride.pause)
    laps = []
    for start, end in resolve_laps(test, radius):
        pieces = slice(start, end)
        cumulative = [np.concatenate(([0.0], np.cumsum(part[pieces])))
                      for part in (terms.known, terms.per_drag_area,
                                   terms.per_rolling_coefficient)]
        step = 0.5 * (ride.speed[start + 1:end + 1] + ride.speed[start:end]) * np.diff(
            ride.time[start:end + 1])
        if ride.pause is not None:
            step = np.where(ride.pause[pieces], 0.0, step)
        distance = np.concatenate(([0.0], np.cumsum(step)))
        if distance[-1] <= 0:
            raise InputError(f"lap ({start}, {end}) of {test.label!r} covers no distance")
        measured = None
        start_elevation = 0.0
        if ride.elevation is not None:
            start_elevation = float(ride.elevation[start])
            measured = ride.elevation[start:end + 1] - start_elevation
        reference = None
        if method == "profile":
            if profile is not None:
                along, height = profile
                lap_height = np.interp(distance, along, height)
                reference = lap_height - lap_height[0]
            elif measured is not None:
                reference = measured
            else:
                raise InputError("method 'profile' needs elevation data or a known profile; "
                                 "use method 'loop' instead")
        # regression row (Lim et al. 2011): lap means of power and speed; a lap that returns
        # to its start rises by 0, others by their measured rise
        rise = 0.0
        if measured is not None and not _is_closed(ride, start, end, radius):
            rise = float(measured[-1])
        run = regression_row(ride, start, end, distance[-1], rise, density, head, cross, rider)
        laps.append(LapTerms(group, start, end, ride.time[start:end + 1] - ride.time[start],
                             distance, *cumulative, measured, reference, start_elevation,
                             run, distance / distance[-1]))
    return laps


def regression_row(ride: Ride, start: int, end: int, length: float, rise: float, density,
                   head, cross, rider: Rider) -> np.ndarray:
    """One run of the regression: (y, x_drag, x_rolling) with y = CdA·x_drag + Crr·x_rolling.

        y = η·P̄/v̄ − (a + b·v̄) − F_w·q̄ − m·g·rise/length − (m + I/r²)·(v_end − v_start)/T
        x_drag = q̄ = ½·ρ̄·V̄·v̄_a (mean speed and mean wind),  x_rolling = m·g

    P̄, v̄ are time means over the run (Lim et al. 2011 use the means of constant-speed runs).

    Parameters
    ----------
    ride : the cleaned ride; start, end : sample indices of the run; length : its distance [m];
    rise : its rise [m]; density : air density per piece [kg/m³]; head, cross : wind components
    per piece [m/s]; rider : mass [kg], drivetrain efficiency, bearing and wheel parameters.
    """
    pieces = slice(start, end)
    duration = np.diff(ride.time[start:end + 1])
    if ride.pause is not None:
        duration = np.where(ride.pause[pieces], 0.0, duration)
    total = float(duration.sum())
    mean_power = float(np.sum(0.5 * (ride.power[start + 1:end + 1] + ride.power[start:end])
                              * duration) / total)
    mean_speed = length / total

    def mean(values):
        return float(np.sum(values[pieces] * duration) / total)

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
    return np.array([y, q, float(rolling_force(0.0, unit))])


def lap_matrices(laps: list[LapTerms], method: str) -> Columns:
    """Per lap: target y, drag column, rolling column, shape (L, G) (G = 1 for regression)."""
    if method == "regression":
        rows = np.array([lap.run for lap in laps])
        return rows[:, :1], rows[:, 1:2], rows[:, 2:3]
    if method == "loop":
        # loop closure: each lap's virtual elevation returns to its starting height
        rows = np.array([(lap.known[-1], lap.drag[-1], lap.rolling[-1]) for lap in laps])
        return rows[:, :1], rows[:, 1:2], rows[:, 2:3]
    grid = np.linspace(0.0, 1.0, GRID_POINTS)
    ys, a_s, b_s = [], [], []
    for lap in laps:
        y = lap.known if lap.reference is None else lap.known - lap.reference
        ys.append(np.interp(grid, lap.fraction, y))
        a_s.append(np.interp(grid, lap.fraction, lap.drag))
        b_s.append(np.interp(grid, lap.fraction, lap.rolling))
    return np.array(ys), np.array(a_s), np.array(b_s)


def normal_equations(groups: list[Columns], method: str,
                     fixed_rolling: float | None) -> tuple[np.ndarray, np.ndarray] | None:
    """Normal matrix and right side of the least-squares problem; None when a group cannot
    be fitted (e.g. a loop group with a single distinct lap).

    Unknowns: one CdA per group [m²], then Crr [-] unless `fixed_rolling` holds it.
    """
    count = len(groups)
    size = count + (fixed_rolling is None)
    matrix = np.zeros((size, size))
    right = np.zeros(size)
    for p, (y, a, b) in enumerate(groups):
        if method == "profile":
            y, a, b = (v - v.mean(axis=1, keepdims=True) for v in (y, a, b))
        if fixed_rolling is not None:
            y = y - fixed_rolling * b
        aa = float(np.sum(a * a))
        if aa <= 1e-12 * max(1.0, float(np.sum(y * y))):
            return None
        matrix[p, p] += aa
        right[p] += float(np.sum(a * y))
        if fixed_rolling is None:
            ab = float(np.sum(a * b))
            matrix[p, -1] += ab
            matrix[-1, p] += ab
            matrix[-1, -1] += float(np.sum(b * b))
            right[-1] += float(np.sum(b * y))
    return matrix, right


def solve_normal_equations(matrix: np.ndarray, right: np.ndarray) -> np.ndarray | None:
    """Solution of matrix·x = right after scaling to a unit diagonal; None when singular
    (a zero diagonal or a scaled condition number above 1e12)."""
    scale = np.sqrt(np.diag(matrix))
    if np.any(scale <= 0):
        return None
    scaled = matrix / np.outer(scale, scale)
    if np.linalg.cond(scaled) > 1e12:
        return None
    return np.linalg.solve(scaled, right / scale) / scale


def drag_area_per_rolling(groups: list[Columns], method: str) -> tuple[float, ...]:
    """d CdA / d Crr of each position when CdA is fitted with Crr held [m²].

    With Crr held, CdA = Σa·(y − Crr·b) / Σa², so d CdA / d Crr = −Σa·b / Σa² (a: drag column,
    b: rolling column, centred per lap for method "profile" as in the fit).
    """
    slopes = []
    for _, a, b in groups:
        if method == "profile":
            a, b = (v - v.mean(axis=1, keepdims=True) for v in (a, b))
        aa = float(np.sum(a * a))
        slopes.append(-float(np.sum(a * b)) / aa if aa > 0 else 0.0)
    return tuple(slopes)


def estimate_correlation(matrix: np.ndarray, fixed: bool) -> float:
    """Largest |correlation| between a CdA estimate and the Crr estimate [-], from the
    inverse of the (scaled) normal matrix; 0 when Crr is held, 1 when the matrix is singular."""
    if fixed:
        return 0.0
    scale = np.sqrt(np.diag(matrix))
    try:
        covariance = np.linalg.inv(matrix / np.outer(scale, scale))
    except np.linalg.LinAlgError:
        return 1.0
    diagonal = np.sqrt(np.abs(np.diag(covariance)))
    corr = covariance[:-1, -1] / (diagonal[:-1] * diagonal[-1])
    return float(np.clip(np.max(np.abs(corr)), 0.0, 1.0))


def bootstrap_fits(groups: list[Columns], method: str, fixed_rolling: float | None, draws: int,
                   seed: int) -> np.ndarray:
    """Bootstrap estimates, shape (valid draws, positions [+ Crr]).

    Each draw resamples the laps of every position with replacement (within the position) and
    refits; draws that cannot be fitted are left out (Efron & Tibshirani 1993).
    """
    columns = len(groups) + (fixed_rolling is None)
    if draws <= 0:
        return np.empty((0, columns))
    rng = np.random.default_rng(seed)
    results = []
    for _ in range(draws):
        sample = []
        for y, a, b in groups:
            pick = rng.integers(0, y.shape[0], y.shape[0])
            sample.append((y[pick], a[pick], b[pick]))
        equations = normal_equations(sample, method, fixed_rolling)
        solution = None if equations is None else solve_normal_equations(*equations)
        if solution is not None:
            results.append(solution)
    return np.array(results) if results else np.empty((0, columns))
