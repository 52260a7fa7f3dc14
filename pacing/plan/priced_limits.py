"""The priced limits of the fastest cycling plan: the lowest price of a broken limit whose
Lagrange plan keeps it.

When the Lagrange plan (pacing.plan.lagrange) breaks the athlete's W′ reserve or the effort
cap, that limit gets a price in every segment's Lagrangian, μ·(P − CP)⁺·t_k for W′ spent above
CP or ν·P⁴·t_k for the effort measure (the time-weighted 4th-power mean of the segment powers,
pacing.plan.lagrange.LimitPrices). The problem stays separable, so each price costs one
Lagrange solve. The margin on the limit grows with the price: the price is raised from λ by
factors of 4 until its plan keeps the limit, then lowered by Illinois false position until the
slack is below PRICE_TOLERANCE. The plan is a relaxation (it charges W′ spent above CP but
gives no credit for its recovery); pacing.plan.fastest polishes it with SLSQP.

References
----------
Dowell, M. & Jarratt, P. (1971). A modified regula falsi method for computing the root of an
equation. BIT 11:168-174. doi:10.1007/BF01934364 (the Illinois method)
Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
doi:10.1249/MSS.0b013e3182517a80 (the W′ balance the reserve is checked on)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from pacing.errors import InputError
from pacing.plan.lagrange import (
    LimitPrices,
    fourth_power_mean,
    lagrange_plan,
    steady_w_prime_balance,
)
from pacing.plan.request import PlanRequest, required_mean_power, w_prime_parameters
from pacing.plan.steady_model import SegmentModel, steady_times

PRICE_TOLERANCE = 1e-3
"""Slack the priced plan may leave on its limit, relative to W′ or to the cap [-]."""


@dataclass(eq=False)
class _PricedLimit:
    """One limit priced in the Lagrangian: the W′ reserve (`on_w_prime`) or the effort cap,
    at `value` [J] or [W]."""

    model: SegmentModel
    request: PlanRequest
    lower: np.ndarray
    upper: np.ndarray
    counter: list[int]
    on_w_prime: bool
    value: float
    warm: list[tuple[float, np.ndarray]] = field(default_factory=list)

    def prices(self, price: float) -> LimitPrices:
        """The prices with `price` on this limit (scaled by P̄³ for the effort)."""
        if self.on_w_prime:
            return LimitPrices(w_prime=price,
                               critical_power=w_prime_parameters(self.request)[0])
        return LimitPrices(effort=price / required_mean_power(self.request)**3)

    def margin(self, price: float) -> tuple[np.ndarray | None, float]:
        """The priced plan [W] and its margin on the limit, relative to W′ or the cap (≥ 0:
        kept); (None, −∞) when the priced problem has no plan."""
        try:
            power, found, _ = lagrange_plan(self.model, self.request, self.lower, self.upper,
                                            self.counter, self.prices(price),
                                            self.warm[-1] if self.warm else None)
        except InputError:
            return None, -math.inf
        self.warm.append((found, power))
        time, _ = steady_times(self.model, power)
        self.counter[0] += 1
        if self.on_w_prime:
            w_prime = w_prime_parameters(self.request)[1]
            return power, (steady_w_prime_balance(power, time, self.request).min()
                           - self.value) / w_prime
        return power, (self.value - fourth_power_mean(power, time)) / self.value


@dataclass
class _Bracket:
    """Prices with margins of both signs: low breaks the limit, high keeps it."""

    low: float
    g_low: float
    high: float
    g_high: float
    best: np.ndarray


def _bracket_price(limit: _PricedLimit, multiplier: float) -> tuple[_Bracket | None, int]:
    """Quadruple the price from λ until its plan keeps the limit; (bracket or None when no
    price up to 4³⁰·λ works or the priced problem has no plan, steps)."""
    low, g_low = 0.0, None
    high = multiplier
    power, g_high = limit.margin(high)
    steps = 1
    while g_high < 0 and power is not None and steps < 30:
        low, g_low = high, g_high
        high *= 4.0
        power, g_high = limit.margin(high)
        steps += 1
    if g_high < 0 or power is None:
        return None, steps
    if g_low is None:
        _, g_low = limit.margin(0.0)
        steps += 1
    return _Bracket(low, g_low, high, g_high, power), steps


def _illinois(limit: _PricedLimit, bracket: _Bracket, steps: int) -> tuple[np.ndarray, int]:
    """Illinois false position on the price down to PRICE_TOLERANCE of slack; (the plan of the
    lowest price found that keeps the limit [W], steps)."""
    low, g_low, high, g_high = bracket.low, bracket.g_low, bracket.high, bracket.g_high
    best, side = bracket.best, 0
    while steps < 40 and g_high > PRICE_TOLERANCE:
        if math.isfinite(g_low):
            trial = high - g_high * (high - low) / (g_high - g_low)
        else:
            trial = 0.5 * (low + high)
        if not low < trial < high:
            trial = 0.5 * (low + high)
        power, g_trial = limit.margin(trial)
        steps += 1
        if g_trial >= 0 and power is not None:  # a kept limit always has a plan
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


def priced_plan(
    model: SegmentModel,
    request: PlanRequest,
    lower: np.ndarray,
    upper: np.ndarray,
    multiplier: float,
    reserve: float | None,
    cap: float | None,
    counter: list[int],
) -> tuple[np.ndarray | None, int]:
    """Lowest price of one limit (W′ reserve or effort cap) whose priced plan keeps it.

    The price is raised from λ by factors of 4 until its plan keeps the limit, then lowered
    by Illinois false position on the margin until the slack is below PRICE_TOLERANCE.

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    request : PlanRequest
        Mean power, constraint, CP and W′ [-].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    multiplier : float
        λ of the unpriced plan, the first price tried [1/J].
    reserve : float or None
        W′ balance floor to keep; None when the cap is priced instead [J].
    cap : float or None
        Upper limit of the 4th-power mean power; None when the reserve is priced [W].
    counter : list of int
        One-element count of steady evaluations, incremented [-].

    Returns
    -------
    power : numpy.ndarray or None
        Segment powers, length K, or None when no price up to a large one keeps the limit [W].
    iterations : int
        Prices tried [-].

    Raises
    ------
    ValueError
        Unless exactly one of `reserve` and `cap` is given.

    References
    ----------
    Dowell, M. & Jarratt, P. (1971). A modified regula falsi method for computing the root of
    an equation. BIT 11:168-174. doi:10.1007/BF01934364 (the Illinois method).
    """
    if reserve is not None and cap is None:
        limit = _PricedLimit(model, request, lower, upper, counter, True, reserve)
    elif cap is not None and reserve is None:
        limit = _PricedLimit(model, request, lower, upper, counter, False, cap)
    else:
        raise ValueError("price exactly one limit: the W′ reserve or the effort cap")
    bracket, steps = _bracket_price(limit, multiplier)
    if bracket is None:
        return None, steps  # no price keeps the limit, or the priced problem has no plan
    return _illinois(limit, bracket, steps)
