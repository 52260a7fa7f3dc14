"""The ICAO standard atmosphere: geopotential height, pressure and temperature with elevation.

Units (see DEVELOPERS.md): elevation [m] above mean sea level (geometric, as in a GPX file),
pressure [Pa], temperature [°C].

The first two steps of the chain used for a course (pacing.weather.conditions):

1. pressure at each elevation from the ICAO standard atmosphere, scaled by the day's
   sea-level pressure (`standard_pressure`);
2. temperature given at the start, following the standard lapse rate elsewhere
   (`temperature_at_elevation`).

The density of the (humid) air at that pressure and temperature is pacing.physics.air. Check
values for every formula here are in docs/references.md, "Air".

References
----------
ICAO (1993). Manual of the ICAO Standard Atmosphere, Doc 7488/3; ISO 2533:1975 Standard
Atmosphere.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import (
    EARTH_RADIUS_GEOPOTENTIAL,
    SPECIFIC_GAS_CONSTANT_DRY_AIR,
    STANDARD_GRAVITY,
    STANDARD_LAPSE_RATE,
    STANDARD_SEA_LEVEL_PRESSURE,
    STANDARD_SEA_LEVEL_TEMPERATURE,
)
from pacing.physics.inputs import check_pressure, check_range, check_temperature, finite_array

GEOPOTENTIAL_HEIGHT_RANGE = (-2000.0, 11000.0)
"""Geopotential heights where the troposphere formula holds [m] (ISO 2533 tabulates the
troposphere from -2000 m to the tropopause at 11000 m)."""

PRESSURE_EXPONENT = STANDARD_GRAVITY / (STANDARD_LAPSE_RATE * SPECIFIC_GAS_CONSTANT_DRY_AIR)
"""g0 / (L·R) of the ICAO troposphere, 5.25588 [-]."""


def geopotential_height(elevation: ArrayLike) -> np.ndarray:
    """Geopotential height of a geometric elevation [m].

    H = r0·z / (r0 + z),  r0 = 6 356 766 m.

    Parameters
    ----------
    elevation : float or array_like
        Geometric height above mean sea level z [m].

    Returns
    -------
    numpy.ndarray
        Geopotential height H [m], the shape of `elevation`.

    References
    ----------
    ICAO (1993), Manual of the ICAO Standard Atmosphere, Doc 7488/3; ISO 2533:1975.

    Examples
    --------
    From the formula: 3000 m geometric is 3000·6356766/6359766 = 2998.585 m geopotential.

    >>> float(geopotential_height(3000.0))
    2998.585
    """
    elevation = finite_array(elevation, "elevation")
    return EARTH_RADIUS_GEOPOTENTIAL * elevation / (EARTH_RADIUS_GEOPOTENTIAL + elevation)


def _troposphere_height(elevation: ArrayLike) -> np.ndarray:
    height = geopotential_height(elevation)
    low, high = GEOPOTENTIAL_HEIGHT_RANGE
    check_range(height, low, high, f"elevation must be between {low:g} and {high:g} m")
    return height


def standard_pressure(elevation: ArrayLike,
                      sea_level_pressure: ArrayLike = STANDARD_SEA_LEVEL_PRESSURE) -> np.ndarray:
    """Air pressure at an elevation by the ICAO standard atmosphere, troposphere [Pa].

    p = p_sl · (T(H) / T0)^(g0 / (L·R)),  T(H) = T0 − L·H

    with H the geopotential height, T0 = 288.15 K, L = 0.0065 K/m, R = 287.05287 J/(kg·K),
    g0 = 9.80665 m/s² (exponent 5.25588). With the standard p_sl = 101325 Pa this is the ICAO
    table; another sea-level pressure (the day's QFF-style reading) scales it in proportion.

    Parameters
    ----------
    elevation : float or array_like
        Geometric height above mean sea level [m]; its geopotential height must lie in
        -2000..11000 m.
    sea_level_pressure : float or array_like, optional
        Pressure reduced to sea level [Pa] (default 101325 Pa).

    Returns
    -------
    numpy.ndarray
        Pressure [Pa], broadcast from the inputs.

    References
    ----------
    ICAO (1993), Manual of the ICAO Standard Atmosphere, Doc 7488/3; ISO 2533:1975.
    docs/references.md, "Air".

    Examples
    --------
    The ICAO table gives 89 874.6 Pa at 1000 m geopotential height, which is 1000.157 m
    geometric:

    >>> float(standard_pressure(1000.157))
    89874.6
    """
    height = _troposphere_height(elevation)
    sea_level_pressure = check_pressure(sea_level_pressure, "sea-level pressure")
    temperature = STANDARD_SEA_LEVEL_TEMPERATURE - STANDARD_LAPSE_RATE * height
    return sea_level_pressure * (temperature / STANDARD_SEA_LEVEL_TEMPERATURE) ** PRESSURE_EXPONENT


def temperature_at_elevation(elevation: ArrayLike, start_temperature: ArrayLike,
                             start_elevation: ArrayLike) -> np.ndarray:
    """Air temperature at an elevation, from the temperature at the start [°C].

    T(z) = T_start − L·(H(z) − H(z_start)),  L = 0.0065 K/m (ICAO troposphere lapse rate),

    H the geopotential height (so that 15 °C at 0 m gives the ICAO standard temperature at
    every elevation). A real day's lapse rate varies (inversions, sun on the road); this is the
    neutral assumption.

    Parameters
    ----------
    elevation : float or array_like
        Geometric height above mean sea level [m].
    start_temperature : float or array_like
        Air temperature at `start_elevation` [°C], -60..60.
    start_elevation : float or array_like
        Elevation where `start_temperature` holds [m].

    Returns
    -------
    numpy.ndarray
        Temperature [°C], broadcast from the inputs.

    References
    ----------
    ICAO (1993), Manual of the ICAO Standard Atmosphere, Doc 7488/3; ISO 2533:1975.

    Examples
    --------
    The ICAO table gives 8.50 °C (281.65 K) at 1000 m geopotential height, 1000.157 m
    geometric:

    >>> float(temperature_at_elevation(1000.157, 15.0, 0.0))
    8.50
    """
    start_temperature = check_temperature(start_temperature, "start temperature")
    height = _troposphere_height(elevation)
    start_height = _troposphere_height(start_elevation)
    return start_temperature - STANDARD_LAPSE_RATE * (height - start_height)
