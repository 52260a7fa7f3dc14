"""A steady wind estimated together with CdA and Crr: the nonlinear part of the fit.

The power balance (Martin et al. 1998) loses, per unit CdA, ½ρ·k(β)·V·v_a·Δs on each piece,
with the air speed along the track v_a = v + w_h and V = √(v_a² + w_c²); for a steady wind
blowing TOWARDS the vector u = (u_east, u_north) the headwind on a piece of heading ψ is
w_h = −(u_east·sin ψ + u_north·cos ψ) and the crosswind w_c = u_north·sin ψ − u_east·cos ψ
(pacing.physics.wind.wind_components). The loss is nonlinear in u but, for a given u, the virtual
elevation is linear in CdA and Crr. So the wind is found by variable projection (Golub & Pereyra
1973): an outer nonlinear least squares over u (scipy.optimize.least_squares) whose residual is
that of the linear least squares of CdA and Crr solved exactly inside.

What makes the wind identifiable is the direction of travel: a headwind on one leg is a tailwind
on the other, so the residuals depend on the heading in a way no CdA or Crr can mimic. Ridden in
one heading only, a steady wind is just more drag; on an out-and-back only the part along the
road shows at first order (the part across it enters as w_c², which looks like Crr): then the
wind is fitted along that axis only (`heading_spread`). The estimate is reported at rider height
and at 10 m, the project's convention, by inverting the log profile (pacing.physics.wind).

Used by pacing.fieldtest.wind_estimate (the field test) and pacing.fieldtest.race_fit (a race
over a known course).

References
----------
Golub, G.H. & Pereyra, V. (1973). The differentiation of pseudo-inverses and nonlinear least
squares problems whose variables separate. SIAM J Numer Anal 10(2):413-432.
doi:10.1137/0710036
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import least_squares

from pacing.constants import STANDARD_GRAVITY
from pacing.fieldtest.virtual_elevation import ElevationTerms, elevation_terms, unit_rider
from pacing.notices import Notice, warning
from pacing.physics.cycling import Rider, aerodynamic_force
from pacing.physics.wind import log_profile_factor
from pacing.weather.conditions import Conditions

REPORT_HEIGHT = 10.0
"""Height at which wind speeds are reported [m] (the weather-report standard, DEVELOPERS.md)."""

LARGEST_WIND = 15.0
"""Largest wind at rider height the search considers [m/s] (our choice: no field test or race
is ridden for drag in a gale; the bound keeps the search away from nonsense)."""

ONE_HEADING_RESULTANT = 0.9
"""Mean resultant length of the headings above which a ride goes one way only [-] (our choice:
0.9 is, e.g., every piece within about ±25° of one heading)."""

ONE_AXIS_SPREAD = 0.05
"""Share of the heading spread across the main axis below which a ride is one road ridden both
ways (an out-and-back) [-]: the wind across it is then not fitted (our choice: 0.05 is every
piece within about ±13° of the axis)."""

SEPARATION_CORRELATION = 0.98
"""|correlation| between the wind and the CdA or Crr estimate above which the data cannot
separate them [-] (our choice)."""


@dataclass(frozen=True)
class HeadingSpread:
    """How the directions of travel spread, weighted by distance.

    Attributes
    ----------
    resultant : float
        Mean resultant length |Σ u_i·l_i| / Σ l_i of the unit vectors of travel u_i over
        pieces of length l_i [-]: 1 = one heading, 0 = as much one way as back.
    across : float
        Smaller eigenvalue of the length-weighted mean of u_i·u_iᵀ [-], 0..0.5: the share of
        travel across the main axis (0 = one road, 0.5 = every direction alike).
    axis : float
        Main axis of travel [deg clockwise from north], 0-180.
    """

    resultant: float
    across: float
    axis: float


@dataclass(frozen=True)
class WindEstimate:
    """A steady wind: estimated, or as given, with what the data said about it.

    Attributes
    ----------
    estimated : bool
        True when the wind was estimated from the data (else it is the given one, or calm).
    speed_at_rider : float
        Wind speed at rider height [m/s].
    speed : float
        The same wind at REPORT_HEIGHT (10 m), by the inverted log profile [m/s].
    wind_from : float
        Direction the wind blows FROM [deg clockwise from north] (0 when calm).
    speed_ci95 : tuple of float or None
        95 % bootstrap interval of `speed` [m/s] (10 m), or None.
    separable : bool
        False when the data could not separate the wind from CdA and Crr.
    correlation : float
        Largest |correlation| of a wind component with the CdA or Crr estimate [-].
    spread : HeadingSpread or None
        How the headings spread (None without headings).
    along_axis_only : bool
        True when only the wind along the main axis was fitted (an out-and-back).
    """

    estimated: bool
    speed_at_rider: float
    speed: float
    wind_from: float
    speed_ci95: tuple[float, float] | None = None
    separable: bool = True
    correlation: float = 0.0
    spread: HeadingSpread | None = None
    along_axis_only: bool = False


# ---------------------------------------------------------------------------------------------
# Wind as a vector; heights
# ---------------------------------------------------------------------------------------------


def wind_vector(speed: float, wind_from: float) -> np.ndarray:
    """The vector a wind blows TOWARDS, (east, north) [m/s].

    Parameters
    ----------
    speed : float
        Wind speed [m/s].
    wind_from : float
        Direction the wind blows FROM [deg clockwise from north].

    Returns
    -------
    numpy.ndarray
        (east, north) [m/s].

    Examples
    --------
    A 2 m/s wind from the north blows towards the south:

    >>> wind_vector(2.0, 0.0).round(9).tolist()
    [-0.0, -2.0]
    """
    towards = np.radians(wind_from + 180.0)
    return np.array([speed * np.sin(towards), speed * np.cos(towards)])


def speed_and_direction(vector: ArrayLike) -> tuple[float, float]:
    """(speed [m/s], direction it blows FROM [deg, 0-360]) of a wind vector (east, north).

    Parameters
    ----------
    vector : array_like
        (east, north) the wind blows towards [m/s].

    Returns
    -------
    tuple of float
        Speed [m/s] and FROM direction [deg clockwise from north]; 0 deg when calm.

    Examples
    --------
    >>> speed_and_direction([3.0, 0.0])  # blowing east: from the west
    (3.0, 270.0)
    """
    east, north = (float(v) for v in np.asarray(vector, dtype=float))
    speed = float(np.hypot(east, north))
    if speed == 0.0:
        return 0.0, 0.0
    return speed, float((np.degrees(np.arctan2(east, north)) + 180.0) % 360.0)


def head_and_cross(heading: ArrayLike, vector: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Headwind and crosswind on pieces of a heading for a wind vector [m/s].

        w_h = −(u_e·sin ψ + u_n·cos ψ),   w_c = u_n·sin ψ − u_e·cos ψ

    the same components as pacing.physics.wind.wind_components (headwind positive against the
    rider, crosswind positive from the rider's right).

    Parameters
    ----------
    heading : array_like
        Direction of travel ψ [deg clockwise from north].
    vector : array_like
        (east, north) the wind blows towards [m/s].

    Returns
    -------
    tuple of numpy.ndarray
        (headwind [m/s], crosswind [m/s]).
    """
    east, north = (float(v) for v in np.asarray(vector, dtype=float))
    psi = np.radians(np.asarray(heading, dtype=float))
    sin, cos = np.sin(psi), np.cos(psi)
    return -(east * sin + north * cos), north * sin - east * cos


