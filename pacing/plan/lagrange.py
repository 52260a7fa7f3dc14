"""The Lagrange-multiplier solve of the steady-state segment model, and its priced limits.

Minimise T = Σ t_k(P_k) subject to one coupling constraint
    E(P) = Σ (P_k − c)·t_k(P_k) − E₀ = 0,
with c = P̄, E₀ = 0 for an equal time-weighted mean power, and c = 0, E₀ = work of the
constant plan for an equal total work, and lo_k ≤ P_k ≤ hi_k. The problem separates: for a
multiplier λ each segment minimises its own Lagrangian t_k(P)·(1 + λ·(P − c)) on [lo_k, hi_k]
(its stationarity condition is t_k′·(1 + λ(P − c)) + λ·t_k = 0: every free segment buys the
same time per joule), and λ is the root of the monotone E(P(λ)) = 0. Those two nested 1-D
problems (a vectorised safeguarded Newton over all segments inside a safeguarded Newton on
λ, dE/dλ = −Σ b_k²/a_k by implicit differentiation) solve the pure mean-power case exactly.

A broken limit gets a price in every segment's Lagrangian (LimitPrices), μ·(P − CP)⁺·t_k for
W′ spent above CP or ν·P⁴·t_k for the effort measure (the time-weighted 4th-power mean of the
segment powers); the lowest price whose plan keeps the limit is found by false position in
pacing.plan.priced_limits. The SLSQP polish and the entry point fastest_steady_plan are in
pacing.plan.fastest, the coarse start in pacing.plan.coarse_start.

Every solver here counts its steady-state evaluations of the whole course in `counter`, a
one-element list it increments (the count is reported in
pacing.plan.fastest_problem.SolverReport).

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Atkinson, G., Peacock, O. & Passfield, L. (2007). Variable versus constant power strategies
during cycling time-trials: prediction of time savings using an up-to-date mathematical model.
J Sports Sci 25(9):1001-1009. doi:10.1080/02640410600944709
Bos, L., Slawinski, M.A., Slawinski, R.A. & Stanoev, T. (2024). On minimizing cyclists' ascent
times. arXiv:2403.03363.
Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
doi:10.1249/MSS.0b013e3182517a80
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.physiology.critical_power import w_prime_balance
from pacing.plan.request import PlanRequest, required_mean_power, w_prime_parameters
from pacing.plan.steady_model import SegmentModel, steady_segment_times, steady_times

_POWER_TOLERANCE = 1e-11  # relative, on segment powers


def coupling_constraint(request: PlanRequest, model: SegmentModel) -> tuple[float, float]:
    """The coupling constraint Σ (P_k − c)·t_k = E₀ of a request.

    Parameters
    ----------
    request : PlanRequest
        Mean power P̄ and constraint ("mean-power" or "work") [-].
    model : SegmentModel
        The course's segments (for the constant plan's time under "work") [-].

    Returns
    -------
    centre : float
        c: P̄ for an equal time-weighted mean power, 0 for an equal work [W].
    target : float
        E₀: 0 for an equal mean power, the constant plan's work P̄·T(P̄) for an equal work [J].
    """
    mean = required_mean_power(request)
    if request.constraint == "mean-power":
        return mean, 0.0
    time, _ = steady_times(model, np.full(model.count, mean))
    return 0.0, mean * float(time.sum())


@dataclass(frozen=True)
class LimitPrices:
    """Prices of the limits in every segment's Lagrangian.

    The segment Lagrangian gains μ·(P − CP)⁺·t (W′ spent above CP) and ν·P⁴·t (the solver's
    effort measure).

    Attributes
    ----------
    w_prime : float
        μ, price of the W′ spent above CP, per joule of W′, per second of time saved [s/J].
    critical_power : float
        CP, the kink of the W′ price [W].
    effort : float
        ν, price of the 4th power of the segment power [s/W⁴].
    """

    w_prime: float = 0.0
    critical_power: float = math.inf
    effort: float = 0.0


@dataclass(frozen=True, eq=False)
class SegmentOptimum:
    """Every segment's minimiser of its Lagrangian for one multiplier λ.

    Attributes
    ----------
    power : numpy.ndarray
        Minimising power of each segment, length K [W].
    time : numpy.ndarray
        Its steady time t_k, length K [s].
    slope : numpy.ndarray
        Slope of the coupling constraint b_k = t_k + (P_k − c)·t_k′, length K [s].
    curvature : numpy.ndarray
        Curvature of the segment's Lagrangian a_k, length K [s/W²].
    free : numpy.ndarray
        Segments at neither bound nor at the W′ kink (bool), length K [-].
    """

    power: np.ndarray
    time: np.ndarray
    slope: np.ndarray
    curvature: np.ndarray
    free: np.ndarray


def _lagrangian_derivatives(
    prices: LimitPrices, multiplier: float, centre: float, power: np.ndarray, time: np.ndarray,
    dtime: np.ndarray, d2time: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Gradient [s/W] and curvature [s/W²] of each segment's Lagrangian, and the segments
    resting on the W′ kink at CP (bool)."""
    kink = prices.critical_power
    weight = 1.0 + multiplier * (power - centre)
    gradient = dtime * weight + multiplier * time
    hessian = d2time * weight + 2.0 * multiplier * dtime
    at_kink = np.zeros(power.shape, dtype=bool)
    if prices.w_prime > 0:
        excess = power - kink
        above = excess > 0
        gradient = gradient + prices.w_prime * np.where(above, time + excess * dtime, 0.0)
        hessian = hessian + prices.w_prime * np.where(above, 2 * dtime + excess * d2time,
                                                      0.0)
        # at CP the right-hand slope is larger by μ·t: a minimum can sit on the kink
        at_kink = (power == kink) & (gradient < 0) & (gradient + prices.w_prime * time > 0)
    if prices.effort > 0:
        gradient = gradient + prices.effort * (4 * power**3 * time + power**4 * dtime)
        hessian = hessian + prices.effort * (12 * power**2 * time + 8 * power**3 * dtime
                                             + power**4 * d2time)
    return gradient, hessian, at_kink


