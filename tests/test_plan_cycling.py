"""Pacing plans verified by the inertial simulation: constant, target time and fastest under the
athlete's limits (pacing.plan.cycling).

Courses are synthetic (pacing.course.geometry.synthetic_course), 10 m steps. The rider is the
one of Atkinson, Peacock & Passfield 2007 (J Sports Sci 25(9):1001-1009): 70 kg + 10 kg bike,
Martin et al. 1998 constants, ρ 1.2, and the CdA 0.269 m² of the worked values in
docs/references.md, "Cycling power balance (Martin et al. 1998)" (the paper's CdA is not in its
abstract; [calc]). The steady solver itself is specified in tests/test_plan_fastest.py and
tests/test_plan_lagrange.py.
"""

from functools import lru_cache

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from samples import atkinson_hills as hilly
from samples import atkinson_winds as windy
from samples import random_hills_and_winds as random_course

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider, speed_for_power
from pacing.physiology.critical_power import effort_weighted_power, w_prime_balance
from pacing.plan.cycling import make_plan
from pacing.plan.fastest import fastest_steady_plan
from pacing.plan.prediction import Prediction, SimulationOptions, segment_results
from pacing.plan.request import PlanRequest
from pacing.plan.simulate import simulate
from pacing.plan.steady_model import segment_model
from pacing.weather.conditions import still_air

RIDER = Rider(mass=80.0, drag_area=0.269)
MEAN = 289.0
FLYING = SimulationOptions(start_speed=10.0)


# ------------------------------------------------------------- Atkinson, Peacock & Passfield 2007


def test_verified_fastest_plan_on_the_hilly_course_saves_more_than_the_rule():
    # Inertial simulation, verified mean power equal to the constant plan's (289 W).
    course, bounds, air = hilly()
    plan = make_plan(course, bounds, RIDER, air,
                     PlanRequest(strategy="fastest", mean_power=MEAN), FLYING)
    assert plan.mean_power == pytest.approx(MEAN, abs=0.02)
    assert plan.reference.average_power == pytest.approx(MEAN, abs=0.02)
    assert plan.time_saved >= 126.0
    assert plan.residuals["mean_power_w"] == pytest.approx(0.0, abs=0.02)
    assert "mean-power" in plan.binding


# ------------------------------------------------------------- Bos, Slawinski et al. 2024


@lru_cache
def uneven_climb():
    grades = np.array([0.04, 0.08, 0.06, 0.10, 0.03, 0.07])
    distance = np.arange(0.0, 3000.0 + 5.0, 10.0)
    grade = grades[np.minimum((distance[:-1] // 500).astype(int), 5)]
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * 10.0)])
    return course, np.arange(0, distance.size, 50), still_air(course, 1.2)


def test_fastest_climb_of_an_uneven_slope_is_at_constant_ground_speed():
    # Bos, Slawinski, Slawinski & Stanoev 2024 (arXiv:2403.03363, abstract [read]): under an
    # average-power constraint the fastest ascent keeps a constant ground speed; constant power
    # is slower unless the slope is constant.
    # The steady plan is at constant speed (tests/test_plan_fastest.py); the verified ride,
    # started at that speed, nearly so.
    course, bounds, air = uneven_climb()
    model = segment_model(course, bounds, RIDER, air)
    request = PlanRequest(strategy="fastest", mean_power=300.0, max_power_ratio=2.0)
    power, _ = fastest_steady_plan(model, request)
    start = float(speed_for_power(power[0], model.grade[0], model.density[0], RIDER))
    plan = make_plan(course, bounds, RIDER, air, request, SimulationOptions(start_speed=start))
    verified = np.array([r.speed for r in segment_results(course, plan.prediction, bounds)])
    constant = np.array([r.speed for r in segment_results(course, plan.reference, bounds)])
    assert np.ptp(verified) / verified.mean() < 0.01  # inertia smooths the steps slightly
    assert np.ptp(constant) / constant.mean() > 0.5
    assert plan.time_saved > 0


# ------------------------------------------------------------- verified plans


def test_flat_windless_course_gives_constant_power():
    distance = np.arange(0.0, 20000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance))
    air = still_air(course, 1.2)
    bounds = np.arange(0, distance.size, 100)
    plan = make_plan(course, bounds, RIDER, air,
                     PlanRequest(strategy="fastest", mean_power=250.0), FLYING)
    np.testing.assert_allclose(plan.segment_power, 250.0, rtol=1e-6)
    assert abs(plan.time_saved) < 0.01