def speed_at_report_height(speed_at_rider: float, rider_height: float = 1.0,
                           roughness_length: float = 0.03,
                           report_height: float = REPORT_HEIGHT) -> float:
    """Wind at the reporting height from the wind at rider height: the log profile inverted.

        u(10 m) = u(z_r) / f,   f = log_profile_factor(10 m, z_r, z0)

    Parameters
    ----------
    speed_at_rider : float
        Wind speed at rider height [m/s].
    rider_height : float
        Rider height z_r [m].
    roughness_length : float
        Terrain roughness length z0 [m].
    report_height : float
        Height wanted [m] (10 m).

    Returns
    -------
    float
        Wind speed at `report_height` [m/s].

    References
    ----------
    Stull, R.B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer, ch. 9.

    Examples
    --------
    Over open grassland 1 m above the ground the wind is 0.6036 of the 10 m wind:

    >>> round(speed_at_report_height(0.6036, 1.0, 0.03), 4)
    1.0
    """
    factor = float(log_profile_factor(report_height, rider_height, roughness_length))
    return speed_at_rider / factor


def heading_spread(heading: ArrayLike, weight: ArrayLike) -> HeadingSpread:
    """How the directions of travel spread (`HeadingSpread`), weighted by distance.

    Parameters
    ----------
    heading : array_like
        Direction of travel of each piece [deg].
    weight : array_like
        Length of each piece [m] (or any non-negative weight).

    Returns
    -------
    HeadingSpread
        Mean resultant length [-], share across the main axis [-] and the axis [deg].

    Examples
    --------
    An out-and-back: no resultant, nothing across the axis, axis north-south.

    >>> s = heading_spread([0.0, 180.0], [1.0, 1.0])
    >>> round(s.resultant, 6), round(s.across, 6), round(s.axis, 6)
    (0.0, 0.0, 0.0)
    """
    psi = np.radians(np.asarray(heading, dtype=float))
    w = np.asarray(weight, dtype=float) * np.ones_like(psi)
    total = float(w.sum())
    if total <= 0:
        return HeadingSpread(1.0, 0.0, 0.0)
    east, north = np.sin(psi), np.cos(psi)
    resultant = float(np.hypot(np.sum(w * east), np.sum(w * north)) / total)
    tensor = np.array([[np.sum(w * east * east), np.sum(w * east * north)],
                       [np.sum(w * east * north), np.sum(w * north * north)]]) / total
    values, vectors = np.linalg.eigh(tensor)
    main = vectors[:, 1]
    axis = float(np.degrees(np.arctan2(main[0], main[1])) % 180.0)
    axis = 0.0 if axis > 180.0 - 1e-9 else axis
    return HeadingSpread(min(resultant, 1.0), float(max(values[0], 0.0)), axis)


