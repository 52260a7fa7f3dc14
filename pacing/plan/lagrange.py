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

A broken limit gets a price in every segment's Lagrangian, μ·(P − CP)⁺·t_k for W′ spent above
CP or ν·P⁴·t_k for the effort measure (the time-weighted 4th-power mean of the segment powers),
and the lowest price whose plan keeps the limit is found by false position. The SLSQP polish,
the coarse start and the entry point fastest_steady_plan are in pacing.plan.fastest.

References
----------
Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
Atkinson, G., Peacock, O. & Passfield, L. (2007). Variable versus constant power strategies
during cycling time-trials: prediction of time savings using an up-to-date mathematical model.
J Sports Sci 25(9):1001-1009. doi:10.1080/02640410600944709
Bos, L., Slawinski, M.A., Slawinski, R.A. & Stanoev, T. (2024). On minimizing cyclists' ascent
times. arXiv:2403.03363.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.physiology.critical_power import w_prime_balance
from pacing.plan.request import PlanRequest
from pacing.plan.steady_model import SegmentModel, steady_segment_times

_POWER_TOLERANCE = 1e-11  # relative, on segment powers
_PRICE_TOLERANCE = 1e-3  # slack left by the priced plan, relative to W′ or the cap


# ------------------------------------------------------------------ fastest plan, steady state

def _coupling(request: PlanRequest, model: SegmentModel) -> tuple[float, float]:
    """(c, E₀) of the coupling constraint Σ (P_k − c)·t_k = E₀."""
    mean = float(request.mean_power)
    if request.constraint == "mean-power":
        return mean, 0.0
    time, _, _ = steady_segment_times(model, np.full(model.count, mean))
    return 0.0, mean * float(time.sum())


@dataclass(frozen=True)
class _Prices:
    """Prices of the limits in the segment Lagrangian: μ·(P − CP)⁺·t (W′ spent above CP) and
    ν·P⁴·t (the solver's effort measure)."""

    w_prime: float = 0.0
    critical_power: float = math.inf
    effort: float = 0.0


def _segment_argmin(model, multiplier, centre, lower, upper, start, counter, prices=None):
    """Minimise t_k(P)·(1 + λ(P − c)) (+ priced limits) over [lo_k, hi_k] for every segment
    (safeguarded Newton, vectorized over segments).

    Returns (power, time, slope of the coupling constraint b_k = t_k + (P_k − c)·t_k′,
    curvature of the Lagrangian a_k, free-segment mask).
    """
    prices = prices or _Prices()
    low, high = lower.copy(), upper.copy()
    power = np.clip(start, lower, upper)
    kink = prices.critical_power
    for _ in range(60):
        time, dtime, d2time = steady_segment_times(model, power)
        counter[0] += 1
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
        low = np.where(gradient < 0, power, low)
        high = np.where((gradient > 0) | at_kink, power, high)
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
        new = np.where((~convex | (newton >= high)) & (gradient < 0) & (high >= upper), upper,
                       new)
        new = np.where(at_lower, lower, np.where(at_upper, upper, new))
        done = np.abs(new - power) <= _POWER_TOLERANCE * np.maximum(power, 1.0)
        if np.all(done):
            break
        power = new
    free = ~(at_lower | at_upper | at_kink)
    slope = time + (power - centre) * dtime
    return power, time, slope, hessian, free


def _lagrange_plan(model, request, lower, upper, counter, prices=None, start=None):
    """Fastest powers under the coupling constraint and bounds only; (power, λ, iterations).

    λ is found by Newton steps on E(λ) = Σ (P_k(λ) − c)·t_k − E₀, with
    dE/dλ = −Σ_free b_k² / a_k (implicit differentiation of the segments' stationarity),
    kept inside a bisection bracket; E is decreasing in λ.
    """
    centre, target = _coupling(request, model)
    mean = float(request.mean_power)
    time, dtime, _ = steady_segment_times(model, np.full(model.count, mean))
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
        power, time, slope, curvature, free = _segment_argmin(
            model, multiplier, centre, lower, upper, power, counter, prices)
        excess = float(np.sum((power - centre) * time) - target)
        if abs(excess) <= tolerance:
            break
        if excess > 0:
            low = multiplier
        else:
            high = multiplier
        usable = free & (curvature > 0)
        derivative = -float(np.sum(slope[usable] ** 2 / curvature[usable]))
        step = multiplier - excess / derivative if derivative < 0 else math.nan
        slow = abs(excess) > 0.5 * previous  # Newton is not converging: bisect instead
        previous = abs(excess)
        if low < step < high and not (slow and math.isfinite(high - low)):
            multiplier = step
        elif math.isfinite(high) and math.isfinite(low):
            multiplier = 0.5 * (low + high)
        elif math.isfinite(high):
            multiplier = high - 2.0 * max(abs(high), guess)
        else:
            multiplier = low + 2.0 * max(abs(low), guess)
        if math.isfinite(high - low) and high - low <= 1e-15 * max(abs(high), guess):
            break
    else:
        raise InputError("no plan within the power limits matches the mean power")
    if abs(excess) > 1e-6 * mean * float(time.sum()):
        raise InputError("no plan within the power limits matches the mean power")
    return power, multiplier, iterations