def test_a_plan_holds_its_verified_ride_and_its_constant_reference():
    # RacePlan's numbers are those of its two simulations (definitions): time saved is the
    # reference's finish time minus the plan's; the piece powers are the segment powers; the
    # bounds it reports hold; the steady model's times are kept alongside.
    course, bounds, air = hilly()
    plan = make_plan(course, bounds, RIDER, air,
                     PlanRequest(strategy="fastest", mean_power=MEAN, max_power_ratio=1.3),
                     FLYING)
    assert isinstance(plan.prediction, Prediction) and isinstance(plan.reference, Prediction)
    assert plan.time_saved == pytest.approx(plan.reference.finish_time - plan.finish_time,
                                            rel=1e-12)
    assert plan.finish_time == plan.prediction.finish_time
    pieces = np.repeat(np.arange(bounds.size - 1), np.diff(bounds))
    np.testing.assert_array_equal(plan.piece_power, plan.segment_power[pieces])
    assert np.all(plan.power_low <= plan.segment_power + 1e-9)
    assert np.all(plan.segment_power <= plan.power_high + 1e-9)
    assert plan.residuals["power_bounds_w"] == 0.0
    assert plan.steady_time < plan.steady_reference_time
    assert plan.w_prime_balance is None and plan.min_w_prime_balance is None
    assert plan.solver.method == "lagrange" and plan.solver.correction_rounds == 0


# ------------------------------------------------------------- limits on the verified ride


@settings(max_examples=6, deadline=None)
@given(st.integers(0, 10_000), st.floats(200.0, 320.0), st.floats(1.1, 1.5),
       st.sampled_from(["differential", "integral"]))
@example(285, 229.0, 1.125, "differential")  # free segments hit the cap before the mean is met
def test_every_limit_holds_on_the_verified_ride(seed, mean, ratio, model):
    course, bounds, air = random_course(seed)
    request = PlanRequest(strategy="fastest", mean_power=mean, critical_power=mean + 20.0,
                          w_prime=15000.0, w_prime_reserve=1500.0, max_power_ratio=ratio,
                          min_power_ratio=0.3, w_prime_model=model)
    try:
        plan = make_plan(course, bounds, RIDER, air, request, SimulationOptions(start_speed=8.0))
    except InputError:
        return  # a request no plan can meet is refused, never answered with a broken plan
    assert plan.mean_power == pytest.approx(mean, rel=1e-4)
    assert plan.min_w_prime_balance >= 1500.0 - 1e-6
    assert np.all(plan.segment_power <= ratio * (mean + 20.0) * (1 + 1e-9))
    assert np.all(plan.segment_power >= plan.power_low - 1e-9)
    assert plan.time_saved > -0.5  # verified: never meaningfully slower than constant power




def test_w_prime_reserve_holds_on_the_verified_ride():
    course, bounds, air = hilly()
    request = PlanRequest(strategy="fastest", mean_power=MEAN, critical_power=300.0,
                          w_prime=20000.0, w_prime_reserve=2000.0)
    plan = make_plan(course, bounds, RIDER, air, request, FLYING)
    balance = np.r_[20000.0, w_prime_balance(plan.prediction.power,
                                             plan.prediction.piece_time, 300.0, 20000.0)]
    np.testing.assert_allclose(plan.w_prime_balance, balance)
    assert balance.min() >= 2000.0 - 1e-6
    assert plan.min_w_prime_balance == pytest.approx(balance.min())
    assert plan.residuals["w_prime_reserve_j"] >= -1e-6
    assert plan.mean_power == pytest.approx(MEAN, abs=0.02)
    assert "w-prime-reserve" in plan.binding
    assert plan.time_saved > 0
    assert plan.segment_w_prime_balance.shape == (bounds.size - 1,)
    # the plan is the solver's own, not constant power blended in to keep the reserve
    assert not plan.solver.method.endswith("+blend")


