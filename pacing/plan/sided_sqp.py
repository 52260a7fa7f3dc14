"""A structured SQP for the sided fastest-plan problem: the fine level of a long split.

The sided problem of pacing.plan.slsqp_polish (every segment held on one side of CP, the
differential W′ balance, no effort cap) has a structure dense SLSQP cannot see: the objective
Σ t_k(P_k) and the coupling constraint Σ (P_k − c)·t_k(P_k) = E₀ are separable (diagonal
Hessians, known exactly from the steady model's t_k″), and the W′ balance is checked only at
the few ends of the runs above CP (R rows, R ≪ K). Each iteration here solves the quadratic
subproblem

    min ½·dᵀH·d + ∇fᵀd   s.t.   c + ∇cᵀd = 0,   g + J·d ≥ 0,   lo ≤ x + d ≤ hi

with H the diagonal of the Hessian of the Lagrangian (the balance rows' own second
derivatives in each segment's power included, their cross terms left out), kept positive. Its
dual in the R + 1 multipliers y = (λ, μ) is a concave piecewise quadratic whose primal answer
is d(y) = clip((Aᵀy − ∇f)/H, lo − x, hi − x) (A the constraint rows): projected Newton steps
on y (Bertsekas 1982) find it in O(K·R²) per step instead of SLSQP's O(K³); their Newton
matrix is damped by a share of the whole-box one plus a small ridge, so it stays regular with
more rows than segments or a row no power moves. Multipliers are boxed by ρ, which makes the
subproblem the elastic (ℓ1-penalised) one and always solvable.
The step is taken along d with a backtracking line search on the ℓ1 merit function
f + ν·(|c| + Σ max(0, −g)) (Nocedal & Wright 2006, ch. 18.3-18.4); it ends when a step
changes the objective by less than `ftol` with the constraints held within `ftol`.

The answer has the fields of scipy's OptimizeResult that the sided rounds read: x, nit,
multipliers (coupling first, then the balance rows, in scipy's sign convention
L = f − Σ y_i·c_i), message and success.

References
----------
Bertsekas, D.P. (1982). Projected Newton methods for optimization problems with simple
constraints. SIAM J Control Optim 20(2):221-246. doi:10.1137/0320018
Nocedal, J. & Wright, S.J. (2006). Numerical Optimization, 2nd ed. Springer, ch. 16 (duality
of convex quadratic programs), 17.2 (ℓ1 penalty) and 18 (SQP, merit functions).
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3 (differential W′ balance)
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from pacing.plan.lagrange import steady_w_prime_balance
from pacing.plan.request import w_prime_parameters
from pacing.plan.steady_model import steady_segment_times, steady_times

if TYPE_CHECKING:
    from pacing.plan.slsqp_polish import ScaledProblem

DUAL_STEPS = 60  # most projected Newton steps of one subproblem's dual
DUAL_TOLERANCE = 1e-10  # projected dual gradient (scaled constraint residual) at which it ends
# share of the whole-box Newton matrix added to the free coordinates' one: it stays regular
# where every coordinate is clipped (the dual is piecewise linear there)
DUAL_DAMPING = 1e-8
# share of the whole-box matrix's largest diagonal added to its diagonal before the damping
# share is taken (a ridge of 1e-12 of it in all): the whole-box matrix itself is singular
# when there are more rows than segments (a grouped problem of 2 segments with 3 rows) or a
# row is zero (a balance row no power can move). On 504 random feasible subproblems of 2-30
# segments and 2-5 rows, 1e-12 / 1e-8 / 1e-6 / 1e-5 / 1e-4 / 1e-3 here left 17 / 13 / 2 / 0 /
# 0 / 0 answers more than 1e-6 from scipy's SLSQP (the Newton steps too long to search)
DUAL_RIDGE = 1e-4
MULTIPLIER_BOX = 1e6  # ρ: the multipliers' bound (the subproblem's ℓ1 penalty) [-]
LINE_SEARCH_STEPS = 30  # most halvings of a step
DUAL_LINE_STEPS = 40  # step sizes 1, 1/2, … of the dual's search
DUAL_LINE_CHUNK = 4  # of them tried at once
ARMIJO = 1e-4  # sufficient decrease of the merit function, share of its slope [-]
CURVATURE_FLOOR = 1e-3  # the Hessian's diagonal kept above this share of the objective's [-]


@dataclass
class SqpResult:
    """The answer of `sided_sqp`, with the fields of scipy's OptimizeResult the sided rounds
    read.

    Attributes
    ----------
    x : numpy.ndarray
        Segment powers over P̄, length K [-].
    nit : int
        Iterations [-].
    multipliers : numpy.ndarray
        The coupling constraint's multiplier, then one per balance row (L = f − Σ y_i·c_i) [-].
    message : str
        Why it ended [-].
    success : bool
        True when it converged (not at the iteration limit) [-].
    """

    x: np.ndarray
    nit: int
    multipliers: np.ndarray
    message: str
    success: bool


@dataclass(frozen=True)
class _Point:
    """The scaled problem at x: objective, constraints, their gradients and curvatures."""

    x: np.ndarray
    objective: float
    gradient: np.ndarray  # ∇f [-]
    curvature: np.ndarray  # diagonal of ∇²f [-]
    rows: np.ndarray  # (1 + R, K): ∇c, then the balance rows' gradients J [-]
    values: np.ndarray  # (1 + R): c, then g [-]
    row_curvature: np.ndarray  # diagonal of ∇²c [-]
    balance_second: np.ndarray  # (R, K): diagonal of each balance row's Hessian [-]


def _floors(scaled: ScaledProblem, reserve: float, count: int) -> np.ndarray:
    """The W′ floor at every segment end [J]: the reserve, and at a window's last end its
    end floor."""
    floor = np.full(count, reserve)
    if scaled.window is not None:
        floor[-1] = max(reserve, scaled.window.end_floor)
    return floor


def _balance_terms(scaled: ScaledProblem, reserve: float, power: np.ndarray,
                   time: np.ndarray, dtime: np.ndarray, d2time: np.ndarray, rows: np.ndarray
                   ) -> tuple[np.ndarray, np.ndarray]:
    """(the W′ balance at the ends `rows` in the scaled constraint form (balance − floor)/W′,
    the diagonal of each row's Hessian in x), differential model, sides held.

    With the deficit D stepped by D_{k+1} = D_k + e_k·t_k above CP (e = P − CP) and
    D_{k+1} = D_k·a_k, a_k = exp(e_k·t_k/W′), below, ∂²D_r/∂P_k² = Π_{k<m≤r} a_m·D″_k with
    D″_k = 2t′ + e·t″ above and D_{k+1}·(s′² + s″) below, s = e·t/W′."""
    request = scaled.request
    critical, w_prime = w_prime_parameters(request)
    excess = power - critical
    above = scaled.side if scaled.side is not None else excess > 0
    balance = steady_w_prime_balance(power, time, request, scaled.initial)
    floor = _floors(scaled, reserve, power.size)
    value = (balance[rows] - floor[rows]) / w_prime
    deficit_after = w_prime - balance
    slope = (time + excess * dtime) / w_prime
    bend = (2.0 * dtime + excess * d2time) / w_prime
    second = np.where(above, w_prime * bend, deficit_after * (slope**2 + bend))
    log_decay = np.concatenate([[0.0], np.cumsum(np.where(above, 0.0, excess * time / w_prime))])
    cols = np.arange(power.size)[None, :]
    span = np.where(cols <= rows[:, None], log_decay[rows + 1, None] - log_decay[cols + 1],
                    -np.inf)
    mean = scaled.mean
    return value, -np.exp(span) * second[None, :] * mean * mean / w_prime


def _point(scaled: ScaledProblem, reserve: float, x: np.ndarray, rows: np.ndarray
           ) -> _Point:
    """Everything the subproblem needs at x (one steady evaluation with t″)."""
    from pacing.plan.slsqp_polish import w_prime_jacobian

    mean, total0 = scaled.mean, scaled.total0
    power = x * mean
    time, dtime, d2time = steady_segment_times(scaled.model, power)
    scaled.counter[0] += 1
    excess = power - scaled.centre
    coupling = (float(np.sum(excess * time)) - scaled.target) / (mean * total0)
    value, second = _balance_terms(scaled, reserve, power, time, dtime, d2time, rows)
    w_prime = w_prime_parameters(scaled.request)[1]
    jacobian = w_prime_jacobian(power, time, dtime, scaled.request, scaled.side, rows,
                                scaled.initial) * mean / w_prime
    return _Point(
        x=x, objective=float(time.sum()) / total0, gradient=dtime * mean / total0,
        curvature=d2time * mean * mean / total0,
        rows=np.vstack([((time + excess * dtime) / total0)[None, :], jacobian]),
        values=np.concatenate([[coupling], value]),
        row_curvature=(2.0 * dtime + excess * d2time) * mean / total0,
        balance_second=second)


def _violation(values: np.ndarray) -> float:
    """ℓ1 violation of the constraints: |c| + Σ max(0, −g) [-]."""
    return abs(float(values[0])) + float(np.sum(np.maximum(-values[1:], 0.0)))


def _merit_values(scaled: ScaledProblem, reserve: float, x: np.ndarray, rows: np.ndarray
                  ) -> tuple[float, np.ndarray]:
    """(objective, constraint values) at x from one steady evaluation without t″."""
    mean = scaled.mean
    power = x * mean
    time, _ = steady_times(scaled.model, power)
    scaled.counter[0] += 1
    coupling = (float(np.sum((power - scaled.centre) * time)) - scaled.target) / (
        mean * scaled.total0)
    request = scaled.request
    w_prime = w_prime_parameters(request)[1]
    balance = steady_w_prime_balance(power, time, request, scaled.initial)
    floor = _floors(scaled, reserve, power.size)
    values = np.concatenate([[coupling], (balance[rows] - floor[rows]) / w_prime])
    return float(time.sum()) / scaled.total0, values


def dual_qp(hessian: np.ndarray, gradient: np.ndarray, rows: np.ndarray, values: np.ndarray,
            low: np.ndarray, high: np.ndarray, start: np.ndarray | None = None
            ) -> tuple[np.ndarray, np.ndarray]:
    """Solve min ½dᵀ·diag(hessian)·d + gradientᵀd s.t. rows[0]·d + values[0] = 0,
    rows[1:]·d + values[1:] ≥ 0, low ≤ d ≤ high, in the elastic form, by its dual.

    For multipliers y the minimiser over the box is d(y) = clip((rowsᵀy − gradient)/hessian,
    low, high); the dual q(y) = ½dᵀHd + gradientᵀd − yᵀ(rows·d + values) is concave and is
    maximised over |y₀| ≤ ρ, 0 ≤ y_i ≤ ρ (ρ = MULTIPLIER_BOX) by projected Newton steps with
    an Armijo search along the projection arc (Bertsekas 1982).

    Parameters
    ----------
    hessian : numpy.ndarray
        Positive diagonal of the quadratic term, length K [-].
    gradient : numpy.ndarray
        Linear term, length K [-].
    rows : numpy.ndarray
        Constraint rows, shape (1 + R, K): the equality first [-].
    values : numpy.ndarray
        Constraint values at d = 0, length 1 + R [-].
    low : numpy.ndarray
        Lower bounds of d, length K (≤ 0) [-].
    high : numpy.ndarray
        Upper bounds of d, length K (≥ 0) [-].
    start : numpy.ndarray or None
        Multipliers to start from (the previous subproblem's); None for zeros [-].

    Returns
    -------
    step : numpy.ndarray
        The minimiser d, length K [-].
    multipliers : numpy.ndarray
        y, length 1 + R [-].

    References
    ----------
    Bertsekas, D.P. (1982). Projected Newton methods for optimization problems with simple
    constraints. SIAM J Control Optim 20(2):221-246. doi:10.1137/0320018
    """
    box = (np.r_[-MULTIPLIER_BOX, np.zeros(values.size - 1)], np.full(values.size, MULTIPLIER_BOX))
    y = np.zeros(values.size) if start is None else np.clip(start, *box)
    damping, curvature = _damping(rows, hessian)
    halvings = 0.5 ** np.arange(DUAL_LINE_STEPS)

    def primal(ys: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """For multipliers ys (one set a row): d, q, the ascent −(rows·d + values) and the
        size of the projected ascent, a row each."""
        ds = np.clip((ys @ rows - gradient) / hessian, low, high)
        ascents = -(ds @ rows.T + values)
        qs = (0.5 * np.einsum("sk,k,sk->s", ds, hessian, ds) + ds @ gradient
              + np.einsum("sm,sm->s", ys, ascents))
        sizes = np.abs(ys - np.clip(ys + ascents, *box)).max(axis=1)
        return ds, qs, ascents, sizes

    ds, qs, ascents, sizes = primal(y[None, :])
    d, q, ascent, size = ds[0], float(qs[0]), ascents[0], float(sizes[0])
    for _ in range(DUAL_STEPS):
        if size <= DUAL_TOLERANCE:
            break
        newton = _dual_direction(y, d, ascent, min(1e-9, size), rows, hessian, low, high,
                                 damping, box)
        # the Newton direction, else (where the free coordinates change too much along it)
        # the gradient scaled by the whole-box curvature; each searched by halving the step
        # (Armijo along the projection arc), a few step sizes at once; near the answer q
        # changes by less than its rounding: the residual decides there
        for direction in (newton, ascent / curvature):
            for chunk in range(0, DUAL_LINE_STEPS, DUAL_LINE_CHUNK):
                trials = np.clip(y + halvings[chunk:chunk + DUAL_LINE_CHUNK, None] * direction,
                                 *box)
                ds, qs, ascents, sizes = primal(trials)
                good = ((qs >= q + ARMIJO * ((trials - y) @ ascent))
                        | ((sizes <= 0.5 * size) & (qs >= q - 1e-14 * abs(q))))
                if good.any():
                    break
            if good.any():
                break
        else:
            break
        best = int(np.argmax(good))
        y, d, q, ascent, size = (trials[best], ds[best], float(qs[best]), ascents[best],
                                 float(sizes[best]))
    return d, y


def _damping(rows: np.ndarray, hessian: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(the damping added to the dual's Newton matrix, the whole-box curvature of each
    multiplier): DUAL_DAMPING of the whole-box matrix M = A·H⁻¹·Aᵀ plus a ridge of DUAL_RIDGE
    of its largest diagonal, so the damped matrix is positive definite even where M is
    singular (more rows than segments, a zero row); the curvature is M's diagonal, floored by
    the same ridge."""
    scaled_all = rows / np.sqrt(hessian)
    whole = scaled_all @ scaled_all.T
    diagonal = np.diag(whole)
    ridge = DUAL_RIDGE * max(float(diagonal.max(initial=0.0)), float(np.finfo(float).tiny))
    curvature = np.maximum(diagonal, ridge)
    return DUAL_DAMPING * (whole + ridge * np.eye(diagonal.size)), curvature


def _dual_direction(y: np.ndarray, d: np.ndarray, ascent: np.ndarray, edge: float,
                    rows: np.ndarray, hessian: np.ndarray, low: np.ndarray, high: np.ndarray,
                    damping: np.ndarray, box: tuple[np.ndarray, np.ndarray]) -> np.ndarray:
    """The projected Newton direction of the dual at y: multipliers on their box's edge
    with the ascent pointing out stay; the others take the Newton step of the dual restricted
    to the coordinates of d inside their bounds (its matrix damped by `damping`)."""
    held = (((y <= box[0] + edge) & (ascent < 0)) | ((y >= box[1] - edge) & (ascent > 0)))
    free = (d > low) & (d < high)
    scaled_rows = rows[:, free] / np.sqrt(hessian[free])
    matrix = scaled_rows @ scaled_rows.T + damping
    direction = np.zeros(y.size)
    moving = ~held
    if moving.any():
        try:
            direction[moving] = np.linalg.solve(matrix[np.ix_(moving, moving)],
                                                ascent[moving])
        except np.linalg.LinAlgError:  # not expected with the ridge: the ascent then
            return ascent
    if not np.all(np.isfinite(direction)) or float(ascent @ direction) <= 0:
        return ascent
    return direction


def _hessian(point: _Point, multipliers: np.ndarray) -> np.ndarray:
    """Diagonal of the Lagrangian's Hessian f − λc − μᵀg, kept above CURVATURE_FLOOR of the
    objective's own (t″ > 0: a segment's time is convex in its power)."""
    hessian = (point.curvature - multipliers[0] * point.row_curvature
               - multipliers[1:] @ point.balance_second)
    return np.maximum(hessian, CURVATURE_FLOOR * point.curvature)


def sided_sqp(scaled: ScaledProblem, reserve: float, start: np.ndarray, low: np.ndarray,
              high: np.ndarray, rows: np.ndarray, maxiter: int, ftol: float) -> SqpResult:
    """The sided problem (module docstring) solved by structured SQP from `start`.

    Parameters
    ----------
    scaled : pacing.plan.slsqp_polish.ScaledProblem
        The scaled problem, its sides set (`side`) [-].
    reserve : float
        Lowest W′ balance at the segment ends `rows` (a window's last end: its end floor) [J].
    start : numpy.ndarray
        Segment powers over P̄ to start from, length K [-].
    low : numpy.ndarray
        Lowest power over P̄ of each segment (CP on the high side) [-].
    high : numpy.ndarray
        Highest power over P̄ of each segment (CP on the low side) [-].
    rows : numpy.ndarray
        Segment ends where the W′ balance is a constraint, increasing [-].
    maxiter : int
        Most iterations [-].
    ftol : float
        Stop when a step changes the objective by less than this with the constraints held
        within it [-].

    Returns
    -------
    SqpResult
        The answer, with scipy's field names [-].

    References
    ----------
    Nocedal, J. & Wright, S.J. (2006). Numerical Optimization, 2nd ed. Springer, ch. 18.
    """
    x = np.clip(np.asarray(start, dtype=float), low, high)
    multipliers = np.zeros(1 + rows.size)
    penalty = 0.0
    point = _point(scaled, reserve, x, rows)
    for iteration in range(1, maxiter + 1):
        step, multipliers = dual_qp(_hessian(point, multipliers), point.gradient, point.rows,
                                    point.values, low - x, high - x, multipliers)
        penalty = max(penalty, 1.5 * float(np.abs(multipliers).max()) + 1e-6)
        violation = _violation(point.values)
        merit = point.objective + penalty * violation
        slope = float(point.gradient @ step) - penalty * violation
        if slope >= 0 or np.abs(step).max() <= 1e-14:
            return SqpResult(x, iteration, multipliers, "no descent left",
                             violation < ftol)
        size = 1.0
        for _ in range(LINE_SEARCH_STEPS):
            trial = np.clip(x + size * step, low, high)
            objective, values = _merit_values(scaled, reserve, trial, rows)
            if objective + penalty * _violation(values) <= merit + ARMIJO * size * slope:
                break
            size *= 0.5
        else:
            return SqpResult(x, iteration, multipliers, "line search failed", False)
        change = abs(objective - point.objective)
        x = trial
        if change < ftol and _violation(values) < ftol:
            return SqpResult(x, iteration, multipliers, "Optimization terminated successfully",
                             True)
        point = _point(scaled, reserve, x, rows)
    return SqpResult(x, maxiter, multipliers, "Iteration limit reached", False)
