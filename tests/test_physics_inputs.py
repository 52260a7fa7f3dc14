"""Specification of pacing.physics.inputs: the input checks of the air and wind physics return
float arrays and refuse bad input with a one-line InputError naming the quantity and the first
bad value (the project's convention for input the user can fix, DEVELOPERS.md)."""

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.physics.inputs import (
    TEMPERATURE_RANGE,
    check_humidity,
    check_pressure,
    check_range,
    check_temperature,
    finite_array,
)


def test_finite_array_returns_floats_of_the_same_shape():
    assert finite_array(3, "speed").dtype == float
    assert finite_array(3, "speed").shape == ()
    np.testing.assert_array_equal(finite_array([1, 2.5], "speed"), [1.0, 2.5])


@pytest.mark.parametrize(("value", "message"), [
    ("fast", "speed must be a number, got 'fast'"),
    ([1.0, float("inf")], "speed must be a finite number, got inf"),
    ([1.0, float("nan")], "speed must be a finite number, got nan"),
])
def test_finite_array_names_the_quantity_and_the_bad_value(value, message):
    with pytest.raises(InputError) as error:
        finite_array(value, "speed")
    assert str(error.value) == message


def test_check_range_reports_the_first_value_outside():
    check_range(np.array([0.0, 1.0]), 0.0, 1.0, "share must be 0-1")  # the ends are inside
    with pytest.raises(InputError, match=r"^share must be 0-1, got 1\.5$"):
        check_range(np.array([0.5, 1.5, -2.0]), 0.0, 1.0, "share must be 0-1")


def test_temperature_range_is_minus_to_plus_60_celsius():
    assert TEMPERATURE_RANGE == (-60.0, 60.0)
    np.testing.assert_array_equal(check_temperature([-60.0, 60.0]), [-60.0, 60.0])
    with pytest.raises(InputError, match=r"^start temperature must be between -60 and 60 °C, "
                                         r"got 61$"):
        check_temperature([20.0, 61.0], "start temperature")


def test_pressure_must_be_positive():
    assert check_pressure(101325.0) == 101325.0
    with pytest.raises(InputError, match=r"^pressure must be positive \[Pa\], got 0$"):
        check_pressure([101325.0, 0.0])


def test_humidity_is_a_fraction_and_a_percentage_is_refused_in_both_words():
    np.testing.assert_array_equal(check_humidity([0.0, 1.0]), [0.0, 1.0])
    with pytest.raises(InputError, match=r"^relative humidity must be 0-100 %, got 5000 % "
                                         r"\(fraction 50\)$"):
        check_humidity(50.0)
