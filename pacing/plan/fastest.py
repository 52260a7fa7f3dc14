"""The fastest cycling plan in the steady-state segment model (pacing.plan.steady_model).

Minimise T = Σ t_k(P_k) subject to one coupling constraint
    E(P) = Σ (P_k − c)·t_k(P_k) − E₀ = 0,
with c = P̄, E₀ = 0 for an equal time-weighted mean power, and c = 0, E₀ = work of the
constant plan for an equal total work, and lo_k ≤ P_k ≤ hi_k. The problem separates: for a
multiplier λ each segment minimises its own Lagrangian t_k(P)·(1 + λ·(P − c)) on [lo_k, hi_k]
(its stationarity condition is t_k′·(1 + λ(P − c)) + λ·t_k = 0: every free segment buys the
same time per joule), and λ is the root of the monotone E(P(λ)) = 0. Those two nested 1-D
problems (a vectorised safeguarded Newton over all segments inside a safeguarded Newton on
λ, dE/dλ = −Σ b_k²/a_k by implicit differentiation) solve the pure mean-power case exactly.

When the athlete's W′ balance (reserve) or the effort cap would be broken:
1. the broken limit gets a price in every segment's Lagrangian, μ·(P − CP)⁺·t_k for W′ spent
   above CP or ν·P⁴·t_k for the effort measure, and the lowest price whose plan keeps the limit
   is found by false position (the problem stays separable, so it is as fast as above);
   when both limits break, the highest common power ceiling that keeps them is used instead;
2. on up to _SLSQP_MAX_SEGMENTS segments, scipy's SLSQP then polishes that feasible plan on the
   full problem (W′ balance at every segment end, recovery included), with analytic gradients
   of time, mean power and W′ balance; it is given limits a hair inside the real ones and its
   answer is moved back onto the coupling constraint, then kept only when feasible and faster.
The priced plan is a relaxation (it charges W′ spent above CP but gives no credit for its
recovery), so on its own it can be far from the optimum. A finer split can hold any plan of a
coarser one, so the solver first solves the coarser problem with one power per run of climb,
flat or descent segments (or, on a split too fine for SLSQP, per run of a few segments, which
itself starts from the climbs, flats and descents) and starts from that plan: the fastest plan
then does not get slower as the segments get finer (pacing.plan.coarse_start).
The solver's effort measure is the time-weighted 4th-power mean of the segment powers, an upper
bound of the effort-weighted power (a 30 s rolling mean can only lower it).

Called by pacing.plan.cycling.make_plan. The Lagrange solve is in pacing.plan.lagrange, the
priced limits (step 1) in pacing.plan.priced_limits, the problem, its limits and the solver's
report in pacing.plan.fastest_problem.

References
----------
Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
Atkinson, G., Peacock, O. & Passfield, L. (2007). Variable versus constant power strategies
during cycling time-trials: prediction of time savings using an up-to-date mathematical model.
J Sports Sci 25(9):1001-1009. doi:10.1080/02640410600944709
Bos, L., Slawinski, M.A., Slawinski, R.A. & Stanoev, T. (2024). On minimizing cyclists' ascent
times. arXiv:2403.03363.
Kraft, D. (1988). A software package for sequential quadratic programming. DFVLR-FB 88-28
(scipy.optimize SLSQP).
"""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy import optimize
from threadpoolctl import threadpool_limits

from pacing.errors import InputError
from pacing.physiology.critical_power import recovery_time_constant
from pacing.plan.coarse_start import coarse_start_plan
from pacing.plan.fastest_problem import FastestProblem, SolverLimits, SolverReport
from pacing.plan.lagrange import (
    coupling_constraint,
    fourth_power_mean,
    lagrange_plan,
    onto_coupling,
    stationarity_residual,
    steady_w_prime_balance,
)
from pacing.plan.priced_limits import PRICE_TOLERANCE, priced_plan
from pacing.plan.request import (
    PlanRequest,
    power_limits,
    required_mean_power,
    w_prime_parameters,
)
from pacing.plan.steady_model import SegmentModel, steady_segment_times

