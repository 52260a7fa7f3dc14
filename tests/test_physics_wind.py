"""Wind: roughness classes, log wind profile, head and cross components."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.errors import InputError
from pacing.physics.cycling import air_speed_components
from pacing.physics.wind import (
    DEFAULT_ROUGHNESS_CLASS,
    PROFILE_LOWEST_HEIGHT_RATIO,
    ROUGHNESS_LENGTHS,
    log_profile_factor,
    wind_at_height,
    wind_components,
)

# --- roughness classes ------------------------------------------------------------------------


def test_roughness_lengths_are_the_davenport_wieringa_classes():
    # Wieringa 1992 (J Wind Eng Ind Aerodyn 41:357), WMO-No. 8 Vol. I ch. 5; the same table is
    # in Stull's "Meteorology for Scientists and Engineers": sea 0.0002, smooth 0.005, open
    # 0.03, roughly open 0.10, rough 0.25, very rough 0.5, closed 1.0 m.
    assert sorted(ROUGHNESS_LENGTHS.values()) == [0.0002, 0.005, 0.03, 0.10, 0.25, 0.5, 1.0]
    assert list(ROUGHNESS_LENGTHS.values()) == sorted(ROUGHNESS_LENGTHS.values())


def test_default_class_is_open_terrain():
    # Common practice (WMO-No. 8): wind sensors stand 10 m above open terrain, z0 = 0.03 m.
    assert ROUGHNESS_LENGTHS[DEFAULT_ROUGHNESS_CLASS] == 0.03


# --- log profile ------------------------------------------------------------------------------


def test_factor_at_one_metre_over_open_terrain():
    # docs/references.md, "Wind" [calc]: u(1 m)/u(10 m) = ln(1/0.03)/ln(10/0.03) = 0.604
    # (neutral log law, computed here independently).
    expected = math.log(1.0 / 0.03) / math.log(10.0 / 0.03)
    assert expected == pytest.approx(0.604, abs=5e-4)
    assert log_profile_factor(10.0, 1.0, 0.03) == pytest.approx(expected, rel=1e-12)
    assert wind_at_height(5.0, 10.0, 1.0, 0.03) == pytest.approx(5.0 * expected, rel=1e-12)


@pytest.mark.parametrize("roughness", [0.0002, 0.005, 0.03, 0.10, 0.25])
def test_profile_is_the_plain_log_law_where_it_holds(roughness):
    # Neutral log law u(z)/u(zm) = ln(z/z0)/ln(zm/z0) (Stull 1988; common practice).
    for height in (1.0, 2.0, 5.0, 20.0):
        expected = math.log(height / roughness) / math.log(10.0 / roughness)
        assert log_profile_factor(10.0, height, roughness) == pytest.approx(expected)


def test_same_height_gives_the_measured_speed():
    assert wind_at_height(7.0, 10.0, 10.0, 0.1) == pytest.approx(7.0, rel=1e-12)


def test_rough_terrain_is_clamped_below_twice_the_roughness_length():
    # Documented clamp: z0 is taken as min(z0, min(z, zm)/2); both roughest classes read
    # ln(2)/ln(20) = 0.231 at 1 m.
    assert PROFILE_LOWEST_HEIGHT_RATIO == 2.0
    expected = math.log(2.0) / math.log(20.0)
    assert log_profile_factor(10.0, 1.0, 0.5) == pytest.approx(expected)
    assert log_profile_factor(10.0, 1.0, 1.0) == pytest.approx(expected)
    assert log_profile_factor(10.0, 0.1, 1.0) > 0


def test_profile_is_vectorized():
    heights = np.array([0.5, 1.0, 2.0, 5.0])
    speeds = wind_at_height(6.0, 10.0, heights, 0.03)
    assert speeds.shape == (4,)
    assert np.all(np.diff(speeds) > 0)
    by_class = wind_at_height(6.0, 10.0, 1.0, np.array(list(ROUGHNESS_LENGTHS.values())))
    assert np.all(np.diff(by_class) <= 0)


@pytest.mark.parametrize(
    ("speed", "measured", "height", "roughness"),
    [
        (-1.0, 10.0, 1.0, 0.03),
        (5.0, 0.0, 1.0, 0.03),
        (5.0, 10.0, -1.0, 0.03),
        (5.0, 10.0, 1.0, 0.0),
        (float("nan"), 10.0, 1.0, 0.03),
        ("breezy", 10.0, 1.0, 0.03),
    ],
)
def test_invalid_profile_input_raises(speed, measured, height, roughness):
    with pytest.raises(InputError) as error:
        wind_at_height(speed, measured, height, roughness)
    assert "\n" not in str(error.value)


positive_heights = st.floats(0.05, 50.0)
roughnesses = st.floats(1e-4, 3.0)


@settings(max_examples=200, deadline=None)
@given(st.floats(0.0, 40.0), positive_heights, positive_heights, roughnesses)
def test_profile_is_never_negative_nor_above_the_measured_speed_below_it(
    speed, measured, height, roughness
):
    value = wind_at_height(speed, measured, height, roughness)
    assert math.isfinite(value) and value >= 0
    if height <= measured:
        assert value <= speed * (1 + 1e-12)


@settings(max_examples=200, deadline=None)
@given(positive_heights, positive_heights, positive_heights, roughnesses)
def test_profile_grows_with_height(measured, low, high, roughness):
    low, high = sorted((low, high))
    assert log_profile_factor(measured, low, roughness) <= log_profile_factor(
        measured, high, roughness
    ) * (1 + 1e-12)


@settings(max_examples=200, deadline=None)
@given(positive_heights, positive_heights, roughnesses, roughnesses)
def test_rougher_ground_never_gives_more_wind_below_the_measurement(
    measured, height, smooth, rough
):
    smooth, rough = sorted((smooth, rough))
    height = min(height, measured)
    assert log_profile_factor(measured, height, rough) <= log_profile_factor(
        measured, height, smooth
    ) * (1 + 1e-12)


# --- components -------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("heading", "wind_from", "headwind", "crosswind"),
    [
        # Meteorological convention (wind named by where it comes FROM; WMO-No. 8):
        (0.0, 0.0, 5.0, 0.0),  # riding north into a north wind: full headwind
        (180.0, 0.0, -5.0, 0.0),  # riding south with a north wind: full tailwind
        (0.0, 90.0, 0.0, 5.0),  # riding north, east wind: from the right
        (0.0, 270.0, 0.0, -5.0),  # riding north, west wind: from the left
        (90.0, 0.0, 0.0, -5.0),  # riding east, north wind: from the left
        (270.0, 0.0, 0.0, 5.0),  # riding west, north wind: from the right
        (90.0, 90.0, 5.0, 0.0),  # riding east into an east wind
        (45.0, 225.0, -5.0, 0.0),  # riding north-east, south-west wind behind
    ],
)
def test_cardinal_wind_components(heading, wind_from, headwind, crosswind):
    head, cross = wind_components(heading, wind_from, 5.0)
    assert head == pytest.approx(headwind, abs=1e-12)
    assert cross == pytest.approx(crosswind, abs=1e-12)


def test_components_are_vectorized_over_headings():
    headings = np.array([0.0, 90.0, 180.0, 270.0])
    head, cross = wind_components(headings, 0.0, 3.0)
    np.testing.assert_allclose(head, [3.0, 0.0, -3.0, 0.0], atol=1e-12)
    np.testing.assert_allclose(cross, [0.0, -3.0, 0.0, 3.0], atol=1e-12)


def test_apparent_wind_example_from_references():
    # docs/references.md, "Wind" [calc]: v = 10, W = 5 at 90° off the nose → V = 11.180 m/s,
    # β = 26.57°.
    head, cross = wind_components(0.0, 90.0, 5.0)
    along, apparent, yaw = air_speed_components(10.0, head, cross)
    assert along == pytest.approx(10.0, abs=1e-12)
    assert apparent == pytest.approx(math.hypot(10.0, 5.0), rel=1e-12)
    assert apparent == pytest.approx(11.180, abs=5e-4)
    assert yaw == pytest.approx(26.57, abs=5e-3)


def test_invalid_components_raise():
    with pytest.raises(InputError):
        wind_components(0.0, 0.0, -2.0)
    with pytest.raises(InputError):
        wind_components(float("nan"), 0.0, 2.0)


@settings(max_examples=200, deadline=None)
@given(st.floats(-720.0, 720.0), st.floats(-720.0, 720.0), st.floats(0.0, 40.0))
def test_components_keep_the_wind_speed(heading, wind_from, speed):
    head, cross = wind_components(heading, wind_from, speed)
    assert math.hypot(head, cross) == pytest.approx(speed, rel=1e-9, abs=1e-12)
    # turning the whole picture changes nothing
    head2, cross2 = wind_components(heading + 360.0, wind_from - 360.0, speed)
    assert head2 == pytest.approx(head, abs=1e-9)
    assert cross2 == pytest.approx(cross, abs=1e-9)
