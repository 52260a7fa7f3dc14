"""Race-day conditions and the air along a course."""

import dataclasses
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.air import air_density, air_density_ideal_gas
from pacing.physics.atmosphere import standard_pressure
from pacing.weather.conditions import (
    Conditions,
    CourseAir,
    air_along_course,
    piece_elevation,
    still_air,
)

CoolProp = pytest.importorskip("CoolProp.CoolProp")
atmosphere = pytest.importorskip("fluids.atmosphere")


def square_loop(elevation_step=0.0):
    """Four 1 km pieces heading north, east, south, west."""
    distance = np.arange(5) * 1000.0
    elevation = np.arange(5) * elevation_step
    return synthetic_course(distance, elevation, heading=[0.0, 90.0, 180.0, 270.0])


# --- Conditions -------------------------------------------------------------------------------


def test_defaults():
    conditions = Conditions()
    assert conditions.temperature == 20.0
    assert conditions.relative_humidity == 0.5
    assert conditions.sea_level_pressure == 101325.0
    assert conditions.wind_speed == 0.0
    assert conditions.wind_height == 10.0
    assert conditions.roughness_length == 0.03
    assert conditions.rider_height == 1.0


def test_conditions_are_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        Conditions().temperature = 30.0


def test_wind_at_rider_over_open_terrain():
    # Log law, open terrain (docs/references.md, "Wind" [calc]): 0.604 of the 10 m wind at 1 m.
    factor = math.log(1.0 / 0.03) / math.log(10.0 / 0.03)
    assert Conditions(wind_speed=8.0).wind_at_rider == pytest.approx(8.0 * factor)


@pytest.mark.parametrize(
    "changes",
    [
        {"temperature": 75.0},
        {"temperature": -70.0},
        {"relative_humidity": 50.0},
        {"relative_humidity": -0.1},
        {"sea_level_pressure": 1013.25},
        {"sea_level_pressure": 0.0},
        {"wind_speed": -3.0},
        {"wind_speed": 100.0},
        {"wind_height": 0.0},
        {"roughness_length": 0.0},
        {"rider_height": -1.0},
        {"temperature": float("nan")},
        {"wind_from": float("inf")},
        {"temperature": "hot"},
    ],
)
def test_invalid_conditions_raise_a_one_line_input_error(changes):
    with pytest.raises(InputError) as error:
        Conditions(**changes)
    assert "\n" not in str(error.value)


# --- air along a course -----------------------------------------------------------------------


def test_flat_course_at_sea_level_has_the_cipm_density_everywhere():
    # CIPM-2007 check value, 20 °C, 101325 Pa, 50 % (docs/references.md, "Air" [calc]):
    # 1.19931 kg/m³.
    air = air_along_course(square_loop(), Conditions())
    assert air.density.shape == (4,)
    np.testing.assert_allclose(air.density, 1.19931, atol=5e-6)
    np.testing.assert_array_equal(air.headwind, 0.0)
    np.testing.assert_array_equal(air.crosswind, 0.0)


def test_density_follows_each_piece_mid_elevation():
    course = synthetic_course(
        np.array([0.0, 1000.0, 2000.0, 3000.0]), np.array([400.0, 600.0, 1400.0, 900.0])
    )
    conditions = Conditions(temperature=18.0, relative_humidity=0.3, sea_level_pressure=99500.0)
    air = air_along_course(course, conditions)
    middle = np.array([500.0, 1000.0, 1150.0])
    np.testing.assert_allclose(piece_elevation(course), middle)
    # temperature given at the start (400 m), 6.5 K per km of geopotential height above it
    temperature = 18.0 - 0.0065 * (middle * 6356766 / (6356766 + middle)
                                   - 400.0 * 6356766 / (6356766 + 400.0))
    expected = air_density(temperature, standard_pressure(middle, 99500.0), 0.3)
    np.testing.assert_allclose(air.density, expected, rtol=1e-12)


def test_course_air_matches_coolprop_on_a_mountain_piece():
    # CoolProp HAPropsSI humid-air density at the ICAO pressure of 2000 m (fluids
    # ATMOSPHERE_1976) and 10 °C at that height (start at 2000 m).
    course = synthetic_course(np.array([0.0, 100.0]), np.array([2000.0, 2000.0]))
    air = air_along_course(course, Conditions(temperature=10.0, relative_humidity=0.7))
    pressure = atmosphere.ATMOSPHERE_1976(2000.0).P
    ratio = CoolProp.HAPropsSI("W", "T", 283.15, "P", pressure, "R", 0.7)
    volume = CoolProp.HAPropsSI("Vda", "T", 283.15, "P", pressure, "R", 0.7)
    assert air.density[0] == pytest.approx((1 + ratio) / volume, rel=2e-4)


def test_ideal_gas_model_can_be_chosen():
    course = square_loop()
    air = air_along_course(course, Conditions(), density_model="ideal-gas")
    np.testing.assert_allclose(air.density, air_density_ideal_gas(20.0, 101325.0, 0.5))
    with pytest.raises(InputError, match="unknown air density model 'guess'; choose one of "
                                         "cipm-2007, ideal-gas"):
        air_along_course(course, Conditions(), density_model="guess")


@pytest.mark.parametrize(("old", "new"), [("cipm_2007", "cipm-2007"), ("ideal_gas", "ideal-gas")])
def test_the_underscore_model_keys_of_earlier_versions_give_the_same_air(old, new):
    # stored plans and user files may hold the old spelling
    course = square_loop()
    np.testing.assert_array_equal(air_along_course(course, Conditions(), density_model=old).density,
                                  air_along_course(course, Conditions(), density_model=new).density)


