"""Specification of pacing.physics.atmosphere: the ICAO standard atmosphere (geopotential
height, pressure and temperature with elevation) and its range; the pressure conventions
(hypsometric equation, sea-level pressure kinds "mslp" and "qnh", station pressure). Humid-air
density: tests/test_physics_air.py."""

import math

import numpy as np
import pytest
from scipy.integrate import quad

from pacing.constants import EARTH_RADIUS_GEOPOTENTIAL
from pacing.errors import InputError
from pacing.physics.air import air_density, air_density_ideal_gas
from pacing.physics.atmosphere import (
    DEFAULT_SEA_LEVEL_PRESSURE_KIND,
    PRESSURE_EXPONENT,
    SEA_LEVEL_PRESSURE_KINDS,
    geopotential_height,
    hypsometric_pressure,
    pressure_from_sea_level,
    pressure_from_station,
    standard_pressure,
    temperature_at_elevation,
    virtual_temperature,
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



# --- pressure conventions: hypsometric equation ----------------------------------------------

G0 = 9.80665  # standard gravity [m/s²] (CGPM 1901)
R_DRY = 287.05287  # ICAO Doc 7488 dry-air gas constant [J/(kg·K)]
EPSILON = 18.01528 / 28.96546  # molar masses of water and dry air (CIPM-2007, Picard 2008)


def saturation_pressure_iapws(celsius):
    """Saturation vapour pressure over water [Pa] from CoolProp (IAPWS-95)."""
    coolprop = pytest.importorskip("CoolProp.CoolProp")
    return coolprop.PropsSI("P", "T", celsius + 273.15, "Q", 0, "Water")


def integrated_pressure(pressure, z_from, z_to, celsius, humidity, lapse_rate=0.0065):
    """The hypsometric equation integrated by scipy quad, written independently of the code.

    d ln p / dz = −g(z) / (R_d · T_v(z)), geometric height z, gravity falling with height
    g(z) = g0·(r0/(r0 + z))² (ICAO Doc 7488), temperature falling by `lapse_rate` per metre of
    geopotential height H(z) = r0·z/(r0 + z), and a constant vapour share e/p (well mixed):
    T_v = T / (1 − (e/p)·(1 − ε)) (Wallace & Hobbs 2006, eq. 3.16).
    """
    r0 = EARTH_RADIUS_GEOPOTENTIAL
    share = humidity * saturation_pressure_iapws(celsius) / pressure

    def height(z):
        return r0 * z / (r0 + z)

    def integrand(z):
        kelvin = celsius + 273.15 - lapse_rate * (height(z) - height(z_from))
        virtual = kelvin / (1.0 - share * (1.0 - EPSILON))
        return -G0 * (r0 / (r0 + z)) ** 2 / (R_DRY * virtual)

    log_ratio, _ = quad(integrand, z_from, z_to, epsabs=1e-13, epsrel=1e-12)
    return pressure * math.exp(log_ratio)


@pytest.mark.parametrize(
    ("pressure", "z_from", "z_to", "celsius", "humidity"),
    [
        (101325.0, 0.0, 2000.0, 15.0, 0.0),
        (101325.0, 0.0, 3000.0, 35.0, 0.6),
        (85000.0, 1500.0, 200.0, 24.0, 0.8),
        (92000.0, 800.0, 2600.0, -5.0, 0.5),
        (78000.0, 2200.0, 2250.0, 10.0, 1.0),
    ],
)
def test_hypsometric_pressure_matches_the_integrated_equation(pressure, z_from, z_to, celsius,
                                                              humidity):
    # Independent check: scipy quad of d ln p/dz = −g/(R_d·T_v) (Wallace & Hobbs 2006, 3.2.1);
    # e_s from CoolProp (IAPWS-95) where the code uses Hardy (1998): they differ by < 1e-4.
    expected = integrated_pressure(pressure, z_from, z_to, celsius, humidity)
    got = hypsometric_pressure(pressure, z_from, z_to, celsius, humidity)
    assert got == pytest.approx(expected, rel=2e-7)


def test_isothermal_layer_matches_the_integrated_equation():
    # Lapse rate 0: the exponential form (Wallace & Hobbs 2006, eq. 3.29 with constant T_v).
    expected = integrated_pressure(90000.0, 1000.0, 2500.0, 5.0, 0.3, lapse_rate=0.0)
    got = hypsometric_pressure(90000.0, 1000.0, 2500.0, 5.0, 0.3, lapse_rate=0.0)
    assert got == pytest.approx(expected, rel=2e-7)


# ICAO Doc 7488 / ISO 2533 table by geopotential height (docs/references.md, "Air"):
# geometric elevation [m], temperature [°C], pressure [Pa], 1 printed decimal.
ICAO_PRESSURE_TABLE = [
    (500.039, 11.75, 95460.8),
    (1000.157, 8.50, 89874.6),
    (1500.354, 5.25, 84556.0),
    (2000.629, 2.00, 79495.2),
    (3001.416, -4.50, 70108.5),
]


@pytest.mark.parametrize(("elevation", "celsius", "pressure"), ICAO_PRESSURE_TABLE)
def test_a_standard_day_reduces_to_the_icao_table(elevation, celsius, pressure):
    # On the ICAO standard day both sea-level kinds give the table (ICAO Doc 7488) and the
    # station pressure at 1000 m carries to every other row.
    assert pressure_from_sea_level(elevation, 101325.0, celsius, elevation) == pytest.approx(
        pressure, abs=0.06)
    assert pressure_from_sea_level(elevation, 101325.0, celsius, elevation,
                                   kind="qnh") == pytest.approx(pressure, abs=0.06)
    # (the table's 89 874.6 Pa is rounded, so the station path holds to 1e-6 relative)
    assert pressure_from_station(elevation, 89874.6, 1000.157, 8.50) == pytest.approx(
        pressure, rel=1e-6)


def test_qnh_is_the_standard_atmosphere_scaling_used_so_far():
    # The one-weather path (pacing.weather.conditions) uses standard_pressure: "qnh" is it,
    # bit for bit, whatever the temperature.
    elevation = np.array([0.0, 350.0, 1800.0, 2900.0])
    np.testing.assert_array_equal(
        pressure_from_sea_level(elevation, 99800.0, 31.0, 350.0, 0.7, kind="qnh"),
        standard_pressure(elevation, 99800.0))


@pytest.mark.parametrize("celsius", [15.0, 20.0, 23.0])
def test_sea_level_pressure_as_published_differs_by_1_to_2_percent_at_2000_m(celsius):
    # Issue 16: reducing a temperature-reduced sea-level pressure (MSLP, WMO-No. 8) by the
    # standard-atmosphere ratio puts the air density at a 2000 m start 1-2 % low on a warm
    # day (15-23 °C there: a column 13-21 K warmer than the standard one; 25 °C makes 2.03 %).
    # Density by CIPM-2007.
    mslp = pressure_from_sea_level(2000.0, 101325.0, celsius, 2000.0, 0.5)
    qnh = pressure_from_sea_level(2000.0, 101325.0, celsius, 2000.0, 0.5, kind="qnh")
    ratio = air_density(celsius, mslp, 0.5) / air_density(celsius, qnh, 0.5)
    assert 1.01 < ratio < 1.02


def wmo_reduction_to_sea_level(station_pressure, elevation, celsius, humidity):
    """Station pressure reduced to mean sea level, WMO-No. 8 (2018) vol. I ch. 3 practice as
    the German weather service writes it (DWD VuB 2): p0 = p_s·exp(g/R·H/(T + e·C_h + a·H/2)),
    g = 9.80665 m/s², R = 287.05 J/(kg·K), a = 0.0065 K/m, C_h = 0.12 K/hPa, e the vapour
    pressure at the station [hPa] (here from CoolProp, IAPWS-95), H the barometer's height."""
    vapour_hpa = humidity * saturation_pressure_iapws(celsius) / 100.0
    column = celsius + 273.15 + vapour_hpa * 0.12 + 0.0065 * elevation / 2.0
    return station_pressure * math.exp(9.80665 / 287.05 * elevation / column)


@pytest.mark.parametrize(
    ("elevation", "celsius", "station_pressure"),
    [(500.0, 20.0, 95500.0), (1500.0, 25.0, 85000.0), (2000.0, 10.0, 79000.0),
     (2500.0, 30.0, 75000.0)],
)
def test_mslp_undoes_the_weather_services_reduction(elevation, celsius, station_pressure):
    # A station pressure reduced by the WMO/DWD formula and brought back up by "mslp": dry air
    # within 5 Pa (the formula uses geometric height, we geopotential); humid air within
    # 0.1 % (its C_h·e is a column-average humidity term, ours the station's virtual
    # temperature).
    dry = wmo_reduction_to_sea_level(station_pressure, elevation, celsius, 0.0)
    assert pressure_from_sea_level(elevation, dry, celsius, elevation) == pytest.approx(
        station_pressure, abs=5.0)
    humid = wmo_reduction_to_sea_level(station_pressure, elevation, celsius, 0.6)
    assert pressure_from_sea_level(elevation, humid, celsius, elevation, 0.6) == pytest.approx(
        station_pressure, rel=1e-3)


def test_mslp_and_station_pressure_use_one_column():
    # A station pressure reduced to sea level by the hypsometric equation and given back as
    # MSLP returns the same pressures all along the course.
    course = np.linspace(300.0, 2400.0, 8)
    sea_level = hypsometric_pressure(88000.0, 1100.0, 0.0, 22.0, 0.4)
    np.testing.assert_allclose(
        pressure_from_sea_level(course, sea_level, 22.0, 1100.0, 0.4),
        pressure_from_station(course, 88000.0, 1100.0, 22.0, 0.4), rtol=1e-10)


def test_virtual_temperature_gives_the_ideal_gas_density_of_humid_air():
    # Dalton's law written here (common practice): ρ = (p − e)/(R_d·T) + e/(R_v·T) equals
    # p/(R_d·T_v); e_s from CoolProp (IAPWS-95) against the code's Hardy (1998).
    celsius, pressure, humidity = 30.0, 95000.0, 0.7
    vapour = humidity * saturation_pressure_iapws(celsius)
    kelvin = celsius + 273.15
    density = (pressure - vapour) / (R_DRY * kelvin) + vapour / (8.314462618 / 0.01801528
                                                                 * kelvin)
    virtual = virtual_temperature(celsius, pressure, humidity) + 273.15
    assert pressure / (R_DRY * virtual) == pytest.approx(density, rel=2e-5)
    assert virtual_temperature(celsius, pressure, 0.0) == pytest.approx(celsius, abs=1e-12)


def test_pressure_functions_broadcast_over_course_arrays():
    course = np.linspace(0.0, 3000.0, 31)
    pressure = pressure_from_sea_level(course, 101000.0, 28.0, 450.0, 0.6)
    assert pressure.shape == course.shape
    assert np.all(np.diff(pressure) < 0)


def test_sea_level_pressure_kinds_are_listed_with_mslp_first():
    assert list(SEA_LEVEL_PRESSURE_KINDS) == ["mslp", "qnh"]
    assert DEFAULT_SEA_LEVEL_PRESSURE_KIND == "mslp"
    assert SEA_LEVEL_PRESSURE_KINDS.canonical("qff") == "mslp"


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: pressure_from_sea_level(500.0, 101325.0, 20.0, 0.0, kind="metar"),
         "sea-level pressure kind"),
        (lambda: pressure_from_sea_level(500.0, 0.0, 20.0, 0.0), "sea-level pressure"),
        (lambda: pressure_from_station(500.0, 90000.0, 0.0, 95.0), "temperature"),
        (lambda: pressure_from_station(500.0, 90000.0, 0.0, 20.0, 1.5), "relative humidity"),
        (lambda: hypsometric_pressure(90000.0, 0.0, 500.0, 20.0, lapse_rate=0.02),
         "lapse rate"),
        (lambda: hypsometric_pressure(90000.0, 0.0, 15000.0, 20.0), "elevation"),
        (lambda: hypsometric_pressure(float("nan"), 0.0, 500.0, 20.0), "pressure"),
    ],
)
def test_bad_pressure_inputs_raise_one_line(call, message):
    with pytest.raises(InputError, match=message) as raised:
        call()
    assert "\n" not in str(raised.value)
