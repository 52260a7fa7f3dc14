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

Pressure conventions (docs/race_day_models.md, "Pressure"): a pressure measured at one
elevation is carried to another by the hypsometric equation through a layer whose temperature
follows the standard lapse rate from the measured temperature (`hypsometric_pressure`). A
sea-level pressure is one of two kinds (`SEA_LEVEL_PRESSURE_KINDS`):

- "mslp", mean-sea-level pressure as national weather services and forecasts publish it: the
  station pressure reduced with the actual temperature through a fictitious column
  (WMO-No. 8, ch. 3); it is carried back up the same way (`pressure_from_sea_level`);
- "qnh", the aviation altimeter setting: reduced through the ICAO standard atmosphere,
  whatever the day's temperature; carried back up by `standard_pressure`.

A station pressure measured at the start is carried along the course by
`pressure_from_station`.

References
----------
ICAO (1993). Manual of the ICAO Standard Atmosphere, Doc 7488/3; ISO 2533:1975 Standard
Atmosphere.
WMO (2018). Guide to Instruments and Methods of Observation, WMO-No. 8, vol. I, ch. 3
(measurement of atmospheric pressure; reduction of pressure to mean sea level).
Wallace, J.M. & Hobbs, P.V. (2006). Atmospheric Science: An Introductory Survey, 2nd ed.,
Academic Press, section 3.2 (hypsometric equation, virtual temperature).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import (
    EARTH_RADIUS_GEOPOTENTIAL,
    SPECIFIC_GAS_CONSTANT_DRY_AIR,
    SPECIFIC_GAS_CONSTANT_WATER_VAPOUR,
    STANDARD_GRAVITY,
    STANDARD_LAPSE_RATE,
    STANDARD_SEA_LEVEL_PRESSURE,
    STANDARD_SEA_LEVEL_TEMPERATURE,
    ZERO_CELSIUS,
)
from pacing.errors import InputError
from pacing.physics.air import saturation_vapour_pressure
from pacing.physics.inputs import (
    check_humidity,
    check_pressure,
    check_range,
    check_temperature,
    finite_array,
)
from pacing.physics.registry import ModelRegistry

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


# --- pressure conventions: the hypsometric equation -------------------------------------------

VAPOUR_GAS_CONSTANT_RATIO = SPECIFIC_GAS_CONSTANT_DRY_AIR / SPECIFIC_GAS_CONSTANT_WATER_VAPOUR
"""ε = R_d / R_v, the ratio of the molar masses of water and dry air, 0.62197 [-]."""

LAPSE_RATE_RANGE = (-0.01, 0.0098)
"""Temperature lapse rates accepted [K/m]: from a strong inversion (10 K/km warming upward) to
the dry adiabatic lapse rate g0/c_p = 9.8 K/km (common practice)."""

STATION_REDUCTION_STEPS = 3
"""Fixed-point steps for the station pressure under a sea-level pressure (the humidity term
depends on the station pressure through e/p; each step shrinks the error about 200-fold)."""


def virtual_temperature(temperature: ArrayLike, pressure: ArrayLike,
                        relative_humidity: ArrayLike) -> np.ndarray:
    """Virtual temperature of humid air: the temperature dry air needs for the same density [°C].

    T_v = T / (1 − (e/p)·(1 − ε)),  e = h·e_s(T),  ε = R_d/R_v = 0.62197

    (T in kelvin; e_s by Hardy 1998, pacing.physics.air.saturation_vapour_pressure).

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.
    pressure : float or array_like
        Air pressure [Pa], > 0.
    relative_humidity : float or array_like
        Relative humidity as a fraction, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        Virtual temperature [°C], broadcast from the inputs.

    References
    ----------
    Wallace & Hobbs (2006), Atmospheric Science, 2nd ed., eq. 3.16.

    Examples
    --------
    Saturated air at 30 °C and 1000 hPa (e = 4246.0 Pa): 303.15/(1 − 0.042460·0.37803)
    = 308.09 K, about 4.9 K above the air temperature:

    >>> float(virtual_temperature(30.0, 100000.0, 1.0))
    34.94
    """
    return _virtual_factor(temperature, pressure, relative_humidity) * (
        check_temperature(temperature) + ZERO_CELSIUS) - ZERO_CELSIUS


def _virtual_factor(temperature: ArrayLike, pressure: ArrayLike,
                    relative_humidity: ArrayLike) -> np.ndarray:
    """T_v / T [-] of air at the given temperature [°C], pressure [Pa] and humidity [-]."""
    humidity = check_humidity(relative_humidity)
    pressure = check_pressure(pressure)
    vapour_share = humidity * saturation_vapour_pressure(temperature) / pressure
    check_range(vapour_share, 0.0, 0.5, "water vapour pressure must be well below the air "
                "pressure: check temperature and pressure (vapour share)")
    return 1.0 / (1.0 - vapour_share * (1.0 - VAPOUR_GAS_CONSTANT_RATIO))


