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
2. scipy's SLSQP then polishes that feasible plan on the full problem (W′ balance at every
   segment end, recovery included), with analytic gradients of time, mean power and W′
   balance; it is given limits a hair inside the real ones and its answer is moved back onto
   the coupling constraint, then kept only when feasible and faster (pacing.plan.slsqp_polish).
   With a W′ reserve in the differential model and no effort cap (the app's and the command
   line's fastest plan), on every split: a few plain SLSQP steps (up to FINE_MAX_SEGMENTS,
   240), then the sided rounds, which converge where plain SLSQP zigzags across the W′ kink
   at CP, each solved by the structured SQP of pacing.plan.sided_sqp on every segment at
   once (its cost grows as K·R², R the runs above CP, against dense SLSQP's K³; where it
   cannot go on, a round falls back to SLSQP and says so in the message). Segments resting
   on CP change side by small steps and by jumps well across CP, the faster answer kept
   (pacing.plan.sided_crossings); above FINE_MAX_SEGMENTS, with no plain SLSQP steps to find
   where W′ is spent, runs above CP are split one segment per round; a split of up to
   BOTH_POLISHES_MAX_SEGMENTS (0: none) without a coarser start would also be polished from
   the priced start by plain SLSQP and the faster plan kept.
   Otherwise (an effort cap, the integral W′ model): up to _SLSQP_MAX_SEGMENTS (120) plain
   SLSQP, 100 iterations; up to FINE_MAX_SEGMENTS plain SLSQP and sided SLSQP rounds; above,
   the plan of the coarser problem as it is (windows of WINDOW_SEGMENTS polish only the
   differential W′ reserve without a cap, which the structured SQP takes).
The priced plan is a relaxation (it charges W′ spent above CP but gives no credit for its
recovery), so on its own it can be far from the optimum. A finer split can hold any plan of a
coarser one, so the solver first solves the coarser problem with one power per run of climb,
flat or descent segments (or, above FINE_MAX_SEGMENTS, per run of a few segments, which itself
starts from the climbs, flats and descents) and starts from that plan, then polishes it on
every segment: the fastest plan does not get slower as the segments get finer
(pacing.plan.coarse_start; tests/test_plan_fastest.py checks it on random courses up to 600
segments, within 1e-6 of the finish; the problem is not convex, and where W′ is empty over a
plateau on CP the polish can still end up to 2e-5 slower than a coarser split: a known gap).
The solver's effort measure is the time-weighted 4th-power mean of the segment powers, an upper
bound of the effort-weighted power (a 30 s rolling mean can only lower it).

Called by pacing.plan.cycling.make_plan. The Lagrange solve is in pacing.plan.lagrange, the
priced limits (step 1) in pacing.plan.priced_limits, the SLSQP polish (step 2) in
pacing.plan.slsqp_polish, the problem, its limits and the solver's report in
pacing.plan.fastest_problem.

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

import numpy as np

from pacing.errors import InputError
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
from pacing.plan.slsqp_polish import sided_slsqp_plan, slsqp_plan, window_polish
from pacing.plan.steady_model import SegmentModel, steady_times

