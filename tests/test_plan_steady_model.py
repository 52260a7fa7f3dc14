"""Specification of the steady-state segment model (pacing.plan.steady_model).

Every piece is ridden at the steady speed of the Martin et al. (1998) power balance
(J Appl Biomech 14(3):276-291, doi:10.1123/jab.14.3.276); a segment's time is the sum of its
pieces' road length over speed. The reference here is the balance written out again in this
file and solved by scipy.optimize.brentq, with the constants of Martin et al. as given in
docs/references.md, "Cycling power balance (Martin et al. 1998)" (from memory there, [mem]):
η = 0.976, wheel CdA 0.0044 m², bearings (91 + 8.7·v)·1e-3 W.
"""

from __future__ import annotations

import contextlib
import math
import os
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import optimize

from pacing import kernels
from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider, speed_for_power
from pacing.plan import steady_model
from pacing.plan.steady_model import segment_model, steady_segment_times, steady_times
from pacing.weather.conditions import CourseAir, still_air

G = 9.80665  # standard gravity [m/s²] (CGPM 1901)
RIDER = Rider(mass=80.0, drag_area=0.269)


def martin_speed(power, grade, density=1.2, headwind=0.0, crosswind=0.0, mass=80.0,
                 drag_area=0.269, rolling=0.0032):
    """Steady ground speed [m/s]: the root of η·P = v·F(v) (Martin et al. 1998) by brentq.

    F(v) = ½ρ(CdA + 0.0044)·|v_a|·v_a,along + Crr·m·g·cos θ + m·g·sin θ + 0.091 + 0.0087·v,
    v_a,along = v + headwind, |v_a| = √(v_a,along² + crosswind²), θ = atan(grade).
    """
    theta = math.atan(grade)

    def balance(v):
        along = v + headwind
        aero = 0.5 * density * (drag_area + 0.0044) * math.hypot(along, crosswind) * along
        resist = (aero + rolling * mass * G * math.cos(theta) + mass * G * math.sin(theta)
                  + 0.091 + 0.0087 * v)
        return v * resist - 0.976 * power

    return optimize.brentq(balance, 1e-3, 80.0, xtol=1e-14, rtol=1e-15)


def random_course(seed: int):
    """6 km of twelve 500 m stretches with random grades (−8..+10 %) and wind, 20 m pieces,
    segments of 25 pieces."""
    rng = np.random.default_rng(seed)
    distance = np.arange(0.0, 6000.0 + 5.0, 20.0)
    section = np.minimum((distance[:-1] // 500).astype(int), 11)
    grade = rng.uniform(-0.08, 0.10, 12)[section]
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * 20.0)])
    pieces = distance.size - 1
    air = CourseAir(np.full(pieces, 1.15), rng.uniform(-5.0, 5.0, 12)[section],
                    rng.uniform(-3.0, 3.0, 12)[section])
    return course, np.arange(0, distance.size, 25), air


def stepped_course():
    """Three segments of constant grade (+6 %, 0 %, −5 %), 1 km each, 10 m pieces."""
    distance = np.arange(0.0, 3000.0 + 5.0, 10.0)
    grade = np.select([distance[:-1] < 1000.0, distance[:-1] < 2000.0], [0.06, 0.0], -0.05)
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * 10.0)])
    return course, np.array([0, 100, 200, 300]), np.array([0.06, 0.0, -0.05])


# ------------------------------------------------------------- against the balance itself


@pytest.mark.parametrize("headwind, crosswind", [(0.0, 0.0), (3.0, 0.0), (-2.0, 4.0)])
def test_segment_times_are_road_length_over_the_martin_steady_speed(headwind, crosswind):
    # t_k = L_k·√(1 + G²)/v(P_k) on a segment of constant grade, v by brentq on the balance
    # written out above (Martin et al. 1998); the model solves the same balance by Newton.
    course, bounds, grades = stepped_course()
    pieces = course.distance.size - 1
    air = CourseAir(np.full(pieces, 1.2), np.full(pieces, headwind), np.full(pieces, crosswind))
    model = segment_model(course, bounds, RIDER, air)
    power = np.array([320.0, 250.0, 150.0])
    time, _, _ = steady_segment_times(model, power)
    expected = [1000.0 * math.sqrt(1.0 + g * g)
                / martin_speed(p, g, headwind=headwind, crosswind=crosswind)
                for p, g in zip(power, grades, strict=True)]
    np.testing.assert_allclose(time, expected, rtol=1e-11)


