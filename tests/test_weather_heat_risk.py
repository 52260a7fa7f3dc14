"""Specification of pacing.weather.heat_risk: WBGT bands for distance races (ACSM)."""

import pytest

from pacing.errors import InputError
from pacing.weather.heat_risk import HEAT_RISK_BANDS, heat_risk_band


def fahrenheit_to_celsius(value):
    return (value - 32.0) * 5.0 / 9.0


def test_bands_follow_the_acsm_flags():
    # ACSM position stand (Armstrong et al. 1996): white < 10 °C, green 10-18, amber 18-23,
    # red 23-28, black ≥ 28 °C WBGT.
    assert [(band.key, band.flag, band.low_c) for band in HEAT_RISK_BANDS.values()] == [
        ("cool", "white", float("-inf")), ("low", "green", 10.0), ("moderate", "amber", 18.0),
        ("high", "red", 23.0), ("extreme", "black", 28.0)]


@pytest.mark.parametrize(("fahrenheit", "celsius"), [(50.0, 10.0), (65.0, 18.0), (73.0, 23.0),
                                                     (82.0, 28.0)])
def test_band_edges_are_the_acsm_fahrenheit_flags_rounded(fahrenheit, celsius):
    # The ACSM (1984) flags were set at 65, 73 and 82 °F (and 50 °F for the white flag of
    # 1996); the °C edges of 1996 are those rounded to whole degrees.
    assert fahrenheit_to_celsius(fahrenheit) == pytest.approx(celsius, abs=0.5)


@pytest.mark.parametrize(("wbgt", "key"), [(-5.0, "cool"), (9.99, "cool"), (10.0, "low"),
                                           (17.9, "low"), (18.0, "moderate"), (23.0, "high"),
                                           (27.99, "high"), (28.0, "extreme"), (35.0, "extreme")])
def test_heat_risk_band_of_a_wbgt(wbgt, key):
    assert heat_risk_band(wbgt) == key


def test_only_moderate_and_above_call_for_caution():
    assert [band.key for band in HEAT_RISK_BANDS.values() if band.caution] == [
        "moderate", "high", "extreme"]


def test_a_wbgt_that_is_not_a_number_raises():
    with pytest.raises(InputError, match="WBGT"):
        heat_risk_band(float("nan"))
