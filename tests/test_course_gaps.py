"""Specification of pacing.course.gaps: the gaps in a recording judged by length and by the
speed their times imply (common practice: the bounds are in the module's constants).
"""

from __future__ import annotations

import numpy as np

from pacing.course.gaps import GAP_MIN_LENGTH, find_gaps, gap_length_bound


def test_the_length_bound_follows_the_typical_spacing():
    assert gap_length_bound(np.full(100, 8.0)) == GAP_MIN_LENGTH  # 1 s at 29 km/h
    assert gap_length_bound(np.full(100, 100.0)) == 5_000.0  # a route drawn every 100 m
    assert gap_length_bound(np.array([110_000.0])) == np.inf  # one piece is its own spacing


def test_a_lost_fix_for_a_minute_on_the_road_is_not_a_gap():
    # 10 m a second, then 400 m in 60 s (6.7 m/s): the rider went on, the receiver did not
    length = np.r_[np.full(50, 10.0), 400.0, np.full(50, 10.0)]
    time = np.concatenate([[0.0], np.cumsum(np.r_[np.ones(50), 60.0, np.ones(50)])])
    assert find_gaps(length, time).size == 0


def test_a_short_jump_at_an_impossible_speed_is_a_gap():
    # 400 m in one second (1440 km/h) is shorter than the length bound but no riding
    length = np.r_[np.full(50, 10.0), 400.0, np.full(50, 10.0)]
    time = np.arange(102.0)
    assert find_gaps(length, time).tolist() == [50]
    assert find_gaps(length, None).size == 0  # without times only the length can tell