# without the structured SQP (effort cap, integral model): up to this plain SLSQP polishes;
# above it, the sided SLSQP rounds too
_SLSQP_MAX_SEGMENTS = 120
# the most segments polished at once (dense SLSQP costs ~K³ per iteration: 1 ms at 160
# segments, 100 ms at 400); above it the split's runs are polished, then windows of the split
FINE_MAX_SEGMENTS = 240
_SLSQP_MARGIN = 5e-4  # limits given to SLSQP, inside the real ones, relative to W′ or the cap
# segments per window above FINE_MAX_SEGMENTS: SLSQP takes ~2 ms an iteration at 120 (its bounds
# count as constraints); on a 40 km course in 400 segments windows of 60 took half the time
# of windows of 120 and found a plan 0.2 s slower of 3400 s (bench, 2 busy cores)
WINDOW_SEGMENTS = FINE_MAX_SEGMENTS // 4
# plain SLSQP iterations before the structured sided rounds (up to FINE_MAX_SEGMENTS): they
# find where W′ is spent. On the 200 km course with wind split by terrain (158 segments) the
# plan took 0.71 / 0.76 / 1.30 s of CPU and finished in 18,347.87 / 18,347.53 / 18,346.74 s
# with 10 / 30 / 100 of them (none: 2 s slower); every 500 m (400 segments, where the grouped
# problem gets them) 10 left 0.6 s, 30 nothing (bench, 2 busy cores)
STRUCTURED_PLAIN_ITERATIONS = 30
_POLISH_SLSQP, _POLISH_STRUCTURED = "+slsqp", "+structured-sqp"  # the polish in method names
# up to this many segments a split without a coarser start (the terrain split of the demo
# courses) is polished both ways, from the priced start by plain SLSQP and from constant power
# by the structured SQP, and the faster plan kept: alone, the structured SQP found plans up to
# 3.5e-6 slower there (7 ms of 2064 s; 2 of the demo courses' 12 such first solves; from the
# priced start up to 1.5e-6), plain SLSQP up to 2 % slower (15.5 s of 787 s: the short hilly
# course of tests/test_plan_fastest.py). Both cost the 40 km demo 172 ms against 169 ms for
# plain SLSQP alone and ~70 ms for the structured SQP alone (bench, 2 busy cores); 0 polishes
# such splits by the structured SQP alone: chosen (the lead's call, issue 15), the demo's
# fastest plan in 80 ms against the 100 ms target, at a cost of at most 3.5e-6 of the finish
BOTH_POLISHES_MAX_SEGMENTS = 0


def _polished(problem: FastestProblem, start: np.ndarray, held: SolverLimits,
              structured: bool, warm: bool = False) -> tuple[np.ndarray, int, str, bool, float]:
    """SLSQP from a feasible start [W], moved back onto the coupling constraint; (power [W],
    SLSQP iterations, its message, whether it keeps the limits and the coupling constraint,
    its steady finish time [s]). `structured`: polish by the structured SQP (where
    `structured_polish` holds); `warm`: the start is a nearby problem's polished plan.

    SLSQP ends within its own tolerance of the limits, possibly just outside: it is given
    limits a hair inside the real ones (a few joules, a hundredth of a watt), and its answer
    is moved back onto the coupling constraint by scaling the free powers. Structured:
    STRUCTURED_PLAIN_ITERATIONS plain SLSQP steps (up to FINE_MAX_SEGMENTS, not from a nearby
    problem's plan) and the sided rounds by the structured SQP (pacing.plan.sided_sqp).
    Otherwise up to _SLSQP_MAX_SEGMENTS segments plain SLSQP; up to FINE_MAX_SEGMENTS the
    sided rounds follow it, which converge where plain SLSQP zigzags across CP (from a nearby
    problem's polished plan, they alone); above, windows of WINDOW_SEGMENTS are polished in
    turn (pacing.plan.slsqp_polish).
    """
    model, request = problem.model, problem.request
    inside = SolverLimits(
        None if held.reserve is None
        else held.reserve + _SLSQP_MARGIN * w_prime_parameters(request)[1],
        None if held.cap is None else held.cap * (1 - _SLSQP_MARGIN))
    if structured and structured_polish(problem, inside):
        # a few plain SLSQP steps find where W′ is spent (they cross CP where the sided
        # rounds would not), then the sided rounds by the structured SQP on every segment
        polished, iterations = start, 0
        if not warm and model.count <= FINE_MAX_SEGMENTS:
            polished, result = slsqp_plan(problem, start, inside, STRUCTURED_PLAIN_ITERATIONS)
            iterations = int(result.nit)
        polished, result = sided_slsqp_plan(problem, polished, inside, structured=True,
                                            gradual=model.count > FINE_MAX_SEGMENTS)
        iterations, message = iterations + int(result.nit), str(result.message)
    elif model.count <= FINE_MAX_SEGMENTS:
        sided = model.count > _SLSQP_MAX_SEGMENTS
        polished, iterations, message = start, 0, ""
        if not (sided and warm):
            polished, result = slsqp_plan(problem, start, inside)
            iterations, message = int(result.nit), str(result.message)
        if sided:
            # plain SLSQP has found where W′ is spent; the sided rounds converge from there
            polished, result = sided_slsqp_plan(problem, polished, inside)
            iterations, message = iterations + int(result.nit), str(result.message)
    else:
        polished, iterations = window_polish(problem, start, held, inside, WINDOW_SEGMENTS)
        message = f"polished in windows of {WINDOW_SEGMENTS} segments"
    polished = onto_coupling(model, request, polished, problem.lower, problem.upper,
                             problem.counter)
    centre, target = coupling_constraint(request, model)
    time, _ = steady_times(model, polished)
    coupling_gap = abs(float(np.sum((polished - centre) * time)) - target)
    feasible = (problem.keeps(polished, held, 1e-6)
                and coupling_gap <= 1e-7 * required_mean_power(request) * float(time.sum()))
    return polished, iterations, message, feasible, float(time.sum())