def test_integral_w_prime_model_also_holds():
    course, bounds, air = hilly()
    request = PlanRequest(strategy="fastest", mean_power=MEAN, critical_power=300.0,
                          w_prime=15000.0, w_prime_model="integral")
    plan = make_plan(course, bounds, RIDER, air, request, FLYING)
    assert plan.min_w_prime_balance >= -1e-6


def test_effort_cap_and_power_bounds_hold_on_the_verified_ride():
    course, bounds, air = hilly()
    request = PlanRequest(strategy="fastest", mean_power=MEAN, critical_power=280.0,
                          max_power_ratio=1.25, min_power_ratio=0.5,
                          effort_weighted_cap=300.0)
    plan = make_plan(course, bounds, RIDER, air, request, FLYING)
    assert plan.segment_power.max() <= 1.25 * 280.0 + 1e-9
    assert plan.segment_power.min() >= 0.5 * 280.0 - 1e-9
    effort = effort_weighted_power(plan.prediction.power, plan.prediction.piece_time)
    assert effort == pytest.approx(plan.effort_weighted_power)
    assert effort <= 300.0 + 1e-6
    assert plan.mean_power == pytest.approx(MEAN, abs=0.02)
    assert plan.time_saved > 0


def test_equal_work_constraint_on_the_verified_ride():
    course, bounds, air = windy()
    plan = make_plan(course, bounds, RIDER, air,
                     PlanRequest(strategy="fastest", mean_power=MEAN, constraint="work"),
                     FLYING)
    assert plan.work == pytest.approx(plan.reference.work, rel=1e-5)
    assert plan.time_saved > 0


def test_a_mean_power_that_drains_w_prime_on_every_plan_is_refused():
    course, bounds, air = hilly()
    request = PlanRequest(strategy="fastest", mean_power=MEAN, critical_power=250.0,
                          w_prime=20000.0)
    with pytest.raises(InputError, match="W′"):
        make_plan(course, bounds, RIDER, air, request, FLYING)


# ------------------------------------------------------------- constant and target time


def test_constant_plan_is_its_own_reference():
    course, bounds, air = hilly()
    plan = make_plan(course, bounds, RIDER, air,
                     PlanRequest(strategy="constant", mean_power=MEAN), FLYING)
    direct = simulate(course, np.full(course.distance.size - 1, MEAN), RIDER, air, FLYING)
    assert plan.finish_time == pytest.approx(direct.finish_time)
    assert plan.time_saved == 0.0
    np.testing.assert_allclose(plan.segment_power, MEAN)


def test_target_time_finds_the_constant_power_that_reaches_it():
    course, bounds, air = hilly()
    constant = simulate(course, np.full(course.distance.size - 1, 250.0), RIDER, air, FLYING)
    plan = make_plan(course, bounds, RIDER, air,
                     PlanRequest(strategy="target-time", target_time=constant.finish_time),
                     FLYING)
    assert plan.finish_time == pytest.approx(constant.finish_time, abs=0.05)
    assert plan.reference_power == pytest.approx(250.0, abs=0.1)


def test_target_time_beyond_what_cp_and_w_prime_allow_is_not_reachable():
    course, bounds, air = hilly()
    request = PlanRequest(strategy="target-time", target_time=1300.0, critical_power=300.0,
                          w_prime=20000.0)
    with pytest.raises(InputError, match="not reachable"):
        make_plan(course, bounds, RIDER, air, request, FLYING)


@pytest.mark.parametrize(("fields", "said"), [
    # 1300.4 s is 0:21:40 (whole seconds, half up), beyond CP 300 W and W′ 20 kJ
    ({"target_time": 1300.4, "critical_power": 300.0, "w_prime": 20000.0},
     "finish time 0:21:40 is not reachable: it needs"),
    # two minutes for the hilly course would need more than any plan's power
    ({"target_time": 120.0}, "finish time 0:02:00 is not reachable: even"),
    # ten days and a bit is slower than riding at 1 W: hours are not wrapped at 24
    ({"target_time": 864061.0}, "finish time 240:01:01 is slower than riding at 1 W"),
])
def test_an_unreachable_target_time_is_said_as_the_coach_types_it(fields, said):
    course, bounds, air = hilly()
    request = PlanRequest(strategy="target-time", **fields)
    with pytest.raises(InputError, match=said) as error:
        make_plan(course, bounds, RIDER, air, request, FLYING)
    assert " s " not in str(error.value)  # never the target in seconds