def test_martin_worked_values_come_out_of_the_segment_model():
    # docs/references.md, "Cycling power balance (Martin et al. 1998)" [calc]: m = 80 kg,
    # ρ = 1.2, CdA = 0.269, steady: 289 W on the flat → 11.522 m/s (printed to 1 mm/s).
    distance = np.arange(0.0, 1000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance))
    model = segment_model(course, np.array([0, distance.size - 1]), RIDER, still_air(course, 1.2))
    time, _, _ = steady_segment_times(model, np.array([289.0]))
    assert 1000.0 / time[0] == pytest.approx(11.522, abs=5e-4)


def test_derivatives_match_finite_differences_of_the_independent_time():
    # t′ and t″ against central differences of brentq times (mathematical fact); a step of
    # 1e-3·P keeps the truncation error near 1e-6 relative.
    course, bounds, grades = stepped_course()
    model = segment_model(course, bounds, RIDER, still_air(course, 1.2))
    power = np.array([330.0, 240.0, 120.0])
    _, dtime, d2time = steady_segment_times(model, power)

    def independent(p):
        return np.array([1000.0 * math.sqrt(1.0 + g * g) / martin_speed(pk, g)
                         for pk, g in zip(p, grades, strict=True)])

    step = 1e-3 * power
    up, mid, down = independent(power + step), independent(power), independent(power - step)
    np.testing.assert_allclose(dtime, (up - down) / (2 * step), rtol=1e-5)
    np.testing.assert_allclose(d2time, (up - 2 * mid + down) / step**2, rtol=1e-4)


@settings(max_examples=10, deadline=None)
@given(st.integers(0, 10_000), st.floats(50.0, 500.0), st.booleans())
def test_segment_times_match_the_speed_solver_and_finite_differences(seed, mean, calm):
    # t_k = Σ L_i / v_i with v_i from pacing.physics.cycling.speed_for_power (its own bracketed
    # Newton solver on the Martin et al. 1998 balance), and t_k′, t_k″ against central
    # differences (mathematical fact). A second call with other powers takes the warm Newton
    # path from the first call's speeds; calm air takes the no-crosswind shortcut.
    course, bounds, air = random_course(seed)
    if calm:
        air = CourseAir(air.density, np.zeros_like(air.headwind), np.zeros_like(air.crosswind))
    model = segment_model(course, bounds, RIDER, air)
    rng = np.random.default_rng(seed)
    steady_segment_times(model, np.full(model.count, mean))  # the cold start
    power = mean * rng.uniform(0.5, 1.5, model.count)
    time, dtime, d2time = steady_segment_times(model, power)
    speed = speed_for_power(power[model.segment], model.grade, model.density, RIDER,
                            model.headwind, model.crosswind)
    expected = np.bincount(model.segment, model.length / speed, model.count)
    np.testing.assert_allclose(time, expected, rtol=1e-10)
    step = 1e-3 * power
    up = steady_segment_times(model, power + step)
    down = steady_segment_times(model, power - step)
    np.testing.assert_allclose(dtime, (up[0] - down[0]) / (2 * step), rtol=1e-5)
    np.testing.assert_allclose(d2time, (up[1] - down[1]) / (2 * step), rtol=1e-4)


@settings(max_examples=15, deadline=None)
@given(st.integers(0, 10_000), st.floats(30.0, 600.0))
def test_more_power_is_never_slower_and_time_is_convex_in_power(seed, power):
    # Property of the steady balance: v(P) increases, so t′ < 0; and t″ > 0 (diminishing
    # returns), which makes every segment's Lagrangian convex for the solvers.
    course, bounds, air = random_course(seed)
    model = segment_model(course, bounds, RIDER, air)
    _, dtime, d2time = steady_segment_times(model, np.full(model.count, power))
    assert np.all(dtime < 0)
    assert np.all(d2time > 0)


def test_segment_times_of_segments_not_in_course_order_are_still_summed_by_segment():
    # A model whose segment numbers do not run in course order (a grouping of pieces made by
    # hand) sums each segment's pieces all the same (mathematical fact: a sum does not depend
    # on the order of its terms).
    course, bounds, air = random_course(7)
    model = segment_model(course, bounds, RIDER, air)
    order = np.arange(model.count)[::-1]
    steady_segment_times(model, np.full(model.count, 250.0))  # its cache is shared below
    shuffled = replace(model, segment=order[model.segment])
    power = np.linspace(180.0, 320.0, model.count)
    for plain, mixed in zip(steady_segment_times(model, power),
                            steady_segment_times(shuffled, power[order]), strict=True):
        np.testing.assert_allclose(mixed[order], plain, rtol=1e-12)


# ------------------------------------------------------------- the model's arrays


