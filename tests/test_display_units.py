"""Metric/imperial conversion and formatting at the edges (pacing.display.units).

Reference values: the exact definitions of the international foot, mile and pound (1959
agreement; NIST SP 811 (2008), Appendix B.8) and scipy.constants, which tabulates the same
CODATA/NIST factors independently of this package.
"""

import math

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given
from hypothesis import strategies as st

from pacing.display.units import (
    SYSTEMS,
    UNITS,
    format_duration,
    format_pace,
    format_quantity,
    from_display,
    pace_from_speed,
    pace_per_km_to_display,
    parse_clock,
    speed_from_pace,
    to_display,
    unit_label,
)
from pacing.errors import InputError


class TestFactorsAgainstScipyConstants:
    """scipy.constants: mile, foot, pound, mph, convert_temperature (NIST SP 811)."""

    def test_one_mile_in_metres(self):
        assert from_display(1.0, "distance", "imperial") == pytest.approx(sc.mile, rel=1e-15)

    def test_one_foot_in_metres(self):
        assert from_display(1.0, "elevation", "imperial") == pytest.approx(sc.foot, rel=1e-15)

    def test_one_pound_in_kilograms(self):
        assert from_display(1.0, "mass", "imperial") == pytest.approx(sc.pound, rel=1e-15)

    def test_one_mph_in_metres_per_second(self):
        assert from_display(1.0, "speed", "imperial") == pytest.approx(sc.mph, rel=1e-15)

    def test_one_km_per_hour(self):
        # 1 km/h = 1000 m / 3600 s = 0.2777… m/s (definition of the units)
        assert from_display(1.0, "speed", "metric") == pytest.approx(sc.kmh, rel=1e-15)

    @pytest.mark.parametrize("celsius", [-40.0, 0.0, 20.0, 37.0, 100.0])
    def test_temperature_matches_scipy(self, celsius):
        expected = sc.convert_temperature(celsius, "Celsius", "Fahrenheit")
        assert to_display(celsius, "temperature", "imperial") == pytest.approx(expected)

    def test_fixed_points_of_the_fahrenheit_scale(self):
        # water freezes at 32 °F and boils at 212 °F at standard pressure; −40 is shared
        assert to_display(0.0, "temperature", "imperial") == pytest.approx(32.0)
        assert to_display(100.0, "temperature", "imperial") == pytest.approx(212.0)
        assert to_display(-40.0, "temperature", "imperial") == pytest.approx(-40.0)

    def test_marathon_distance(self):
        # a marathon is 42.195 km = 26.2188 mi (common practice: "26.2 miles")
        assert to_display(42195.0, "distance", "imperial") == pytest.approx(26.21876, abs=1e-5)


class TestMetricIsTheIdentityWhereSIIsShown:
    def test_metres_and_kilograms_unchanged(self):
        assert to_display(123.4, "elevation", "metric") == 123.4
        assert to_display(72.5, "mass", "metric") == 72.5
        assert to_display(21.0, "temperature", "metric") == 21.0

    def test_kilometres(self):
        assert to_display(40000.0, "distance", "metric") == pytest.approx(40.0)

    def test_speed_of_10_mps_is_36_kmh(self):
        assert to_display(10.0, "speed", "metric") == pytest.approx(36.0)


class TestLabels:
    @pytest.mark.parametrize(
        "quantity,metric,imperial",
        [
            ("speed", "km/h", "mph"),
            ("distance", "km", "mi"),
            ("elevation", "m", "ft"),
            ("mass", "kg", "lb"),
            ("temperature", "°C", "°F"),
            ("pace", "min/km", "min/mi"),
        ],
    )
    def test_label_per_system(self, quantity, metric, imperial):
        assert unit_label(quantity, "metric") == metric
        assert unit_label(quantity, "imperial") == imperial

    def test_unknown_system_is_an_input_error(self):
        with pytest.raises(InputError, match="unit system"):
            unit_label("speed", "nautical")

    def test_unknown_quantity_is_an_input_error(self):
        with pytest.raises(InputError, match="quantity"):
            to_display(1.0, "luminosity", "metric")