def _stationarity(model, power, multiplier, centre, lower, upper) -> float:
    time, dtime, _ = steady_segment_times(model, power)
    gradient = dtime * (1.0 + multiplier * (power - centre)) + multiplier * time
    free = (power > lower * (1 + 1e-6) + 1e-9) & (power < upper * (1 - 1e-6))
    if not free.any():
        return 0.0
    return float(np.max(np.abs(gradient[free]) / np.abs(multiplier * time[free])))


def _segment_w_prime(power, time, request) -> np.ndarray:
    """W′ balance at the end of each segment of steady power [J]."""
    return w_prime_balance(power, time, request.critical_power, request.w_prime,
                           request.w_prime_model)


def _raw_effort(power: np.ndarray, time: np.ndarray) -> float:
    """Time-weighted 4th-power mean of segment powers: an upper bound of the effort-weighted
    power (averaging over 30 s can only lower it), used as the solver's effort constraint."""
    return float((np.sum(power**4 * time) / np.sum(time)) ** 0.25)


def _on_coupling(model, request, power, lower, upper, counter) -> np.ndarray:
    """Scale the powers strictly inside their bounds so the plan meets the coupling constraint
    Σ (P_k − c)·t_k = E₀ (secant steps on the scale; the constraint grows with it)."""
    centre, target = _coupling(request, model)
    free = (power > lower) & (power < upper)
    if not free.any():
        return power

    def gap(scale: float) -> tuple[float, np.ndarray]:
        trial = np.clip(np.where(free, power * scale, power), lower, upper)
        time, _, _ = steady_segment_times(model, trial)
        counter[0] += 1
        return float(np.sum((trial - centre) * time) - target), trial

    tolerance = 1e-9 * float(request.mean_power) * float(
        steady_segment_times(model, power)[0].sum())
    previous = (1.0, *gap(1.0))
    scale = 1.0 + 1e-4 * (1.0 if previous[1] < 0 else -1.0)
    for _ in range(8):
        value, trial = gap(scale)
        if abs(value) <= tolerance or value == previous[1]:
            return trial
        scale, previous = scale - value * (scale - previous[0]) / (value - previous[1]), (
            scale, value, trial)
    return previous[2]


def _priced_plan(model, request, lower, upper, multiplier, reserve, cap, counter):
    """Lowest price of one limit (W′ reserve or effort cap) whose priced plan keeps it.

    Returns (power or None when no price up to a large one works, iterations).
    """
    mean = float(request.mean_power)
    w_prime = float(request.w_prime) if request.w_prime is not None else 1.0

    def prices(price: float) -> _Prices:
        if reserve is not None:
            return _Prices(w_prime=price, critical_power=float(request.critical_power))
        return _Prices(effort=price / mean**3)

    warm: list = []

    def margin(price: float):
        try:
            power, found, _ = _lagrange_plan(model, request, lower, upper, counter,
                                             prices(price), warm[-1] if warm else None)
        except InputError:
            return None, -math.inf
        warm.append((found, power))
        time, _, _ = steady_segment_times(model, power)
        counter[0] += 1
        if reserve is not None:
            return power, (_segment_w_prime(power, time, request).min() - reserve) / w_prime
        return power, (cap - _raw_effort(power, time)) / cap

    low, g_low = 0.0, None
    high = multiplier
    power, g_high = margin(high)
    steps = 1
    while g_high < 0 and power is not None and steps < 30:
        low, g_low = high, g_high
        high *= 4.0
        power, g_high = margin(high)
        steps += 1
    if g_high < 0 or power is None:
        return None, steps  # no price keeps the limit, or the priced problem has no plan
    if g_low is None:
        _, g_low = margin(0.0)
        steps += 1
    best, side = power, 0
    while steps < 40 and g_high > _PRICE_TOLERANCE:
        if math.isfinite(g_low):
            trial = high - g_high * (high - low) / (g_high - g_low)
        else:
            trial = 0.5 * (low + high)
        if not low < trial < high:
            trial = 0.5 * (low + high)
        power, g_trial = margin(trial)
        steps += 1
        if g_trial >= 0:
            high, g_high, best = trial, g_trial, power
            if side == 1:
                g_low *= 0.5
            side = 1
        else:
            low, g_low = trial, g_trial
            if side == -1:
                g_high *= 0.5
            side = -1
        if high - low <= 1e-9 * high:
            break
    return best, steps
