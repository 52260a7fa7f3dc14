"""The SLSQP polish of the fastest cycling plan: plain, sided at CP, and by windows.

The fastest plan in the steady segment model (pacing.plan.fastest) is polished by scipy's
SLSQP on the full problem: the finish time under the coupling constraint, the power bounds,
the W′ balance at every segment end and the effort cap, with analytic gradients.

- Plain (`slsqp_plan`): SLSQP as it is, 100 iterations; the W′ balance has a kink at CP (its
  slope in a segment's power jumps from the recovery term below CP to the segment's time above
  it) and where the optimum rides at CP (a third of the segments on a 200 km course with
  wind) SLSQP zigzags across it until the iteration limit.
- Sided (`sided_slsqp_plan`): every segment is held on one side of CP, with CP as a bound on
  that side; there the balance is smooth and SLSQP converges. Segments resting on CP change
  side where a small step or a jump across CP lowers the Lagrangian (pacing.plan.sided_crossings)
  and SLSQP runs again. With the differential W′ balance and the sides fixed, the balance falls
  only above CP, so its lowest points are the ends of the runs above CP: only those rows are
  constraints. Each round is solved by SLSQP or (`structured`) by the structured SQP of
  pacing.plan.sided_sqp (separable objective and coupling, few rows); where that SQP cannot go
  on (a singular system, a power it cannot evaluate) by SLSQP, the reason at the front of its
  message, so no linear-algebra error escapes the polish.
- By windows (`window_polish`): on a split too long for dense SLSQP (its cost grows as K³),
  windows of consecutive segments are polished in turn with the rest of the plan held; each
  keeps its share of the coupling constraint, starts from the W′ balance the plan reaches
  before it, and ends above the balance the held segments after it need to keep the reserve
  (they act on the deficit D = W′ − W′bal by fixed affine steps, so every later floor is one
  floor on the window's last balance).

References
----------
Kraft, D. (1988). A software package for sequential quadratic programming. DFVLR-FB 88-28
(scipy.optimize SLSQP).
Nocedal, J. & Wright, S.J. (2006). Numerical Optimization, 2nd ed. Springer, ch. 12 and 18
(the KKT conditions and the multipliers SLSQP returns).
Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
doi:10.1249/MSS.0b013e3182517a80 (integral W′ balance)
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3 (differential W′ balance)
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any

import numpy as np
from threadpoolctl import threadpool_limits

from pacing.physiology.critical_power import recovery_time_constant
from pacing.plan.fastest_problem import FastestProblem, SolverLimits
from pacing.plan.lagrange import (
    coupling_constraint,
    fourth_power_mean,
    steady_w_prime_balance,
)
from pacing.plan.request import PlanRequest, required_mean_power, w_prime_parameters
from pacing.plan.sided_crossings import crossed_sides, kept_finish, side_jumps
from pacing.plan.sided_sqp import SqpResult, sided_sqp
from pacing.plan.steady_model import SegmentModel, steady_times

if TYPE_CHECKING:
    from scipy.optimize import OptimizeResult

# SLSQP's stop on the objective (finish time over the constant plan's, ≈ 1): 1e-9 is about
# 4 µs of a one-hour ride; at 1e-10 its steps zigzag along the W′ kink at CP until the
# iteration limit (100 iterations against 65 on the demo course, same finish time to 1 ms)
SLSQP_FTOL = 1e-9
PLAIN_MAXITER = 100  # iterations of the plain polish
SIDED_ROUNDS = 6  # rounds of the sided polish (2 on the 200 km course with wind)
SIDED_MAXITER = 300  # SLSQP iterations per round of the sided polish
JUMP_ROUNDS = 3  # most rounds started by jumps across CP (pacing.plan.sided_crossings)
WINDOW_SWEEPS = 4  # most sweeps of the windows
WINDOW_GAIN = 1e-5  # another sweep while the last one gained more than this share of the time


def w_prime_jacobian(power: np.ndarray, time: np.ndarray, dtime: np.ndarray,
                     request: PlanRequest, side: np.ndarray | None = None,
                     rows: np.ndarray | None = None, initial_balance: float | None = None
                     ) -> np.ndarray:
    """d(W′ balance at the end of segment j)/d(power of segment k), shape (rows, K).

    Both W′ models are affine steps on the deficit D = W′ − W′bal over a segment of constant
    power, D_{k+1} = a_k·D_k + b_k (differential: a = 1, b = (P − CP)·t above CP and
    a = e^{(P − CP)·t/W′}, b = 0 below; integral: a = e^{−t/τ}, b = (P − CP)⁺·τ·(1 − a)), and t_k
    depends on P_k through t_k′. Then dD_j/dP_k = (Π_{k<m<j} a_m)·(D_k·da_k/dP_k + db_k/dP_k)
    for j > k. The integral form's τ = 546·e^(−0.01·D_CP) + 316 s depends on every below-CP
    segment through D_CP = CP − Σ_b P·t / Σ_b t (Skiba et al. 2012).

    Parameters
    ----------
    power : numpy.ndarray
        Segment powers, length K [W].
    time : numpy.ndarray
        Segment times, length K [s].
    dtime : numpy.ndarray
        Their derivatives in the segment's power, length K [s/W].
    request : PlanRequest
        CP, W′ and the W′ balance model [-].
    side : numpy.ndarray or None
        The side of CP whose formula each segment takes (True: above), which matters on CP
        itself; None for the side of its power (CP itself below) [-].
    rows : numpy.ndarray or None
        The segment ends wanted, increasing; None for all [-].
    initial_balance : float or None
        W′ balance before the first segment; None for W′ [J].

    Returns
    -------
    numpy.ndarray
        The Jacobian, one row per segment end wanted, K columns [J/W].

    References
    ----------
    Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Eur J Appl
    Physiol 115(4):703-713. doi:10.1007/s00421-014-3050-3 (differential)
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Med Sci Sports Exerc
    44(8):1526-1532. doi:10.1249/MSS.0b013e3182517a80 (integral)
    """
    critical, w_prime = w_prime_parameters(request)
    excess = power - critical
    above = excess > 0 if side is None else side
    if request.w_prime_model == "differential":
        exponent = np.where(above, 0.0, excess * time / w_prime)
        decay = np.exp(exponent)
        d_decay = np.where(above, 0.0, decay * (time + excess * dtime) / w_prime)
        d_increment = np.where(above, time + excess * dtime, 0.0)
    else:
        below = ~above & (power < critical)
        below_time = float(time[below].sum())
        gap = (critical - float(np.sum(power[below] * time[below])) / below_time
               if below_time > 0 else 0.0)
        tau = recovery_time_constant(gap)
        decay = np.exp(-time / tau)
        d_decay = -decay * dtime / tau
        d_increment = np.where(above, tau * (1.0 - decay), 0.0) + np.maximum(excess, 0.0) * \
            decay * dtime
    balance = steady_w_prime_balance(power, time, request, initial_balance)
    first = w_prime if initial_balance is None else initial_balance
    deficit = w_prime - np.concatenate([[first], balance])
    local = deficit[:-1] * d_decay + d_increment  # dD_{k+1}/dP_k
    log_decay = np.concatenate([[0.0], np.cumsum(np.log(np.maximum(decay, 1e-300)))])
    ends = np.arange(power.size) if rows is None else np.asarray(rows)
    row = ends[:, None]
    cols = np.arange(power.size)[None, :]
    # the deficit after segment r (row r) depends on P_k, k ≤ r, through Π_{k<m≤r} a_m
    span = np.where(cols <= row, log_decay[row + 1] - log_decay[cols + 1], -np.inf)
    jacobian = -np.exp(span) * local[None, :]
    if request.w_prime_model == "integral" and below_time > 0:
        jacobian -= _recovery_constant_term(power, time, dtime, excess, decay, deficit, below,
                                            below_time, gap, tau)[ends]
    return jacobian


def _recovery_constant_term(power: np.ndarray, time: np.ndarray, dtime: np.ndarray,
                            excess: np.ndarray, decay: np.ndarray, deficit: np.ndarray,
                            below: np.ndarray, below_time: float, gap: float, tau: float
                            ) -> np.ndarray:
    """The integral model's dD_{r+1}/dτ · dτ/dP_k [J/W], shape (K, K): τ depends on every
    below-CP segment through D_CP = CP − Σ_b P·t / Σ_b t."""
    d_gap = np.where(below, -(time + power * dtime) / below_time
                     + float(np.sum(power[below] * time[below])) * dtime / below_time**2,
                     0.0)
    d_tau = -5.46 * np.exp(-0.01 * gap) * d_gap
    by_tau = np.empty(power.size)  # dD_{r+1}/dτ
    slope = 0.0
    for r in range(power.size):
        da = decay[r] * time[r] / tau**2
        db = max(excess[r], 0.0) * ((1.0 - decay[r]) - decay[r] * time[r] / tau)
        slope = decay[r] * slope + deficit[r] * da + db
        by_tau[r] = slope
    return np.outer(by_tau, d_tau)


@dataclass(frozen=True)
class Window:
    """What a window of segments keeps while the rest of the plan is held.

    Attributes
    ----------
    initial_balance : float
        W′ balance before its first segment [J].
    target : float
        Its share Σ (P_k − c)·t_k of the coupling constraint [J].
    end_floor : float
        Lowest W′ balance at its last end that keeps the reserve at every later end [J].
    """

    initial_balance: float
    target: float
    end_floor: float


class ScaledProblem:
    """The fastest-plan problem in SLSQP's variables x = P/P̄ [-], with its objective (finish
    time over the constant plan's) and constraints (coupling, W′ balance, effort) and their
    analytic gradients; one steady evaluation per new x.

    Parameters
    ----------
    problem : FastestProblem
        The problem (or a window's, with `window`) [-].
    window : Window or None
        When the problem is a window of a longer plan: its start, share and end floor [-].
    """

    def __init__(self, problem: FastestProblem, window: Window | None = None) -> None:
        self.model, self.request, self.counter = problem.model, problem.request, problem.counter
        self.centre, self.target = coupling_constraint(self.request, self.model)
        self.window = window
        self.initial = None if window is None else window.initial_balance
        if window is not None:
            self.target = window.target
        self.mean = required_mean_power(self.request)
        time0, _ = steady_times(self.model, np.full(self.model.count, self.mean))
        self.total0 = float(time0.sum())
        self.cache: dict[bytes, tuple[np.ndarray, np.ndarray]] = {}
        self.side: np.ndarray | None = None
        self.bounds = (problem.lower, problem.upper)

    def evaluate(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """steady_times at powers x·P̄ (the last one kept).

        Parameters
        ----------
        x : numpy.ndarray
            Segment powers over P̄, length K [-].

        Returns
        -------
        tuple of numpy.ndarray
            Segment times [s] and their derivatives in power [s/W].
        """
        key = x.tobytes()
        if key not in self.cache:
            self.cache.clear()
            self.counter[0] += 1
            self.cache[key] = steady_times(self.model, x * self.mean)
        return self.cache[key]

    def objective(self, x: np.ndarray) -> float:
        """Finish time over the constant plan's [-]."""
        return float(self.evaluate(x)[0].sum() / self.total0)

    def objective_gradient(self, x: np.ndarray) -> np.ndarray:
        """Its gradient in x [-]."""
        return self.evaluate(x)[1] * self.mean / self.total0

    def coupling(self, x: np.ndarray) -> np.ndarray:
        """(Σ (P_k − c)·t_k − E₀) / (P̄·T₀) [-], zero on the constraint."""
        time = self.evaluate(x)[0]
        return np.array([(np.sum((x * self.mean - self.centre) * time) - self.target)
                         / (self.mean * self.total0)])

    def coupling_gradient(self, x: np.ndarray) -> np.ndarray:
        """Its gradient in x, shape (1, K) [-]."""
        time, dtime = self.evaluate(x)
        mean = self.mean
        return ((time + (x * mean - self.centre) * dtime) * mean / (mean * self.total0)
                )[None, :]

    def balance_constraint(self, reserve: float, rows: np.ndarray | None = None
                           ) -> dict[str, Any]:
        """(W′ balance at the segment ends `rows` (None: all) − floor) / W′ ≥ 0, with its
        Jacobian; the floor is the reserve [J], and at a window's last end its end floor."""
        w_prime = w_prime_parameters(self.request)[1]
        floor: float | np.ndarray = reserve
        if self.window is not None:
            floors = np.full(self.model.count, reserve)
            floors[-1] = max(reserve, self.window.end_floor)
            floor = floors if rows is None else floors[rows]

        def balance(x: np.ndarray) -> np.ndarray:
            values = steady_w_prime_balance(x * self.mean, self.evaluate(x)[0], self.request,
                                            self.initial)
            return ((values if rows is None else values[rows]) - floor) / w_prime

        def balance_jacobian(x: np.ndarray) -> np.ndarray:
            time, dtime = self.evaluate(x)
            return w_prime_jacobian(x * self.mean, time, dtime, self.request, self.side, rows,
                                    self.initial) * self.mean / w_prime

        return {"type": "ineq", "fun": balance, "jac": balance_jacobian}

    def effort_constraint(self, cap: float) -> dict[str, Any]:
        """1 − (4th-power mean / cap)⁴ ≥ 0, with its gradient."""
        def effort(x: np.ndarray) -> np.ndarray:
            time = self.evaluate(x)[0]
            return np.array([1.0 - (fourth_power_mean(x * self.mean, time) / cap) ** 4])

        def effort_gradient(x: np.ndarray) -> np.ndarray:
            time, dtime = self.evaluate(x)
            power = x * self.mean
            total = time.sum()
            fourth = np.sum(power**4 * time) / total
            grad = (4 * power**3 * time + power**4 * dtime) / total - fourth * dtime / total
            return (-grad * self.mean / cap**4)[None, :]

        return {"type": "ineq", "fun": effort, "jac": effort_gradient}


def _constraints(scaled: ScaledProblem, limits: SolverLimits, rows: np.ndarray | None = None
                 ) -> list[dict[str, Any]]:
    """SLSQP's constraints: the coupling constraint, then the W′ balance at the segment ends
    `rows` (None: all; none when empty) and the effort cap when given."""
    constraints: list[dict[str, Any]] = [
        {"type": "eq", "fun": scaled.coupling, "jac": scaled.coupling_gradient}]
    if limits.reserve is not None and (rows is None or rows.size):
        constraints.append(scaled.balance_constraint(limits.reserve, rows))
    if limits.cap is not None:
        constraints.append(scaled.effort_constraint(limits.cap))
    return constraints


def _run_slsqp(scaled: ScaledProblem, constraints: list[dict[str, Any]], start: np.ndarray,
               lower: np.ndarray, upper: np.ndarray, maxiter: int) -> OptimizeResult:
    """scipy's SLSQP in the scaled variables from `start` within [lower, upper] [-]."""
    from scipy import optimize  # here: the command line's constant plans never load it

    # SLSQP's small dense linear algebra runs up to 50× slower on a multi-threaded BLAS when
    # the cores are busy (measured: 2.4 s against 0.045 s for 40 segments on 2 loaded cores)
    with threadpool_limits(limits=1, user_api="blas"):
        return optimize.minimize(
            scaled.objective, np.clip(start, lower, upper), jac=scaled.objective_gradient,
            bounds=list(zip(lower, upper, strict=True)), constraints=constraints,
            method="SLSQP", options={"maxiter": maxiter, "ftol": SLSQP_FTOL})


def slsqp_plan(problem: FastestProblem, start: np.ndarray, limits: SolverLimits,
               maxiter: int = PLAIN_MAXITER) -> tuple[np.ndarray, OptimizeResult]:
    """Fastest powers with the W′ reserve and/or effort cap by plain SLSQP (Kraft 1988).

    Parameters
    ----------
    problem : FastestProblem
        The problem [-].
    start : numpy.ndarray
        Segment powers to start from, length K [W].
    limits : SolverLimits
        The W′ reserve [J] and effort cap [W] to keep [-].
    maxiter : int
        Most SLSQP iterations [-].

    Returns
    -------
    power : numpy.ndarray
        Segment powers within the bounds, length K [W].
    result : scipy.optimize.OptimizeResult
        scipy's result [-].

    References
    ----------
    Kraft, D. (1988). A software package for sequential quadratic programming. DFVLR-FB
    88-28 (scipy.optimize SLSQP).
    """
    scaled = ScaledProblem(problem)
    lower, upper, mean = problem.lower, problem.upper, scaled.mean
    result = _run_slsqp(scaled, _constraints(scaled, limits), start / mean, lower / mean,
                        upper / mean, maxiter)
    return np.clip(result.x * mean, lower, upper), result


def _sides(power: np.ndarray, lower: np.ndarray, upper: np.ndarray, critical: float
           ) -> np.ndarray:
    """The side of CP each segment is held on (True: above): the side of its power (CP itself
    below), or the only side its bounds allow."""
    return np.where(upper <= critical, False, np.where(lower >= critical, True,
                                                       power > critical))


def _lowest_rows(side: np.ndarray, request: PlanRequest) -> np.ndarray | None:
    """The segment ends where the W′ balance can be lowest with the sides held: the ends of
    the runs above CP and the last end (differential model); None (every end) for the
    integral model, whose balance can rise above CP."""
    if request.w_prime_model != "differential":
        return None
    ends = side & ~np.r_[side[1:], False]
    ends[-1] = True
    return np.flatnonzero(ends)


def sided_slsqp_plan(problem: FastestProblem, start: np.ndarray, limits: SolverLimits,
                     window: Window | None = None, structured: bool = False,
                     gradual: bool = False) -> tuple[np.ndarray, OptimizeResult | SqpResult]:
    """SLSQP with every segment held on one side of CP, sides changed where crossing pays.

    Each round gives every segment CP as a bound on its side (module docstring); after it,
    segments resting on CP change side where a small step across lowers the Lagrangian
    f − λ·coupling − Σ μ_j·balance_j (the round's multipliers; only the strongest of each
    block when the sides would repeat), at most SIDED_ROUNDS times; when none does, the
    fastest such answer is kept and up to JUMP_ROUNDS rounds start from jumps well across CP
    (pacing.plan.sided_crossings), kept while they are faster. Without a W′ reserve: one SLSQP
    run.

    Parameters
    ----------
    problem : FastestProblem
        The problem (a window's with `window`) [-].
    start : numpy.ndarray
        Segment powers to start from, length K [W].
    limits : SolverLimits
        The W′ reserve [J] and effort cap [W] to keep [-].
    window : Window or None
        The window's start, share and end floor when the problem is a window [-].
    structured : bool
        Solve each round with the structured SQP (pacing.plan.sided_sqp) instead of SLSQP,
        when there is no effort cap (the differential model's rows) [-].
    gradual : bool
        Split runs above CP one segment per block and round (sided_crossings) [-].

    Returns
    -------
    power : numpy.ndarray
        Segment powers within the bounds, length K [W].
    result : scipy.optimize.OptimizeResult or pacing.plan.sided_sqp.SqpResult
        The last round's result, with the iterations of every round in `nit` [-].

    References
    ----------
    Nocedal, J. & Wright, S.J. (2006). Numerical Optimization, 2nd ed. Springer, ch. 12
    (first-order conditions with the Lagrange multipliers).
    """
    scaled = ScaledProblem(problem, window)
    mean = scaled.mean
    lower, upper = problem.lower, problem.upper
    power = np.clip(start, lower, upper)
    if limits.reserve is None:
        result = _run_slsqp(scaled, _constraints(scaled, limits), power / mean, lower / mean,
                            upper / mean, SIDED_MAXITER)
        return np.clip(result.x * mean, lower, upper), result
    critical = w_prime_parameters(problem.request)[0]
    side = _sides(power, lower, upper, critical)
    iterations, jumps, seen = 0, 0, {side.tobytes()}
    best: tuple[float, np.ndarray, OptimizeResult | SqpResult] | None = None
    for _ in range(SIDED_ROUNDS + JUMP_ROUNDS):
        scaled.side = side
        rows = _lowest_rows(side, problem.request)
        low = np.where(side, np.maximum(lower, critical), lower)
        high = np.where(side, upper, np.minimum(upper, critical))
        if structured and rows is not None and limits.cap is None:
            result = _structured_round(scaled, limits, power / mean, low / mean,
                                       high / mean, rows)
        else:
            result = _run_slsqp(scaled, _constraints(scaled, limits, rows), power / mean,
                                low / mean, high / mean, SIDED_MAXITER)
        iterations += int(result.nit)
        power = np.clip(result.x * mean, low, high)
        crossed = crossed_sides(scaled, result, power, side, rows, seen, gradual)
        if crossed is not None:
            side = crossed
            continue
        # no segment crosses CP by a small step: keep the fastest such answer, then try
        # the resting segments well across CP (pacing.plan.sided_crossings)
        finish = kept_finish(scaled, limits, power)
        if best is not None and not finish < best[0]:
            break
        best = (finish, power, result)
        jump = (side_jumps(scaled, power, side, lower, upper, np.asarray(result.multipliers),
                           rows, limits.reserve) if jumps < JUMP_ROUNDS and rows is not None
                and limits.cap is None else None)
        if jump is None:
            break
        side, power = jump
        seen.add(side.tobytes())
        jumps += 1
    if best is not None and not kept_finish(scaled, limits, power) < best[0]:
        power, result = best[1], best[2]
    result.nit = iterations
    return power, result


def _structured_round(scaled: ScaledProblem, limits: SolverLimits, start: np.ndarray,
                      low: np.ndarray, high: np.ndarray, rows: np.ndarray
                      ) -> OptimizeResult | SqpResult:
    """One sided round by the structured SQP (pacing.plan.sided_sqp); where it cannot go on
    (a singular system, a power it cannot evaluate), the round by SLSQP instead, the reason
    at the front of its message."""
    reserve = 0.0 if limits.reserve is None else limits.reserve
    try:
        with np.errstate(over="raise", invalid="raise", divide="raise"):
            result = sided_sqp(scaled, reserve, start, low, high, rows, SIDED_MAXITER,
                               SLSQP_FTOL)
        if np.all(np.isfinite(result.x)) and np.all(np.isfinite(result.multipliers)):
            return result
        reason = "a power that is not a number"
    except (np.linalg.LinAlgError, FloatingPointError) as error:
        reason = f"{type(error).__name__}: {error}"
    fallback = _run_slsqp(scaled, _constraints(scaled, limits, rows), start, low, high,
                          SIDED_MAXITER)
    fallback.message = f"structured SQP stopped ({reason}); SLSQP round: {fallback.message}"
    return fallback


# ----------------------------------------------------------------------------- windows

def _window_model(model: SegmentModel, first: int, stop: int) -> SegmentModel:
    """The segments first..stop-1 of a model as a model of their own (own cache)."""
    pieces = (model.segment >= first) & (model.segment < stop)
    return replace(model, length=model.length[pieces], grade=model.grade[pieces],
                   density=model.density[pieces], headwind=model.headwind[pieces],
                   crosswind=model.crosswind[pieces], segment=model.segment[pieces] - first,
                   count=stop - first, mean_grade=model.mean_grade[first:stop],
                   speed_guess={})


def _end_floor(power: np.ndarray, time: np.ndarray, request: PlanRequest, stop: int,
               reserve: float) -> float:
    """Lowest W′ balance after segment stop-1 that keeps `reserve` at every later end with
    the later segments held (differential model) [J].

    The later segments map the deficit D by fixed affine steps, D_j = A_j·D + B_j (A_j > 0),
    so D_j ≤ W′ − reserve for all j is D ≤ min_j (W′ − reserve − B_j)/A_j.
    """
    w_prime = w_prime_parameters(request)[1]
    if stop >= power.size:
        return -np.inf
    excess = power[stop:] - w_prime_parameters(request)[0]
    later_time = time[stop:]
    slope = np.cumprod(np.where(excess > 0, 1.0,
                                np.exp(np.minimum(excess, 0.0) * later_time / w_prime)))
    # B_j: the later deficits from a rested start (D = 0)
    offset = w_prime - steady_w_prime_balance(power[stop:], later_time, request)
    room = w_prime - reserve - offset
    kept = slope > 1e-300  # where a deficit still reaches: elsewhere D_j = B_j, held anyway
    if not kept.any():
        return -np.inf
    return float(w_prime - np.min(room[kept] / slope[kept]))


def _window_answer(problem: FastestProblem, power: np.ndarray, limits: SolverLimits,
                   first: int, stop: int) -> tuple[np.ndarray, int]:
    """The sided polish of segments first..stop-1 with the rest of the plan held; (their
    powers [W], SLSQP iterations)."""
    request, model = problem.request, problem.model
    centre, _ = coupling_constraint(request, model)
    time, _ = steady_times(model, power)
    problem.counter[0] += 1
    balance = steady_w_prime_balance(power, time, request)
    initial = w_prime_parameters(request)[1] if first == 0 else float(balance[first - 1])
    reserve = limits.reserve if limits.reserve is not None else 0.0
    window = Window(initial, float(np.sum((power[first:stop] - centre) * time[first:stop])),
                    _end_floor(power, time, request, stop, reserve))
    part = FastestProblem(_window_model(model, first, stop), request,
                          problem.lower[first:stop], problem.upper[first:stop],
                          problem.counter)
    polished, result = sided_slsqp_plan(part, power[first:stop], limits, window)
    return polished, int(result.nit)


def window_polish(problem: FastestProblem, power: np.ndarray, held: SolverLimits,
                  limits: SolverLimits, size: int) -> tuple[np.ndarray, int]:
    """Polish a plan window by window (module docstring), each window by `sided_slsqp_plan`.

    Windows of `size` segments end to end, every other sweep shifted by half a window; a
    window's answer is kept when the whole plan then keeps the limits (within the solver's
    slack) and is faster. The windows are swept again while a sweep gains more than
    WINDOW_GAIN of the finish time, at most WINDOW_SWEEPS times. The differential W′
    balance only, without the effort cap (the plan is returned as it is otherwise).

    Parameters
    ----------
    problem : FastestProblem
        The whole problem [-].
    power : numpy.ndarray
        A plan that keeps the limits, length K [W].
    held : SolverLimits
        The W′ reserve [J] the plan must keep (within 1e-6 of W′) [-].
    limits : SolverLimits
        The W′ reserve [J] given to the windows (a hair inside the held one) [-].
    size : int
        Segments per window [-].

    Returns
    -------
    power : numpy.ndarray
        The polished plan, length K [W].
    iterations : int
        SLSQP iterations of every window [-].
    """
    request = problem.request
    if (limits.reserve is None or held.reserve is None or limits.cap is not None
            or request.w_prime_model != "differential"):
        return power, 0
    count = problem.model.count
    iterations = 0
    power = power.copy()
    for sweep in range(WINDOW_SWEEPS):
        before = problem.finish(power)
        # windows end to end, every other sweep shifted by half a window
        firsts = range(0 if sweep % 2 == 0 else -(size // 2), count, size)
        for first, stop in ((max(first, 0), min(first + size, count)) for first in firsts):
            polished, nit = _window_answer(problem, power, limits, first, stop)
            iterations += nit
            trial = power.copy()
            trial[first:stop] = polished
            if (problem.finish(trial) < problem.finish(power)
                    and problem.keeps(trial, held, 1e-6)):
                power = trial
        if problem.finish(power) >= before * (1 - WINDOW_GAIN):
            break
    return power, iterations