def wind_basis(spread: HeadingSpread | None) -> np.ndarray | None:
    """The directions in which a wind can be fitted, as columns (east, north) [-].

    Parameters
    ----------
    spread : HeadingSpread or None
        How the ride's headings spread (None: no headings).

    Returns
    -------
    numpy.ndarray or None
        2×2 identity (both components), 2×1 along the main axis (an out-and-back: the wind
        across the road cannot be told from Crr), or None (no headings, or one heading only:
        a steady wind is then just more drag).
    """
    if spread is None or spread.resultant > ONE_HEADING_RESULTANT:
        return None
    if spread.across < ONE_AXIS_SPREAD:
        axis = np.radians(spread.axis)
        return np.array([[np.sin(axis)], [np.cos(axis)]])
    return np.eye(2)


# ---------------------------------------------------------------------------------------------
# The virtual-elevation terms at a wind
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class AirTerms:
    """The virtual-elevation terms of a ride's pieces (N-1) as a function of a steady wind.

    Built once in still air by pacing.fieldtest.virtual_elevation.elevation_terms; at a wind
    only the air terms change, recomputed with the same force (pacing.physics.cycling.
    aerodynamic_force): per CdA ½ρ·k(β)·V·v_a·Δs/(m·g), and the wheels' F_w·½ρ·V·v_a·Δs/(m·g)
    taken from the known part.

    Attributes
    ----------
    still : pacing.fieldtest.virtual_elevation.ElevationTerms
        The terms in still air [m, m/m², m].
    mean_speed : numpy.ndarray
        Mean ground speed of each piece [m/s].
    density : numpy.ndarray
        Air density of each piece [kg/m³].
    sin_heading, cos_heading : numpy.ndarray
        Sine and cosine of each piece's heading [-].
    scale : numpy.ndarray
        Δs/(m·g) of each piece, 0 where left out [m/N].
    rider : pacing.physics.cycling.Rider
        The rider (mass, wheel drag area, yaw table).
    """

    still: ElevationTerms
    mean_speed: np.ndarray
    density: np.ndarray
    sin_heading: np.ndarray
    cos_heading: np.ndarray
    scale: np.ndarray
    rider: Rider

    @classmethod
    def of(cls, time: np.ndarray, speed: np.ndarray, power: np.ndarray,
           density: ArrayLike, heading: np.ndarray, rider: Rider,
           left_out: np.ndarray | None = None) -> AirTerms:
        """The terms of a ride: time [s], speed [m/s], power [W] (length N), density
        [kg/m³] (scalar or N-1), heading [deg] (N-1), left-out pieces (bool, N-1)."""
        still = elevation_terms(time, speed, power, density, rider, pause=left_out)
        mean_speed = 0.5 * (speed[1:] + speed[:-1])
        keep = 1.0 if left_out is None else ~np.asarray(left_out, dtype=bool)
        radians = np.radians(heading)
        return cls(still, mean_speed, np.broadcast_to(np.asarray(density, float),
                                                      mean_speed.shape),
                   np.sin(radians), np.cos(radians),
                   mean_speed * np.diff(time) * keep / (rider.mass * STANDARD_GRAVITY), rider)

    def at(self, vector: np.ndarray) -> np.ndarray:
        """(known, per CdA, per Crr) of each piece at a wind vector (east, north) [m/s] at
        rider height, shape (3, N-1) [m, m/m², m]."""
        east, north = float(vector[0]), float(vector[1])
        head = -(east * self.sin_heading + north * self.cos_heading)
        cross = north * self.sin_heading - east * self.cos_heading
        unit = unit_rider(self.rider)
        plain = dataclasses.replace(unit, yaw_drag_table=None)
        air = aerodynamic_force(self.mean_speed, self.density, plain, head, cross)
        still_air = aerodynamic_force(self.mean_speed, self.density, plain)
        per_drag = air if self.rider.yaw_drag_table is None else aerodynamic_force(
            self.mean_speed, self.density, unit, head, cross)
        known = self.still.known - self.rider.wheel_drag_area * (air - still_air) * self.scale
        return np.stack((known, per_drag * self.scale, self.still.per_rolling_coefficient))


