"""Specification of pacing.course.elevation: the cleaning settings, smoothing over a distance
window, the grade limit, filling points without a height, the absurd-jump check and ascent.

Building a whole course with these is specified in tests/test_course_geometry.py.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.course.elevation import (
    ELEVATION_JUMP_GRADE,
    ELEVATION_JUMP_SLACK,
    SMOOTHING_METHODS,
    ElevationSmoothing,
    check_elevation_jumps,
    clean_elevation,
    cleaning_notices,
    fill_missing_elevation,
    limit_grade,
    missing_elevation_notice,
    smooth_elevation,
    sustained_length,
    sustained_steep_pieces,
    total_ascent,
)
from pacing.errors import InputError
from pacing.notices import warning


def hill(distance):
    """A smooth hill, flat at both ends: 100 m + 40 m Gaussian bump (sd 800 m) at 5 km."""
    return 100.0 + 40.0 * np.exp(-0.5 * ((np.asarray(distance) - 5000.0) / 800.0) ** 2)


# ----------------------------------------------------------------------------- ascent

def test_total_ascent_sums_the_rises_only():
    # by hand: +5, −2, +7
    assert total_ascent([100.0, 105.0, 103.0, 110.0]) == 12.0
    assert total_ascent([110.0, 100.0]) == 0.0
    assert total_ascent([100.0]) == 0.0


# ------------------------------------------------------------------------- smoothing

def test_a_smooth_profile_passes_cleaning_unchanged():
    distance = np.arange(0.0, 10_000.0 + 1, 10.0)
    cleaned = clean_elevation(distance, hill(distance))
    assert np.max(np.abs(cleaned - hill(distance))) < 0.1  # 40 m hill, 0.25 % tolerance


def test_gaussian_smoothing_of_a_gaussian_hill_adds_the_variances():
    # Convolving two Gaussians gives a Gaussian whose variance is the sum (common practice):
    # the 200 m window is a kernel of sd 50 m, so the 40 m hill of sd 800 m keeps its area and
    # peaks at 40·800/√(800² + 50²) = 39.922 m. The kernel is cut at ±3 sd, hence 5 mm slack.
    distance = np.arange(0.0, 10_000.0 + 1, 10.0)
    smoothed = smooth_elevation(hill(distance), 10.0, ElevationSmoothing(window=200.0))
    assert smoothed.max() - 100.0 == pytest.approx(40.0 * 800.0 / math.hypot(800.0, 50.0),
                                                   abs=5e-3)
    assert np.sum(smoothed - 100.0) == pytest.approx(np.sum(hill(distance) - 100.0), rel=1e-9)


def test_moving_average_of_a_parabola_adds_the_window_variance():
    # The mean of (x + kΔ)² over k = −h..h is x² + Δ²·h(h+1)/3 (variance of a discrete uniform
    # distribution; common practice): a 200 m window of 10 m steps has h = 10 → +36.67 m² × a.
    distance = np.arange(0.0, 10_000.0 + 1, 10.0)
    parabola = 0.001 * (distance - 5000.0) ** 2
    averaged = smooth_elevation(parabola, 10.0,
                                ElevationSmoothing(window=200.0, method="moving-average"))
    inside = slice(100, -100)  # away from the padded ends
    np.testing.assert_allclose(averaged[inside] - parabola[inside], 0.001 * 100.0 * 10 * 11 / 3,
                               rtol=1e-9)


@pytest.mark.parametrize("method", ["gaussian", "moving-average"])
@pytest.mark.parametrize("window", [50.0, 200.0, 1000.0, 5000.0])
def test_both_kernels_return_a_linear_profile_unchanged(method, window):
    # The 5 km window is wider than the 3 km profile: the reflection repeats beyond the ends.
    distance = np.arange(0.0, 3000.0 + 1, 10.0)
    elevation = 150.0 + 0.045 * distance
    cleaned = smooth_elevation(elevation, 10.0, ElevationSmoothing(window=window, method=method))
    np.testing.assert_allclose(cleaned, elevation, atol=1e-9)


@settings(max_examples=80, deadline=None)
@given(rises=st.lists(st.floats(-5.0, 5.0), min_size=2, max_size=120),
       window=st.sampled_from([20.0, 100.0, 200.0, 800.0]),
       method=st.sampled_from(["gaussian", "moving-average"]))
def test_smoothing_keeps_the_end_heights_and_never_adds_ascent(rises, window, method):
    elevation = 500.0 + np.concatenate([[0.0], np.cumsum(rises)])
    smoothed = smooth_elevation(elevation, 10.0, ElevationSmoothing(window=window, method=method))
    assert smoothed[0] == pytest.approx(elevation[0], abs=1e-9)
    assert smoothed[-1] == pytest.approx(elevation[-1], abs=1e-9)
    assert total_ascent(smoothed) <= total_ascent(elevation) + 1e-9


def test_padding_falls_back_to_end_values_when_reflection_would_add_ascent(monkeypatch):
    # A lopsided kernel (each point takes the next point's height; scipy's convolution flips
    # the kernel) is not symmetric: with odd reflection it would turn the profile 0, 0, 1 into
    # 0, 1, 2 (ascent 2 > 1). Padding with the end values gives 0, 1, 1 (ascent 1).
    monkeypatch.setitem(SMOOTHING_METHODS, "lopsided",
                        lambda window, step: np.array([1.0, 0.0, 0.0]))
    smoothed = smooth_elevation(np.array([0.0, 0.0, 1.0]), 10.0,
                                ElevationSmoothing(window=30.0, method="lopsided"))
    np.testing.assert_allclose(smoothed, [0.0, 1.0, 1.0])


def test_a_window_narrower_than_two_steps_or_a_short_profile_changes_nothing():
    profile = np.array([0.0, 3.0, 1.0, 4.0, 1.0, 5.0])
    np.testing.assert_array_equal(
        smooth_elevation(profile, 10.0, ElevationSmoothing(window=15.0)), profile)
    np.testing.assert_array_equal(smooth_elevation(profile[:2], 10.0), profile[:2])
    np.testing.assert_array_equal(
        smooth_elevation(profile, 10.0, ElevationSmoothing(window=0.0)), profile)


# ------------------------------------------------------------------------- grade limit

def test_limit_grade_reintegrates_clipped_rises():
    # by hand: a 10 m step over 10 m at a 25 % limit rises 2.5 m; the descent of 4 m over 20 m
    # (20 %) is kept
    distance = np.array([0.0, 10.0, 20.0, 40.0])
    elevation = np.array([0.0, 10.0, 10.0, 6.0])
    np.testing.assert_allclose(limit_grade(distance, elevation, 0.25), [0.0, 2.5, 2.5, -1.5])


def test_grade_limit_flattens_an_impossible_ramp():
    distance = np.arange(0.0, 2001.0, 10.0)
    elevation = np.where(distance < 1000, 0.0, 30.0)  # a 30 m wall
    cleaned = clean_elevation(distance, elevation,
                              ElevationSmoothing(window=0, max_grade=0.2))
    assert np.max(np.diff(cleaned) / 10.0) == pytest.approx(0.2)
    assert total_ascent(cleaned) == pytest.approx(2.0)  # one 10 m piece at the limit


def test_smoothing_methods_and_their_validation():
    distance = np.arange(0.0, 3001.0, 10.0)
    elevation = hill(distance + 3500)
    np.testing.assert_array_equal(
        clean_elevation(distance, elevation, ElevationSmoothing(method="none")), elevation)
    averaged = clean_elevation(distance, elevation, ElevationSmoothing(method="moving-average"))
    assert total_ascent(averaged) <= total_ascent(elevation) + 1e-9
    with pytest.raises(InputError, match="smoothing method"):
        ElevationSmoothing(method="spline")
    with pytest.raises(InputError, match="window"):
        ElevationSmoothing(window=-1.0)
    with pytest.raises(InputError, match="grade limit"):
        ElevationSmoothing(max_grade=0.0)
    assert ElevationSmoothing() == ElevationSmoothing(window=200.0, max_grade=0.25,
                                                      method="gaussian")


@pytest.mark.parametrize("changes", [{"window": math.nan}, {"window": math.inf},
                                     {"max_grade": 1.5}, {"max_grade": math.nan}])
def test_elevation_smoothing_refuses_non_finite_or_out_of_range_values(changes):
    with pytest.raises(InputError) as error:
        ElevationSmoothing(**changes)
    assert "\n" not in str(error.value)


# ------------------------------------------------------------------- missing heights

def test_missing_heights_are_interpolated_and_held_at_the_ends():
    distance = np.array([0.0, 100.0, 300.0, 400.0, 500.0])
    elevation = np.array([np.nan, 10.0, np.nan, 40.0, np.nan])
    filled = fill_missing_elevation(distance, elevation)
    assert missing_elevation_notice(elevation) == warning("elevation-points-missing", count=3,
                                                          total=5)
    # by hand: 300 m lies two thirds of the way from 100 m (10 m) to 400 m (40 m)
    np.testing.assert_allclose(filled, [10.0, 10.0, 30.0, 40.0, 40.0])


def test_complete_heights_are_returned_as_they_are_without_a_warning():
    elevation = np.array([1.0, 2.0, 3.0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert fill_missing_elevation(np.array([0.0, 1.0, 2.0]), elevation) is elevation
    assert missing_elevation_notice(elevation) is None


def test_no_height_at_all_is_refused():
    with pytest.raises(InputError, match="no elevation at any point"):
        fill_missing_elevation(np.array([0.0, 1.0]), np.array([np.nan, np.nan]))


# ---------------------------------------------------------------------- absurd jumps

def test_elevation_jumps_are_absurd_beyond_the_slack_plus_a_100_percent_grade():
    assert (ELEVATION_JUMP_SLACK, ELEVATION_JUMP_GRADE) == (50.0, 1.0)
    # 100 m apart: up to 50 + 100 = 150 m of change is accepted, more is a recording fault
    check_elevation_jumps(np.array([100.0]), np.array([0.0, 150.0]))
    with pytest.raises(InputError, match="absurd elevation jump of 151 m over 100 m between "
                                         "points 2 and 3"):
        check_elevation_jumps(np.array([10.0, 100.0]), np.array([0.0, 5.0, -146.0]))


# ------------------------------------------------- sustained steep stretches are real climbing

def test_a_stretch_steeper_than_the_limit_for_long_enough_is_kept():
    # by hand: 300 m at 30 % between flat road, a point every 10 m
    distance = np.arange(0.0, 1001.0, 10.0)
    elevation = 0.30 * np.clip(distance - 300.0, 0.0, 300.0)
    kept = sustained_steep_pieces(distance, elevation, 0.25, 200.0)
    assert kept.sum() == 30 and kept[30:60].all()
    np.testing.assert_allclose(limit_grade(distance, elevation, 0.25, 200.0), elevation)
    # shorter than the stretch asked for: flattened to 25 %, the summit 15 m lower
    cut = limit_grade(distance, elevation, 0.25, 400.0)
    assert cut[-1] == pytest.approx(0.25 * 300.0)
    assert sustained_length(ElevationSmoothing(window=50.0)) == 100.0


def test_cleaning_notices_tell_what_was_removed_kept_and_cut():
    distance = np.arange(0.0, 1001.0, 10.0)
    ramp = 0.30 * np.clip(distance - 300.0, 0.0, 300.0)
    smoothed = ramp.copy()
    notices = cleaning_notices(distance, ramp, smoothed, limit_grade(distance, ramp, 0.25,
                                                                   200.0), 0.25, 200.0)
    assert [n.code for n in notices] == ["elevation-cleaned", "steep-grade-kept"]
    assert notices[1].values["at_m"] == 300.0
    assert notices[1].values["length_m"] == pytest.approx(300.0)
    cut = cleaning_notices(distance, ramp, smoothed, limit_grade(distance, ramp, 0.25), 0.25)
    assert [n.code for n in cut] == ["elevation-cleaned", "grade-limit-cut"]
    assert cut[1].values["at_m"] == 300.0
    assert cut[1].values["height_m"] == pytest.approx(15.0)
    assert cut[0].values["limit_removed_m"] == pytest.approx(15.0)
