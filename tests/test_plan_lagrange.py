"""Specification of the Lagrange solve of the steady segment model (pacing.plan.lagrange); the
search for the price of a limit is specified in tests/test_plan_priced_limits.py.

The course is course (i) of Atkinson, Peacock & Passfield (2007), J Sports Sci 25(9):1001-1009
(doi:10.1080/02640410600944709; abstract [read]): 10 km of alternating 1 km at +10 % and −10 %,
70 kg + 10 kg bike, 289 W. Each segment has one grade, so its steady time is
t_k(P) = 1000 m·√(1 + G²)/v(P), v by scipy brentq on the Martin et al. (1998) balance written
out in this file (J Appl Biomech 14(3):276-291; constants as in docs/references.md, "Cycling
power balance (Martin et al. 1998)" [mem]; CdA 0.269 m² of its worked values). Derivatives of
that independent time are central differences.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
import pytest
from scipy import optimize

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.lagrange import (
    LimitPrices,
    coupling_constraint,
    fourth_power_mean,
    lagrange_plan,
    onto_coupling,
    segment_argmin,
    stationarity_residual,
    steady_w_prime_balance,
)
from pacing.plan.request import PlanRequest, power_limits
from pacing.plan.steady_model import segment_model
from pacing.weather.conditions import still_air

G = 9.80665  # standard gravity [m/s²]
MEAN = 289.0
GRADES = np.array([0.1, -0.1] * 5)


@lru_cache
def hilly_model():
    distance = np.arange(0.0, 10000.0 + 5.0, 10.0)
    section = np.minimum(distance // 1000, 9)
    into = distance - 1000.0 * section
    elevation = np.where(section % 2 == 0, 0.1 * into, 100.0 - 0.1 * into)
    course = synthetic_course(distance, elevation)
    return segment_model(course, np.arange(0, distance.size, 100),
                         Rider(mass=80.0, drag_area=0.269), still_air(course, 1.2))


def martin_speed(power, grade):
    """Steady speed [m/s]: root of η·P = v·F(v) (Martin et al. 1998), ρ 1.2, 80 kg, no wind."""
    theta = math.atan(grade)

    def balance(v):
        return v * (0.5 * 1.2 * (0.269 + 0.0044) * v * v + 0.0032 * 80.0 * G * math.cos(theta)
                    + 80.0 * G * math.sin(theta) + 0.091 + 0.0087 * v) - 0.976 * max(power, 0.0)

    return optimize.brentq(balance, 1e-3, 80.0, xtol=1e-14, rtol=1e-15)


def independent_time(power):
    return np.array([1000.0 * math.sqrt(1.0 + g * g) / martin_speed(p, g)
                     for p, g in zip(power, GRADES, strict=True)])


def independent_slope(power):
    """dt_k/dP_k by central differences of the brentq time [s/W]."""
    step = 1e-4 * np.maximum(power, 10.0)
    return (independent_time(power + step) - independent_time(power - step)) / (2 * step)


def kkt_gradient(power, multiplier, centre):
    """∂/∂P_k of Σ t_k + λ·Σ (P_k − c)·t_k: t_k′·(1 + λ(P_k − c)) + λ·t_k [s/W]."""
    time, slope = independent_time(power), independent_slope(power)
    return slope * (1.0 + multiplier * (power - centre)) + multiplier * time


# ------------------------------------------------------------- KKT conditions


@pytest.mark.parametrize("constraint", ["mean-power", "work"])
def test_the_lagrange_plan_satisfies_its_kkt_conditions(constraint):
    # Karush-Kuhn-Tucker conditions of min Σ t_k s.t. Σ (P_k − c)·t_k = E₀, lo ≤ P ≤ hi
    # (mathematical fact): the gradient of the Lagrangian is 0 on free segments, ≥ 0 on those
    # at their lower bound, ≤ 0 at their upper bound; the constraint holds.
    model = hilly_model()
    request = PlanRequest("fastest", mean_power=MEAN, constraint=constraint,
                          max_power_ratio=1.3, min_power_ratio=0.6)
    lower, upper = power_limits(model, request)
    power, multiplier, _ = lagrange_plan(model, request, lower, upper, [0])
    centre, target = coupling_constraint(request, model)
    assert multiplier > 0  # more mean power buys time: the constraint binds
    time = independent_time(power)
    assert np.sum((power - centre) * time) - target == pytest.approx(0.0, abs=1e-6 * MEAN *
                                                                     time.sum())
    gradient = kkt_gradient(power, multiplier, centre)
    at_lower = power <= lower + 1e-9
    at_upper = power >= upper - 1e-9
    free = ~(at_lower | at_upper)
    assert free.any()
    scale = np.abs(multiplier * time)
    np.testing.assert_allclose(gradient[free] / scale[free], 0.0, atol=1e-6)
    assert np.all(gradient[at_lower] >= -1e-6 * scale[at_lower])
    assert np.all(gradient[at_upper] <= 1e-6 * scale[at_upper])
    assert stationarity_residual(model, power, multiplier, centre, lower, upper) < 1e-8


def test_on_the_uneven_climb_every_free_segment_has_the_same_ground_speed():
    # Bos, Slawinski, Slawinski & Stanoev (2024), arXiv:2403.03363 (abstract [read]): under an
    # average-power constraint the fastest ascent keeps a constant ground speed.
    grades = np.array([0.04, 0.08, 0.06, 0.10, 0.03, 0.07])
    distance = np.arange(0.0, 3000.0 + 5.0, 10.0)
    grade = grades[np.minimum((distance[:-1] // 500).astype(int), 5)]
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * 10.0)])
    model = segment_model(course, np.arange(0, distance.size, 50),
                          Rider(mass=80.0, drag_area=0.269), still_air(course, 1.2))
    request = PlanRequest("fastest", mean_power=300.0, max_power_ratio=2.0)
    lower, upper = power_limits(model, request)
    power, _, _ = lagrange_plan(model, request, lower, upper, [0])
    speed = [martin_speed(p, g) for p, g in zip(power, grades, strict=True)]
    assert np.ptp(speed) / np.mean(speed) < 1e-9


def test_every_segment_minimises_its_own_lagrangian():
    # For a fixed λ the problem separates (module docstring): each segment's power is the
    # minimiser of t_k(P)·(1 + λ(P − c)) on its bounds, here against scipy's bounded scalar
    # minimiser on the independent time.
    model = hilly_model()
    lower, upper = np.full(10, 100.0), np.full(10, 420.0)
    multiplier = 2e-3
    found = segment_argmin(model, multiplier, MEAN, lower, upper, np.full(10, MEAN), [0])
    for k, grade in enumerate(GRADES):
        def lagrangian(p, grade=grade):
            return 1000.0 * math.sqrt(1.0 + grade**2) / martin_speed(p, grade) * (
                1.0 + multiplier * (p - MEAN))
        best = optimize.minimize_scalar(lagrangian, bounds=(100.0, 420.0), method="bounded",
                                        options={"xatol": 1e-8})
        assert found.power[k] == pytest.approx(best.x, abs=1e-4)
    assert np.array_equal(found.free, (found.power > 100.0) & (found.power < 420.0))


def test_a_plan_outside_the_bounds_is_refused():
    model = hilly_model()
    request = PlanRequest("fastest", mean_power=MEAN)
    with pytest.raises(InputError, match="no plan within the power limits"):
        lagrange_plan(model, request, np.full(10, 100.0), np.full(10, 250.0), [0])


# ------------------------------------------------------------- priced Lagrangian


def test_a_high_price_on_w_prime_keeps_every_segment_at_or_below_cp():
    # With μ far above λ, W′ spent above CP costs more than the time it buys: the segment
    # minimisers sit at or below CP (the kink) (property of the priced Lagrangian).
    model = hilly_model()
    prices = LimitPrices(w_prime=1.0, critical_power=300.0)
    found = segment_argmin(model, 2e-3, MEAN, np.zeros(10), np.full(10, 420.0),
                           np.full(10, MEAN), [0], prices)
    assert np.all(found.power <= 300.0 + 1e-9)


# ------------------------------------------------------------- small pieces


def test_coupling_constraint_of_each_kind():
    # mean power: Σ (P_k − P̄)·t_k = 0; work: Σ P_k·t_k = P̄·T(P̄) (definitions)
    model = hilly_model()
    assert coupling_constraint(PlanRequest("fastest", mean_power=MEAN), model) == (MEAN, 0.0)
    centre, target = coupling_constraint(PlanRequest("fastest", mean_power=MEAN,
                                                     constraint="work"), model)
    assert centre == 0.0
    assert target == pytest.approx(MEAN * independent_time(np.full(10, MEAN)).sum(), rel=1e-11)


def test_onto_coupling_scales_the_free_powers_onto_the_constraint():
    model = hilly_model()
    request = PlanRequest("fastest", mean_power=MEAN)
    lower, upper = np.zeros(10), np.full(10, 420.0)
    start = np.array([400.0, 0.0] * 5) * 0.97 + np.array([0.0, 10.0] * 5)
    moved = onto_coupling(model, request, start, lower, upper, [0])
    time = independent_time(moved)
    assert np.sum(moved * time) / time.sum() == pytest.approx(MEAN, rel=1e-8)
    ratio = moved / start
    assert np.ptp(ratio) < 1e-12  # one scale for every free power


def test_fourth_power_mean_by_hand_and_the_power_mean_inequality():
    # ((100⁴·1 + 300⁴·1)/2)^¼ = (4.1e9)^¼ = 253.04 W by hand; a 4th-power mean is never below
    # the time-weighted mean, and equal to it for constant power (power mean inequality)
    assert fourth_power_mean(np.array([100.0, 300.0]), np.array([1.0, 1.0])) == pytest.approx(
        4.1e9 ** 0.25, rel=1e-14)
    assert 4.1e9 ** 0.25 == pytest.approx(253.04, abs=0.005)
    rng = np.random.default_rng(1)
    power, time = rng.uniform(50, 500, 20), rng.uniform(10, 300, 20)
    assert fourth_power_mean(power, time) >= np.sum(power * time) / time.sum()
    assert fourth_power_mean(np.full(5, 250.0), time[:5]) == pytest.approx(250.0, rel=1e-14)


def test_steady_w_prime_balance_reproduces_the_skiba_check_value():
    # docs/references.md, "Critical power and W′ balance" [calc], differential form (Skiba et
    # al. 2015, Eur J Appl Physiol 115:703): CP 250 W, W′ 20 kJ, 60 s at 400 W then 60 s at
    # 150 W → 13332.6 J; by hand 20000 − 9000·e^(−100·60/20000)
    request = PlanRequest(critical_power=250.0, w_prime=20000.0)
    balance = steady_w_prime_balance(np.array([400.0, 150.0]), np.array([60.0, 60.0]), request)
    assert balance[0] == pytest.approx(11000.0, rel=1e-12)
    assert balance[1] == pytest.approx(13332.6, abs=0.05)
    assert balance[1] == pytest.approx(20000.0 - 9000.0 * math.exp(-0.3), rel=1e-12)
