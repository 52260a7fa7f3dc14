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
road shows at first order. The directions a wind can be fitted in (`wind_basis`), the wind as a
vector and its 10 m speed are in pacing.fieldtest.steady_wind; whether an estimate can be
trusted in pacing.fieldtest.wind_checks.

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
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike
from scipy.optimize import least_squares

from pacing.constants import STANDARD_GRAVITY
from pacing.fieldtest.virtual_elevation import ElevationTerms, elevation_terms, unit_rider
from pacing.physics.cycling import Rider, aerodynamic_force

LARGEST_WIND = 15.0
"""Largest wind at rider height the search considers [m/s] (our choice: no field test or race
is ridden for drag in a gale; the bound keeps the search away from nonsense)."""


SEPARATION_CORRELATION = 0.98
"""|correlation| between the wind and the CdA or Crr estimate above which the data cannot
separate them [-] (our choice)."""



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