@pytest.mark.parametrize("fields", [{"strategy": "fastest"}, {"strategy": "constant"},
                                    {"strategy": "target-time"}])
def test_a_plan_without_its_mean_power_or_target_time_is_refused(fields):
    course, bounds, air = hilly()
    request = PlanRequest(**fields)  # a request can be built bare and completed later
    with pytest.raises(InputError, match="needs"):
        make_plan(course, bounds, RIDER, air, request, FLYING)


# ------------------------------------------------------------- finer segments are never slower


@lru_cache
def hill_loop():
    """A demo-like 40 km hilly loop: six Gaussian hills of 35-150 m (centre, height,
    half-width as in demo_routes/make_demo_routes.py), straight, still air, 10 m steps."""
    distance = np.arange(0.0, 40000.0 + 5.0, 10.0)
    hills = [(4_500, 55, 800), (11_000, 120, 1_400), (17_500, 40, 500), (24_000, 150, 1_900),
             (31_000, 70, 800), (36_500, 35, 450)]
    elevation = np.full_like(distance, 85.0)
    for centre, height, width in hills:
        elevation += height * np.exp(-0.5 * ((distance - centre) / width) ** 2)
    course = synthetic_course(distance, elevation)
    return course, still_air(course, 1.2)


HILL_LOOP_RIDER = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.0032)
"""The command line's default rider (pacing/cli/common.py: 80 kg, CdA 0.30 m², Crr 0.0032)."""
HILL_LOOP_REQUEST = PlanRequest(strategy="fastest", mean_power=250.0, critical_power=270.0,
                                w_prime=20000.0)


def test_with_w_prime_a_200_m_split_is_not_slower_than_the_split_by_grade():
    # Any plan on a coarser split is also a plan on a finer one (each fine segment at its
    # coarse segment's power: same pieces, same powers), so the fastest plan can only get
    # faster as the segments get finer (mathematical fact). 0.2 % allows for the grade split's
    # ends not falling on 200 m marks and for the verifying simulation.
    from pacing.course.segments import split_by_grade, split_every

    course, air = hill_loop()
    by_grade = make_plan(course, split_by_grade(course), HILL_LOOP_RIDER, air,
                         HILL_LOOP_REQUEST, FLYING)
    fine = make_plan(course, split_every(course, 200.0), HILL_LOOP_RIDER, air,
                     HILL_LOOP_REQUEST, FLYING)
    assert "w-prime-reserve" in by_grade.binding  # the limit binds: the case that went wrong
    assert fine.min_w_prime_balance >= -1e-6
    assert fine.mean_power == pytest.approx(250.0, abs=0.02)
    assert fine.finish_time <= by_grade.finish_time * 1.002
    assert fine.steady_time <= by_grade.steady_time * 1.002


def test_a_mean_power_below_cp_is_not_refused_when_the_ride_drains_w_prime_faster():
    # Issue 15: the demo loop at 228 W with CP 240 W, W′ 3 kJ and a 2 kJ reserve (the command
    # line's rider). Constant power below CP keeps W′ whole, so a plan exists; the steady plan
    # rides long segments at CP exactly, which the ride's scaling to 228 W pushes a hair above
    # CP, and every correction round broke the reserve ("no plan ... on the simulated ride").
    # Now the largest share of the steady plan (the rest constant) that keeps it is ridden.
    from pathlib import Path

    from pacing.course.segments import split_by_grade
    from pacing.io.gpx import load_course
    from pacing.weather.conditions import Conditions, air_along_course

    course = load_course(Path(__file__).resolve().parents[1] / "demo_routes"
                         / "01_corravey_hill_loop_40k.gpx")
    air = air_along_course(course, Conditions(temperature=20.0))
    rider = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.0032)
    request = PlanRequest("fastest", mean_power=228.0, critical_power=240.0, w_prime=3000.0,
                          w_prime_reserve=2000.0, max_power_ratio=1.15)
    plan = make_plan(course, split_by_grade(course), rider, air, request)
    assert plan.min_w_prime_balance >= 2000.0 - 1e-6 * 3000.0
    assert plan.mean_power == pytest.approx(228.0, rel=1e-4)
    assert plan.time_saved > 0.0  # faster than constant power (74 s when written)
    assert plan.solver.method.endswith("+blend")
