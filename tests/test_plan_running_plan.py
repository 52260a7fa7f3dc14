"""A running plan as data (pacing.plan.running_plan): its segment rows, its summary numbers and
its target rows.

The rows are checked on plans written out by hand (three pieces, numbers chosen so every row
value is a short sum: recomputed by hand from the definitions in the docstrings); the plans
made by pacing.plan.running are tested in tests/test_plan_running.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from test_physics_running import FIVE_MINUTES_PER_KM, average_runner, straight_course

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.plan.even_pace import EvenPaceReference
from pacing.plan.running import DOWNHILL_SPEED_RATIO_CAP, plan_equal_effort
from pacing.plan.running_plan import (
    DEFAULT_SPLIT,
    assemble_running_plan,
    running_segment_bounds,
    running_segments,
    running_targets,
)
from pacing.weather.conditions import CourseAir

# Three pieces of 100, 200 and 300 m: up 2 m, flat, down 6 m; 2, 4 and 3 m/s, so 50, 50 and
# 100 s; metabolic power 10, 5 and 8 W/kg against a target of 5 W/kg; headwind 1, −1 and 2 m/s;
# D′ balance 100, 90 and 80 m at the pieces' ends. Two segments: pieces 0-1 and piece 2.
DISTANCE = np.array([0.0, 100.0, 300.0, 600.0])
ELEVATION = np.array([0.0, 2.0, 2.0, -4.0])
SPEED = np.array([2.0, 4.0, 3.0])
TIME = np.array([50.0, 50.0, 100.0])
POWER = np.array([10.0, 5.0, 8.0])
EFFORT = 5.0
HEADWIND = np.array([1.0, -1.0, 2.0])
BALANCE = np.array([100.0, 90.0, 80.0])
BOUNDS = np.array([0, 2, 3])


def hand_course():
    return synthetic_course(DISTANCE, ELEVATION)


REFERENCE = EvenPaceReference(speed=3.5, time=190.0, peak_effort_ratio=1.8)


def hand_plan(balance=BALANCE):
    air = CourseAir(np.full(3, 1.2), HEADWIND, np.zeros(3))
    return assemble_running_plan("equal-effort", hand_course(), BOUNDS, air, SPEED, TIME, POWER,
                                 EFFORT, 3.0, balance, [], REFERENCE)


# --------------------------------------------------------------------------- segment rows


def test_segment_rows_of_a_plan_written_out_by_hand():
    # by hand: segment 0 runs 300 m in 50 + 50 = 100 s (3 m/s, 333.3 s/km), rises 2 m (2/300),
    # headwind (1·100 − 1·200)/300 = −1/3 m/s (length-weighted), effort
    # (10·50 + 5·50)/100 = 7.5 W/kg = 1.5 × target (time-weighted), fastest piece 4 m/s;
    # segment 1 runs 300 m in 100 s, falls 6 m (−0.02), headwind 2 m/s, effort 8/5 = 1.6
    first, second = running_segments(hand_course(), BOUNDS, SPEED, TIME, POWER, EFFORT,
                                      HEADWIND, BALANCE)
    assert (first.start, first.end, second.start, second.end) == (0.0, 300.0, 300.0, 600.0)
    assert first.grade == pytest.approx(2.0 / 300.0, rel=1e-12)
    assert second.grade == pytest.approx(-0.02, rel=1e-12)
    assert first.headwind == pytest.approx(-1.0 / 3.0, rel=1e-12)
    assert second.headwind == pytest.approx(2.0, rel=1e-12)
    assert (first.time, first.speed, first.cumulative_time) == (100.0, 3.0, 100.0)
    assert (second.time, second.speed, second.cumulative_time) == (100.0, 3.0, 200.0)
    assert first.pace == pytest.approx(1000.0 / 3.0, rel=1e-12)
    assert first.effort_ratio == pytest.approx(1.5, rel=1e-12)
    assert second.effort_ratio == pytest.approx(1.6, rel=1e-12)
    assert (first.max_speed, second.max_speed) == (4.0, 3.0)
    # the balance at a segment's end is the balance at its last piece's end
    assert (first.d_prime_balance, second.d_prime_balance) == (90.0, 80.0)


def test_rows_carry_no_d_prime_balance_without_one():
    rows = running_segments(hand_course(), BOUNDS, SPEED, TIME, POWER, EFFORT, HEADWIND)
    assert [row.d_prime_balance for row in rows] == [None, None]


def test_segment_rows_carry_their_fastest_piece():
    distance = np.arange(0.0, 6000.0 + 10.0, 20.0)
    course = synthetic_course(distance, 40.0 * np.sin(2 * np.pi * distance / 2000.0))
    plan = plan_equal_effort(course, average_runner(), FIVE_MINUTES_PER_KM)
    assert max(row.max_speed for row in plan.segments) == pytest.approx(plan.max_speed)
    assert all(row.max_speed >= row.speed for row in plan.segments)
    assert plan.max_speed == pytest.approx(DOWNHILL_SPEED_RATIO_CAP * FIVE_MINUTES_PER_KM)


# --------------------------------------------------------------------------- segment bounds


def test_without_bounds_a_running_plan_is_split_every_kilometre():
    # 2.5 km in 10 m steps: ends at 1000 m, 2000 m and the finish (DEFAULT_SPLIT = 1 km)
    course = straight_course(2500.0)
    bounds = running_segment_bounds(course, None)
    assert DEFAULT_SPLIT == 1000.0
    assert course.distance[bounds].tolist() == [0.0, 1000.0, 2000.0, 2500.0]


@pytest.mark.parametrize("bounds", [[0, 3], [1, 3], [0, 2, 2, 3], [0, 2, 1, 3], [[0, 3]], [0]])
def test_segment_bounds_must_increase_from_the_first_to_the_last_point(bounds):
    with pytest.raises(InputError, match="segment bounds must increase"):
        running_segment_bounds(synthetic_course([0.0, 1.0, 2.0, 3.0, 4.0], np.zeros(5)),
                               np.asarray(bounds))


def test_given_bounds_are_kept():
    course = synthetic_course([0.0, 1.0, 2.0, 3.0], np.zeros(4))
    assert running_segment_bounds(course, np.array([0, 1, 3])).tolist() == [0, 1, 3]


# --------------------------------------------------------------------------- the plan's numbers


def test_the_plans_summary_numbers_by_hand():
    # finish 200 s over 600 m (3 m/s); mean effort (10·50 + 5·50 + 8·100)/200 = 7.75 W/kg,
    # 1.55 × target; peak 10/5 = 2; the even pace finishes at 190 s, 10 s sooner; lowest
    # balance 80 m at the finish (600 m)
    plan = hand_plan()
    assert plan.finish_time == 200.0
    assert plan.distance == 600.0
    assert plan.average_speed == 3.0
    assert plan.mean_effort_ratio == pytest.approx(1.55, rel=1e-12)
    assert plan.peak_effort_ratio == 2.0
    assert plan.max_speed == 4.0
    assert plan.time_saved == pytest.approx(-10.0, rel=1e-12)
    assert plan.min_d_prime_balance == 80.0
    assert plan.min_d_prime_distance == 600.0
    assert (plan.even_pace_speed, plan.even_pace_time, plan.even_pace_peak_effort_ratio) == (
        3.5, 190.0, 1.8)
    assert plan.limited_even_pace_time is None and plan.notes == ()
    assert [row.end for row in plan.segments] == [300.0, 600.0]


def test_the_lowest_balance_is_found_where_it_happens():
    # lowest at the end of the first piece: 100 m from the start
    plan = hand_plan(balance=np.array([20.0, 90.0, 80.0]))
    assert plan.min_d_prime_balance == 20.0
    assert plan.min_d_prime_distance == 100.0


def test_without_critical_speed_there_is_no_balance_to_report():
    plan = hand_plan(balance=None)
    assert plan.min_d_prime_balance is None and plan.min_d_prime_distance is None


# --------------------------------------------------------------------------- target rows


def test_plan_rows_convert_to_segment_targets():
    course = straight_course(3000.0, grade=0.02)
    plan = plan_equal_effort(course, average_runner(), FIVE_MINUTES_PER_KM)
    rows = running_targets(plan)
    assert [row.index for row in rows] == [0, 1, 2]
    assert rows[-1].cumulative_time == pytest.approx(plan.finish_time)
    assert all(row.target_power is None for row in rows)
    assert rows[0].target_pace == pytest.approx(1000.0 / plan.speed[0])


def test_target_rows_of_a_plan_written_out_by_hand():
    first, second = running_targets(hand_plan())
    assert (first.index, first.start, first.end, first.length) == (0, 0.0, 300.0, 300.0)
    assert (second.index, second.length, second.cumulative_time) == (1, 300.0, 200.0)
    assert first.target_pace == pytest.approx(1000.0 / 3.0, rel=1e-12)
    assert first.headwind == pytest.approx(-1.0 / 3.0, rel=1e-12)
    assert first.w_prime_balance is None and first.power_low is None
