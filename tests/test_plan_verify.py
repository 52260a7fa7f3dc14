"""Specification of a cycling plan's verification by the inertial simulation
(pacing.plan.verify): the measure the constraint holds, the verified constant reference, the
scaling of a plan to its target, the power bounds it sits on, its W′ balance and effort.

The rider is the one of tests/test_plan_cycling.py (80 kg, CdA 0.269 m², Martin et al. 1998
constants, ρ 1.2). Check values by hand from the definitions: work = Σ P·Δt and mean power =
work / T; the differential W′ balance (Skiba et al. 2015, Eur J Appl Physiol 115(4):703-713,
doi:10.1007/s00421-014-3050-3; docs/references.md, "Critical power and W′ balance") falls by
(P − CP)·t above CP; the effort-weighted power of a constant power is that power (a 4th-power
mean of a constant, common practice).
"""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.request import PlanRequest
from pacing.plan.steady_model import segment_model
from pacing.plan.verify import (
    VerifyingRide,
    bound_binding,
    constant_reference,
    ride_effort,
    ride_measure,
    ride_w_prime_balance,
    scaled_to_target,
)
from pacing.weather.conditions import still_air

RIDER = Rider(mass=80.0, drag_area=0.269)
FLYING = SimulationOptions(start_speed=10.0)


def flat_ride(options=FLYING):
    """4 km flat in 10 m pieces, two segments of 2 km."""
    distance = np.arange(0.0, 4000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance))
    bounds = np.array([0, 200, 400])
    air = still_air(course, 1.2)
    return VerifyingRide(course, bounds, RIDER, air, options,
                         segment_model(course, bounds, RIDER, air))


def climb_and_descent(options):
    """2 km up at 6 %, then 2 km down at 6 %, in 10 m pieces, split at the top."""
    distance = np.arange(0.0, 4000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.where(distance <= 2000.0, 0.06 * distance,
                                                 0.06 * (4000.0 - distance)))
    bounds = np.array([0, 200, 400])
    air = still_air(course, 1.2)
    return VerifyingRide(course, bounds, RIDER, air, options,
                         segment_model(course, bounds, RIDER, air))


# --------------------------------------------------------------------------- the measure


def test_the_measure_is_the_work_or_the_time_weighted_mean_power():
    ride = flat_ride()
    prediction = ride.simulate(np.full(400, 250.0))
    work = float(np.sum(np.asarray(prediction.power) * np.diff(prediction.time)))
    assert ride_measure(prediction, PlanRequest(mean_power=250.0, constraint="work")) == (
        pytest.approx(work, rel=1e-12))
    assert ride_measure(prediction, PlanRequest(mean_power=250.0)) == pytest.approx(
        work / (prediction.time[-1] - prediction.time[0]), rel=1e-12)


# --------------------------------------------------------------------------- the reference


def test_the_constant_reference_is_scaled_to_the_mean_power_where_the_rider_coasts():
    # coasting above 12 m/s on the descent lowers the ride's mean below the planned 250 W:
    # the reference power is raised until the verified mean is 250 W (to 5e-5)
    ride = climb_and_descent(SimulationOptions(start_speed=8.0, coasting_speed=12.0))
    unscaled = ride.simulate(np.full(400, 250.0))
    assert unscaled.average_power < 250.0 * (1 - 1e-3)
    prediction, power = constant_reference(ride, PlanRequest(mean_power=250.0))
    assert power > 250.0
    assert prediction.average_power == pytest.approx(250.0, rel=5e-5)
    again = ride.simulate(np.full(400, power))
    assert prediction.finish_time == pytest.approx(again.finish_time, rel=1e-12)


def test_under_the_work_constraint_the_reference_keeps_the_power():
    ride = climb_and_descent(SimulationOptions(start_speed=8.0, coasting_speed=12.0))
    prediction, power = constant_reference(ride, PlanRequest(mean_power=250.0,
                                                             constraint="work"))
    assert power == 250.0
    assert prediction.finish_time == pytest.approx(
        ride.simulate(np.full(400, 250.0)).finish_time, rel=1e-12)


# --------------------------------------------------------------------------- scaling to target


def test_a_segment_held_at_its_bound_stays_there_while_the_others_scale():
    ride = flat_ride()
    lower, upper = np.array([150.0, 150.0]), np.array([300.0, 400.0])
    power, prediction = scaled_to_target(ride, PlanRequest(mean_power=270.0),
                                         np.array([300.0, 200.0]), lower, upper, 270.0)
    assert power[0] == 300.0  # at its upper bound
    assert power[1] > 200.0
    assert prediction.average_power == pytest.approx(270.0, rel=5e-5)
    again = ride.simulate(power[ride.model.segment])
    assert prediction.finish_time == pytest.approx(again.finish_time, rel=1e-12)


def test_when_the_free_segments_cannot_reach_the_target_the_held_ones_scale_too():
    # the free segment tops out at 210 W, short of a 280 W mean: the one held at its lower
    # bound (150 W) is scaled up with it
    ride = flat_ride()
    lower, upper = np.array([150.0, 150.0]), np.array([400.0, 210.0])
    power, prediction = scaled_to_target(ride, PlanRequest(mean_power=280.0),
                                         np.array([150.0, 200.0]), lower, upper, 280.0)
    assert power[0] > 150.0 and power[1] == 210.0
    assert prediction.average_power == pytest.approx(280.0, rel=5e-5)


# --------------------------------------------------------------------------- bounds


def test_the_bounds_a_plan_sits_on_by_hand():
    lower, upper = np.full(3, 100.0), np.full(3, 300.0)
    assert bound_binding(np.array([300.0, 200.0, 100.0]), lower, upper) == (
        ["max-power on 1 segments", "min-power on 1 segments"], 0.0)
    assert bound_binding(np.array([250.0, 200.0, 150.0]), lower, upper) == ([], 0.0)
    # 10 W above the upper bound, 5 W below the lower one: the excursion is 10 W
    assert bound_binding(np.array([310.0, 200.0, 95.0]), lower, upper)[1] == pytest.approx(10.0)


# --------------------------------------------------------------------------- W′ and effort


def test_the_w_prime_balance_of_a_ride_above_cp_by_hand():
    # constant 350 W against CP 300 W: W′ − 50 W·t at every point, lowest at the finish
    ride = flat_ride()
    prediction = ride.simulate(np.full(400, 350.0))
    request = PlanRequest(mean_power=350.0, critical_power=300.0, w_prime=20000.0,
                          w_prime_model="differential")
    balance, segment_balance, lowest, where = ride_w_prime_balance(prediction, request,
                                                                   ride.bounds)
    elapsed = np.asarray(prediction.time) - prediction.time[0]
    np.testing.assert_allclose(balance, 20000.0 - 50.0 * elapsed, rtol=1e-9)
    np.testing.assert_allclose(segment_balance, balance[[200, 400]], rtol=1e-12)
    assert lowest == pytest.approx(balance[-1], rel=1e-12)
    assert where == pytest.approx(4000.0)


def test_the_effort_of_a_constant_ride_is_its_power():
    ride = flat_ride()
    assert ride_effort(ride.simulate(np.full(400, 300.0))) == pytest.approx(300.0, rel=1e-9)
