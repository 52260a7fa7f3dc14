"""Specification of pacing.course.recording: the track numbers a coach chooses (the course
made of a recording: tests/test_course_recorded_course.py)."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.recording import middle_value, parse_track_choice
from pacing.errors import InputError


def test_track_numbers_are_parsed_and_checked():
    assert parse_track_choice("1,3") == (1, 3)
    assert parse_track_choice("") is None
    for bad in ("0", "a,b", "2,2", "-1"):
        with pytest.raises(InputError, match="--track"):
            parse_track_choice(bad)



@pytest.mark.parametrize("count", [1, 2, 5, 6, 101])
def test_the_middle_value_is_numpy_s_median(count):
    # reference library: numpy.median (the spacing's median without importing numpy.ma)
    values = np.random.default_rng(count).normal(10.0, 3.0, count)
    assert middle_value(values) == np.median(values)