def structured_polish(problem: FastestProblem, limits: SolverLimits) -> bool:
    """Whether the structured SQP polishes this problem (pacing.plan.sided_sqp): with a W′
    reserve in the differential model and no effort cap, on any number of segments.

    Where a coarser start exists it was never slower than plain SLSQP (up to 120 segments)
    or the sided SLSQP rounds, on 100 random courses of 3-400 segments and 48 splits of the
    demo courses: up to 0.04 % faster, in about half the CPU up to 120 segments.

    Parameters
    ----------
    problem : FastestProblem
        The problem [-].
    limits : SolverLimits
        The limits given to the polish [-].

    Returns
    -------
    bool
        True for the structured SQP [-].
    """
    return (limits.reserve is not None and limits.cap is None
            and problem.request.w_prime_model == "differential")


def _polish_name(structured: bool) -> str:
    """The polish's part of the method name: "+structured-sqp" for the structured SQP, else
    "+slsqp" (plain or sided SLSQP, or windows of it)."""
    return _POLISH_STRUCTURED if structured else _POLISH_SLSQP


def _active_limits(problem: FastestProblem, power: np.ndarray, held: SolverLimits
                   ) -> tuple[str, ...]:
    """The held limits the plan sits on, within twice PRICE_TOLERANCE."""
    time, _ = steady_times(problem.model, power)
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

