"""Least squares of CdA and Crr over the laps of test rides, and its bootstrap.

The machinery behind pacing.fieldtest.estimate.estimate_drag: from each lap's virtual-elevation
sums (Chung) or regression row (Lim et al. 2011; both in pacing.fieldtest.laps), the
least-squares columns each method makes of them (pacing.fieldtest.methods lists which), the
normal equations of a fit with one CdA per position and one common Crr (or Crr held), their
scaled solution, the correlation of the two estimates, the change of CdA per unit of held Crr,
and a bootstrap over laps (Efron & Tibshirani 1993). Every fit is linear: y = CdA·a + Crr·b,
with a the drag column and b the rolling column of a lap.

Per lap the three columns have the shape (laps, G): G = 1 for `closure_columns` (the lap's
total rise, which loop closure sets to 0) and `regression_columns` (one row of lap means),
G = GRID_POINTS for `profile_columns` (the virtual elevation on a common grid of lap-distance
fraction, centred per lap in the fit, since each lap keeps its own offset). Conventions as in
pacing.fieldtest.estimate: point arrays have length N, piece arrays N-1, laps are (start, end)
sample index pairs.

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

from collections.abc import Callable, Sequence

import numpy as np

from pacing.fieldtest.laps import LapTerms

GRID_POINTS = 200
"""Points per lap on the common grid of lap-distance fraction."""

Columns = tuple[np.ndarray, np.ndarray, np.ndarray]
"""One position's least-squares columns (y, drag a, rolling b), each of shape (laps, G)."""

Refit = Callable[[list[np.ndarray], float | None], np.ndarray | None]
"""A bootstrap draw's own refit: (lap indices drawn per position, Crr held [-] or None) →
CdA per position [m²] (then Crr [-] when fitted), or None when it cannot be fitted."""


# ---------------------------------------------------------------------------------------------
# Least-squares columns of each method, and the CdA of one lap
# ---------------------------------------------------------------------------------------------


def closure_columns(laps: Sequence[LapTerms]) -> Columns:
    """Loop closure: each lap's virtual elevation returns to its starting height.

    Parameters
    ----------
    laps : sequence of LapTerms
        The laps of one position.

    Returns
    -------
    Columns
        (known rise [m], rise per unit CdA [m/m²], rise per unit Crr [m]) over each whole lap,
        shape (laps, 1).

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    """
    rows = np.array([(lap.known[-1], lap.drag[-1], lap.rolling[-1]) for lap in laps])
    return rows[:, :1], rows[:, 1:2], rows[:, 2:3]


def profile_columns(laps: Sequence[LapTerms]) -> Columns:
    """Virtual elevation along each lap against its known profile, on a common grid.

    Parameters
    ----------
    laps : sequence of LapTerms
        The laps of one position (with `reference` set when the profile is known).

    Returns
    -------
    Columns
        (known rise − profile [m], rise per unit CdA [m/m²], rise per unit Crr [m]) at
        GRID_POINTS fractions of each lap, shape (laps, GRID_POINTS).

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    """
    grid = np.linspace(0.0, 1.0, GRID_POINTS)
    ys, a_s, b_s = [], [], []
    for lap in laps:
        y = lap.known if lap.reference is None else lap.known - lap.reference
        ys.append(np.interp(grid, lap.fraction, y))
        a_s.append(np.interp(grid, lap.fraction, lap.drag))
        b_s.append(np.interp(grid, lap.fraction, lap.rolling))
    return np.array(ys), np.array(a_s), np.array(b_s)


def regression_columns(laps: Sequence[LapTerms]) -> Columns:
    """Mean driving force against mean air speed: one regression row per lap.

    Parameters
    ----------
    laps : sequence of LapTerms
        The laps of one position.

    Returns
    -------
    Columns
        (y [N], x_drag [N/m²], x_rolling [N]) of each lap (`regression_row`), shape (laps, 1).

    References
    ----------
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860.
    """
    rows = np.array([lap.run for lap in laps])
    return rows[:, :1], rows[:, 1:2], rows[:, 2:3]


def virtual_elevation_lap_drag_area(lap: LapTerms, rolling_coefficient: float) -> float:
    """CdA of one lap alone from its virtual elevation, with Crr held.

    The lap's virtual elevation must gain what its reference gains (0 when it closes on
    itself): CdA = (known − rise − Crr·per_Crr) / per_CdA over the whole lap.

    Parameters
    ----------
    lap : LapTerms
        The lap.
    rolling_coefficient : float
        Crr held [-].

    Returns
    -------
    float
        CdA [m²].

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    """
    rise = 0.0 if lap.reference is None else lap.reference[-1]
    return (lap.known[-1] - rise - rolling_coefficient * lap.rolling[-1]) / lap.drag[-1]


def regression_lap_drag_area(lap: LapTerms, rolling_coefficient: float) -> float:
    """CdA of one lap alone from its regression row, with Crr held: (y − Crr·x_rolling)/x_drag.

    Parameters
    ----------
    lap : LapTerms
        The lap.
    rolling_coefficient : float
        Crr held [-].

    Returns
    -------
    float
        CdA [m²].

    References
    ----------
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860.
    """
    y, x_drag, x_rolling = lap.run
    return (y - rolling_coefficient * x_rolling) / x_drag


# ---------------------------------------------------------------------------------------------
# The fit
# ---------------------------------------------------------------------------------------------


