"""Specification of a cycling plan request and its power bounds (pacing.plan.request).

The power to keep riding at the walking speed is worked out here by hand from the Martin et
al. (1998) balance (J Appl Biomech 14(3):276-291, doi:10.1123/jab.14.3.276; constants as in
docs/references.md, "Cycling power balance (Martin et al. 1998)", [mem]):
P = v·(½ρ(CdA + 0.0044)·v² + Crr·m·g·cos θ + m·g·sin θ + 0.091 + 0.0087·v)/0.976 at v = 1 m/s.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.request import (
    DEFAULT_MAX_POWER_RATIO,
    MAXIMUM_PLAN_POWER,
    PlanRequest,
    power_limits,
    required_mean_power,
    required_target_time,
    w_prime_parameters,
)
from pacing.plan.steady_model import segment_model
from pacing.weather.conditions import still_air

G = 9.80665  # standard gravity [m/s²]
RIDER = Rider(mass=80.0, drag_area=0.269)


def walking_power(grade, density=1.2):
    """Crank power to ride at 1 m/s on a grade, by hand from the Martin et al. balance [W]."""
    theta = math.atan(grade)
    force = (0.5 * density * (0.269 + 0.0044) + 0.0032 * 80.0 * G * math.cos(theta)
             + 80.0 * G * math.sin(theta) + 0.091 + 0.0087)
    return max(force, 0.0) / 0.976


def model_of(grades):
    """One 500 m segment per grade, 10 m pieces, still air at 1.2 kg/m³."""
    distance = np.arange(0.0, 500.0 * len(grades) + 5.0, 10.0)
    grade = np.asarray(grades)[np.minimum((distance[:-1] // 500).astype(int), len(grades) - 1)]
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * 10.0)])
    bounds = np.arange(0, distance.size, 50)
    return segment_model(course, bounds, RIDER, still_air(course, 1.2))


# ------------------------------------------------------------- power_limits, worked by hand


def test_without_cp_the_bounds_are_walking_power_and_one_and_a_half_times_the_mean():
    # upper: DEFAULT_MAX_POWER_RATIO·P̄ = 1.5·250 = 375 W; lower: the walking power, on the
    # flat (0.16404 + 2.51050 + 0.0997)/0.976 = 2.8425 W by hand
    lower, upper = power_limits(model_of([0.0, 0.0]), PlanRequest("fastest", mean_power=250.0))
    assert DEFAULT_MAX_POWER_RATIO == 1.5
    np.testing.assert_allclose(upper, 375.0)
    np.testing.assert_allclose(lower, 2.8425, atol=5e-5)
    np.testing.assert_allclose(lower, walking_power(0.0), rtol=1e-9)


def test_with_cp_the_ratios_apply_to_cp():
    # CP 280 W: upper 1.3·280 = 364 W, lower 0.5·280 = 140 W (above the walking power)
    request = PlanRequest("fastest", mean_power=250.0, critical_power=280.0,
                          max_power_ratio=1.3, min_power_ratio=0.5)
    lower, upper = power_limits(model_of([0.0, 0.04, -0.01]), request)
    np.testing.assert_allclose(upper, 364.0)
    np.testing.assert_allclose(lower, 140.0)


def test_descents_may_go_to_zero_only_when_allowed_and_steep_enough():
    # DESCENT_GRADE is −2 %: the −5 % segment drops to 0 W, the −1 % one keeps 0.5·280 W
    request = PlanRequest("fastest", mean_power=250.0, critical_power=280.0,
                          min_power_ratio=0.5, allow_zero_on_descents=True)
    lower, _ = power_limits(model_of([0.0, -0.05, -0.01]), request)
    np.testing.assert_allclose(lower, [140.0, 0.0, 140.0])


def test_a_steep_wall_raises_the_lower_bound_to_the_walking_power():
    # 25 % wall at 1 m/s, by hand: (190.276 gravity + 2.436 rolling + 0.164 air + 0.100
    # bearings) N · 1 m/s / 0.976 = 197.72 W
    lower, _ = power_limits(model_of([0.0, 0.25]), PlanRequest("fastest", mean_power=250.0))
    assert lower[1] == pytest.approx(walking_power(0.25), rel=1e-9)
    assert lower[1] == pytest.approx(197.72, abs=0.01)


def test_no_plan_asks_for_more_than_the_maximum_plan_power():
    request = PlanRequest("fastest", mean_power=300.0, critical_power=400.0,
                          max_power_ratio=10.0)
    _, upper = power_limits(model_of([0.0]), request)
    np.testing.assert_allclose(upper, MAXIMUM_PLAN_POWER)


def test_a_wall_steeper_than_the_cap_allows_is_refused_with_its_segment_number():
    # 30 % needs 233.7 W just to keep riding (by hand as above); a cap of 1.1·200 = 220 W cannot
    request = PlanRequest("fastest", mean_power=200.0, max_power_ratio=1.1)
    with pytest.raises(InputError, match="segment 2 needs"):
        power_limits(model_of([0.0, 0.30]), request)


def test_a_mean_power_outside_the_bounds_is_refused():
    request = PlanRequest("fastest", mean_power=250.0, critical_power=400.0,
                          min_power_ratio=0.7)
    with pytest.raises(InputError, match="outside the power limits"):
        power_limits(model_of([0.0, 0.02]), request)


# ------------------------------------------------------------- the request itself


@pytest.mark.parametrize("fields", [
    {"strategy": "quickest", "mean_power": 250.0},
    {"strategy": "fastest", "mean_power": -5.0},
    {"strategy": "fastest", "mean_power": 250.0, "constraint": "speed"},
    {"strategy": "fastest", "mean_power": 250.0, "w_prime": 1000.0, "w_prime_reserve": 2000.0},
    {"strategy": "fastest", "mean_power": 250.0, "band": 2.0},
    {"strategy": "fastest", "mean_power": 250.0, "max_power_ratio": 0.5,
     "min_power_ratio": 0.8},
    {"strategy": "fastest", "mean_power": 250.0, "w_prime_model": "guess"},
    {"strategy": "fastest", "mean_power": 3500.0},
    {"strategy": "fastest", "mean_power": 250.0, "w_prime_reserve": -1.0},
    {"strategy": "fastest", "mean_power": 250.0, "min_power_ratio": math.nan},
    {"strategy": "target-time", "target_time": math.inf},
    # issue 14: numbers whose consequences overflow are refused, not planned
    {"strategy": "fastest", "mean_power": 250.0, "critical_power": 1e308, "w_prime": 2e4},
    {"strategy": "fastest", "mean_power": 250.0, "critical_power": 250.0, "w_prime": 1e308},
    {"strategy": "target-time", "target_time": 1e299},
    {"strategy": "fastest", "mean_power": 250.0, "max_power_ratio": 1e300},
])
def test_bad_requests_raise_input_error(fields):
    with pytest.raises(InputError) as error:
        PlanRequest(**fields)
    assert "\n" not in str(error.value)


def test_the_w_prime_balance_needs_both_cp_and_w_prime():
    assert PlanRequest(critical_power=280.0, w_prime=20000.0).uses_w_prime
    assert not PlanRequest(critical_power=280.0).uses_w_prime
    assert w_prime_parameters(PlanRequest(critical_power=280.0, w_prime=2e4)) == (280.0, 2e4)
    with pytest.raises(InputError, match="W′"):
        w_prime_parameters(PlanRequest(w_prime=20000.0))


def test_a_bare_request_can_be_completed_later_but_not_planned():
    # A request can be built without its mean power or target time; the plan asks for it.
    assert required_mean_power(PlanRequest("fastest", mean_power=250)) == 250.0
    assert required_target_time(PlanRequest("target-time", target_time=3600)) == 3600.0
    with pytest.raises(InputError, match="needs a mean power"):
        required_mean_power(PlanRequest("fastest"))
    with pytest.raises(InputError, match="needs a target time"):
        required_target_time(PlanRequest("target-time"))


def test_a_plan_too_big_to_work_through_is_refused_in_one_line():
    # issue 14: `plan --step 1` on 2000 km took 17.7 s and 1.31 GB; 2·10⁶ points × 1000
    # segments is refused, the same course at the default 10 m step is planned
    from pacing.plan.request import MAX_POINTS_TIMES_SEGMENTS, check_plan_size

    check_plan_size(200_001, 1000)
    with pytest.raises(InputError, match="longer step") as error:
        check_plan_size(2_000_001, 1000)
    assert "\n" not in str(error.value)
    assert 200_001 * 1000 < MAX_POINTS_TIMES_SEGMENTS < 2_000_001 * 1000
