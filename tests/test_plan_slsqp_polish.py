"""Specification of the SLSQP polish of the fastest plan (pacing.plan.slsqp_polish): plain,
sided at CP, and by windows.

References: the W′ balance is Skiba's differential form written out again here (Skiba et al.
2015, Eur J Appl Physiol 115(4):703-713, doi:10.1007/s00421-014-3050-3; docs/references.md,
"Critical power and W′ balance"); derivatives are checked against central differences
(mathematical fact); the multipliers' sign follows Nocedal & Wright (2006), Numerical
Optimization, ch. 12 (L = f − λ·c). The whole solve is specified in tests/test_plan_fastest.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from samples import atkinson_hills as hilly
from test_plan_fastest import RIDER, model_of, rolling_windy_course, skiba_differential

from pacing.course.segments import split_every
from pacing.plan.fastest import fastest_steady_plan
from pacing.plan.fastest_problem import FastestProblem, SolverLimits
from pacing.plan.lagrange import lagrange_plan, steady_w_prime_balance
from pacing.plan.priced_limits import priced_plan
from pacing.plan.request import PlanRequest, power_limits
from pacing.plan.slsqp_polish import (
    _end_floor,
    _lowest_rows,
    sided_slsqp_plan,
    slsqp_plan,
    w_prime_jacobian,
    window_polish,
)
from pacing.plan.steady_model import segment_model, steady_segment_times


def central_differences(model, power, request, initial=None):
    """d(W′ balance at each end)/d(P_k) by central differences of 0.1 % [J/W]."""
    differences = np.empty((power.size, power.size))
    for k in range(power.size):
        step = np.zeros(power.size)
        step[k] = 1e-3 * power[k]
        up = steady_w_prime_balance(power + step, steady_segment_times(model, power + step)[0],
                                    request, initial)
        down = steady_w_prime_balance(power - step,
                                      steady_segment_times(model, power - step)[0], request,
                                      initial)
        differences[:, k] = (up - down) / (2 * step[k])
    return differences


PLAN = np.array([340.0, 150.0, 360.0, 120.0, 330.0, 200.0, 350.0, 100.0, 345.0, 180.0])


@pytest.mark.parametrize("model_name", ["differential", "integral"])
def test_the_w_prime_jacobian_matches_finite_differences(model_name):
    # The analytic gradient SLSQP is given: d(W′ balance at segment end j)/d(P_k), against
    # central differences of the balance of the steady plan (mathematical fact), away from
    # the kink at CP.
    model = model_of(hilly)
    request = PlanRequest(critical_power=300.0, w_prime=20000.0, w_prime_model=model_name)
    time, dtime, _ = steady_segment_times(model, PLAN)
    jacobian = w_prime_jacobian(PLAN, time, dtime, request)
    differences = central_differences(model, PLAN, request)
    np.testing.assert_allclose(jacobian, differences, atol=1e-5 * np.abs(differences).max())


def test_the_w_prime_jacobian_of_some_ends_from_a_tired_start_matches_finite_differences():
    # a window of a longer plan starts with W′ partly spent (12 kJ of 20 kJ) and is checked
    # at some ends only: the rows asked for, the same central differences
    model = model_of(hilly)
    request = PlanRequest(critical_power=300.0, w_prime=20000.0)
    time, dtime, _ = steady_segment_times(model, PLAN)
    rows = np.array([0, 2, 6, 9])
    jacobian = w_prime_jacobian(PLAN, time, dtime, request, rows=rows, initial_balance=12000.0)
    differences = central_differences(model, PLAN, request, 12000.0)[rows]
    assert jacobian.shape == (4, PLAN.size)
    np.testing.assert_allclose(jacobian, differences, atol=1e-5 * np.abs(differences).max())


def test_on_one_side_of_cp_each_segment_takes_that_sides_slope():
    # On CP itself the balance has a kink: going up spends W′ at the segment's time t per
    # watt, going down recovers nothing yet at a full W′ (Skiba 2015, differential form).
    model = model_of(hilly)
    request = PlanRequest(critical_power=300.0, w_prime=20000.0)
    power = np.full(10, 300.0)
    time, dtime, _ = steady_segment_times(model, power)
    above = w_prime_jacobian(power, time, dtime, request, side=np.ones(10, dtype=bool))
    below = w_prime_jacobian(power, time, dtime, request, side=np.zeros(10, dtype=bool))
    np.testing.assert_allclose(np.diag(above), -time, rtol=1e-12)
    np.testing.assert_allclose(below, 0.0, atol=1e-12)


def test_with_the_sides_held_the_balance_is_lowest_at_the_end_of_a_run_above_cp():
    # Differential W′ balance: above CP it falls, below it rises toward W′ (Skiba 2015), so
    # with every segment on a fixed side its lowest points are the last segments of the runs
    # above CP, or the last end; the rows checked hold the lowest balance of every plan.
    rng = np.random.default_rng(5)
    model = model_of(hilly)
    request = PlanRequest(critical_power=300.0, w_prime=20000.0)
    side = np.array([True, True, False, True, False, False, True, True, True, False])
    assert _lowest_rows(side, request).tolist() == [1, 3, 8, 9]
    for _ in range(20):
        power = np.where(side, rng.uniform(300.0, 420.0, 10), rng.uniform(80.0, 300.0, 10))
        time = steady_segment_times(model, power)[0]
        balance = skiba_differential(power, time, 300.0, 20000.0)
        assert balance[_lowest_rows(side, request)].min() == pytest.approx(balance.min(),
                                                                          abs=1e-9)
    integral = PlanRequest(critical_power=300.0, w_prime=20000.0, w_prime_model="integral")
    assert _lowest_rows(side, integral) is None  # its balance can rise above CP: every end


def test_the_end_floor_lets_the_later_segments_just_keep_the_reserve():
    # The later segments held, the lowest balance after segment 3 that keeps 2 kJ at every
    # later end: starting the later segments from it, their lowest balance is the reserve
    # (Skiba 2015 differential form, written out here), and from 1 J less it is below.
    model = model_of(hilly)
    request = PlanRequest(critical_power=300.0, w_prime=20000.0)
    time = steady_segment_times(model, PLAN)[0]
    floor = _end_floor(PLAN, time, request, 4, 2000.0)

    def later_lowest(start):
        balance, out = start, []
        for p, t in zip(PLAN[4:], time[4:], strict=True):
            if p > 300.0:
                balance -= (p - 300.0) * t
            else:
                balance = 20000.0 - (20000.0 - balance) * math.exp(-(300.0 - p) * t / 20000.0)
            out.append(balance)
        return min(out)

    assert later_lowest(floor) == pytest.approx(2000.0, abs=1e-6)
    assert later_lowest(floor - 1.0) < 2000.0
    assert _end_floor(PLAN, time, request, 10, 2000.0) == -math.inf  # nothing after the end


def test_the_sided_polish_keeps_the_reserve_and_beats_plain_slsqp_where_it_stalls():
    # the 200 km course's trouble in small: 150 segments of a windy rolling course, mean 95 %
    # of CP; plain SLSQP stops at its iteration limit, the sided rounds from its answer
    # converge and are faster; both keep the reserve (solver margin: 1e-6 of W′)
    course, air = rolling_windy_course(11)
    model = segment_model(course, split_every(course, 4000.0 / 150), RIDER, air)
    request = PlanRequest("fastest", mean_power=266.0, critical_power=280.0, w_prime=8000.0,
                          w_prime_reserve=1000.0, max_power_ratio=1.4)
    problem = FastestProblem(model, request, *power_limits(model, request))
    _, multiplier, _ = lagrange_plan(model, request, problem.lower, problem.upper, [0])
    start, _ = priced_plan(model, request, problem.lower, problem.upper, multiplier, 1000.0,
                           None, [0])  # the priced plan, plain SLSQP's start
    assert start is not None
    limits = SolverLimits(1004.0, None)
    plain, result = slsqp_plan(problem, start, limits)
    sided, sided_result = sided_slsqp_plan(problem, plain, limits)
    assert result.nit == 100  # the iteration limit
    assert sided_result.success
    assert problem.finish(sided) < problem.finish(plain)
    for power in (plain, sided):
        time = steady_segment_times(model, power)[0]
        assert skiba_differential(power, time, 280.0, 8000.0).min() >= 1000.0 - 1e-6 * 8000.0


def test_polishing_by_windows_keeps_the_limits_and_is_never_slower():
    # 60 segments polished in windows of 20 from the plan of their runs of 4: each window's
    # answer is kept only when the whole plan keeps the reserve and is faster
    course, air = rolling_windy_course(3)
    model = segment_model(course, split_every(course, 4000.0 / 60), RIDER, air)
    request = PlanRequest("fastest", mean_power=266.0, critical_power=280.0, w_prime=8000.0,
                          w_prime_reserve=1000.0, max_power_ratio=1.4)
    problem = FastestProblem(model, request, *power_limits(model, request))
    coarse = segment_model(course, split_every(course, 4000.0 / 15), RIDER, air)
    runs, _ = fastest_steady_plan(coarse, request)
    start = np.repeat(runs, 4)
    assert problem.keeps(start, SolverLimits(1000.0, None), 1e-6)
    polished, iterations = window_polish(problem, start, SolverLimits(1000.0, None),
                                         SolverLimits(1004.0, None), 20)
    assert iterations > 0
    assert problem.finish(polished) < problem.finish(start)
    assert problem.keeps(polished, SolverLimits(1000.0, None), 1e-6)