def test_the_default_density_model_is_cipm_2007():
    course = square_loop()
    np.testing.assert_array_equal(air_along_course(course, Conditions()).density,
                                  air_along_course(course, Conditions(), "cipm-2007").density)


def test_wind_from_the_north_on_a_square_loop():
    # Meteorological convention: a north wind meets the rider heading north head-on.
    air = air_along_course(square_loop(), Conditions(wind_speed=10.0, wind_from=0.0))
    at_rider = 10.0 * math.log(1.0 / 0.03) / math.log(10.0 / 0.03)  # log law, open terrain
    np.testing.assert_allclose(air.headwind, [at_rider, 0.0, -at_rider, 0.0], atol=1e-12)
    np.testing.assert_allclose(air.crosswind, [0.0, -at_rider, 0.0, at_rider], atol=1e-12)


def test_rougher_terrain_shelters_the_rider():
    open_air = air_along_course(square_loop(), Conditions(wind_speed=10.0))
    forest = air_along_course(square_loop(), Conditions(wind_speed=10.0, roughness_length=1.0))
    assert forest.headwind[0] < open_air.headwind[0]


def test_course_above_the_model_range_raises():
    course = synthetic_course(np.array([0.0, 1000.0]), np.array([11500.0, 11600.0]))
    with pytest.raises(InputError):
        air_along_course(course, Conditions())


def test_still_air():
    course = square_loop(elevation_step=100.0)
    fixed = still_air(course, 1.2)
    np.testing.assert_array_equal(fixed.density, 1.2)
    assert fixed.headwind.shape == fixed.crosswind.shape == (4,)
    assert not fixed.headwind.any() and not fixed.crosswind.any()
    default = still_air(course)
    np.testing.assert_allclose(default.density, air_along_course(course, Conditions()).density)
    with pytest.raises(InputError):
        still_air(course, -1.0)


def test_course_air_is_a_frozen_result():
    air = still_air(square_loop(), 1.2)
    assert isinstance(air, CourseAir)
    with pytest.raises(dataclasses.FrozenInstanceError):
        air.density = np.ones(4)


@settings(max_examples=50, deadline=None)
@given(
    st.floats(-20.0, 40.0),
    st.floats(0.0, 1.0),
    st.floats(95000.0, 105000.0),
    st.floats(0.0, 20.0),
    st.floats(0.0, 360.0),
    st.lists(st.floats(-300.0, 3500.0), min_size=2, max_size=20),
)
def test_course_air_is_finite_and_keeps_the_wind_speed(
    temperature, humidity, pressure, wind, direction, elevations
):
    elevation = np.array(elevations)
    course = synthetic_course(np.arange(elevation.size) * 100.0, elevation,
                              heading=np.linspace(0.0, 350.0, elevation.size - 1))
    conditions = Conditions(temperature=temperature, relative_humidity=humidity,
                            sea_level_pressure=pressure, wind_speed=wind, wind_from=direction)
    air = air_along_course(course, conditions)
    assert np.all(np.isfinite(air.density)) and np.all(air.density > 0)
    np.testing.assert_allclose(np.hypot(air.headwind, air.crosswind), conditions.wind_at_rider,
                               rtol=1e-9, atol=1e-12)
    # higher pieces have thinner air
    order = np.argsort(piece_elevation(course))
    assert np.all(np.diff(air.density[order]) <= 1e-12)


def test_the_documented_hottest_start_is_accepted_on_a_course_that_descends():
    # 60 °C is the top of the accepted range: the lapse rate (6.5 K/km) warms the pieces below
    # the start by a fraction of a kelvin, which must not turn the user's 60 °C into a refusal
    distance = np.arange(0.0, 2001.0, 10.0)
    course = synthetic_course(distance, 100.0 - 0.05 * distance, heading=0.0)
    air = air_along_course(course, Conditions(temperature=60.0))
    assert np.all(np.isfinite(air.density)) and air.density.size == distance.size - 1


def test_density_along_elevations_is_the_one_the_course_air_uses():
    # CIPM-2007 at 20 °C, 50 % RH, 101325 Pa: 1.19931 kg/m³ (docs/references.md, "Air" [calc])
    from pacing.weather.conditions import density_along

    flat = density_along(np.zeros(3), 0.0, Conditions())
    assert flat == pytest.approx(1.19931, abs=5e-6)
    distance = np.arange(0.0, 2001.0, 10.0)
    course = synthetic_course(distance, 300.0 + 0.04 * distance, heading=0.0)
    day = Conditions(temperature=12.0, relative_humidity=0.7)
    elevation = 0.5 * (course.elevation[1:] + course.elevation[:-1])
    np.testing.assert_array_equal(density_along(elevation, 300.0, day),
                                  air_along_course(course, day).density)


def test_a_station_pressure_is_the_pressure_at_the_start():
    # ICAO Doc 7488/3 table: 79 495.2 Pa at 2000 m geopotential (2000.63 m geometric). A
    # station at the start reading that pressure on a flat course there gives the air of the
    # standard sea-level pressure carried up by the standard atmosphere.
    course = synthetic_course([0.0, 500.0, 1000.0], [2000.63, 2000.63, 2000.63])
    standard = air_along_course(course, Conditions(temperature=2.0))
    station = air_along_course(course, Conditions(temperature=2.0, sea_level_pressure=79495.2,
                                                  pressure_kind="station"))
    np.testing.assert_allclose(station.density, standard.density, rtol=1e-5)


def test_the_pressure_kind_is_checked():
    with pytest.raises(InputError, match="unknown pressure kind"):
        Conditions(pressure_kind="altimeter")
    with pytest.raises(InputError, match="station pressure must be between"):
        Conditions(pressure_kind="station", sea_level_pressure=30000.0)
    assert Conditions(pressure_kind="station", sea_level_pressure=80000.0).pressure_kind \
        == "station"