def _layer_pressure(pressure: np.ndarray, from_height: np.ndarray, to_height: np.ndarray,
                    temperature_kelvin: np.ndarray, virtual_factor: np.ndarray,
                    lapse_rate: float) -> np.ndarray:
    """Hypsometric equation between geopotential heights, linear temperature profile."""
    if abs(lapse_rate) < 1e-12:
        return pressure * np.exp(-STANDARD_GRAVITY * (to_height - from_height)
                                 / (SPECIFIC_GAS_CONSTANT_DRY_AIR * virtual_factor
                                    * temperature_kelvin))
    top = temperature_kelvin - lapse_rate * (to_height - from_height)
    check_range(top, 150.0, 350.0, "the layer's temperature leaves 150-350 K: check the "
                "elevations and the lapse rate [K]")
    exponent = STANDARD_GRAVITY / (SPECIFIC_GAS_CONSTANT_DRY_AIR * virtual_factor * lapse_rate)
    return pressure * (top / temperature_kelvin) ** exponent


def hypsometric_pressure(pressure: ArrayLike, from_elevation: ArrayLike,
                         to_elevation: ArrayLike, temperature: ArrayLike,
                         relative_humidity: ArrayLike = 0.0,
                         lapse_rate: float = STANDARD_LAPSE_RATE) -> np.ndarray:
    """Pressure at one elevation from the pressure and temperature at another [Pa].

    The hypsometric equation, dp/dH = −p·g0/(R_d·T_v(H)), through a layer whose temperature
    falls linearly with geopotential height H from the measured one, T(H) = T_a − L·(H − H_a),
    with the share of water vapour e/p constant (a well-mixed layer, so T_v = k·T with
    k = T_v/T at the measured level). Integrated exactly:

        p_b = p_a · (T_b / T_a)^(g0 / (R_d·k·L))          (L ≠ 0)
        p_b = p_a · exp(−g0·(H_b − H_a) / (R_d·k·T_a))     (L = 0)

    the same as p_b = p_a·exp(−g0·(H_b − H_a)/(R_d·T̄_v)) with the layer's mean virtual
    temperature T̄_v = k·(T_a − T_b)/ln(T_a/T_b) (the log-mean, exact for a linear profile).
    With 15 °C at 0 m, dry air and L = 6.5 K/km it is the ICAO standard atmosphere.

    Parameters
    ----------
    pressure : float or array_like
        Pressure measured at `from_elevation` [Pa], > 0.
    from_elevation : float or array_like
        Geometric elevation of the measurement [m].
    to_elevation : float or array_like
        Geometric elevation where the pressure is wanted [m].
    temperature : float or array_like
        Air temperature at `from_elevation` [°C], -60..60.
    relative_humidity : float or array_like, optional
        Relative humidity at `from_elevation`, 0..1 (default dry air) [-].
    lapse_rate : float, optional
        Temperature fall per metre of geopotential height, -0.01..0.0098 (default the ICAO
        troposphere's 0.0065) [K/m].

    Returns
    -------
    numpy.ndarray
        Pressure at `to_elevation` [Pa], broadcast from the inputs.

    References
    ----------
    Wallace & Hobbs (2006), Atmospheric Science, 2nd ed., section 3.2.1, eq. 3.29;
    ICAO (1993), Doc 7488/3.

    Examples
    --------
    With 15 °C at sea level and dry air this is the ICAO table, 79 495.2 Pa at 2000 m
    geopotential (2000.629 m geometric):

    >>> float(hypsometric_pressure(101325.0, 0.0, 2000.629, 15.0))
    79495.2
    """
    low, high = LAPSE_RATE_RANGE
    if not low <= float(lapse_rate) <= high:
        raise InputError(f"lapse rate must be between {low:g} and {high:g} K/m, "
                         f"got {float(lapse_rate):g}")
    pressure = check_pressure(pressure)
    factor = _virtual_factor(temperature, pressure, relative_humidity)
    kelvin = check_temperature(temperature) + ZERO_CELSIUS
    return _layer_pressure(pressure, _troposphere_height(from_elevation),
                           _troposphere_height(to_elevation), kelvin, factor, float(lapse_rate))


def pressure_from_station(elevation: ArrayLike, station_pressure: ArrayLike,
                          station_elevation: ArrayLike, temperature: ArrayLike,
                          relative_humidity: ArrayLike = 0.0) -> np.ndarray:
    """Pressure along a course from a station pressure measured at the start [Pa].

    `hypsometric_pressure` from the station with the temperature measured there and the
    standard lapse rate 6.5 K/km (the same profile `temperature_at_elevation` gives).

    Parameters
    ----------
    elevation : float or array_like
        Elevations where the pressure is wanted, e.g. the course's pieces [m].
    station_pressure : float or array_like
        Pressure measured at `station_elevation` (not reduced to sea level) [Pa].
    station_elevation : float or array_like
        Elevation of the measurement, e.g. the start [m].
    temperature : float or array_like
        Air temperature at `station_elevation` [°C].
    relative_humidity : float or array_like, optional
        Relative humidity at `station_elevation`, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        Pressure at `elevation` [Pa].

    References
    ----------
    Wallace & Hobbs (2006), section 3.2.1; ICAO (1993), Doc 7488/3.

    Examples
    --------
    At the station itself the measured pressure comes back:

    >>> float(pressure_from_station(1200.0, 87000.0, 1200.0, 18.0, 0.5))
    87000.0
    """
    return hypsometric_pressure(station_pressure, station_elevation, elevation, temperature,
                                relative_humidity)