def test_segment_model_holds_road_lengths_and_mean_grades():
    # road length = horizontal length·√(1 + G²) (geometry); mean grade = rise/run per segment
    course, bounds, grades = stepped_course()
    model = segment_model(course, bounds, RIDER, still_air(course, 1.15))
    np.testing.assert_allclose(model.length, 10.0 * np.sqrt(1.0 + model.grade**2), rtol=1e-12)
    np.testing.assert_allclose(model.mean_grade, grades, rtol=1e-12)
    assert model.count == 3
    assert np.array_equal(np.bincount(model.segment), [100, 100, 100])
    np.testing.assert_allclose(model.density, 1.15)


@pytest.mark.parametrize("bounds", [[0, 50, 40, 300], [1, 100, 300], [0, 100, 299], [0],
                                    [[0, 300]]])
def test_bad_bounds_raise_input_error(bounds):
    course, _, _ = stepped_course()
    with pytest.raises(InputError, match="bounds"):
        segment_model(course, np.array(bounds), RIDER, still_air(course, 1.2))


def test_air_that_is_not_finite_is_refused():
    course, bounds, _ = stepped_course()
    pieces = course.distance.size - 1
    air = CourseAir(np.full(pieces, 1.2), np.full(pieces, np.nan), np.zeros(pieces))
    with pytest.raises(InputError, match="headwind"):
        segment_model(course, bounds, RIDER, air)


# ------------------------------------------------------------------ compiled kernels


def windy_rolling_model(crosswind=True):
    """A 3 km rolling course in 37 uneven segments, with head- and crosswind on every piece."""
    distance = np.arange(0.0, 3000.0 + 5.0, 10.0)
    course = synthetic_course(distance, 20.0 * np.sin(distance / 300.0))
    pieces = distance.size - 1
    angle = distance[:-1] / 500.0
    air = CourseAir(np.full(pieces, 1.2), 3.0 * np.cos(angle),
                    3.0 * np.sin(angle) if crosswind else np.zeros(pieces))
    bounds = np.unique(np.r_[0, np.cumsum(np.arange(1, 40) % 13 + 1), pieces])
    bounds = bounds[bounds <= pieces]
    return segment_model(course, bounds, RIDER, air)


@pytest.mark.parametrize("crosswind", [True, False])
def test_the_compiled_and_the_numpy_steady_times_are_the_same_to_the_last_bit(
        monkeypatch, crosswind):
    # The solvers must not depend on whether the kernels are loaded: the compiled Newton
    # steps and sums repeat numpy's operations in numpy's order (reduceat's pairwise sums).
    # With NUMBA_DISABLE_JIT=1 the kernel is plain Python, whose math.hypot is CPython's own
    # (correctly rounded), not the C library's that numpy and numba call: there the solvers
    # use numpy (steady_model._use_kernel), and the crosswind case is not comparable.
    if crosswind and os.environ.get("NUMBA_DISABLE_JIT", "0") not in ("", "0"):
        pytest.skip("plain-Python kernel: CPython's math.hypot differs from the C library's")
    # The compiled loops run on every core, and another thread's parallel kernel (holding
    # kernels.PARALLEL_LOCK) sends a call to numpy's steps: the same numbers every way.
    results = {}
    for compiled, busy in ((False, False), (True, False), (True, True)):
        model = windy_rolling_model(crosswind)
        monkeypatch.setattr(steady_model, "_use_kernel", lambda pieces, c=compiled: c)
        power = np.linspace(120.0, 380.0, model.count)
        steady_segment_times(model, 0.8 * power)  # a previous solve's speeds to start from
        with kernels.PARALLEL_LOCK if busy else contextlib.nullcontext():
            full = steady_segment_times(model, power)
            results[compiled, busy] = (*full, *steady_times(model, 1.1 * power))
    for way in ((True, False), (True, True)):
        for numpy_result, other in zip(results[False, False], results[way], strict=True):
            assert np.array_equal(numpy_result, other)


def test_steady_times_are_the_first_two_results_of_steady_segment_times():
    model = windy_rolling_model()
    power = np.linspace(150.0, 350.0, model.count)
    steady_segment_times(model, power)
    guess = model.speed_guess["speed"].copy()
    time, dtime = steady_times(model, power)
    model.speed_guess["speed"] = guess
    full = steady_segment_times(model, power)
    assert np.array_equal(time, full[0]) and np.array_equal(dtime, full[1])


@pytest.mark.parametrize("count", [1, 2, 7, 8, 9, 127, 128, 129, 300, 1000])
def test_the_compiled_segment_sum_adds_in_numpys_order(count):
    # numpy's add.reduceat: the first value plus numpy's pairwise sum of the rest (8
    # accumulators in blocks of at most 128); compared bit for bit
    values = np.random.default_rng(count).uniform(0.0, 10.0, count + 5) ** 3
    expected = np.add.reduceat(values, [2, 2 + count])[0]
    assert steady_model._segment_sum(values, 2, 2 + count) == expected