_SLSQP_MAX_SEGMENTS = 120  # above this the dense SLSQP polish costs more than it gains
_SLSQP_MARGIN = 5e-4  # limits given to SLSQP, inside the real ones, relative to W′ or the cap
# SLSQP's stop on the objective (finish time over the constant plan's, ≈ 1): 1e-9 is about
# 4 µs of a one-hour ride; at 1e-10 its steps zigzag along the W′ kink at CP until the
# iteration limit (100 iterations against 65 on the demo course, same finish time to 1 ms)
_SLSQP_FTOL = 1e-9


def _w_prime_jacobian(power: np.ndarray, time: np.ndarray, dtime: np.ndarray,
                      request: PlanRequest) -> np.ndarray:
    """d(W′ balance at the end of segment j)/d(power of segment k) [J/W], shape (K, K).

    Both W′ models are affine steps on the deficit D = W′ − W′bal over a segment of constant
    power, D_{k+1} = a_k·D_k + b_k (differential: a = 1, b = (P − CP)·t above CP and
    a = e^{(P − CP)·t/W′}, b = 0 below; integral: a = e^{−t/τ}, b = (P − CP)⁺·τ·(1 − a)), and t_k
    depends on P_k through t_k′. Then dD_j/dP_k = (Π_{k<m<j} a_m)·(D_k·da_k/dP_k + db_k/dP_k)
    for j > k. The integral form's τ = 546·e^(−0.01·D_CP) + 316 s depends on every below-CP
    segment through D_CP = CP − Σ_b P·t / Σ_b t (Skiba et al. 2012).
    """
    critical, w_prime = w_prime_parameters(request)
    excess = power - critical
    above = excess > 0
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
    deficit = w_prime - np.concatenate([[w_prime], steady_w_prime_balance(power, time, request)])
    local = deficit[:-1] * d_decay + d_increment  # dD_{k+1}/dP_k
    log_decay = np.concatenate([[0.0], np.cumsum(np.log(np.maximum(decay, 1e-300)))])
    rows = np.arange(power.size)[:, None]
    cols = np.arange(power.size)[None, :]
    # the deficit after segment r (row r) depends on P_k, k ≤ r, through Π_{k<m≤r} a_m
    span = np.where(cols <= rows, log_decay[rows + 1] - log_decay[cols + 1], -np.inf)
    jacobian = -np.exp(span) * local[None, :]
    if request.w_prime_model == "integral" and below_time > 0:
        jacobian -= _recovery_constant_term(power, time, dtime, excess, decay, deficit, below,
                                            below_time, gap, tau)
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