def _centred(columns: Sequence[np.ndarray], offset_per_lap: bool) -> list[np.ndarray]:
    """The columns less their mean per lap (row) when each lap keeps its own offset."""
    if offset_per_lap:
        return [v - v.mean(axis=1, keepdims=True) for v in columns]
    return list(columns)


def normal_equations(groups: Sequence[Columns], offset_per_lap: bool,
                     fixed_rolling: float | None) -> tuple[np.ndarray, np.ndarray] | None:
    """Normal matrix and right side of the least-squares problem.

    Unknowns: one CdA per group [m²], then Crr [-] unless `fixed_rolling` holds it.

    Parameters
    ----------
    groups : sequence of Columns
        (y, drag, rolling) columns of each position, shape (laps, G).
    offset_per_lap : bool
        True to centre the columns per lap (each lap keeps its own offset).
    fixed_rolling : float or None
        Crr held [-]; None fits it.

    Returns
    -------
    tuple of numpy.ndarray or None
        (matrix, right side); None when a group cannot be fitted (e.g. a drag column of zeros).
    """
    count = len(groups)
    size = count + (fixed_rolling is None)
    matrix = np.zeros((size, size))
    right = np.zeros(size)
    for p, group in enumerate(groups):
        y, a, b = _centred(group, offset_per_lap)
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
    """Solution of matrix·x = right after scaling to a unit diagonal.

    Parameters
    ----------
    matrix : numpy.ndarray
        Normal matrix, square.
    right : numpy.ndarray
        Right side.

    Returns
    -------
    numpy.ndarray or None
        x (CdA per group [m²], then Crr [-] when fitted); None when singular (a zero diagonal
        or a scaled condition number above 1e12).
    """
    scale = np.sqrt(np.diag(matrix))
    if np.any(scale <= 0):
        return None
    scaled = matrix / np.outer(scale, scale)
    if np.linalg.cond(scaled) > 1e12:
        return None
    return np.linalg.solve(scaled, right / scale) / scale


def drag_area_per_rolling(groups: Sequence[Columns], offset_per_lap: bool) -> tuple[float, ...]:
    """d CdA / d Crr of each position when CdA is fitted with Crr held [m²].

    With Crr held, CdA = Σa·(y − Crr·b) / Σa², so d CdA / d Crr = −Σa·b / Σa² (a: drag column,
    b: rolling column, centred per lap as in the fit when each lap keeps its own offset).

    Parameters
    ----------
    groups : sequence of Columns
        (y, drag, rolling) columns of each position.
    offset_per_lap : bool
        True to centre the columns per lap.

    Returns
    -------
    tuple of float
        One slope per position [m²] (0 when its drag column is all zeros).
    """
    slopes = []
    for _, *columns in groups:
        a, b = _centred(columns, offset_per_lap)
        aa = float(np.sum(a * a))
        slopes.append(-float(np.sum(a * b)) / aa if aa > 0 else 0.0)
    return tuple(slopes)


def estimate_correlation(matrix: np.ndarray, fixed: bool) -> float:
    """Largest |correlation| between a CdA estimate and the Crr estimate [-].

    From the inverse of the (scaled) normal matrix.

    Parameters
    ----------
    matrix : numpy.ndarray
        Normal matrix of the fit.
    fixed : bool
        True when Crr was held (then there is no Crr estimate).

    Returns
    -------
    float
        In 0..1; 0 when Crr is held, 1 when the matrix is singular.
    """
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


def bootstrap_fits(groups: Sequence[Columns], offset_per_lap: bool,
                   fixed_rolling: float | None, draws: int, seed: int,
                   refit: Refit | None = None) -> np.ndarray:
    """Bootstrap estimates over laps.

    Each draw resamples the laps of every position with replacement (within the position) and
    refits; draws that cannot be fitted are left out. A `refit` replaces the refit of the
    resampled columns (the wind estimate refits the wind in every draw,
    pacing.fieldtest.wind_estimate); the draws of laps are the same.

    Parameters
    ----------
    groups : sequence of Columns
        (y, drag, rolling) columns of each position.
    offset_per_lap : bool
        True to centre the columns per lap (as in `normal_equations`).
    fixed_rolling : float or None
        Crr held [-]; None fits it.
    draws : int
        Number of draws (0 for none).
    seed : int
        Seed of the random generator.
    refit : Refit or None
        (lap indices drawn per position, Crr held or None) → solution or None; None refits
        the resampled columns.

    Returns
    -------
    numpy.ndarray
        Shape (valid draws, positions [+ 1 for Crr]): CdA [m²] per position, then Crr [-].

    References
    ----------
    Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
    """
    columns = len(groups) + (fixed_rolling is None)
    if draws <= 0:
        return np.empty((0, columns))
    rng = np.random.default_rng(seed)
    results = []
    for _ in range(draws):
        sample, picks = [], []
        for y, a, b in groups:
            pick = np.asarray(rng.integers(0, y.shape[0], y.shape[0]))
            picks.append(pick)
            sample.append((y[pick], a[pick], b[pick]))
        if refit is not None:
            solution = refit(picks, fixed_rolling)
        else:
            equations = normal_equations(sample, offset_per_lap, fixed_rolling)
            solution = None if equations is None else solve_normal_equations(*equations)
        if solution is not None:
            results.append(solution)
    return np.array(results) if results else np.empty((0, columns))
