"""Specification of pacing.weather.wbgt_properties: the properties of air and water of the WBGT
model of Liljegren et al. (2008) agree with CoolProp (a reference library: IAPWS-95 for water,
Lemmon & Jacobsen 2004 for the viscosity of air) within the accuracy of their correlations."""

import numpy as np
import pytest

from pacing.weather.wbgt_properties import (
    AIR_GAS_CONSTANT,
    PRANDTL,
    air_viscosity,
    saturation_vapour_pressure_buck,
)

CoolProp = pytest.importorskip("CoolProp.CoolProp")


@pytest.mark.parametrize("kelvin", [274.15, 293.15, 313.15])
def test_buck_saturation_pressure_matches_iapws_95(kelvin):
    # Buck (1981) quotes ±0.05 % over water from -40 to 50 °C; at zero pressure no enhancement
    buck = float(saturation_vapour_pressure_buck(np.array(kelvin), np.array(0.0)))
    assert buck == pytest.approx(CoolProp.PropsSI("P", "T", kelvin, "Q", 0, "Water"), rel=1e-3)


@pytest.mark.parametrize("kelvin", [274.15, 293.15, 313.15])
def test_viscosity_of_air_matches_coolprop(kelvin):
    # the Lennard-Jones estimate of the model stays within 1 % at ambient temperatures
    reference = CoolProp.PropsSI("V", "T", kelvin, "P", 101325.0, "Air")
    assert float(air_viscosity(np.array(kelvin))) == pytest.approx(reference, rel=0.01)


def test_the_gas_constant_and_prandtl_number_of_air():
    # R = 8314.34 / 28.97 J/(kg·K) and Pr = c_p / (c_p + 1.25·R), by hand (common practice)
    assert AIR_GAS_CONSTANT == pytest.approx(287.0, abs=0.01)
    assert PRANDTL == pytest.approx(1003.5 / (1003.5 + 1.25 * 287.0), rel=1e-3)