def _unlimited_plan(problem: FastestProblem) -> tuple[np.ndarray, float, int]:
    """The Lagrange plan without the W′ and effort limits (pacing.plan.lagrange), kept in the
    model's cache for the same request and bounds: a correction round of the verified plan
    (pacing.plan.cycling) asks it again with another reserve only (65 ms of the 200 km
    course's 1 s); (plan [W], λ [1/J], iterations)."""
    model, request = problem.model, problem.request
    key = (problem.lower.tobytes(), problem.upper.tobytes())
    kept = model.speed_guess.get("unlimited")
    if kept is not None and kept[0] is request and kept[1] == key:
        power, multiplier, iterations = kept[2]
        return power.copy(), multiplier, iterations
    found = lagrange_plan(model, request, problem.lower, problem.upper, problem.counter)
    model.speed_guess["unlimited"] = (request, key, (found[0].copy(), found[1], found[2]))
    return found

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
    # a correction round polishes as the round before it (a plan of a coarse split without
    # a coarser start by plain SLSQP, as before the structured SQP: module docstring)
    structured = structured_polish(problem, held) and (
        start[1].method.endswith(_POLISH_STRUCTURED)
        or problem.model.count > _SLSQP_MAX_SEGMENTS)
    power, nit, message, feasible, _ = _polished(problem, np.asarray(start[0], dtype=float),
                                                 held, structured, warm=True)
    if not feasible:
        return None
    active = _active_limits(problem, power, held)
    method = start[1].method.removesuffix(_POLISH_SLSQP).removesuffix(_POLISH_STRUCTURED)
    method += _polish_name(structured)
    return power, SolverReport(method, multiplier, iterations + nit, problem.counter[0],
                               float("nan"), message, active=active)


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
    `every`: all the request's): a feasible start (the coarser problem's plan, else constant
    power for the structured SQP or the priced or ceiling plan for SLSQP; both up to
    BOTH_POLISHES_MAX_SEGMENTS), each polished, the fastest feasible plan kept."""
    mean = required_mean_power(problem.request)
    if not problem.keeps(np.full(problem.model.count, mean), held):
        what = "W′ reserve" if held.reserve is not None else "effort cap"
        raise InputError(f"no plan at mean power {mean:g} W keeps the {what}: even constant "
                         "power breaks it")
    # 1. the same problem with one power per climb, flat or descent (per run of segments on a
    #    split too fine for SLSQP): its plan is a plan of this split (same pieces, same
    #    powers), so this split starts from it and can only improve on it
    grouped, steps = coarse_start_plan(problem, every.reserve, every.cap, fastest_steady_plan,
                                       FINE_MAX_SEGMENTS) if coarse_start else (None, 0)
    # [iterations, ceiling steps]
    counts = [iterations + steps, 0]
    # a split without a coarser start up to BOTH_POLISHES_MAX_SEGMENTS (the terrain split
    # of the demo courses): both polishes, the faster plan kept
    both = (grouped is None and coarse_start
            and problem.model.count <= BOTH_POLISHES_MAX_SEGMENTS
            and structured_polish(problem, held))
    candidates = []
    # with a plan of the coarser problem in hand, steps 2-3 (starts for the polish that lose
    # to it in practice: 3891 s against 3843 s on the test's hill loop) are skipped
    if grouped is not None:
        candidates.append((grouped[0], "grouped+" + grouped[1].method, grouped[1].message,
                           structured_polish(problem, held)))
    if grouped is None and (both or structured_polish(problem, held)):
        # the structured SQP's polish crosses CP on its own (its plain SLSQP steps and sided
        # rounds), so constant power (kept, checked above) is start enough; on the
        # 200 km course with wind (terrain split) the priced start cost a third more CPU for
        # a plan 0.1 s faster of 18,347 s, every 500 m none
        candidates.append((np.full(problem.model.count, mean), "constant",
                           "constant power, polished", True))
    if grouped is None and (both or not structured_polish(problem, held)):
        candidates.append((*_feasible_start(problem, multiplier, held, counts), False))
    best: tuple[np.ndarray, str, str, float] | None = None
    for power, method, message, structured in candidates:
        # 4. polish from that feasible start; keep its answer only if it is feasible, meets
        #    the coupling constraint and is faster (on a split too long to polish, the
        #    polished plan of its runs is the answer)
        polished, nit, polish_message, feasible, finish = _polished(problem, power, held,
                                                                    structured)
        counts[0] += nit
        if feasible and finish < problem.finish(power):
            power, method, message = polished, method + _polish_name(structured), \
                polish_message
        else:
            finish = problem.finish(power)
        if best is None or finish < best[3]:
            best = (power, method, message, finish)
    assert best is not None
    power, method, message, _ = best
    return power, SolverReport(method, multiplier, counts[0] + counts[1],
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
    problem, priced limit or common power ceiling) polished by SLSQP on every segment
    (module docstring).

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
    Every split is polished on its own segments: by the structured SQP's sided rounds with a
    W′ reserve in the differential model and no effort cap; else up to 120 by plain SLSQP, up
    to 240 by plain SLSQP and sided rounds and above by windows of 60 segments (module
    docstring). The problem is not convex (W′ recovers below CP), so a polish from another
    start can still find a faster plan.

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
    power, multiplier, iterations = _unlimited_plan(problem)
    centre, _ = coupling_constraint(request, model)
    stationarity = stationarity_residual(model, power, multiplier, centre, lower, upper)
    time, _ = steady_times(model, power)
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
    if start is not None:
        warm = _warm_plan(problem, start, held, multiplier, iterations)
        if warm is not None:
            return warm
    return _limited_plan(problem, multiplier, iterations, SolverLimits(reserve, cap), held,
                         coarse_start)
