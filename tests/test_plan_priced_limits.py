"""Specification of the priced limits of the fastest plan (pacing.plan.priced_limits): the
lowest price of the W′ reserve or the effort cap whose Lagrange plan keeps it.

The course is course (i) of Atkinson, Peacock & Passfield (2007), J Sports Sci 25(9):1001-1009
(doi:10.1080/02640410600944709; abstract [read]), built in tests/test_plan_lagrange.py: 10 km
of alternating 1 km at +10 % and −10 %, 70 kg + 10 kg bike, 289 W.
"""

from __future__ import annotations

import numpy as np
import pytest
from test_plan_lagrange import MEAN, hilly_model

from pacing.plan.lagrange import fourth_power_mean, lagrange_plan, steady_w_prime_balance
from pacing.plan.priced_limits import PRICE_TOLERANCE, priced_plan
from pacing.plan.request import PlanRequest, power_limits
from pacing.plan.steady_model import steady_segment_times


def test_the_priced_w_prime_plan_keeps_the_reserve_with_little_slack():
    # The lowest price that keeps the reserve leaves at most PRICE_TOLERANCE·W′ of slack
    # (property of the false-position search), and the plan keeps the mean power.
    model = hilly_model()
    request = PlanRequest("fastest", mean_power=MEAN, critical_power=300.0, w_prime=20000.0,
                          w_prime_reserve=2000.0)
    lower, upper = power_limits(model, request)
    free_plan, multiplier, _ = lagrange_plan(model, request, lower, upper, [0])
    time = steady_segment_times(model, free_plan)[0]
    assert steady_w_prime_balance(free_plan, time, request).min() < 2000.0  # it binds
    counter = [0]
    power, steps = priced_plan(model, request, lower, upper, multiplier, 2000.0, None, counter)
    assert power is not None and steps > 0 and counter[0] > 0
    time = steady_segment_times(model, power)[0]
    balance = steady_w_prime_balance(power, time, request)
    assert 2000.0 <= balance.min() <= 2000.0 + PRICE_TOLERANCE * 20000.0
    assert np.sum(power * time) / time.sum() == pytest.approx(MEAN, rel=1e-8)


def test_the_priced_effort_plan_keeps_the_cap_with_little_slack():
    model = hilly_model()
    request = PlanRequest("fastest", mean_power=MEAN, critical_power=280.0,
                          max_power_ratio=1.25, min_power_ratio=0.5)
    lower, upper = power_limits(model, request)
    free_plan, multiplier, _ = lagrange_plan(model, request, lower, upper, [0])
    cap = 300.0
    assert fourth_power_mean(free_plan, steady_segment_times(model, free_plan)[0]) > cap
    power, _ = priced_plan(model, request, lower, upper, multiplier, None, cap, [0])
    assert power is not None
    effort = fourth_power_mean(power, steady_segment_times(model, power)[0])
    assert cap * (1 - PRICE_TOLERANCE) <= effort <= cap


@pytest.mark.parametrize("reserve, cap", [(None, None), (1000.0, 300.0)])
def test_exactly_one_limit_is_priced(reserve, cap):
    model = hilly_model()
    request = PlanRequest("fastest", mean_power=MEAN, critical_power=300.0, w_prime=20000.0)
    with pytest.raises(ValueError, match="exactly one"):
        priced_plan(model, request, np.zeros(10), np.full(10, 400.0), 1e-3, reserve, cap, [0])
