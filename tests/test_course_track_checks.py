"""Specification of pacing.course.track_checks: a raw track's positions, elevations, step and
left-out pieces checked before a course is built, each refusal one line naming what is wrong
(WGS84 ranges: latitude -90..90, longitude -180..180 degrees, common practice)."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.geometry import build_course
from pacing.course.track_checks import (
    HIGHEST_ELEVATION,
    LOWEST_ELEVATION,
    checked_skip,
    checked_step,
    validate_track,
)
from pacing.errors import InputError


@pytest.mark.parametrize(("latitude", "longitude", "elevation", "message"), [
    ([], [], [], "no points"),
    ([45.0], [7.0], [1.0], "only one point"),
    ([45.0, 91.0], [7.0, 7.0], [0.0, 0.0], "latitude out of range .* at point 2: 91"),
    ([45.0, np.nan], [7.0, 7.0], [0.0, 0.0], "latitude out of range"),
    ([45.0, 45.1], [7.0, 181.0], [0.0, 0.0], "longitude out of range .* at point 2: 181"),
    ([45.0, 45.1], [7.0, 7.0], [0.0], "same number of points"),
    ([45.0, 45.1], [7.0, 7.0], [0.0, np.inf], "elevation inf m at point 2"),
    ([45.0, 45.1], [7.0, 7.0], [0.0, -9999.0], "plausible range"),
    ([45.0, "north"], [7.0, 7.0], None, "must be numbers"),
])
def test_a_bad_track_is_refused_in_one_line_naming_the_point(latitude, longitude, elevation,
                                                               message):
    with pytest.raises(InputError, match=message) as error:
        validate_track(latitude, longitude, elevation)
    assert "\n" not in str(error.value)


def test_a_good_track_comes_back_as_flat_float_arrays_with_missing_heights_kept():
    latitude, longitude, elevation = validate_track([[45.0, 45.1]], [7, 7], [np.nan, 8849])
    assert latitude.tolist() == [45.0, 45.1] and longitude.dtype == float
    assert np.isnan(elevation[0]) and elevation[1] == 8849.0  # Everest is in range
    assert validate_track([45.0, 45.1], [7.0, 7.0])[2] is None
    assert LOWEST_ELEVATION < -430.0 and HIGHEST_ELEVATION > 8849.0  # Dead Sea shore, Everest


@pytest.mark.parametrize("step", [0.0, -5.0, 0.5, 5000.0, float("nan"), "ten"])
def test_bad_steps_are_refused(step):
    with pytest.raises(InputError, match="step"):
        checked_step(step)
    with pytest.raises(InputError, match="step"):
        build_course([45.0, 45.1], [7.0, 7.0], [0.0, 0.0], step=step)


def test_a_step_within_the_bounds_is_a_float():
    assert checked_step("25") == 25.0 and checked_step(1) == 1.0 and checked_step(1000) == 1000.0


def test_the_pieces_left_out_need_one_flag_per_piece():
    assert checked_skip(None, 3).tolist() == [False, False, False]
    assert checked_skip([0, 1, 0], 3).tolist() == [False, True, False]
    with pytest.raises(InputError, match="one flag per piece"):
        checked_skip([True], 3)
