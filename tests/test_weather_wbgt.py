"""Specification of pacing.weather.wbgt: the outdoor wet-bulb globe temperature by Liljegren
et al. (2008), checked against the authors' original code, and the Bureau of Meteorology
approximation."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.errors import InputError
from pacing.weather.sun import solar_elevation, sun_distance
from pacing.weather.wbgt import (
    WBGT_METHODS,
    wbgt_bom_approximation,
    wbgt_liljegren,
    wbgt_liljegren_parts,
)

# Reference values: lwbgt 1.2.1 (PyPI), which packages the original Argonne National Laboratory
# C code of Liljegren et al. (2008) unchanged ("reference-compatible, bit for bit"), run with
# these inputs: UTC time (instantaneous, averaging 0 min), latitude [deg N], longitude [deg E],
# global horizontal irradiance [W/m²], pressure [Pa], air temperature [°C], relative humidity
# [-], 10-m wind [m/s], rural, night-time inversion (ΔT ≥ 0) at night and lapse (ΔT < 0) by
# day. Outputs printed to 3 decimals (the code returns float32 and iterates to 0.02 K):
# globe, natural wet bulb and WBGT [°C].
LILJEGREN_REFERENCE = [
    ("night-calm", 1721008800, 40.0, -100.0, 0.0, 101325, 25.0, 0.70, 1.0, 23.881, 20.880, 21.892),
    ("night-breeze", 1721012400, 40.0, -100.0, 0.0, 95000, 18.0, 0.90, 4.0, 17.231, 16.794,
     17.002),
    ("night-dry", 1704844800, 10.0, 20.0, 0.0, 90000, 30.0, 0.20, 6.5, 28.722, 14.824, 19.121),
    ("noon-equator", 1718971200, 0.0, 0.0, 900.0, 101325, 30.0, 0.50, 2.0, 45.778, 24.204,
     29.099),
    ("noon-mid", 1721044800, 45.0, 0.0, 850.0, 101000, 32.0, 0.40, 3.5, 44.235, 23.152, 28.253),
    ("noon-humid", 1722513600, 25.0, 0.0, 700.0, 100500, 31.0, 0.75, 1.5, 46.869, 29.450,
     33.089),
    ("afternoon", 1719846000, 45.0, 0.0, 500.0, 101300, 28.0, 0.55, 5.5, 35.456, 22.304, 25.504),
    ("morning-cool", 1713171600, 50.0, 0.0, 300.0, 102000, 12.0, 0.80, 2.5, 17.965, 11.850,
     13.088),
    ("altitude", 1721473200, 46.0, 7.0, 950.0, 80000, 22.0, 0.40, 3.0, 37.118, 15.491, 20.467),
    ("overcast", 1719748800, 48.0, 2.0, 150.0, 101200, 24.0, 0.65, 7.0, 25.847, 19.653, 21.326),
]


@pytest.mark.parametrize(
    ("label", "time", "latitude", "longitude", "solar", "pressure", "air", "humidity", "wind",
     "globe", "wet", "wbgt"),
    LILJEGREN_REFERENCE, ids=[row[0] for row in LILJEGREN_REFERENCE])
def test_liljegren_matches_the_authors_original_code(label, time, latitude, longitude, solar,
                                                     pressure, air, humidity, wind, globe, wet,
                                                     wbgt):
    # Against lwbgt 1.2.1 (the original Argonne C code, see above). The sun's position comes
    # from pacing.weather.sun (checked in tests/test_weather_sun.py); the reference computes
    # its own. Within 0.03 °C WBGT, 0.05 °C for the globe and the wick (the reference's 0.02 K
    # iteration tolerance and float32 results).
    parts = wbgt_liljegren_parts(air, humidity, wind, pressure, solar,
                                 solar_elevation(time, latitude, longitude),
                                 sun_distance=sun_distance(time))
    assert float(parts.wbgt) == pytest.approx(wbgt, abs=0.03)
    assert float(parts.globe) == pytest.approx(globe, abs=0.05)
    assert float(parts.natural_wet_bulb) == pytest.approx(wet, abs=0.05)


def test_the_whole_reference_table_as_one_array():
    rows = np.array([row[1:] for row in LILJEGREN_REFERENCE], dtype=float)
    time, latitude, longitude, solar, pressure, air, humidity, wind = rows[:, :8].T
    got = wbgt_liljegren(air, humidity, wind, pressure, solar,
                         solar_elevation(time, latitude, longitude), 10.0, sun_distance(time))
    np.testing.assert_allclose(got, rows[:, 10], atol=0.03)


def test_wbgt_is_its_weighted_parts():
    # ISO 7243: WBGT = 0.7·T_nw + 0.2·T_g + 0.1·T_a outdoors.
    parts = wbgt_liljegren_parts(28.0, 0.6, 3.0, 100000.0, 700.0, 50.0)
    assert float(parts.wbgt) == pytest.approx(
        0.7 * float(parts.natural_wet_bulb) + 0.2 * float(parts.globe) + 0.1 * 28.0, abs=1e-9)


def test_sun_heats_and_wind_cools_the_globe():
    shade = wbgt_liljegren_parts(30.0, 0.5, 2.0, 101325.0, 0.0, 60.0)
    sun = wbgt_liljegren_parts(30.0, 0.5, 2.0, 101325.0, 900.0, 60.0)
    windy = wbgt_liljegren_parts(30.0, 0.5, 8.0, 101325.0, 900.0, 60.0)
    assert float(sun.globe) > float(shade.globe) + 10.0
    assert float(windy.globe) < float(sun.globe)
    assert float(sun.wbgt) > float(windy.wbgt) > float(shade.wbgt)


@settings(max_examples=40, deadline=None)
@given(celsius=st.floats(-5.0, 40.0), humidity=st.floats(0.05, 1.0), wind=st.floats(0.0, 12.0),
       solar=st.floats(0.0, 1000.0), elevation=st.floats(5.0, 90.0))
def test_wbgt_rises_with_air_temperature_and_sunshine(celsius, humidity, wind, solar,
                                                      elevation):
    # Physical invariants (common practice): warmer air or more sun never lowers the WBGT.
    base = float(wbgt_liljegren(celsius, humidity, wind, 100000.0, solar, elevation))
    warmer = float(wbgt_liljegren(celsius + 1.0, humidity, wind, 100000.0, solar, elevation))
    sunnier = float(wbgt_liljegren(celsius, humidity, wind, 100000.0, solar + 100.0, elevation))
    assert warmer > base
    assert sunnier >= base - 1e-9


def test_saturated_shade_is_close_to_the_air_temperature():
    # Saturated air, no sun: the wick cannot evaporate, so T_nw and T_g sit at the air
    # temperature, a little below it from the cool sky (common practice).
    parts = wbgt_liljegren_parts(20.0, 1.0, 3.0, 101325.0, 0.0, -30.0)
    assert 19.0 < float(parts.natural_wet_bulb) <= 20.0
    assert 19.0 < float(parts.wbgt) <= 20.0


def bom_wbgt(celsius, humidity):
    """The Bureau of Meteorology formula, written out here: 0.567·T + 0.393·e + 3.94 with
    e = h·6.105·exp(17.27·T/(237.7 + T)) hPa (BoM, thermal comfort observations)."""
    vapour = humidity * 6.105 * math.exp(17.27 * celsius / (237.7 + celsius))
    return 0.567 * celsius + 0.393 * vapour + 3.94


@pytest.mark.parametrize(("celsius", "humidity"), [(20.0, 0.5), (30.0, 0.5), (35.0, 0.3),
                                                   (25.0, 0.9)])
def test_bom_approximation(celsius, humidity):
    assert float(wbgt_bom_approximation(celsius, humidity)) == pytest.approx(
        bom_wbgt(celsius, humidity), abs=1e-9)


def test_bom_approximation_sits_near_liljegren_in_moderate_sun_and_light_wind():
    # What the approximation assumes (BoM): moderately high radiation, light wind. Liljegren
    # with 700 W/m² at 60° and 1.5 m/s agrees within 1.5 °C over a warm range.
    celsius = np.array([22.0, 26.0, 30.0, 34.0])
    liljegren = wbgt_liljegren(celsius, 0.5, 1.5, 101325.0, 700.0, 60.0)
    np.testing.assert_allclose(wbgt_bom_approximation(celsius, 0.5), liljegren, atol=1.5)


def test_methods_are_listed():
    assert list(WBGT_METHODS) == ["liljegren-2008", "bom-approximation"]


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        ((30.0, 0.5, -1.0, 101325.0), "wind speed"),
        ((30.0, 1.5, 2.0, 101325.0), "relative humidity"),
        ((80.0, 0.5, 2.0, 101325.0), "temperature"),
        ((30.0, 0.5, 2.0, 1013.0), "pressure"),
        ((30.0, 0.5, 2.0, 101325.0, 2000.0), "solar irradiance"),
        ((30.0, 0.5, 2.0, 101325.0, 500.0, 120.0), "sun elevation"),
        ((float("nan"), 0.5, 2.0, 101325.0), "temperature"),
    ],
)
def test_bad_weather_raises_one_line(arguments, message):
    with pytest.raises(InputError, match=message) as raised:
        wbgt_liljegren(*arguments)
    assert "\n" not in str(raised.value)