def _station_pressure_under_mslp(sea_level_pressure: np.ndarray, station_elevation: ArrayLike,
                                 temperature: ArrayLike,
                                 relative_humidity: ArrayLike) -> np.ndarray:
    """Station pressure whose reduction with the actual temperature gives the MSLP [Pa]."""
    station_height = _troposphere_height(station_elevation)
    kelvin = check_temperature(temperature) + ZERO_CELSIUS
    sea_level_kelvin = kelvin + STANDARD_LAPSE_RATE * station_height
    station = standard_pressure(station_elevation, sea_level_pressure)
    for _ in range(STATION_REDUCTION_STEPS):
        factor = _virtual_factor(temperature, station, relative_humidity)
        station = _layer_pressure(sea_level_pressure, np.zeros_like(station_height),
                                  station_height, sea_level_kelvin, factor, STANDARD_LAPSE_RATE)
    return np.asarray(station, dtype=float)


def pressure_from_sea_level(elevation: ArrayLike, sea_level_pressure: ArrayLike,
                            temperature: ArrayLike, temperature_elevation: ArrayLike,
                            relative_humidity: ArrayLike = 0.0,
                            kind: str = "mslp") -> np.ndarray:
    """Pressure along a course from a sea-level pressure of the given kind [Pa].

    - "mslp" (mean-sea-level pressure, as weather services publish it): the station pressure
      was reduced to sea level through a fictitious column at the actual temperature, falling
      6.5 K/km upward from the temperature measured at `temperature_elevation` (WMO-No. 8).
      The same column is used upward: the station pressure p_s solves
      MSLP = hypsometric(p_s, H_s → 0), then `pressure_from_station`.
    - "qnh" (altimeter setting): reduced through the ICAO standard atmosphere whatever the
      temperature; carried back by `standard_pressure` (temperature and humidity unused).

    On a day warmer than the standard atmosphere, "mslp" gives a higher pressure aloft than
    "qnh" for the same number: 25 °C at a start at 2000 m makes 1.8 % (see
    docs/race_day_models.md).

    Parameters
    ----------
    elevation : float or array_like
        Elevations where the pressure is wanted [m].
    sea_level_pressure : float or array_like
        The published sea-level pressure [Pa].
    temperature : float or array_like
        Air temperature measured at `temperature_elevation` [°C].
    temperature_elevation : float or array_like
        Where the temperature (and the humidity) was measured, e.g. the start [m].
    relative_humidity : float or array_like, optional
        Relative humidity there, 0..1 [-].
    kind : str, optional
        A key of `SEA_LEVEL_PRESSURE_KINDS`: "mslp" (default) or "qnh" [-].

    Returns
    -------
    numpy.ndarray
        Pressure at `elevation` [Pa].

    References
    ----------
    WMO (2018), WMO-No. 8, vol. I, ch. 3; ICAO (1993), Doc 7488/3; Wallace & Hobbs (2006),
    section 3.2.1.

    Examples
    --------
    At 15 °C on the sea shore both kinds agree; at a start at 2000 m on a 25 °C day they do
    not:

    >>> float(pressure_from_sea_level(0.0, 101325.0, 15.0, 0.0))
    101325.0
    >>> round(float(pressure_from_sea_level(2000.0, 101325.0, 25.0, 2000.0)))
    80971
    >>> round(float(pressure_from_sea_level(2000.0, 101325.0, 25.0, 2000.0, kind="qnh")))
    79501
    """
    kind = SEA_LEVEL_PRESSURE_KINDS.canonical(kind)
    sea_level_pressure = check_pressure(sea_level_pressure, "sea-level pressure")
    if kind == "qnh":
        check_temperature(temperature)
        check_humidity(relative_humidity)
        return standard_pressure(elevation, sea_level_pressure)
    station = _station_pressure_under_mslp(sea_level_pressure, temperature_elevation,
                                           temperature, relative_humidity)
    return pressure_from_station(elevation, station, temperature_elevation, temperature,
                                 relative_humidity)


SEA_LEVEL_PRESSURE_KINDS: ModelRegistry[str] = ModelRegistry(
    {
        "mslp": "mean-sea-level pressure reduced with the actual temperature (WMO-No. 8), "
                "as weather services and forecasts publish it",
        "qnh": "altimeter setting reduced through the ICAO standard atmosphere (aviation "
               "practice; METAR reports)",
    },
    aliases={"qff": "mslp", "sea-level": "mslp"},
    what="sea-level pressure kind",
)
"""What a sea-level pressure means, by key: a description of the reduction behind it."""

DEFAULT_SEA_LEVEL_PRESSURE_KIND = "mslp"
"""The kind of the weather table's `sea_level_pressure_hpa` column."""
