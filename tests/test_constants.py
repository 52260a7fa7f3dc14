"""Physical constants and standard values (pacing.constants) against their definitions and
general-purpose reference libraries."""

from __future__ import annotations

import fluids.atmosphere
import pytest
import scipy.constants
from CoolProp.CoolProp import PropsSI

from pacing import constants


def test_standard_gravity_sea_level_pressure_and_zero_celsius_are_the_defined_values():
    # 3rd CGPM (1901) standard gravity; the standard atmosphere (1 atm); 0 °C in kelvin:
    # defined exactly, as scipy.constants carries them
    assert constants.STANDARD_GRAVITY == scipy.constants.g
    assert constants.STANDARD_SEA_LEVEL_PRESSURE == scipy.constants.atm
    assert constants.ZERO_CELSIUS == scipy.constants.zero_Celsius


def test_the_standard_atmosphere_values_are_those_of_the_1976_atmosphere_in_fluids():
    # US Standard Atmosphere 1976 = ICAO Doc 7488 in the troposphere (fluids.atmosphere)
    assert constants.EARTH_RADIUS_GEOPOTENTIAL == fluids.atmosphere.r0
    assert constants.STANDARD_SEA_LEVEL_TEMPERATURE == pytest.approx(
        fluids.atmosphere.ATMOSPHERE_1976(0.0).T, abs=1e-9)
    # ICAO Doc 7488: R_d = R*/M0 = 8314.32 J/(kmol·K) / 28.96442 kg/kmol = 287.05287 J/(kg·K)
    # (from memory); fluids takes M0 = 28.9644 with today's CODATA R, 287.058: within 2e-5
    assert constants.SPECIFIC_GAS_CONSTANT_DRY_AIR == pytest.approx(8314.32 / 28.96442,
                                                                    abs=1e-5)
    assert constants.SPECIFIC_GAS_CONSTANT_DRY_AIR == pytest.approx(
        1000.0 * fluids.atmosphere.R / fluids.atmosphere.M0, rel=2e-5)


def test_the_lapse_rate_is_that_of_the_standard_troposphere():
    # temperature 1 km up in the 1976 atmosphere (geopotential height 1 km)
    geometric = fluids.atmosphere.r0 * 1000.0 / (fluids.atmosphere.r0 - 1000.0)
    drop = constants.STANDARD_SEA_LEVEL_TEMPERATURE - fluids.atmosphere.ATMOSPHERE_1976(
        geometric).T
    assert constants.STANDARD_LAPSE_RATE * 1000.0 == pytest.approx(drop, rel=1e-9)


def test_the_gas_constant_of_water_vapour_is_r_over_the_molar_mass_of_water():
    # CODATA 2018 R (scipy.constants) over the molar mass of water in CoolProp (IAPWS-95)
    assert constants.SPECIFIC_GAS_CONSTANT_WATER_VAPOUR == pytest.approx(
        scipy.constants.R / PropsSI("M", "Water"), rel=1e-4)
