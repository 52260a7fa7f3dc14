"""Segment target tables (pacing.plan.targets): numbers only, consistent with the prediction."""

import dataclasses
import json
from functools import lru_cache

import gpxpy
import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from recording_samples import two_tracks_with_a_jump

from pacing.course.geometry import synthetic_course
from pacing.course.recording import Gap
from pacing.course.segments import split_every
from pacing.errors import InputError
from pacing.io.gpx import load_course
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
    segment_gap_lengths,
    target_table,
    targets_as_records,
    with_gap_lengths,
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


# ------------------------------------------------- issue 13: a joined gap in the recording

JUMP = 12_700.0
"""The gap of tests/recording_samples.two_tracks_with_a_jump: the second track starts this far
east of the first's end, placed along the WGS84 geodesic with geographiclib (Karney 2013,
J. Geodesy 87, 43-55, doi:10.1007/s00190-012-0578-z); the first track is 7 500 m long."""


@lru_cache
def merged_recording():
    """The two-track recording as a course (gap joined by default), split every 5 km."""
    course = load_course(two_tracks_with_a_jump(jump=JUMP).encode())
    return course, split_every(course, 5000.0)


def jump_in_the_file():
    """Geodesic from the first track's last point to the second's first, as the GPX text holds
    them (parsed with gpxpy, measured with geographiclib: no pacing code)."""
    parsed = gpxpy.parse(two_tracks_with_a_jump(jump=JUMP))
    end = parsed.tracks[0].segments[-1].points[-1]
    start = parsed.tracks[1].segments[0].points[0]
    return Geodesic.WGS84.Inverse(end.latitude, end.longitude, start.latitude,
                                  start.longitude)["s12"]


def test_exactly_the_segment_holding_the_joined_gap_tells_its_length():
    course, bounds = merged_recording()
    prediction = simulate(course, 200.0, RIDER, still_air(course, 1.2),
                          SimulationOptions(start_speed=8.0))
    rows = target_table(course, bounds, prediction)
    holding = [row for row in rows if row.gap_length > 0]
    assert len(holding) == 1
    assert holding[0].gap_length == pytest.approx(JUMP, rel=0.01)
    assert holding[0].gap_length == pytest.approx(jump_in_the_file(), rel=1e-6)
    # the gap starts where the first 7.5 km track ends (forward model)
    assert holding[0].start <= 7_500.0 * 1.01 and 7_500.0 * 0.99 < holding[0].end
    assert all(row.gap_length == 0.0 for row in rows if row is not holding[0])
    assert targets_as_records([holding[0]])[0]["gap_length_m"] == holding[0].gap_length


def test_a_course_without_gaps_has_no_gap_length():
    course, bounds, air = rolling()
    assert all(row.gap_length == 0.0
               for row in target_table(course, bounds, fastest_plan(), air=air))


def test_a_gap_belongs_to_the_segment_whose_start_to_end_holds_where_it_starts():
    ends = [5_000.0, 10_000.0, 20_000.0]
    gaps = [Gap(piece=1, at=5_000.0, length=800.0, duration=None),     # on a bound: next one
            Gap(piece=2, at=7_000.0, length=200.0, duration=60.0),
            Gap(piece=3, at=20_000.0, length=900.0, duration=None),    # at the finish: last
            Gap(piece=4, at=1_000.0, length=5e5, duration=1.0, handling="drop")]  # not joined
    assert segment_gap_lengths(gaps, ends).tolist() == [0.0, 1_000.0, 900.0]
    assert segment_gap_lengths([], ends).tolist() == [0.0, 0.0, 0.0]
    assert segment_gap_lengths(gaps, []).tolist() == []


def test_rows_made_without_the_course_get_their_gap_lengths_from_it():
    # e.g. running rows (pacing.plan.running_plan.running_targets)
    course, bounds = merged_recording()
    prediction = simulate(course, 200.0, RIDER, still_air(course, 1.2))
    rows = target_table(course, bounds, prediction, pace=True)
    bare = [dataclasses.replace(row, gap_length=0.0) for row in rows]
    assert with_gap_lengths(bare, course.gaps) == rows
