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
then does not get slower as the segments get finer.
The solver's effort measure is the time-weighted 4th-power mean of the segment powers, an upper
bound of the effort-weighted power (a 30 s rolling mean can only lower it).

Called by pacing.plan.cycling.make_plan. The Lagrange solve and the priced limits (step 1) are
in pacing.plan.lagrange.

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

from dataclasses import dataclass, replace

import numpy as np
from scipy import optimize
from threadpoolctl import threadpool_limits

from pacing.course.segments import CLIMB_GRADE
from pacing.errors import InputError
from pacing.physiology.critical_power import recovery_time_constant
from pacing.plan.lagrange import (
    _PRICE_TOLERANCE,
    _coupling,
    _lagrange_plan,
    _on_coupling,
    _priced_plan,
    _raw_effort,
    _segment_w_prime,
    _stationarity,
)
from pacing.plan.request import PlanRequest, power_limits
from pacing.plan.steady_model import SegmentModel, steady_segment_times

_SLSQP_MAX_SEGMENTS = 120  # above this the dense SLSQP polish costs more than it gains
_SLSQP_MARGIN = 5e-4  # limits given to SLSQP, inside the real ones, relative to W′ or the cap
# SLSQP's stop on the objective (finish time over the constant plan's, ≈ 1): 1e-9 is about
# 4 µs of a one-hour ride; at 1e-10 its steps zigzag along the W′ kink at CP until the
# iteration limit (100 iterations against 65 on the demo course, same finish time to 1 ms)
_SLSQP_FTOL = 1e-9
_GROUP_MIN_LENGTH = 300.0  # shortest stretch of the grouped (coarse) problem [m]
_GROUP_MAX_COUNT = 60  # most stretches in the grouped problem (its SLSQP stays cheap)
_CHUNK_COUNT = 80  # about this many runs of segments stand for a split too fine for SLSQP


@dataclass(frozen=True)
class SolverReport:
    """How the fastest plan was found, and evidence that it is optimal.

    Attributes
    ----------
    method : "constant"; "lagrange" (coupling constraint and bounds only); "lagrange+price"
        or "lagrange+ceiling" (a limit priced, or a common power ceiling), with "+slsqp" when
        SLSQP improved that plan; "grouped+" in front when the plan started from the coarser
        problem's (whose own method follows).
    multiplier : λ, time saved per joule-equivalent of the coupling constraint [s/J]
        (Lagrange stage); None when not used.
    iterations : solver iterations (outer root finding + SLSQP iterations).
    evaluations : steady-state evaluations of the whole course.
    stationarity : largest relative KKT stationarity residual over free segments [-]
        (≈ 0 at the optimum; every free segment has the same marginal time per joule).
    message : the solver's own message.
    correction_rounds : times the plan was re-solved because the verified ride broke a limit
        the solver held (or kept it with slack).
    active : limits held by the solver at its solution ("w-prime-reserve", "effort-cap").
    """

    method: str
    multiplier: float | None = None
    iterations: int = 0
    evaluations: int = 0
    stationarity: float = 0.0
    message: str = ""
    correction_rounds: int = 0
    active: tuple = ()


def _w_prime_jacobian(power, time, dtime, request: PlanRequest) -> np.ndarray:
    """d(W′ balance at the end of segment j)/d(power of segment k) [J/W], shape (K, K).

    Both W′ models are affine steps on the deficit D = W′ − W′bal over a segment of constant
    power, D_{k+1} = a_k·D_k + b_k (differential: a = 1, b = (P − CP)·t above CP and
    a = e^{(P − CP)·t/W′}, b = 0 below; integral: a = e^{−t/τ}, b = (P − CP)⁺·τ·(1 − a)), and t_k
    depends on P_k through t_k′. Then dD_j/dP_k = (Π_{k<m<j} a_m)·(D_k·da_k/dP_k + db_k/dP_k)
    for j > k. The integral form's τ is held fixed (its dependence on the mean recovery power is
    neglected in the gradient only).
    """
    critical, w_prime = float(request.critical_power), float(request.w_prime)
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
    deficit = w_prime - np.concatenate([[w_prime], _segment_w_prime(power, time, request)])
    local = deficit[:-1] * d_decay + d_increment  # dD_{k+1}/dP_k
    log_decay = np.concatenate([[0.0], np.cumsum(np.log(np.maximum(decay, 1e-300)))])
    rows = np.arange(power.size)[:, None]
    cols = np.arange(power.size)[None, :]
    # the deficit after segment r (row r) depends on P_k, k ≤ r, through Π_{k<m≤r} a_m
    span = np.where(cols <= rows, log_decay[rows + 1] - log_decay[cols + 1], -np.inf)
    jacobian = -np.exp(span) * local[None, :]
    if request.w_prime_model == "integral" and below_time > 0:
        # τ depends on every below-CP segment through D_CP = CP − Σ_b P·t / Σ_b t
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
        jacobian -= np.outer(by_tau, d_tau)
    return jacobian


