"""Specification of pacing.physics.air: saturation vapour pressure and humid-air density
(CIPM-2007, ideal-gas mixture) and their input checks. The standard atmosphere:
tests/test_physics_atmosphere.py."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.errors import InputError
from pacing.physics.air import (
    AIR_DENSITY_MODELS,
    SATURATION_VAPOUR_PRESSURE_MODELS,
    air_density,
    air_density_ideal_gas,
    compressibility_factor,
    enhancement_factor,
    saturation_vapour_pressure,
    saturation_vapour_pressure_cipm_2007,
    saturation_vapour_pressure_magnus,
    vapour_mole_fraction,
)
from pacing.physics.atmosphere import standard_pressure, temperature_at_elevation

CoolProp = pytest.importorskip("CoolProp.CoolProp")


def coolprop_density(temperature, pressure, humidity):
    """Humid-air density from CoolProp's HAPropsSI (Hyland-Wexler / ASHRAE RP-1485 model).

    'Vda' is the mixture volume per kg of dry air and 'W' the humidity ratio, so
    ρ = (1 + W) / Vda; 'Vha' (volume per kg of humid air) gives the same as 1 / Vha.
    """
    kelvin = temperature + 273.15
    ratio = CoolProp.HAPropsSI("W", "T", kelvin, "P", pressure, "R", humidity)
    volume = CoolProp.HAPropsSI("Vda", "T", kelvin, "P", pressure, "R", humidity)
    return (1.0 + ratio) / volume



# --- saturation vapour pressure -------------------------------------------------------------


def test_saturation_pressure_at_20_celsius_from_references():
    # docs/references.md, "Air" [calc]: Hardy 1998 2339.26 Pa, Alduchov & Eskridge 1996
    # 2333.44 Pa at 20 °C.
    assert saturation_vapour_pressure(20.0) == pytest.approx(2339.26, abs=0.01)
    assert saturation_vapour_pressure_magnus(20.0) == pytest.approx(2333.44, abs=0.01)


def test_saturation_pressure_at_the_triple_point():
    # The triple point of water, 0.01 °C, 611.657 Pa (IAPWS; common practice); Hardy 1998
    # reproduces it within 0.01 %.
    assert saturation_vapour_pressure(0.01) == pytest.approx(611.657, rel=1e-4)


@pytest.mark.parametrize("temperature", [0.5, 5.0, 10.0, 20.0, 25.0, 30.0, 40.0, 50.0, 60.0])
def test_saturation_pressure_matches_coolprop_iapws95(temperature):
    # CoolProp PropsSI('P','T',T,'Q',0,'Water'): IAPWS-95 saturation pressure.
    reference = CoolProp.PropsSI("P", "T", temperature + 273.15, "Q", 0, "Water")
    assert saturation_vapour_pressure(temperature) == pytest.approx(reference, rel=1e-4)
    assert saturation_vapour_pressure_cipm_2007(temperature) == pytest.approx(reference, rel=1e-4)
    assert saturation_vapour_pressure_magnus(temperature) == pytest.approx(reference, rel=5e-3)


def test_saturation_models_registry_lists_callables_that_agree_below_freezing():
    # All three are fits over supercooled water; they agree within 0.5 % at -30 °C
    # (Hardy 1998 vs Alduchov & Eskridge 1996, who quote errors under 0.4 % down to -40 °C:
    # from memory).
    values = [float(model(-30.0)) for model in SATURATION_VAPOUR_PRESSURE_MODELS.values()]
    assert max(values) / min(values) - 1 < 5e-3
    assert "hardy-1998" in SATURATION_VAPOUR_PRESSURE_MODELS


# --- humid air --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("temperature", "pressure", "humidity", "cipm", "coolprop"),
    [
        # docs/references.md, "Air" [calc]: CIPM-2007 / CoolProp HAPropsSI.
        (20.0, 101325.0, 0.5, 1.19931, 1.19936),
        (20.0, 101325.0, 0.0, 1.20456, 1.20460),
        (30.0, 101325.0, 0.8, 1.15001, 1.15006),
    ],
)
def test_cipm_2007_check_values(temperature, pressure, humidity, cipm, coolprop):
    rho = air_density(temperature, pressure, humidity)
    assert rho == pytest.approx(cipm, abs=5e-6)
    assert coolprop_density(temperature, pressure, humidity) == pytest.approx(coolprop, abs=5e-6)


def test_dry_air_at_20_celsius_and_one_atmosphere_from_cipm_paper():
    # Picard et al. 2008 (Metrologia 45:149): dry air, 20 °C, 101.325 kPa, x_CO2 0.0004 is
    # about 1.2046 kg/m³ (from memory, 4 decimals); CoolProp agrees (test above).
    assert air_density(20.0, 101325.0, 0.0) == pytest.approx(1.2046, abs=1e-4)


@pytest.mark.parametrize(
    ("temperature", "pressure", "humidity"),
    [
        (-40.0, 101325.0, 0.5),
        (-20.0, 70000.0, 0.9),
        (-5.0, 85000.0, 0.3),
        (0.0, 80000.0, 0.5),
        (10.0, 95000.0, 1.0),
        (15.0, 60000.0, 0.2),
        (25.0, 101325.0, 0.65),
        (35.0, 60000.0, 1.0),
        (40.0, 90000.0, 0.9),
        (45.0, 100000.0, 0.1),
    ],
)
def test_cipm_2007_agrees_with_coolprop(temperature, pressure, humidity):
    # CoolProp HAPropsSI humid-air model (ASHRAE RP-1485): within 0.02 % over race weather.
    reference = coolprop_density(temperature, pressure, humidity)
    assert air_density(temperature, pressure, humidity) == pytest.approx(reference, rel=2e-4)
    # and 1/Vha is the same density (CoolProp: Vha is volume per kg of humid air)
    kelvin = temperature + 273.15
    humid_volume = CoolProp.HAPropsSI("Vha", "T", kelvin, "P", pressure, "R", humidity)
    assert 1.0 / humid_volume == pytest.approx(reference, rel=1e-9)


def test_ideal_gas_reads_a_little_below_cipm():
    # docs/references.md, "Air" [calc]: an ideal-gas mixture with a good saturation formula
    # reads ~0.04 % low.
    ratio = air_density_ideal_gas(20.0, 101325.0, 0.5) / air_density(20.0, 101325.0, 0.5)
    assert 1 - ratio == pytest.approx(4e-4, abs=1e-4)


def test_enhancement_factor_and_compressibility_are_close_to_one():
    # CIPM-2007: f ≈ 1.004 and Z ≈ 0.9996 at 20 °C, 101325 Pa (Picard et al. 2008, from memory).
    assert enhancement_factor(20.0, 101325.0) == pytest.approx(1.0040, abs=1e-4)
    fraction = vapour_mole_fraction(20.0, 101325.0, 0.5)
    assert compressibility_factor(20.0, 101325.0, fraction) == pytest.approx(0.9996, abs=1e-4)
    # x_v = h·f·e_s/p: half of 2339 Pa in one atmosphere
    assert fraction == pytest.approx(0.5 * 1.004 * 2339.2 / 101325.0, rel=1e-3)


def test_density_models_registry():
    assert list(AIR_DENSITY_MODELS) == ["cipm-2007", "ideal-gas"]
    for model in AIR_DENSITY_MODELS.values():
        assert model(20.0, 101325.0, 0.5) == pytest.approx(1.1995, rel=1e-3)


def test_density_is_vectorized_with_broadcasting():
    temperature = np.array([0.0, 10.0, 20.0, 30.0])
    rho = air_density(temperature, 101325.0, 0.5)
    assert rho.shape == (4,)
    assert np.all(np.diff(rho) < 0)
    grid = air_density(temperature[:, None], np.array([80000.0, 101325.0])[None, :], 0.5)
    assert grid.shape == (4, 2)
    for i, t in enumerate(temperature):
        assert grid[i, 1] == pytest.approx(float(air_density(t, 101325.0, 0.5)), rel=1e-14)


def test_co2_raises_density_slightly():
    # CIPM-2007: M_a grows by 12.011e-3 kg/mol per unit CO2 mole fraction.
    more = air_density(20.0, 101325.0, 0.5, co2_mole_fraction=0.0005)
    assert more / air_density(20.0, 101325.0, 0.5) - 1 == pytest.approx(
        12.011e-3 * 1e-4 / 28.96546e-3, rel=0.02
    )


# --- invalid input ----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("temperature", "pressure", "humidity"),
    [
        (20.0, 101325.0, 1.5),
        (20.0, 101325.0, 50.0),
        (20.0, 101325.0, -0.1),
        (20.0, 0.0, 0.5),
        (20.0, -5.0, 0.5),
        (-61.0, 101325.0, 0.5),
        (61.0, 101325.0, 0.5),
        (float("nan"), 101325.0, 0.5),
        (20.0, float("inf"), 0.5),
        ("warm", 101325.0, 0.5),
        (np.array([20.0, 70.0]), 101325.0, 0.5),
        (55.0, 5000.0, 1.0),  # vapour pressure above the total pressure
    ],
)
@pytest.mark.parametrize("model", list(AIR_DENSITY_MODELS.values()))
def test_invalid_air_raises_a_one_line_input_error(model, temperature, pressure, humidity):
    with pytest.raises(InputError) as error:
        model(temperature, pressure, humidity)
    assert "\n" not in str(error.value)


def test_saturation_pressure_rejects_out_of_range_temperature():
    with pytest.raises(InputError):
        saturation_vapour_pressure(80.0)


# --- properties -------------------------------------------------------------------------------

temperatures = st.floats(-60.0, 60.0)
pressures = st.floats(30000.0, 110000.0)
humidities = st.floats(0.0, 1.0)


@settings(max_examples=200, deadline=None)
@given(temperatures, pressures, humidities, st.sampled_from(sorted(AIR_DENSITY_MODELS)))
def test_density_is_positive_and_finite_over_valid_ranges(temperature, pressure, humidity, name):
    # Saturated air at 60 °C (e_s ≈ 20 kPa) still lies below 30 kPa total pressure.
    rho = AIR_DENSITY_MODELS[name](temperature, pressure, humidity)
    assert math.isfinite(rho) and rho > 0


@settings(max_examples=100, deadline=None)
@given(
    st.floats(-40.0, 40.0),
    humidities,
    st.floats(-400.0, 4000.0),
    st.floats(1.0, 1000.0),
    st.sampled_from(sorted(AIR_DENSITY_MODELS)),
)
def test_density_decreases_with_elevation(start_temperature, humidity, low, rise, name):
    # Common practice: air thins with height (pressure falls faster than temperature).
    elevation = np.array([low, low + rise])
    temperature = temperature_at_elevation(elevation, start_temperature, low)
    rho = AIR_DENSITY_MODELS[name](temperature, standard_pressure(elevation), humidity)
    assert rho[1] < rho[0]


@settings(max_examples=100, deadline=None)
@given(st.floats(-40.0, 60.0), pressures, st.floats(0.0, 0.99), st.floats(0.01, 1.0),
       st.sampled_from(sorted(AIR_DENSITY_MODELS)))
def test_density_decreases_with_humidity(temperature, pressure, humidity, share, name):
    # Common practice: water vapour (18 g/mol) is lighter than dry air (29 g/mol).
    wetter = humidity + share * (1.0 - humidity)
    model = AIR_DENSITY_MODELS[name]
    assert model(temperature, pressure, wetter) < model(temperature, pressure, humidity)