class TestPace:
    def test_five_minutes_per_km(self):
        # 1000 m in 300 s = 3.333 m/s
        assert pace_from_speed(1000.0 / 300.0, "metric") == pytest.approx(300.0)

    def test_five_minutes_per_km_is_8_03_per_mile(self):
        # 300 s/km × 1.609344 km/mi = 482.8 s/mi = 8:03 per mile (arithmetic)
        pace = pace_from_speed(1000.0 / 300.0, "imperial")
        assert pace == pytest.approx(482.8032)
        assert format_pace(pace) == "8:03"
        assert pace_per_km_to_display(300.0, "imperial") == pytest.approx(482.8032)

    def test_speed_from_pace_inverts(self):
        assert speed_from_pace(pace_from_speed(4.2, "imperial"), "imperial") == pytest.approx(4.2)

    @pytest.mark.parametrize("bad", [0.0, -1.0, float("nan"), float("inf")])
    def test_non_positive_speed_is_an_input_error(self, bad):
        with pytest.raises(InputError):
            pace_from_speed(bad, "metric")


class TestClockText:
    @pytest.mark.parametrize(
        "seconds,text",
        [(0, "0:00:00"), (59.4, "0:00:59"), (59.5, "0:01:00"), (3725.4, "1:02:05"),
         (3599.6, "1:00:00"), (90000, "25:00:00")],
    )
    def test_format_duration(self, seconds, text):
        assert format_duration(seconds) == text

    @pytest.mark.parametrize("text,seconds", [("1:02:05", 3725), ("4:30", 270), ("95", 95),
                                              (" 0:59:59 ", 3599)])
    def test_parse_clock(self, text, seconds):
        assert parse_clock(text) == seconds

    @pytest.mark.parametrize("bad", ["", "abc", "1:75:00", "-5", "0:00", "1:2:3:4", "nan"])
    def test_bad_clock_text_is_an_input_error(self, bad):
        with pytest.raises(InputError):
            parse_clock(bad)

    def test_a_flood_of_digits_is_refused_without_being_echoed(self):
        # issue 14: a 300-digit --target-time was echoed back whole
        with pytest.raises(InputError) as error:
            parse_clock("9" * 300, "--target-time")
        assert len(str(error.value)) < 100 and "1000 hours" in str(error.value)
        assert parse_clock("999:59:59") == 999 * 3600 + 3599  # the longest kept

    @pytest.mark.parametrize("bad", [float("nan"), -1.0, float("inf"), "x"])
    def test_bad_duration_is_an_input_error_not_nan_text(self, bad):
        with pytest.raises(InputError):
            format_duration(bad)

    @given(st.integers(min_value=1, max_value=10 * 24 * 3600))
    def test_format_then_parse_is_identity_on_whole_seconds(self, seconds):
        assert parse_clock(format_duration(seconds)) == seconds


class TestFormatQuantity:
    def test_with_unit(self):
        assert format_quantity(10.0, "speed", "metric") == "36.0 km/h"
        assert format_quantity(10.0, "speed", "imperial", digits=2) == "22.37 mph"

    def test_missing_value_shows_a_dash_not_nan(self):
        assert format_quantity(None, "speed", "metric") == "–"
        assert format_quantity(float("nan"), "speed", "metric") == "–"


@given(
    st.sampled_from(sorted(UNITS)),
    st.sampled_from(SYSTEMS),
    st.floats(min_value=-1e6, max_value=1e6, allow_nan=False),
)
def test_round_trip_returns_the_si_value(quantity, system, value):
    back = from_display(to_display(value, quantity, system), quantity, system)
    assert math.isclose(back, value, rel_tol=1e-12, abs_tol=1e-9)


def test_arrays_convert_elementwise():
    metres = np.array([0.0, 1000.0, 1609.344])
    np.testing.assert_allclose(to_display(metres, "distance", "imperial"),
                               [0.0, 1000.0 / 1609.344, 1.0])
