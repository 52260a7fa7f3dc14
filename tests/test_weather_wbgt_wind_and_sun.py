"""Specification of pacing.weather.wbgt_wind_and_sun: the stability class, the wind at the
globe's 2 m and the direct share of the sunlight, after Liljegren et al. (2008), J Occup Environ
Hyg 5(10):645-655 (the whole WBGT against the authors' code: tests/test_weather_wbgt.py)."""

import math

import numpy as np
import pytest

from pacing.weather.wbgt_wind_and_sun import direct_fraction, stability_class, wind_at_globe


def test_stability_classes_follow_the_solar_radiation_table():
    # Liljegren et al. (2008), Table 2 (solar radiation / delta-T): strong sun and calm is A,
    # weak sun and wind is D, night and calm is E.
    wind = np.array([1.0, 2.5, 4.0, 5.5, 7.0, 1.0, 3.0])
    solar = np.array([950.0, 700.0, 300.0, 100.0, 950.0, 0.0, 0.0])
    sun_up = np.array([True, True, True, True, True, False, False])
    assert stability_class(wind, solar, sun_up).tolist() == [1, 2, 3, 4, 3, 5, 4]


def test_wind_at_two_metres_follows_the_power_law_with_a_floor():
    # u₂ = u₁₀·(2/10)^p (Liljegren et al. 2008), rural p = 0.15 for class D; floor 0.13 m/s.
    assert float(wind_at_globe(np.array(4.0), 10.0, np.array(4))) == pytest.approx(
        4.0 * 0.2**0.15, rel=1e-12)
    assert float(wind_at_globe(np.array(0.0), 10.0, np.array(6))) == pytest.approx(0.13)


def test_direct_fraction_vanishes_at_night_and_stays_below_0_9():
    cosine = np.array([0.9, 0.9, 0.001, -0.2])
    solar = np.array([1100.0, 200.0, 5.0, 0.0])
    fraction = direct_fraction(solar, cosine)
    # normalised irradiance capped at 0.85: exp(3 − 1.34·0.85 − 1.65/0.85) = 0.923, then 0.9
    assert math.exp(3 - 1.34 * 0.85 - 1.65 / 0.85) > 0.9
    assert fraction[0] == pytest.approx(0.9, abs=1e-12)
    assert 0.0 <= fraction[1] < fraction[0] <= 0.9
    assert fraction[2] == 0.0 and fraction[3] == 0.0