def _safeguarded_step(
    power: np.ndarray, gradient: np.ndarray, hessian: np.ndarray, low: np.ndarray,
    high: np.ndarray, lower: np.ndarray, upper: np.ndarray, kink: float, at_kink: np.ndarray,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Next powers of the safeguarded Newton iteration [W], and the segments at their lower
    and upper bound (bool). `low`, `high` is the bracket of each minimiser [W]."""
    at_lower = (power <= lower) & (gradient >= 0)
    at_upper = (power >= upper) & (gradient <= 0)
    convex = hessian > 0
    newton = power - gradient / np.where(convex, hessian, np.inf)
    inside = convex & (newton > low) & (newton < high)
    new = np.where(inside, newton, 0.5 * (low + high))
    # a step across the kink at CP: try CP itself
    crossing = (low < kink) & (kink < high) & ((newton - kink) * (power - kink) < 0)
    new = np.where(crossing, kink, new)
    new = np.where(at_kink, kink, new)
    # a step past a bound not yet excluded by the bracket: try the bound itself
    new = np.where((~convex | (newton <= low)) & (gradient > 0) & (low <= lower), lower, new)
    new = np.where((~convex | (newton >= high)) & (gradient < 0) & (high >= upper), upper, new)
    new = np.where(at_lower, lower, np.where(at_upper, upper, new))
    return new, at_lower, at_upper


def segment_argmin(
    model: SegmentModel,
    multiplier: float,
    centre: float,
    lower: np.ndarray,
    upper: np.ndarray,
    start: np.ndarray,
    counter: list[int],
    prices: LimitPrices | None = None,
) -> SegmentOptimum:
    """Minimise every segment's Lagrangian t_k(P)·(1 + λ(P − c)) (+ priced limits) over
    [lo_k, hi_k] (safeguarded Newton, vectorized over segments).

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    multiplier : float
        λ, the price of the coupling constraint [1/J].
    centre : float
        c of the coupling constraint (`coupling_constraint`) [W].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    start : numpy.ndarray
        Powers to start from, length K [W].
    counter : list of int
        One-element count of steady evaluations, incremented [-].
    prices : LimitPrices or None
        Prices of the W′ and effort limits; None for none [-].

    Returns
    -------
    SegmentOptimum
        The minimising powers with what the multiplier search needs [-].
    """
    prices = prices or LimitPrices()
    low, high = lower.copy(), upper.copy()
    power = np.clip(start, lower, upper)
    kink = prices.critical_power
    for _ in range(60):
        time, dtime, d2time = steady_segment_times(model, power)
        counter[0] += 1
        gradient, hessian, at_kink = _lagrangian_derivatives(prices, multiplier, centre, power,
                                                             time, dtime, d2time)
        low = np.where(gradient < 0, power, low)
        high = np.where((gradient > 0) | at_kink, power, high)
        new, at_lower, at_upper = _safeguarded_step(power, gradient, hessian, low, high, lower,
                                                    upper, kink, at_kink)
        done = np.abs(new - power) <= _POWER_TOLERANCE * np.maximum(power, 1.0)
        if np.all(done):
            break
        power = new
    free = ~(at_lower | at_upper | at_kink)
    slope = time + (power - centre) * dtime
    return SegmentOptimum(power, time, slope, hessian, free)


def _multiplier_step(multiplier: float, excess: float, derivative: float, low: float,
                     high: float, slow: bool, guess: float) -> float:
    """Next λ [1/J]: a Newton step on E(λ) inside the bracket (low, high), else bisection, else
    an expansion of the half-open bracket by twice its end (or `guess`)."""
    step = multiplier - excess / derivative if derivative < 0 else math.nan
    if low < step < high and not (slow and math.isfinite(high - low)):
        return step
    if math.isfinite(high) and math.isfinite(low):
        return 0.5 * (low + high)
    if math.isfinite(high):
        return high - 2.0 * max(abs(high), guess)
    return low + 2.0 * max(abs(low), guess)


def lagrange_plan(
    model: SegmentModel,
    request: PlanRequest,
    lower: np.ndarray,
    upper: np.ndarray,
    counter: list[int],
    prices: LimitPrices | None = None,
    start: tuple[float, np.ndarray] | None = None,
) -> tuple[np.ndarray, float, int]:
    """Fastest powers under the coupling constraint and the bounds only.

    λ is found by Newton steps on E(λ) = Σ (P_k(λ) − c)·t_k − E₀, with
    dE/dλ = −Σ_free b_k² / a_k (implicit differentiation of the segments' stationarity),
    kept inside a bisection bracket; E is decreasing in λ.

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    request : PlanRequest
        Mean power and constraint [-].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    counter : list of int
        One-element count of steady evaluations, incremented [-].
    prices : LimitPrices or None
        Prices of the W′ and effort limits in every segment's Lagrangian [-].
    start : tuple of (float, numpy.ndarray) or None
        A nearby problem's (λ [1/J], segment powers [W]) to start from [-].

    Returns
    -------
    power : numpy.ndarray
        Segment powers, length K [W].
    multiplier : float
        λ, time saved per joule-equivalent of the coupling constraint [1/J].
    iterations : int
        Steps on λ [-].

    Raises
    ------
    InputError
        When no plan within the bounds meets the coupling constraint.

    References
    ----------
    Atkinson, G., Peacock, O. & Passfield, L. (2007). J Sports Sci 25(9):1001-1009.
    doi:10.1080/02640410600944709 (variable power on the Martin et al. 1998 model).
    Bos, L., Slawinski, M.A., Slawinski, R.A. & Stanoev, T. (2024). On minimizing cyclists'
    ascent times. arXiv:2403.03363 (constant ground speed under a mean-power constraint).
    """
    centre, target = coupling_constraint(request, model)
    mean = required_mean_power(request)
    time, dtime = steady_times(model, np.full(model.count, mean))
    counter[0] += 1
    multiplier = float(-dtime.sum() / time.sum())  # λ of a uniform course
    tolerance = 1e-9 * mean * float(time.sum())
    power = np.full(model.count, mean)
    if start is not None:  # a nearby problem's (λ, powers)
        multiplier, power = start[0], np.clip(start[1], lower, upper)
    guess = abs(multiplier)
    # λ < 0 only happens when a priced effort limit pushes every power down
    low = -math.inf if prices is not None and prices.effort > 0 else 0.0
    high = math.inf
    previous = math.inf
    iterations = 0
    for _ in range(60):
        iterations += 1
        found = segment_argmin(model, multiplier, centre, lower, upper, power, counter, prices)
        power, time = found.power, found.time
        excess = float(np.sum((power - centre) * time) - target)
        if abs(excess) <= tolerance:
            break
        if excess > 0:
            low = multiplier
        else:
            high = multiplier
        usable = found.free & (found.curvature > 0)
        derivative = -float(np.sum(found.slope[usable] ** 2 / found.curvature[usable]))
        slow = abs(excess) > 0.5 * previous  # Newton is not converging: bisect instead
        previous = abs(excess)
        multiplier = _multiplier_step(multiplier, excess, derivative, low, high, slow, guess)
        if math.isfinite(high - low) and high - low <= 1e-15 * max(abs(high), guess):
            break
    else:
        raise InputError("no plan within the power limits matches the mean power")
    if abs(excess) > 1e-6 * mean * float(time.sum()):
        raise InputError("no plan within the power limits matches the mean power")
    return power, multiplier, iterations


def stationarity_residual(model: SegmentModel, power: np.ndarray, multiplier: float,
                          centre: float, lower: np.ndarray, upper: np.ndarray) -> float:
    """Largest relative KKT stationarity residual over the free segments.

    |t_k′·(1 + λ(P_k − c)) + λ·t_k| / |λ·t_k| over the segments strictly inside their bounds:
    0 at the optimum, where every free segment has the same marginal time per joule.

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    power : numpy.ndarray
        Segment powers, length K [W].
    multiplier : float
        λ of the coupling constraint [1/J].
    centre : float
        c of the coupling constraint [W].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].

    Returns
    -------
    float
        The residual, 0 when no segment is free [-].
    """
    time, dtime = steady_times(model, power)
    gradient = dtime * (1.0 + multiplier * (power - centre)) + multiplier * time
    free = (power > lower * (1 + 1e-6) + 1e-9) & (power < upper * (1 - 1e-6))
    if not free.any():
        return 0.0
    return float(np.max(np.abs(gradient[free]) / np.abs(multiplier * time[free])))


def steady_w_prime_balance(power: np.ndarray, time: np.ndarray, request: PlanRequest,
                           initial_balance: float | None = None) -> np.ndarray:
    """W′ balance at the end of each segment ridden at steady power.

    Parameters
    ----------
    power : numpy.ndarray
        Segment powers, length K [W].
    time : numpy.ndarray
        Segment times, length K [s].
    request : PlanRequest
        CP, W′ and the W′ balance model [-].
    initial_balance : float or None
        Balance at the start of the first segment; None for W′ (rested) [J].

    Returns
    -------
    numpy.ndarray
        W′ balance at each segment's end, length K [J].

    References
    ----------
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Med Sci Sports Exerc
    44(8):1526-1532. doi:10.1249/MSS.0b013e3182517a80 (pacing.physiology.critical_power).
    """
    critical_power, w_prime = w_prime_parameters(request)
    return w_prime_balance(power, time, critical_power, w_prime, request.w_prime_model,
                           initial_balance)


def fourth_power_mean(power: np.ndarray, time: np.ndarray) -> float:
    """Time-weighted 4th-power mean of segment powers, (Σ P_k⁴·t_k / Σ t_k)^¼.

    An upper bound of the effort-weighted power (averaging over 30 s first can only lower it),
    used as the solver's effort constraint.

    Parameters
    ----------
    power : numpy.ndarray
        Segment powers [W].
    time : numpy.ndarray
        Segment times [s].

    Returns
    -------
    float
        The mean [W].
    """
    return float((np.sum(power**4 * time) / np.sum(time)) ** 0.25)


def onto_coupling(model: SegmentModel, request: PlanRequest, power: np.ndarray,
                  lower: np.ndarray, upper: np.ndarray, counter: list[int]) -> np.ndarray:
    """Scale the powers strictly inside their bounds so the plan meets the coupling constraint.

    Secant steps on the scale s of the free powers, Σ (P_k(s) − c)·t_k = E₀ (the constraint
    grows with s); at most 8 steps, to 1e-9 of P̄·T.

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    request : PlanRequest
        Mean power and constraint [-].
    power : numpy.ndarray
        Segment powers, length K [W].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    counter : list of int
        One-element count of steady evaluations, incremented [-].

    Returns
    -------
    numpy.ndarray
        The scaled powers (`power` itself when no segment is free), length K [W].
    """
    centre, target = coupling_constraint(request, model)
    free = (power > lower) & (power < upper)
    if not free.any():
        return power

    def gap(scale: float) -> tuple[float, np.ndarray]:
        trial = np.clip(np.where(free, power * scale, power), lower, upper)
        time, _ = steady_times(model, trial)
        counter[0] += 1
        return float(np.sum((trial - centre) * time) - target), trial

    tolerance = 1e-9 * required_mean_power(request) * float(
        steady_times(model, power)[0].sum())
    previous = (1.0, *gap(1.0))
    scale = 1.0 + 1e-4 * (1.0 if previous[1] < 0 else -1.0)
    for _ in range(8):
        value, trial = gap(scale)
        if abs(value) <= tolerance or value == previous[1]:
            return trial
        scale, previous = scale - value * (scale - previous[0]) / (value - previous[1]), (
            scale, value, trial)
    return previous[2]