class _ScaledProblem:
    """The fastest-plan problem in SLSQP's variables x = P/P̄ [-], with its objective (finish
    time over the constant plan's) and constraints (coupling, W′ balance, effort) and their
    analytic gradients; one steady evaluation per new x."""

    def __init__(self, problem: FastestProblem) -> None:
        self.model, self.request, self.counter = problem.model, problem.request, problem.counter
        self.centre, self.target = coupling_constraint(self.request, self.model)
        self.mean = required_mean_power(self.request)
        time0, _, _ = steady_segment_times(self.model, np.full(self.model.count, self.mean))
        self.total0 = float(time0.sum())
        self.cache: dict[bytes, tuple[np.ndarray, np.ndarray, np.ndarray]] = {}

    def evaluate(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """steady_segment_times at powers x·P̄ (the last one kept)."""
        key = x.tobytes()
        if key not in self.cache:
            self.cache.clear()
            self.counter[0] += 1
            self.cache[key] = steady_segment_times(self.model, x * self.mean)
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
        time, dtime, _ = self.evaluate(x)
        mean = self.mean
        return ((time + (x * mean - self.centre) * dtime) * mean / (mean * self.total0)
                )[None, :]

    def balance_constraint(self, reserve: float) -> dict[str, Any]:
        """(W′ balance at each segment end − reserve) / W′ ≥ 0, with its Jacobian."""
        w_prime = w_prime_parameters(self.request)[1]

        def balance(x: np.ndarray) -> np.ndarray:
            power = x * self.mean
            return (steady_w_prime_balance(power, self.evaluate(x)[0], self.request)
                    - reserve) / w_prime

        def balance_jacobian(x: np.ndarray) -> np.ndarray:
            time, dtime, _ = self.evaluate(x)
            return _w_prime_jacobian(x * self.mean, time, dtime, self.request) * self.mean / \
                w_prime

        return {"type": "ineq", "fun": balance, "jac": balance_jacobian}

    def effort_constraint(self, cap: float) -> dict[str, Any]:
        """1 − (4th-power mean / cap)⁴ ≥ 0, with its gradient."""
        def effort(x: np.ndarray) -> np.ndarray:
            time = self.evaluate(x)[0]
            return np.array([1.0 - (fourth_power_mean(x * self.mean, time) / cap) ** 4])

        def effort_gradient(x: np.ndarray) -> np.ndarray:
            time, dtime, _ = self.evaluate(x)
            power = x * self.mean
            total = time.sum()
            fourth = np.sum(power**4 * time) / total
            grad = (4 * power**3 * time + power**4 * dtime) / total - fourth * dtime / total
            return (-grad * self.mean / cap**4)[None, :]

        return {"type": "ineq", "fun": effort, "jac": effort_gradient}


def _slsqp_plan(problem: FastestProblem, start: np.ndarray, limits: SolverLimits
                ) -> tuple[np.ndarray, optimize.OptimizeResult]:
    """Fastest powers with W′ reserve and/or effort cap by SLSQP (Kraft 1988) from `start`
    [W]; (power [W], scipy's result)."""
    scaled = _ScaledProblem(problem)
    constraints: list[dict[str, Any]] = [
        {"type": "eq", "fun": scaled.coupling, "jac": scaled.coupling_gradient}]
    if limits.reserve is not None:
        constraints.append(scaled.balance_constraint(limits.reserve))
    if limits.cap is not None:
        constraints.append(scaled.effort_constraint(limits.cap))
    lower, upper, mean = problem.lower, problem.upper, scaled.mean
    # SLSQP's small dense linear algebra runs up to 50× slower on a multi-threaded BLAS when
    # the cores are busy (measured: 2.4 s against 0.045 s for 40 segments on 2 loaded cores)
    with threadpool_limits(limits=1, user_api="blas"):
        result = optimize.minimize(
            scaled.objective, np.clip(start, lower, upper) / mean,
            jac=scaled.objective_gradient,
            bounds=list(zip(lower / mean, upper / mean, strict=True)), constraints=constraints,
            method="SLSQP", options={"maxiter": 100, "ftol": _SLSQP_FTOL},
        )
    power = np.clip(result.x * mean, lower, upper)
    return power, result


def _polished(problem: FastestProblem, start: np.ndarray, held: SolverLimits
              ) -> tuple[np.ndarray, optimize.OptimizeResult, bool, float]:
    """SLSQP from a feasible start [W], moved back onto the coupling constraint; (power [W],
    scipy's result, whether it keeps the limits and the coupling constraint, its steady finish
    time [s]).

    SLSQP ends within its own tolerance of the limits, possibly just outside: it is given
    limits a hair inside the real ones (a few joules, a hundredth of a watt), and its answer
    is moved back onto the coupling constraint by scaling the free powers.
    """
    model, request = problem.model, problem.request
    inside = SolverLimits(
        None if held.reserve is None
        else held.reserve + _SLSQP_MARGIN * w_prime_parameters(request)[1],
        None if held.cap is None else held.cap * (1 - _SLSQP_MARGIN))
    polished, result = _slsqp_plan(problem, start, inside)
    polished = onto_coupling(model, request, polished, problem.lower, problem.upper,
                             problem.counter)
    centre, target = coupling_constraint(request, model)
    time, _, _ = steady_segment_times(model, polished)
    coupling_gap = abs(float(np.sum((polished - centre) * time)) - target)
    feasible = (problem.keeps(polished, held, 1e-6)
                and coupling_gap <= 1e-7 * required_mean_power(request) * float(time.sum()))
    return polished, result, feasible, float(time.sum())


def _active_limits(problem: FastestProblem, power: np.ndarray, held: SolverLimits
                   ) -> tuple[str, ...]:
    """The held limits the plan sits on, within twice PRICE_TOLERANCE."""
    time, _, _ = steady_segment_times(problem.model, power)
    active = []
    request = problem.request
    if held.reserve is not None and steady_w_prime_balance(power, time, request).min() <= (
            held.reserve + 2 * PRICE_TOLERANCE * w_prime_parameters(request)[1]):
        active.append("w-prime-reserve")
    if held.cap is not None and fourth_power_mean(power, time) >= held.cap * (
            1 - 2 * PRICE_TOLERANCE):
        active.append("effort-cap")
    return tuple(active)


# ------------------------------------------------------------------ the steps of the solve

def _check_reserve_reachable(request: PlanRequest, time: np.ndarray, reserve: float) -> None:
    """InputError when no plan of the request's mean power can keep the W′ reserve.

    With the differential W′ balance dW′/dt ≤ CP − P at every power, so W′(T) ≤ W′ − (P̄ − CP)·T
    for any plan of mean P̄, and no plan is faster than the unlimited Lagrange plan (whose
    segment times are `time` [s]). Only for the mean-power constraint and that model.
    """
    if request.constraint != "mean-power" or request.w_prime_model != "differential":
        return
    critical_power, w_prime = w_prime_parameters(request)
    mean = required_mean_power(request)
    best_case = w_prime - (mean - critical_power) * time.sum()
    if best_case < reserve:
        raise InputError(f"no plan at mean power {request.mean_power:g} W keeps the W′ "
                         f"reserve: {request.mean_power:g} W is above CP "
                         f"{request.critical_power:g} W for too long")


def _warm_plan(problem: FastestProblem, start: tuple[np.ndarray, SolverReport], held: SolverLimits,
               multiplier: float, iterations: int) -> tuple[np.ndarray, SolverReport] | None:
    """SLSQP from a nearby problem's plan (`start`), with the limits that bind; the plan and
    its report when its answer keeps them and the coupling constraint, else None."""
    power, result, feasible, _ = _polished(problem, np.asarray(start[0], dtype=float), held)
    if not feasible:
        return None
    active = _active_limits(problem, power, held)
    method = start[1].method if start[1].method.endswith("+slsqp") else (
        start[1].method + "+slsqp")
    return power, SolverReport(method, multiplier, iterations + int(result.nit),
                               problem.counter[0], float("nan"), str(result.message),
                               active=active)


def _ceiling_plan(problem: FastestProblem, held: SolverLimits, counts: list[int]
                  ) -> tuple[np.ndarray, float]:
    """The fastest plan under a common power ceiling U, U the highest ceiling that keeps the
    limits (bisection to 1e-3 of P̄; U = P̄: constant power); (plan [W], U [W]). Lagrange
    iterations are added to counts[0], bisection steps to counts[1]."""
    mean = required_mean_power(problem.request)
    low_ceiling, high_ceiling = mean, float(problem.upper.max())
    capped = np.full(problem.model.count, mean)
    steps = 0
    while high_ceiling - low_ceiling > 1e-3 * mean:
        steps += 1
        ceiling = 0.5 * (low_ceiling + high_ceiling)
        try:
            trial, _, used = lagrange_plan(problem.model, problem.request,
                                           np.minimum(problem.lower, ceiling),
                                           np.minimum(problem.upper, ceiling), problem.counter)
            counts[0] += used
        except InputError:
            trial = None
        if trial is not None and problem.keeps(trial, held):
            low_ceiling, capped = ceiling, trial
        else:
            high_ceiling = ceiling
    counts[1] += steps
    return capped, low_ceiling


def _limited_plan(problem: FastestProblem, multiplier: float, iterations: int,
                  every: SolverLimits, held: SolverLimits, coarse_start: bool
                  ) -> tuple[np.ndarray, SolverReport]:
    """The fastest plan when the Lagrange plan breaks a limit (`held`: the broken ones;
    `every`: all the request's): a feasible start, then the SLSQP polish."""
    mean = required_mean_power(problem.request)
    if not problem.keeps(np.full(problem.model.count, mean), held):
        what = "W′ reserve" if held.reserve is not None else "effort cap"
        raise InputError(f"no plan at mean power {mean:g} W keeps the {what}: even constant "
                         "power breaks it")
    # 1. the same problem with one power per climb, flat or descent (per run of segments on a
    #    split too fine for SLSQP): its plan is a plan of this split (same pieces, same
    #    powers), so this split starts from it and can only improve on it
    grouped, steps = coarse_start_plan(problem, every.reserve, every.cap, fastest_steady_plan,
                                       _SLSQP_MAX_SEGMENTS) if coarse_start else (None, 0)
    # [iterations, ceiling steps]
    counts = [iterations + steps, 0]
    # with a plan of the coarser problem in hand, steps 2-3 (starts for the polish that lose
    # to it in practice: 3891 s against 3843 s on the test's hill loop) are skipped
    if grouped is not None:
        power, method, message = grouped[0], "grouped+" + grouped[1].method, grouped[1].message
    else:
        power, method, message = _feasible_start(problem, multiplier, held, counts)
    # 4. polish with SLSQP on the full problem from that feasible start; keep its answer only
    #    if it is feasible, meets the coupling constraint and is faster
    nit = 0
    if problem.model.count <= _SLSQP_MAX_SEGMENTS:
        polished, result, feasible, finish = _polished(problem, power, held)
        nit = int(result.nit)
        if feasible and finish < problem.finish(power):
            power, method, message = polished, method + "+slsqp", str(result.message)
    return power, SolverReport(method, multiplier, counts[0] + counts[1] + nit,
                               problem.counter[0], float("nan"), message,
                               active=_active_limits(problem, power, held))


def _feasible_start(problem: FastestProblem, multiplier: float, held: SolverLimits,
                    counts: list[int]) -> tuple[np.ndarray, str, str]:
    """A plan that keeps the broken limits, to polish from; (plan [W], method, message).

    2. With one limit broken, its price in every segment's Lagrangian (W′ spent above CP, or
       the effort measure): the lowest price that keeps it (Illinois false position).
    3. Otherwise (or when no price works) the fastest plan under the highest common power
       ceiling that keeps the limits.
    """
    if (held.reserve is None) != (held.cap is None):
        priced, steps = priced_plan(problem.model, problem.request, problem.lower,
                                    problem.upper, multiplier, held.reserve, held.cap,
                                    problem.counter)
        counts[0] += steps
        if priced is not None:
            return priced, "lagrange+price", "lowest price of the limit that keeps it"
    capped, ceiling = _ceiling_plan(problem, held, counts)
    return capped, "lagrange+ceiling", (
        f"highest common power ceiling {ceiling:.1f} W that keeps the limits")


def fastest_steady_plan(
    model: SegmentModel,
    request: PlanRequest,
    lower: np.ndarray | None = None,
    upper: np.ndarray | None = None,
    reserve: float | None = None,
    cap: float | None = None,
    *,
    coarse_start: bool = True,
    start: tuple[np.ndarray, SolverReport] | None = None,
) -> tuple[np.ndarray, SolverReport]:
    """Fastest segment powers in the steady-state segment model.

    Minimises the steady finish time Σ t_k(P_k) under the request's coupling constraint
    (equal time-weighted mean power, or equal work), the power bounds, and the W′ reserve and
    effort cap: the Lagrange solve when no limit binds, else a feasible start (coarser
    problem, priced limit or common power ceiling) polished by SLSQP (module docstring).

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    request : PlanRequest
        Mean power, constraint and the athlete's limits [-].
    lower : numpy.ndarray or None
        Lowest power of each segment, length K; default `power_limits` [W].
    upper : numpy.ndarray or None
        Highest power of each segment, length K; default `power_limits` [W].
    reserve : float or None
        W′ balance floor used by the solver; default the request's reserve when CP and W′ are
        known, else none [J].
    cap : float or None
        Cap of the solver's effort measure (the time-weighted 4th-power mean power); default
        the request's effort-weighted cap [W].
    coarse_start : bool
        When a limit binds, also solve the problem with one power per run of climb, flat or
        descent segments and start from that plan when it keeps the limits, so a finer split
        is never slower than that coarser one (method then starts with "grouped+") [-].
    start : tuple of (numpy.ndarray, SolverReport) or None
        (segment power [W], report) of the same request solved with a nearby reserve or cap
        (the verifying round's previous solve): when a limit binds, SLSQP polishes from that
        plan instead of searching for a feasible start again; when its answer breaks a limit
        or the coupling constraint, the full solve runs as without it [-].

    Returns
    -------
    power : numpy.ndarray
        Segment powers, length K [W].
    report : SolverReport
        How the plan was found [-].

    Raises
    ------
    InputError
        When no plan meets the mean power within the bounds, or keeps the W′ reserve / effort
        cap (e.g. a mean power above CP for longer than W′ allows).

    Notes
    -----
    Above _SLSQP_MAX_SEGMENTS (120) segments the SLSQP polish is skipped, and the plan is the
    coarser problem's (one power per run of a few segments, itself polished) or the priced /
    ceiling plan.

    References
    ----------
    Atkinson, G., Peacock, O. & Passfield, L. (2007). Variable versus constant power
    strategies during cycling time-trials: prediction of time savings using an up-to-date
    mathematical model. J Sports Sci 25(9):1001-1009. doi:10.1080/02640410600944709
    Bos, L., Slawinski, M.A., Slawinski, R.A. & Stanoev, T. (2024). On minimizing cyclists'
    ascent times. arXiv:2403.03363.
    Kraft, D. (1988). A software package for sequential quadratic programming. DFVLR-FB 88-28
    (scipy.optimize SLSQP).
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
    reconstitution of work capacity above critical power. Med Sci Sports Exerc
    44(8):1526-1532. doi:10.1249/MSS.0b013e3182517a80 (integral W′ balance)
    Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
    determinants of the ability to recover work capacity above critical power. Eur J Appl
    Physiol 115(4):703-713. doi:10.1007/s00421-014-3050-3 (differential W′ balance)
    """
    if lower is None or upper is None:
        lower, upper = power_limits(model, request)
    if reserve is None and request.uses_w_prime:
        reserve = request.w_prime_reserve
    if cap is None:
        cap = request.effort_weighted_cap
    problem = FastestProblem(model, request, lower, upper)
    power, multiplier, iterations = lagrange_plan(model, request, lower, upper, problem.counter)
    centre, _ = coupling_constraint(request, model)
    stationarity = stationarity_residual(model, power, multiplier, centre, lower, upper)
    time, _, _ = steady_segment_times(model, power)
    breaks_w_prime = (reserve is not None
                      and steady_w_prime_balance(power, time, request).min() < reserve)
    breaks_cap = cap is not None and fourth_power_mean(power, time) > cap
    if not (breaks_w_prime or breaks_cap):
        return power, SolverReport("lagrange", multiplier, iterations, problem.counter[0],
                                   stationarity,
                                   "equal marginal time per joule on every free segment")
    if breaks_w_prime and reserve is not None:
        _check_reserve_reachable(request, time, reserve)
    held = SolverLimits(reserve if breaks_w_prime else None, cap if breaks_cap else None)
    if start is not None and model.count <= _SLSQP_MAX_SEGMENTS:
        warm = _warm_plan(problem, start, held, multiplier, iterations)
        if warm is not None:
            return warm
    return _limited_plan(problem, multiplier, iterations, SolverLimits(reserve, cap), held,
                         coarse_start)