def _slsqp_plan(model, request, lower, upper, start, reserve, cap, counter):
    """Fastest powers with W′ reserve and/or effort cap (SLSQP); returns (power, result)."""
    centre, target = _coupling(request, model)
    mean = float(request.mean_power)
    time0, _, _ = steady_segment_times(model, np.full(model.count, mean))
    total0 = float(time0.sum())
    cache: dict = {}

    def evaluate(x):
        key = x.tobytes()
        if key not in cache:
            cache.clear()
            counter[0] += 1
            cache[key] = steady_segment_times(model, x * mean)
        return cache[key]

    def objective(x):
        return float(evaluate(x)[0].sum() / total0)

    def objective_gradient(x):
        return evaluate(x)[1] * mean / total0

    def coupling(x):
        time = evaluate(x)[0]
        return np.array([(np.sum((x * mean - centre) * time) - target) / (mean * total0)])

    def coupling_gradient(x):
        time, dtime, _ = evaluate(x)
        return ((time + (x * mean - centre) * dtime) * mean / (mean * total0))[None, :]

    constraints = [{"type": "eq", "fun": coupling, "jac": coupling_gradient}]
    if reserve is not None:
        w_prime = float(request.w_prime)

        def balance(x):
            return (_segment_w_prime(x * mean, evaluate(x)[0], request) - reserve) / w_prime

        def balance_jacobian(x):
            time, dtime, _ = evaluate(x)
            return _w_prime_jacobian(x * mean, time, dtime, request) * mean / w_prime

        constraints.append({"type": "ineq", "fun": balance, "jac": balance_jacobian})
    if cap is not None:
        def effort(x):
            time = evaluate(x)[0]
            return np.array([1.0 - (_raw_effort(x * mean, time) / cap) ** 4])

        def effort_gradient(x):
            time, dtime, _ = evaluate(x)
            power = x * mean
            total = time.sum()
            fourth = np.sum(power**4 * time) / total
            grad = (4 * power**3 * time + power**4 * dtime) / total - fourth * dtime / total
            return (-grad * mean / cap**4)[None, :]

        constraints.append({"type": "ineq", "fun": effort, "jac": effort_gradient})
    # SLSQP's small dense linear algebra runs up to 50× slower on a multi-threaded BLAS when
    # the cores are busy (measured: 2.4 s against 0.045 s for 40 segments on 2 loaded cores)
    with threadpool_limits(limits=1, user_api="blas"):
        result = optimize.minimize(
            objective, np.clip(start, lower, upper) / mean, jac=objective_gradient,
            bounds=list(zip(lower / mean, upper / mean, strict=True)), constraints=constraints,
            method="SLSQP", options={"maxiter": 100, "ftol": _SLSQP_FTOL},
        )
    power = np.clip(result.x * mean, lower, upper)
    return power, result


def _warm_plan(model, request, lower, upper, start, reserve, cap, reserve_used, cap_used,
               meets, counter):
    """SLSQP from a nearby problem's plan (`start`), with the limits that bind; (power, result)
    when its answer keeps them and the coupling constraint, else None."""
    polished, result = _slsqp_plan(
        model, request, lower, upper, np.asarray(start[0], dtype=float),
        None if reserve_used is None else reserve_used + _SLSQP_MARGIN * float(request.w_prime),
        None if cap_used is None else cap_used * (1 - _SLSQP_MARGIN), counter)
    polished = _on_coupling(model, request, polished, lower, upper, counter)
    centre, target = _coupling(request, model)
    time, _, _ = steady_segment_times(model, polished)
    coupling_gap = abs(float(np.sum((polished - centre) * time)) - target)
    if meets(polished, 1e-6) and coupling_gap <= 1e-7 * float(request.mean_power) * float(
            time.sum()):
        return polished, result
    return None


# ------------------------------------------------------------------ coarse start for fine splits

