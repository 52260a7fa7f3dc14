"""Specification of pacing.physics.atmosphere: the ICAO standard atmosphere (geopotential
height, pressure and temperature with elevation) and its range. Humid-air density:
tests/test_physics_air.py."""

import numpy as np
import pytest

from pacing.constants import EARTH_RADIUS_GEOPOTENTIAL
from pacing.errors import InputError
from pacing.physics.air import air_density_ideal_gas
from pacing.physics.atmosphere import (
    PRESSURE_EXPONENT,
    geopotential_height,
    standard_pressure,
    temperature_at_elevation,
)

fluids_atmosphere = pytest.importorskip("fluids.atmosphere")


def geometric_from_geopotential(height):
    """z = r0·H / (r0 − H) (ICAO Doc 7488), to enter geopotential-height tables."""
    return EARTH_RADIUS_GEOPOTENTIAL * height / (EARTH_RADIUS_GEOPOTENTIAL - height)


# --- standard atmosphere ------------------------------------------------------------------


# ICAO standard atmosphere (ICAO Doc 7488; ISO 2533:1975) density by geopotential altitude,
# docs/references.md, "Air" [calc] from the troposphere equations (fluids.ATMOSPHERE_1976
# agrees to 1e-6): ρ [kg/m³].
ICAO_DENSITY_TABLE = [
    (0.0, 1.22500),
    (500.0, 1.16727),
    (1000.0, 1.11164),
    (1500.0, 1.05807),
    (2000.0, 1.00649),
    (3000.0, 0.90912),
]


@pytest.mark.parametrize(("height", "density"), ICAO_DENSITY_TABLE)
def test_standard_atmosphere_density_matches_icao_table(height, density):
    # ICAO Doc 7488 / ISO 2533 table (geopotential altitude), 5 printed decimals.
    elevation = geometric_from_geopotential(height)
    temperature = temperature_at_elevation(elevation, 15.0, 0.0)
    rho = air_density_ideal_gas(temperature, standard_pressure(elevation), 0.0)
    assert rho == pytest.approx(density, abs=5e-6)


def test_standard_atmosphere_whole_table_as_one_array():
    heights, densities = np.array(ICAO_DENSITY_TABLE).T
    elevation = geometric_from_geopotential(heights)
    rho = air_density_ideal_gas(
        temperature_at_elevation(elevation, 15.0, 0.0), standard_pressure(elevation), 0.0
    )
    np.testing.assert_allclose(rho, densities, atol=5e-6)


@pytest.mark.parametrize("elevation", [0.0, 250.0, 800.0, 1600.0, 2500.0, 4000.0, 8000.0])
def test_standard_pressure_and_temperature_match_fluids_atmosphere_1976(elevation):
    # fluids.atmosphere.ATMOSPHERE_1976 (US Standard Atmosphere 1976, identical to ICAO in
    # the troposphere), geometric altitude.
    reference = fluids_atmosphere.ATMOSPHERE_1976(elevation)
    assert standard_pressure(elevation) == pytest.approx(reference.P, rel=1e-6)
    assert temperature_at_elevation(elevation, 15.0, 0.0) + 273.15 == pytest.approx(
        reference.T, abs=1e-6
    )
    rho = air_density_ideal_gas(temperature_at_elevation(elevation, 15.0, 0.0),
                                standard_pressure(elevation), 0.0)
    assert rho == pytest.approx(reference.rho, rel=1e-5)


def test_pressure_exponent_is_the_icao_value():
    # ICAO Doc 7488: p = p0·(T/T0)^5.25588 in the troposphere (docs/references.md, "Air").
    assert PRESSURE_EXPONENT == pytest.approx(5.25588, abs=1e-5)


def test_geopotential_height_is_slightly_lower_than_geometric():
    # H = r0·z/(r0 + z), r0 = 6 356 766 m (ICAO Doc 7488): 3000 m geometric → 2998.585 m.
    assert geopotential_height(3000.0) == pytest.approx(3000.0 * 6356766 / 6359766, rel=1e-12)
    assert geopotential_height(0.0) == 0.0


def test_sea_level_pressure_scales_the_standard_profile():
    elevation = np.array([0.0, 1000.0, 2500.0])
    ratio = standard_pressure(elevation, 98000.0) / standard_pressure(elevation)
    np.testing.assert_allclose(ratio, 98000.0 / 101325.0, rtol=1e-12)
    assert standard_pressure(0.0, 102000.0) == pytest.approx(102000.0)


def test_standard_pressure_is_vectorized_and_decreasing():
    elevation = np.linspace(-400.0, 4500.0, 50)
    pressure = standard_pressure(elevation)
    assert pressure.shape == elevation.shape
    assert np.all(np.diff(pressure) < 0)


def test_lapse_rate_is_6_5_kelvin_per_kilometre():
    # ICAO troposphere lapse rate 6.5 K/km (geopotential).
    top = temperature_at_elevation(1000.0, 20.0, 0.0)
    assert top == pytest.approx(20.0 - 6.5 * geopotential_height(1000.0) / 1000.0, abs=1e-12)
    assert 20.0 - top == pytest.approx(6.5, abs=0.01)


def test_temperature_given_at_the_start_holds_there():
    assert temperature_at_elevation(850.0, 12.0, 850.0) == pytest.approx(12.0, abs=1e-12)
    # Going down from a start at 850 m warms the air.
    assert temperature_at_elevation(350.0, 12.0, 850.0) == pytest.approx(15.25, abs=0.01)


# --- invalid input ----------------------------------------------------------------------------


@pytest.mark.parametrize("elevation", [12000.0, -3000.0, float("nan")])
def test_elevation_outside_the_troposphere_raises(elevation):
    with pytest.raises(InputError):
        standard_pressure(elevation)


def test_bad_sea_level_pressure_raises():
    with pytest.raises(InputError):
        standard_pressure(100.0, 0.0)

