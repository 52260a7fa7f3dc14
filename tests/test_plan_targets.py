"""Segment target tables (pacing.plan.targets): numbers only, consistent with the prediction."""

import json
from functools import lru_cache

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.cycling import make_plan
from pacing.plan.prediction import SimulationOptions
from pacing.plan.request import PlanRequest
from pacing.plan.simulate import simulate
from pacing.plan.targets import (
    DEFAULT_BAND,
    RECORD_KEYS,
    SegmentTarget,
    power_band,
    target_table,
    targets_as_records,
)
from pacing.weather.conditions import CourseAir, still_air

RIDER = Rider(mass=80.0, drag_area=0.27)


@lru_cache
def rolling():
    """6 km: 2 km flat, 2 km at 5 %, 2 km at −4 %, into a 3 m/s headwind on the climb."""
    distance = np.arange(0.0, 6000.0 + 5.0, 20.0)
    elevation = np.interp(distance, [0, 2000, 4000, 6000], [0, 0, 100, 20])
    course = synthetic_course(distance, elevation)
    pieces = distance.size - 1
    middle = 0.5 * (distance[:-1] + distance[1:])
    headwind = np.where((middle > 2000) & (middle < 4000), 3.0, 0.0)
    air = CourseAir(np.full(pieces, 1.2), headwind, np.zeros(pieces))
    return course, np.array([0, 100, 200, pieces]), air


@lru_cache
def fastest_plan():
    course, bounds, air = rolling()
    request = PlanRequest(strategy="fastest", mean_power=260.0, critical_power=280.0,
                          w_prime=20000.0, max_power_ratio=1.3, band=0.05)
    return make_plan(course, bounds, RIDER, air, request, SimulationOptions(start_speed=8.0))


def test_rows_follow_the_plan_and_add_up_to_the_finish_time():
    course, bounds, air = rolling()
    plan = fastest_plan()
    rows = target_table(course, bounds, plan, air=air)
    assert [row.index for row in rows] == [0, 1, 2]
    assert all(isinstance(row, SegmentTarget) for row in rows)
    np.testing.assert_allclose([row.target_power for row in rows], plan.segment_power)
    assert sum(row.time for row in rows) == pytest.approx(plan.finish_time)
    assert rows[-1].cumulative_time == pytest.approx(plan.finish_time)
    assert np.all(np.diff([row.cumulative_time for row in rows]) > 0)
    for row in rows:
        assert row.speed == pytest.approx(row.length / row.time)
        assert row.power_low == pytest.approx(0.95 * row.target_power)  # the request's band
        assert row.power_high == pytest.approx(1.05 * row.target_power)
        assert row.target_pace is None
    np.testing.assert_allclose([row.w_prime_balance for row in rows],
                               plan.segment_w_prime_balance)
    assert [row.headwind for row in rows] == pytest.approx([0.0, 3.0, 0.0])
    assert [row.grade for row in rows] == pytest.approx([0.0, 0.05, -0.04])


def test_headwind_is_the_length_weighted_mean_over_each_segment():
    # two 3 km segments, each with 1 km of the 3 m/s headwind: 3·1/3 = 1 m/s (definition); a
    # bare prediction carries its own headwind, the same numbers without `air`
    course, _, air = rolling()
    bounds = np.array([0, 150, 300])
    prediction = simulate(course, 250.0, RIDER, air, SimulationOptions(start_speed=8.0))
    for rows in (target_table(course, bounds, prediction, air=air),
                 target_table(course, bounds, prediction)):
        assert [row.headwind for row in rows] == pytest.approx([1.0, 1.0], rel=1e-12)


def test_a_bare_prediction_gives_the_power_it_rode_and_no_w_prime():
    course, bounds, air = rolling()
    prediction = simulate(course, 250.0, RIDER, air, SimulationOptions(start_speed=8.0))
    rows = target_table(course, bounds, prediction, band=0.03)
    assert [row.target_power for row in rows] == pytest.approx([250.0] * 3, abs=0.5)
    assert all(row.w_prime_balance is None for row in rows)
    assert rows[1].headwind == pytest.approx(3.0)  # from the prediction's headwind


def test_pace_for_runners_is_seconds_per_kilometre():
    course, bounds, air = rolling()
    prediction = simulate(course, 250.0, RIDER, still_air(course, 1.2))
    rows = target_table(course, bounds, prediction, pace=True)
    for row in rows:
        assert row.target_pace == pytest.approx(1000.0 / row.speed)
        assert row.target_power is None and row.power_low is None


def test_records_have_si_keys_and_serialise_to_json():
    course, bounds, air = rolling()
    records = targets_as_records(target_table(course, bounds, fastest_plan(), air=air))
    assert set(records[0]) == set(RECORD_KEYS.values())
    assert {"power_w", "w_prime_balance_j", "time_s", "cumulative_time_s",
            "speed_m_s"} <= set(records[0])
    json.dumps(records)


def test_bad_inputs_raise_input_error():
    course, bounds, air = rolling()
    plan = fastest_plan()
    with pytest.raises(InputError):
        target_table(course, bounds, plan, band=1.5)
    with pytest.raises(InputError):
        target_table(course, bounds, plan, segment_power=[200.0, 210.0])
    with pytest.raises(InputError):
        target_table(course, np.array([0, 5, 3, course.distance.size - 1]), plan)


def test_power_band_is_three_percent_either_side_by_default():
    """Issue 4: "power targets per segment come with a band (e.g. ±3 %)"."""
    assert DEFAULT_BAND == 0.03
    low, high = power_band(np.array([250.0, 0.0, 400.0]))
    np.testing.assert_allclose(low, [242.5, 0.0, 388.0])
    np.testing.assert_allclose(high, [257.5, 0.0, 412.0])
    low, high = power_band(300.0, 0.05)
    assert (float(low), float(high)) == pytest.approx((285.0, 315.0))


def test_the_target_table_band_is_power_band():
    course, bounds, air = rolling()
    plan = fastest_plan()
    rows = target_table(course, bounds, plan, air=air)
    low, high = power_band(plan.segment_power, plan.request.band)
    np.testing.assert_allclose([row.power_low for row in rows], low)
    np.testing.assert_allclose([row.power_high for row in rows], high)


@pytest.mark.parametrize(("power", "band"), [(250.0, 1.0), (250.0, -0.01), (250.0, float("nan")),
                                             (250.0, "wide"), (-1.0, 0.03),
                                             (float("nan"), 0.03)])
def test_power_band_refuses_bad_input(power, band):
    with pytest.raises(InputError):
        power_band(power, band)