def _grade_groups(model: SegmentModel) -> np.ndarray:
    """Group consecutive segments into climbs, flats and descents: group number per segment.

    Each segment is classed by its mean grade (climb ≥ CLIMB_GRADE, descent ≤ −CLIMB_GRADE,
    else flat) and runs of one class form a group; then, while a group is shorter than
    _GROUP_MIN_LENGTH (doubled until at most _GROUP_MAX_COUNT groups remain), the shortest is
    merged into the neighbour whose mean grade is nearer its own, and reclassed.
    """
    horizontal = model.length / np.sqrt(1.0 + model.grade**2)
    run = np.bincount(model.segment, horizontal, model.count)
    rise = np.bincount(model.segment, horizontal * model.grade, model.count)

    def klass(grade):
        return np.where(grade >= CLIMB_GRADE, 1, np.where(grade <= -CLIMB_GRADE, -1, 0))

    kind = klass(rise / np.maximum(run, 1e-12))
    starts = np.concatenate([[0], np.flatnonzero(np.diff(kind)) + 1])
    group_run = list(np.add.reduceat(run, starts))
    group_rise = list(np.add.reduceat(rise, starts))
    first = list(starts)
    minimum = _GROUP_MIN_LENGTH
    while len(first) > 1:
        lengths = np.asarray(group_run)
        short = int(np.argmin(lengths))
        if lengths[short] >= minimum:
            if len(first) <= _GROUP_MAX_COUNT:
                break
            minimum *= 2.0
            continue
        grades = np.asarray(group_rise) / np.maximum(lengths, 1e-12)
        if short == 0:
            into = 1
        elif short == len(first) - 1:
            into = short - 1
        else:
            into = min(short - 1, short + 1,
                       key=lambda other: abs(grades[other] - grades[short]))
        keep, drop = min(short, into), max(short, into)
        group_run[keep] += group_run[drop]
        group_rise[keep] += group_rise[drop]
        del group_run[drop], group_rise[drop], first[drop]
        # join neighbours of one class after the merge
        grades = np.asarray(group_rise) / np.maximum(np.asarray(group_run), 1e-12)
        kinds = klass(grades)
        for other in (keep + 1, keep):
            if 0 < other < len(first) and kinds[other] == kinds[other - 1]:
                group_run[other - 1] += group_run[other]
                group_rise[other - 1] += group_rise[other]
                del group_run[other], group_rise[other], first[other]
                kinds = np.delete(kinds, other)
    group = np.zeros(model.count, dtype=int)
    group[np.asarray(first[1:], dtype=int)] = 1
    return np.cumsum(group)


