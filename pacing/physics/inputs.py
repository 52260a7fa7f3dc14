"""Input checks of the air and wind physics: finite numbers, air temperature, pressure, humidity.

Every check returns the input as a float array or raises a one-line InputError that names the
quantity and the first bad value (pacing.physics.atmosphere, pacing.physics.air,
pacing.physics.wind). Units: temperature [°C], pressure [Pa], relative humidity as a fraction
0..1.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError

TEMPERATURE_RANGE = (-60.0, 60.0)
"""Air temperatures accepted [°C]; outside them the input is almost surely a mistake."""


def finite_array(value: ArrayLike, name: str) -> np.ndarray:
    """`value` as a float array, or InputError naming `name` when it is not a finite number.

    The basic input check of pacing.physics.atmosphere, pacing.physics.air and
    pacing.physics.wind.

    Parameters
    ----------
    value : float or array_like
        The number or numbers to check [any unit].
    name : str
        How the value is named in the one-line error message [-].

    Returns
    -------
    numpy.ndarray
        `value` as floats, 0-d for a scalar [unit of `value`].
    """
    try:
        array = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a number, got {value!r}") from None
    if not np.all(np.isfinite(array)):
        raise InputError(f"{name} must be a finite number, got {_first_bad(array)}")
    return array


def _first_bad(array: np.ndarray, ok: np.ndarray | None = None) -> float:
    flat = np.ravel(array)
    bad = ~np.isfinite(flat) if ok is None else ~np.ravel(np.broadcast_to(ok, array.shape))
    return float(flat[np.argmax(bad)])


def check_range(array: np.ndarray, low: float, high: float, message: str) -> None:
    """Raise InputError with `message` and the first value outside [low, high].

    Parameters
    ----------
    array : numpy.ndarray
        Values to check [any unit].
    low : float
        Lowest value accepted [unit of `array`].
    high : float
        Highest value accepted [unit of `array`].
    message : str
        The error message before ", got <value>" [-].

    Returns
    -------
    None
        Returns when every value lies in the range.
    """
    ok = (array >= low) & (array <= high)
    if not np.all(ok):
        raise InputError(f"{message}, got {_first_bad(array, ok):g}")


def check_temperature(temperature: ArrayLike, name: str = "temperature") -> np.ndarray:
    """An air temperature as a float array, or InputError outside `TEMPERATURE_RANGE`.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.
    name : str, optional
        How the value is named in the error message [-].

    Returns
    -------
    numpy.ndarray
        `temperature` as floats [°C].
    """
    array = finite_array(temperature, name)
    low, high = TEMPERATURE_RANGE
    check_range(array, low, high, f"{name} must be between {low:g} and {high:g} °C")
    return array


def check_pressure(pressure: ArrayLike, name: str = "pressure") -> np.ndarray:
    """An air pressure as a float array, or InputError unless every value is positive.

    Parameters
    ----------
    pressure : float or array_like
        Air pressure [Pa], > 0.
    name : str, optional
        How the value is named in the error message [-].

    Returns
    -------
    numpy.ndarray
        `pressure` as floats [Pa].
    """
    array = finite_array(pressure, name)
    if not np.all(array > 0):
        raise InputError(f"{name} must be positive [Pa], got {_first_bad(array, array > 0):g}")
    return array


def check_humidity(relative_humidity: ArrayLike) -> np.ndarray:
    """A relative humidity as a float array, or InputError outside 0..1.

    Parameters
    ----------
    relative_humidity : float or array_like
        Relative humidity as a fraction, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        `relative_humidity` as floats [-].
    """
    array = finite_array(relative_humidity, "relative humidity")
    ok = (array >= 0.0) & (array <= 1.0)
    if not np.all(ok):
        bad = _first_bad(array, ok)
        raise InputError(f"relative humidity must be 0-100 %, got {100 * bad:g} % "
                         f"(fraction {bad:g})")
    return array
