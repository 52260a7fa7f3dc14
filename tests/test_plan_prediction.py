"""Specification of the simulation's types and fast pieces (pacing.plan.prediction):
SimulationOptions, Prediction, SegmentResult, the look-ahead speed limits, the steady
prediction and per-segment summaries.

Check values: the flat-turn limit v = √(μ·g·R) with a peak tyre-asphalt friction μ ≈ 1.0 (VTI
rapport 952) and riders' accepted lateral acceleration (FHWA-HRT-04-103: 0.26 g at
R = 15.3 m), both [read, earlier notes] in docs/references.md, "Cornering"; the steady speed
of the Martin et al. (1998) balance (J Appl Biomech 14(3):276-291) by scipy brentq and by
pacing.physics.cycling.speed_for_power.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from samples import hilly_course, still, windy_air

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider, speed_for_power
from pacing.plan.prediction import (
    REAR_WHEEL_LOAD_SHARE,
    TYRE_ROAD_FRICTION,
    Prediction,
    SegmentResult,
    SimulationOptions,
    per_piece_rider,
    piece_inputs,
    segment_results,
    speed_limits,
    steady_prediction,
)
from pacing.plan.simulate import simulate

G = 9.80665  # standard gravity [m/s²] (CGPM 1901)


SMALL = hilly_course(1500.0, 10.0)


# ---------------------------------------------------------------- speed limits


def test_a_flat_turn_at_the_tyre_grip_limit_is_the_square_root_of_mu_g_r():
    # v = √(μ·g·R) for a flat turn (textbook mechanics), μ = 1.0 peak tyre-asphalt friction
    # (VTI rapport 952, docs/references.md, "Cornering"), R = 12 m: √(1.0·9.80665·12) =
    # 10.848 m/s; braking starts far enough ahead that the turn's own cap is the limit there.
    x = np.arange(0.0, 1001.0, 10.0)
    radius = np.full(x.size, 1e6)
    radius[50] = 12.0
    course = synthetic_course(x, np.zeros(x.size), corner_radius=radius)
    options = SimulationOptions(lateral_acceleration=1.0 * G, braking_deceleration=3.0)
    limit = speed_limits(course, np.diff(x), options)
    assert limit[50] == pytest.approx(math.sqrt(1.0 * G * 12.0), rel=1e-12)
    assert limit[50] == pytest.approx(10.848, abs=5e-4)
    # 100 m before it the rider may still be faster by √(v² + 2·a·100 m)
    assert limit[40] == pytest.approx(math.sqrt(G * 12.0 + 2 * 3.0 * 100.0), rel=1e-12)


def test_the_default_lateral_acceleration_is_what_riders_accept():
    # FHWA-HRT-04-103 (docs/references.md, "Cornering"): riders accepted 0.26 g at R = 15.3 m
    # and 0.18-0.20 g at 25-27.5 m; the default 2.5 m/s² is 0.255 g, within 0.01 g of the
    # first and far below grip (1.0 g).
    default = SimulationOptions().lateral_acceleration
    assert default / G == pytest.approx(0.26, abs=0.01)
    assert default < TYRE_ROAD_FRICTION * G


def test_the_rear_wheel_traction_cap_is_470_n_for_80_kg():
    # SimulationOptions.max_drive_force docstring: 0.6·1.0·80 kg·9.80665 m/s² = 470.7 N
    assert REAR_WHEEL_LOAD_SHARE * TYRE_ROAD_FRICTION * 80.0 * G == pytest.approx(470.7, abs=0.05)


def test_the_descent_speed_caps_every_point():
    x = np.arange(0.0, 501.0, 10.0)
    course = synthetic_course(x, -0.05 * x)
    limit = speed_limits(course, np.diff(x), SimulationOptions(max_descent_speed=14.0))
    np.testing.assert_allclose(limit, 14.0)


def test_steady_prediction_is_length_over_speed_for_power():
    # pacing.physics.cycling.speed_for_power as the steady-state reference; time = Σ L/v
    course = hilly_course()
    air = windy_air(course)
    rider = Rider()
    steady = steady_prediction(course, 250.0, rider, air)
    speed = speed_for_power(250.0, course.grade, air.density, rider, air.headwind,
                            air.crosswind)
    road = np.diff(course.distance) * np.sqrt(1 + course.grade**2)
    assert steady.finish_time == pytest.approx(float(np.sum(road / speed)), rel=1e-12)
    assert steady.energy_balance_residual < 1e-9
    assert steady.average_power == pytest.approx(250.0, rel=1e-9)


def test_speed_limits_backward_pass():
    # v_i² = min_j (cap_j² + 2·a·(x_j − x_i)) over the points ahead
    x = np.arange(0.0, 101.0, 10.0)
    radius = np.full(x.size, 1000.0)
    radius[-1] = 4.0
    course = synthetic_course(x, np.zeros(x.size), corner_radius=radius)
    options = SimulationOptions(lateral_acceleration=2.5, braking_deceleration=3.0)
    limit = speed_limits(course, np.diff(x), options)
    expected = np.minimum(np.sqrt(2.5 * 1000.0), np.sqrt(2.5 * 4.0 + 2 * 3.0 * (100.0 - x)))
    assert limit == pytest.approx(expected, rel=1e-12)


def test_segment_results_add_up():
    # segment sums of time and work are the course's (definitions)
    course = hilly_course()
    prediction = simulate(course, 250.0, Rider(), windy_air(course))
    bounds = np.array([0, 100, 250, 400, course.distance.size - 1])
    results = segment_results(course, prediction, bounds)
    assert [r.index for r in results] == [0, 1, 2, 3]
    assert all(isinstance(r, SegmentResult) for r in results)
    assert sum(r.time for r in results) == pytest.approx(prediction.finish_time)
    assert sum(r.power * r.time for r in results) == pytest.approx(prediction.work)
    first = results[0]
    assert first.start == 0.0 and first.end == 1000.0 and first.length == 1000.0
    assert first.grade == pytest.approx(course.elevation[100] / 1000.0)
    assert first.speed == pytest.approx(first.length / first.time)
    assert first.max_speed == pytest.approx(prediction.speed[:101].max())
    with pytest.raises(InputError):
        segment_results(course, prediction, [0, 50, 50, course.distance.size - 1])


def test_prediction_summary_properties():
    course = hilly_course()
    prediction = simulate(course, 250.0, Rider(), still(course))
    assert isinstance(prediction, Prediction)
    assert prediction.average_speed == pytest.approx(5000.0 / prediction.finish_time)
    assert prediction.average_power == pytest.approx(
        float(np.sum(prediction.power * np.diff(prediction.time))) / prediction.finish_time)
    assert prediction.max_speed == prediction.speed.max()
    n = course.distance.size
    for field in ("distance", "time", "speed"):
        assert getattr(prediction, field).shape == (n,)
    for field in ("power", "air_speed", "yaw", "headwind", "aero", "rolling", "bearing",
                  "drivetrain_loss", "potential", "kinetic", "braking", "walking"):
        assert getattr(prediction, field).shape == (n - 1,), field


def test_bad_options_are_refused():
    # a standing start is allowed; a negative one, or no grip or brakes, is not
    with pytest.raises(InputError):
        SimulationOptions(start_speed=-1.0)
    with pytest.raises(InputError):
        SimulationOptions(lateral_acceleration=0.0)
    with pytest.raises(InputError):
        SimulationOptions(braking_deceleration=math.inf)


@settings(max_examples=25, deadline=None)
@given(st.lists(st.integers(1, SMALL.distance.size - 2), min_size=0, max_size=6, unique=True),
       st.floats(100.0, 400.0))
def test_time_is_the_sum_of_length_over_mean_speed(cuts, power):
    # a segment's speed is its length over its time, whatever the cuts (definition)
    prediction = simulate(SMALL, power, Rider(), windy_air(SMALL))
    bounds = np.array([0, *sorted(cuts), SMALL.distance.size - 1])
    results = segment_results(SMALL, prediction, bounds)
    assert sum(r.length / r.speed for r in results) == pytest.approx(prediction.finish_time,
                                                                      rel=1e-12)


def test_steady_prediction_with_per_piece_drag_area_and_crr_matches_brentq():
    """Flat, windless: each piece at its steady speed, the root of the Martin et al. (1998)
    balance η·P = v·(½ρ(CdA_i + F_w)v² + Crr_i·m·g + a + b·v) by scipy brentq."""
    from scipy.optimize import brentq

    x = np.arange(0.0, 4001.0, 10.0)
    course = synthetic_course(x, np.zeros(x.size))
    pieces = course.grade.size
    areas = np.where(np.arange(pieces) < 200, 0.24, 0.33)
    rolling = np.where(np.arange(pieces) % 2 == 0, 0.003, 0.005)
    rider = Rider(mass=78.0, drag_area=areas, rolling_coefficient=rolling)
    steady = steady_prediction(course, 250.0, rider, still(course))

    def steady_speed(area, crr):
        def balance(v):
            return v * (0.5 * 1.2 * (area + rider.wheel_drag_area) * v**2 + crr * 78.0 * G
                        + rider.bearing_force_constant + rider.bearing_force_per_speed * v
                        ) - rider.drivetrain_efficiency * 250.0
        return brentq(balance, 0.5, 40.0, xtol=1e-14)

    expected = sum(10.0 / steady_speed(area, crr)
                   for area, crr in zip(areas, rolling, strict=True))
    assert steady.finish_time == pytest.approx(expected, rel=1e-10)
    assert steady.energy_balance_residual < 1e-9


def test_option_values_out_of_range_are_refused_with_their_name():
    for field, value, name in [("coasting_speed", -3.0, "coasting speed"),
                               ("minimum_speed", 0.0, "minimum speed"),
                               ("max_drive_force", math.nan, "maximum drive force"),
                               ("max_descent_speed", 0.0, "maximum descent speed")]:
        with pytest.raises(InputError, match=name):
            SimulationOptions(**{field: value})


# ---------------------------------------------------------------- inputs per piece


def test_one_number_is_broadcast_to_every_piece():
    course = hilly_course(100.0)
    air = SimpleNamespace(density=1.2, headwind=2.0, crosswind=np.arange(10.0))
    power, density, headwind, crosswind = piece_inputs(course, 250.0, air)
    assert power.shape == density.shape == headwind.shape == (10,)
    np.testing.assert_array_equal(power, 250.0)
    np.testing.assert_array_equal(crosswind, np.arange(10.0))
    area, rolling = per_piece_rider(Rider(drag_area=np.full(10, 0.3)), 10)
    np.testing.assert_array_equal(area, 0.3)
    np.testing.assert_array_equal(rolling, Rider().rolling_coefficient)


@pytest.mark.parametrize("air, message", [
    (SimpleNamespace(density=0.0, headwind=0.0, crosswind=0.0), "density must be positive"),
    (SimpleNamespace(density=1.2, headwind=np.zeros(3), crosswind=0.0), "one value per piece"),
    (SimpleNamespace(density=1.2, headwind=0.0, crosswind=math.inf), "finite"),
])
def test_bad_air_is_refused_in_one_line(air, message):
    with pytest.raises(InputError, match=message) as error:
        piece_inputs(hilly_course(100.0), 250.0, air)
    assert "\n" not in str(error.value)


def test_energy_balance_residual_of_a_hand_made_prediction():
    # rider work 1000 J = 600 aero + 300 potential + 50 rolling + 40 drivetrain + 10 bearing:
    # residual 0; with 100 J more aero the sinks exceed the work by 10 % (definition)
    def ride(aero):
        one = np.array([1.0])
        return Prediction(distance=np.array([0.0, 100.0]), time=np.array([0.0, 10.0]),
                          speed=np.array([10.0, 10.0]), power=np.array([100.0]),
                          air_speed=10 * one, yaw=0 * one, headwind=0 * one, aero=aero * one,
                          rolling=50 * one, bearing=10 * one, drivetrain_loss=40 * one,
                          potential=300 * one, kinetic=0 * one, braking=0 * one,
                          walking=np.array([False]), walking_work=0 * one)
    assert ride(600.0).energy_balance_residual == pytest.approx(0.0, abs=1e-15)
    assert ride(700.0).energy_balance_residual == pytest.approx(0.1, rel=1e-12)
    assert ride(600.0).average_speed == 10.0 and ride(600.0).work == 1000.0