def _grouped_plan(model, request, lower, upper, reserve, cap):
    """The fastest plan with one power per group of segments (`_grade_groups`), as segment
    powers; None when grouping does not coarsen the split or the grouped problem has no plan.

    Every plan of the grouped problem is a plan of the fine one with the same pieces at the
    same powers, so its time, mean power and work carry over exactly, and its W′ balance only
    gains checks at the inner ends (within a stretch of constant power the balance is
    monotone, so it is lowest at a group's ends): a fine split starts from the coarse optimum
    and can only improve on it.
    """
    group = _grade_groups(model)
    if model.count > _SLSQP_MAX_SEGMENTS:
        # too many segments for SLSQP: cut the groups into runs of `size` segments, so the
        # coarser problem (≤ _SLSQP_MAX_SEGMENTS) is polished and itself starts from the groups
        size = -(-model.count // _CHUNK_COUNT)
        first = np.flatnonzero(np.diff(group, prepend=-1))
        within = np.arange(model.count) - np.repeat(first, np.diff(np.r_[first, model.count]))
        new = np.zeros(model.count, dtype=int)
        new[1:] = (np.diff(group) > 0) | (np.diff(within // size) != 0)
        group = np.cumsum(new)
    count = int(group[-1]) + 1
    if 2 * count > model.count:  # hardly coarser: not worth a second solve
        return None
    starts = np.flatnonzero(np.diff(group, prepend=-1))
    horizontal = model.length / np.sqrt(1.0 + model.grade**2)
    piece_group = group[model.segment]
    run = np.bincount(piece_group, horizontal, count)
    rise = np.bincount(piece_group, horizontal * model.grade, count)
    coarse = replace(model, segment=piece_group, count=count,
                     mean_grade=rise / np.maximum(run, 1e-12), speed_guess={})
    low = np.maximum.reduceat(lower, starts)
    high = np.minimum.reduceat(upper, starts)
    if np.any(low > high):
        return None
    try:
        power, report = fastest_steady_plan(coarse, request, low, high, reserve, cap,
                                            coarse_start=model.count > _SLSQP_MAX_SEGMENTS)
    except InputError:
        return None
    return power[group], report


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

    Parameters
    ----------
    model : SegmentModel; request : PlanRequest (mean power, constraint, limits).
    lower, upper : power bounds per segment [W] (default `power_limits`).
    reserve : W′ balance floor used by the solver [J] (default the request's reserve when CP
        and W′ are known, else none).
    cap : effort cap used by the solver [W] (default the request's cap).
    coarse_start : when a limit binds, also solve the problem with one power per run of
        climb, flat or descent segments and start from that plan when it is faster, so a finer
        split is never slower than that coarser one (method then starts with "grouped+").
    start : (segment power [W], SolverReport) of the same request solved with a nearby reserve
        or cap (the verifying round's previous solve): when a limit binds, SLSQP polishes from
        that plan instead of searching for a feasible start again; when its answer breaks a
        limit or the coupling constraint, the full solve runs as without it.

    Returns
    -------
    (segment power [W], SolverReport). Raises InputError when no plan meets the mean power
    within the bounds, or keeps the W′ reserve / effort cap (e.g. a mean power above CP for
    longer than W′ allows).
    """
    if lower is None or upper is None:
        lower, upper = power_limits(model, request)
    if reserve is None and request.uses_w_prime:
        reserve = request.w_prime_reserve
    if cap is None:
        cap = request.effort_weighted_cap
    counter = [0]
    power, multiplier, iterations = _lagrange_plan(model, request, lower, upper, counter)
    centre, _ = _coupling(request, model)
    stationarity = _stationarity(model, power, multiplier, centre, lower, upper)
    time, _, _ = steady_segment_times(model, power)
    breaks_w_prime = (reserve is not None
                      and _segment_w_prime(power, time, request).min() < reserve)
    breaks_cap = cap is not None and _raw_effort(power, time) > cap
    if not (breaks_w_prime or breaks_cap):
        return power, SolverReport("lagrange", multiplier, iterations, counter[0], stationarity,
                                   "equal marginal time per joule on every free segment")
    if (breaks_w_prime and request.constraint == "mean-power"
            and request.w_prime_model == "differential"):
        # dW′/dt ≤ CP − P at every power, so W′(T) ≤ W′ − (P̄ − CP)·T for any plan of mean P̄,
        # and no plan is faster than this one (T ≥ its time)
        best_case = float(request.w_prime) - (float(request.mean_power)
                                              - float(request.critical_power)) * time.sum()
        if best_case < reserve:
            raise InputError(f"no plan at mean power {request.mean_power:g} W keeps the W′ "
                             f"reserve: {request.mean_power:g} W is above CP "
                             f"{request.critical_power:g} W for too long")
    reserve_used = reserve if breaks_w_prime else None
    cap_used = cap if breaks_cap else None

    def meets(power: np.ndarray, slack: float = 0.0) -> bool:
        time, _, _ = steady_segment_times(model, power)
        counter[0] += 1
        return ((reserve_used is None or _segment_w_prime(power, time, request).min()
                 >= reserve_used - slack * float(request.w_prime))
                and (cap_used is None or _raw_effort(power, time) <= cap_used * (1 + slack)))

    def meets_all(power: np.ndarray, slack: float = 0.0) -> bool:
        time, _, _ = steady_segment_times(model, power)
        counter[0] += 1
        return ((reserve is None or _segment_w_prime(power, time, request).min()
                 >= reserve - slack * float(request.w_prime))
                and (cap is None or _raw_effort(power, time) <= cap * (1 + slack)))

    if start is not None and model.count <= _SLSQP_MAX_SEGMENTS:
        warm = _warm_plan(model, request, lower, upper, start, reserve, cap, reserve_used,
                          cap_used, meets, counter)
        if warm is not None:
            power, result = warm
            time, _, _ = steady_segment_times(model, power)
            active = []
            if breaks_w_prime and _segment_w_prime(power, time, request).min() <= reserve + (
                    2 * _PRICE_TOLERANCE * float(request.w_prime)):
                active.append("w-prime-reserve")
            if breaks_cap and _raw_effort(power, time) >= cap * (1 - 2 * _PRICE_TOLERANCE):
                active.append("effort-cap")
            method = start[1].method if start[1].method.endswith("+slsqp") else (
                start[1].method + "+slsqp")
            return power, SolverReport(method, multiplier, iterations + int(result.nit),
                                       counter[0], float("nan"), str(result.message),
                                       active=tuple(active))
    mean = float(request.mean_power)
    constant = np.full(model.count, mean)
    if not meets(constant):
        what = "W′ reserve" if breaks_w_prime else "effort cap"
        raise InputError(f"no plan at mean power {mean:g} W keeps the {what}: even constant "
                         "power breaks it")
    # 1. the same problem with one power per climb, flat or descent (per run of segments on a
    #    split too fine for SLSQP): its plan is a plan of this split (same pieces, same
    #    powers), so this split starts from it and can only improve on it
    grouped = None
    if coarse_start:
        found = _grouped_plan(model, request, lower, upper, reserve, cap)
        if found is not None:
            counter[0] += found[1].evaluations
            iterations += found[1].iterations
            if meets_all(found[0], 1e-6):
                grouped = found
    # with a plan of the coarser problem in hand, steps 2-3 (starts for the polish that lose
    # to it in practice: 3891 s against 3843 s on the test's hill loop) are skipped
    search = grouped is None
    # 2. price the broken limit in every segment's Lagrangian (W′ spent above CP, or the
    #    effort measure) and find the lowest price that keeps it (Illinois false position)
    priced = None
    if search and breaks_w_prime != breaks_cap:
        priced, steps = _priced_plan(model, request, lower, upper, multiplier, reserve_used,
                                     cap_used, counter)
        iterations += steps
    # 3. otherwise a feasible plan: the fastest plan under a common power ceiling U, with U the
    #    highest ceiling that keeps the limits (bisection; U = mean power: constant power)
    low_ceiling, high_ceiling = mean, float(upper.max())
    capped, ceiling_steps = constant, 0
    if priced is not None or not search:
        capped, high_ceiling = (priced if priced is not None else grouped[0]), low_ceiling
    while high_ceiling - low_ceiling > 1e-3 * mean:
        ceiling_steps += 1
        ceiling = 0.5 * (low_ceiling + high_ceiling)
        try:
            trial, _, used = _lagrange_plan(model, request, np.minimum(lower, ceiling),
                                            np.minimum(upper, ceiling), counter)
            iterations += used
        except InputError:
            trial = None
        if trial is not None and meets(trial):
            low_ceiling, capped = ceiling, trial
        else:
            high_ceiling = ceiling
    if priced is not None:
        power, method, message, nit = capped, "lagrange+price", (
            "lowest price of the limit that keeps it"), 0
    else:
        power, method, message, nit = capped, "lagrange+ceiling", (
            f"highest common power ceiling {low_ceiling:.1f} W that keeps the limits"), 0
    if grouped is not None and (not search or steady_segment_times(model, grouped[0])[0].sum()
                                < steady_segment_times(model, capped)[0].sum()):
        capped = power = grouped[0]
        method, message = "grouped+" + grouped[1].method, grouped[1].message
    # 4. polish with SLSQP on the full problem from that feasible start; keep its answer only
    #    if it is feasible, meets the coupling constraint and is faster
    if model.count <= _SLSQP_MAX_SEGMENTS:
        # SLSQP ends within its own tolerance of the limits, possibly just outside: it is given
        # limits a hair inside the real ones (a few joules, a hundredth of a watt), and its
        # answer is moved back onto the coupling constraint by scaling the free powers
        polished, result = _slsqp_plan(
            model, request, lower, upper, capped,
            None if reserve_used is None else reserve_used + _SLSQP_MARGIN * float(
                request.w_prime),
            None if cap_used is None else cap_used * (1 - _SLSQP_MARGIN), counter)
        polished = _on_coupling(model, request, polished, lower, upper, counter)
        nit = int(result.nit)
        centre, target = _coupling(request, model)
        time, _, _ = steady_segment_times(model, polished)
        coupling_gap = abs(float(np.sum((polished - centre) * time)) - target)
        if (meets(polished, 1e-6) and coupling_gap <= 1e-7 * mean * float(time.sum())
                and time.sum() < steady_segment_times(model, capped)[0].sum()):
            power, method, message = polished, method + "+slsqp", str(result.message)
    time, _, _ = steady_segment_times(model, power)
    active = []
    if breaks_w_prime and _segment_w_prime(power, time, request).min() <= reserve + (
            2 * _PRICE_TOLERANCE * float(request.w_prime)):
        active.append("w-prime-reserve")
    if breaks_cap and _raw_effort(power, time) >= cap * (1 - 2 * _PRICE_TOLERANCE):
        active.append("effort-cap")
    return power, SolverReport(method, multiplier, iterations + ceiling_steps + nit,
                               counter[0], float("nan"), message, active=tuple(active))