# ---------------------------------------------------------------------------------------------
# Variable projection
# ---------------------------------------------------------------------------------------------


def linear_fit(design: np.ndarray, target: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Linear least squares target ≈ design·β with scaled columns: (β, residual).

    Parameters
    ----------
    design : numpy.ndarray
        Shape (rows, p): one column per linear unknown (CdA per position, then Crr).
    target : numpy.ndarray
        Shape (rows,).

    Returns
    -------
    tuple of numpy.ndarray
        β (p,) and the residual target − design·β (rows,).
    """
    scale = np.sqrt(np.sum(design * design, axis=0))
    scale[scale == 0] = 1.0
    beta, *_ = np.linalg.lstsq(design / scale, target, rcond=None)
    beta = beta / scale
    return beta, target - design @ beta


Problem = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]]
"""wind vector (east, north) at rider height [m/s] → (design (rows, p), target (rows,)) of the
linear least squares in CdA (per position) and Crr at that wind."""


def fit_wind(problem: Problem, basis: np.ndarray,
             start: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """The wind vector minimising the residual of the inner linear fit (variable projection).

    Parameters
    ----------
    problem : Problem
        The linear least squares at a given wind.
    basis : numpy.ndarray
        Directions the wind is fitted in, shape (2, k) (`wind_basis`).
    start : numpy.ndarray or None
        Starting wind vector (east, north) [m/s]; default calm.

    Returns
    -------
    tuple of numpy.ndarray
        (wind vector (east, north) [m/s], β of the inner fit at that wind).

    References
    ----------
    Golub, G.H. & Pereyra, V. (1973). SIAM J Numer Anal 10(2):413-432. doi:10.1137/0710036
    """
    def residual(coefficients: np.ndarray) -> np.ndarray:
        return linear_fit(*problem(basis @ coefficients))[1]

    initial = np.zeros(basis.shape[1]) if start is None else basis.T @ start
    solution = least_squares(residual, initial, method="lm", x_scale=1.0, diff_step=1e-4,
                             xtol=1e-6, ftol=1e-10, gtol=1e-10, max_nfev=100)
    vector = basis @ solution.x
    speed = float(np.hypot(*vector))
    if not np.isfinite(speed):
        vector = np.zeros(2)
    elif speed > LARGEST_WIND:
        vector = vector * (LARGEST_WIND / speed)
    beta, _ = linear_fit(*problem(vector))
    return vector, beta


def refit_wind(problem: Problem, basis: np.ndarray, start: np.ndarray, steps: int = 2,
               step: float = 1e-3) -> np.ndarray:
    """The wind vector after a few Gauss-Newton steps from `start` (variable projection).

    For bootstrap draws, which start at the full-sample estimate: a one-step estimator is
    asymptotically equivalent to the full refit (Davidson & MacKinnon 1999); two steps make it
    closer in small samples. The Jacobian of the projected residual is taken by forward
    differences of `step` [m/s].

    Parameters
    ----------
    problem : Problem
        The linear least squares at a given wind.
    basis : numpy.ndarray
        Directions the wind is fitted in, shape (2, k).
    start : numpy.ndarray
        Starting wind vector (east, north) [m/s].
    steps : int
        Gauss-Newton steps.
    step : float
        Difference step [m/s].

    Returns
    -------
    numpy.ndarray
        Wind vector (east, north) [m/s], at most LARGEST_WIND long.

    References
    ----------
    Davidson, R. & MacKinnon, J.G. (1999). Bootstrap testing in nonlinear models. Int Econ Rev
    40(2):487-508. doi:10.1111/1468-2354.00026
    Golub, G.H. & Pereyra, V. (1973). SIAM J Numer Anal 10(2):413-432. doi:10.1137/0710036
    """
    coefficients = basis.T @ start
    for _ in range(steps):
        here = linear_fit(*problem(basis @ coefficients))[1]
        jacobian = np.column_stack([
            (linear_fit(*problem(basis @ (coefficients + step * unit)))[1] - here) / step
            for unit in np.eye(basis.shape[1])])
        change, *_ = np.linalg.lstsq(jacobian, -here, rcond=None)
        if not np.all(np.isfinite(change)):
            break
        coefficients = coefficients + change
    vector = basis @ coefficients
    speed = float(np.hypot(*vector))
    return vector * (LARGEST_WIND / speed) if speed > LARGEST_WIND else vector


def joint_correlation(problem: Problem, basis: np.ndarray, vector: np.ndarray,
                      beta: np.ndarray, step: float = 0.05) -> float:
    """Largest |correlation| between a wind component and a linear unknown (CdA, Crr) [-].

    From the Gauss-Newton covariance (JᵀJ)⁻¹ of all unknowns at the solution: J = [−X,
    ∂r/∂c], the wind columns by central differences of `step` [m/s] with β held. Correlations
    do not depend on the residual variance.

    Parameters
    ----------
    problem : Problem
        The linear least squares at a given wind.
    basis : numpy.ndarray
        Directions of the fitted wind, shape (2, k).
    vector : numpy.ndarray
        The fitted wind vector [m/s].
    beta : numpy.ndarray
        The linear unknowns at that wind.
    step : float
        Difference step of the wind [m/s].

    Returns
    -------
    float
        In 0..1; 1 when the matrix is singular.
    """
    design, _ = problem(vector)
    columns = [-design]
    for k in range(basis.shape[1]):
        up = linear_residual(problem, vector + step * basis[:, k], beta)
        down = linear_residual(problem, vector - step * basis[:, k], beta)
        columns.append(((up - down) / (2 * step))[:, None])
    jacobian = np.hstack(columns)
    scale = np.sqrt(np.sum(jacobian * jacobian, axis=0))
    if np.any(scale == 0):
        return 1.0
    normal = (jacobian / scale).T @ (jacobian / scale)
    if np.linalg.cond(normal) > 1e14:
        return 1.0
    covariance = np.linalg.inv(normal)
    sigma = np.sqrt(np.abs(np.diag(covariance)))
    corr = covariance / np.outer(sigma, sigma)
    p = design.shape[1]
    return float(np.clip(np.max(np.abs(corr[p:, :p])), 0.0, 1.0))


def linear_residual(problem: Problem, vector: np.ndarray, beta: np.ndarray) -> np.ndarray:
    """Residual target − design·β at a wind vector with the linear unknowns held [m]."""
    design, target = problem(vector)
    return target - design @ beta


def percentile_interval(values: Sequence[float] | np.ndarray) -> tuple[float, float] | None:
    """Percentile 95 % interval (Efron & Tibshirani 1993), or None for fewer than 20 values."""
    array = np.asarray(values, dtype=float)
    array = array[np.isfinite(array)]
    if array.size < 20:
        return None
    low, high = np.percentile(array, [2.5, 97.5])
    return float(low), float(high)


WIND_INTERVAL_LIMIT = 2.0
"""Width of the 95 % interval of the 10 m wind speed above which the laps are taken not to
tell the wind from drag [m/s] (our choice: about two steps of the Beaufort scale's lower end;
laps at one speed on a loop, for one, let the wind trade freely against Crr)."""


def loose_wind_values(estimate: WindEstimate) -> dict[str, Any]:
    """Values of the "fieldtest-wind-inseparable" notice when the data do not pin the wind
    down (its 95 % interval wider than WIND_INTERVAL_LIMIT, or the fit at the bound), else {}.

    Parameters
    ----------
    estimate : WindEstimate
        The estimated wind with its interval.

    Returns
    -------
    dict
        ``reason`` "interval" (speed_ci95_low_mps, speed_ci95_high_mps, limit_mps) or "bound"
        (speed_mps), with ``correlation`` [-]; empty when the wind is pinned down.
    """
    interval = estimate.speed_ci95
    if interval is not None and interval[1] - interval[0] > WIND_INTERVAL_LIMIT:
        return {"reason": "interval", "speed_ci95_low_mps": interval[0],
                "speed_ci95_high_mps": interval[1], "limit_mps": WIND_INTERVAL_LIMIT,
                "correlation": estimate.correlation}
    if estimate.speed_at_rider > 0.95 * LARGEST_WIND:
        return {"reason": "bound", "speed_mps": estimate.speed,
                "correlation": estimate.correlation}
    return {}


DETECTED_DIFFERENCE = 0.5
"""Difference between the estimated and the given wind at rider height above which the
estimate is reported as a different wind [m/s] (our choice: half the calm-air limit of Lim et
al. 2011), when the given wind also lies outside the estimate's 95 % interval."""


def undeclared_wind_notices(estimate: WindEstimate, given: Conditions) -> list[Notice]:
    """A warning when the estimated wind differs clearly from the one given.

    Clearly: the two wind vectors at rider height differ by more than DETECTED_DIFFERENCE and,
    when the estimate has an interval, the given 10 m speed lies outside it.

    Parameters
    ----------
    estimate : WindEstimate
        The estimated wind.
    given : pacing.weather.conditions.Conditions
        The given wind (speed at wind_height [m/s], FROM [deg]).

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-wind-undeclared" (speed_mps, from_deg of the estimate at 10 m;
        given_speed_mps, given_from_deg), or nothing.
    """
    given_vector = wind_vector(given.wind_at_rider, given.wind_from)
    found = wind_vector(estimate.speed_at_rider, estimate.wind_from)
    if float(np.hypot(*(found - given_vector))) <= DETECTED_DIFFERENCE:
        return []
    interval = estimate.speed_ci95
    given_at_10 = speed_at_report_height(given.wind_at_rider, given.rider_height,
                                         given.roughness_length)
    if interval is not None and interval[0] <= given_at_10 <= interval[1] \
            and given.wind_speed > 0:
        return []
    return [warning("fieldtest-wind-undeclared", speed_mps=estimate.speed,
                    from_deg=estimate.wind_from, given_speed_mps=given_at_10,
                    given_from_deg=float(given.wind_from))]
