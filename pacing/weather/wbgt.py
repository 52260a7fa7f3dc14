"""The wet-bulb globe temperature (WBGT) from the weather, and the heat-illness risk it means.

WBGT = 0.7·T_nw + 0.2·T_g + 0.1·T_a (natural wet bulb, black globe, air; ISO 7243). Outdoors it
is estimated from air temperature, humidity, wind, pressure and sun by Liljegren et al. (2008):
the globe's and the wick's energy balances (radiation from sky, ground and sun, convection,
and for the wick evaporation; pacing.weather.wbgt_balances, with the properties of air and
water in pacing.weather.wbgt_properties and the wind at 2 m and the direct sunlight in
pacing.weather.wbgt_wind_and_sun) solved for their temperatures. Without sun information the
Australian Bureau of Meteorology's approximation stands in (it assumes moderately strong sun
and light wind). Methods: `WBGT_METHODS`; the heat-illness risk of a WBGT:
pacing.weather.heat_risk.

Units: temperatures [°C] (kelvin inside the balances), humidity 0..1, wind [m/s] at
`wind_height` (10 m, reduced to the globe's 2 m by Liljegren's stability-class power law),
pressure [Pa], solar irradiance [W/m²] on a horizontal surface, sun elevation [deg].

References
----------
Liljegren, J.C., Carhart, R.A., Lawday, P., Tschopp, S. & Sharp, R. (2008). Modeling the wet
bulb globe temperature using standard meteorological measurements. J Occup Environ Hyg
5(10):645-655. doi:10.1080/15459620802310770
ISO 7243:2017. Ergonomics of the thermal environment - Assessment of heat stress using the WBGT
(wet bulb globe temperature) index.
Australian Bureau of Meteorology. Thermal comfort observations: about the approximation to the
WBGT (WBGT = 0.567·T_a + 0.393·e + 3.94), after ACSM (1984), Med Sci Sports Exerc 16(5):ix-xiv.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import ZERO_CELSIUS
from pacing.physics.inputs import (
    check_humidity,
    check_pressure,
    check_range,
    check_temperature,
    finite_array,
)
from pacing.physics.registry import ModelRegistry
from pacing.weather.wbgt_balances import globe_temperature, natural_wet_bulb_temperature
from pacing.weather.wbgt_properties import LILJEGREN_2008
from pacing.weather.wbgt_wind_and_sun import direct_fraction, stability_class, wind_at_globe

# --- WBGT ------------------------------------------------------------------------------------

SOLAR_IRRADIANCE_RANGE = (0.0, 1400.0)
"""Global horizontal irradiances accepted [W/m²] (the solar constant is 1361-1367 W/m²)."""

WIND_SPEED_RANGE = (0.0, 60.0)
"""Wind speeds accepted [m/s] (as pacing.weather.conditions)."""


@dataclass(frozen=True)
class WbgtParts:
    """The WBGT and the three temperatures it weighs, arrays of one shape [°C].

    Attributes
    ----------
    wbgt : numpy.ndarray
        0.7·natural_wet_bulb + 0.2·globe + 0.1·air [°C].
    natural_wet_bulb : numpy.ndarray
        Natural wet-bulb temperature [°C].
    globe : numpy.ndarray
        Black globe temperature [°C].
    """

    wbgt: np.ndarray
    natural_wet_bulb: np.ndarray
    globe: np.ndarray


def _checked_weather(temperature: ArrayLike, relative_humidity: ArrayLike,
                     wind_speed: ArrayLike, pressure: ArrayLike, solar_irradiance: ArrayLike,
                     sun_elevation: ArrayLike) -> tuple[np.ndarray, ...]:
    """The inputs of `wbgt_liljegren` checked and broadcast to one shape."""
    wind = finite_array(wind_speed, "wind speed")
    check_range(wind, *WIND_SPEED_RANGE, "wind speed must be 0-60 m/s")
    solar = finite_array(solar_irradiance, "solar irradiance")
    check_range(solar, *SOLAR_IRRADIANCE_RANGE, "solar irradiance must be 0-1400 W/m²")
    elevation = finite_array(sun_elevation, "sun elevation")
    check_range(elevation, -90.0, 90.0, "sun elevation must be -90 to 90 degrees")
    pressure = check_pressure(pressure)
    check_range(pressure, 30000.0, 110000.0, "pressure must be 30-110 kPa (1013 hPa = "
                "101300 Pa)")
    return tuple(np.broadcast_arrays(check_temperature(temperature),
                                     check_humidity(relative_humidity), wind, pressure, solar,
                                     elevation))


def wbgt_liljegren_parts(temperature: ArrayLike, relative_humidity: ArrayLike,
                         wind_speed: ArrayLike, pressure: ArrayLike,
                         solar_irradiance: ArrayLike = 0.0, sun_elevation: ArrayLike = 90.0,
                         wind_height: float = 10.0, urban: bool = False,
                         sun_distance: ArrayLike = 1.0) -> WbgtParts:
    """Outdoor WBGT and its parts by Liljegren et al. (2008) [°C].

    The 10-m wind is reduced to 2 m by the stability-class power law (`wind_at_globe`); the
    direct share of the sunlight is estimated from the irradiance (`direct_fraction`); the
    globe's and the wick's energy balances are solved for T_g and T_w (bisection, 3e-8 K);
    WBGT = 0.7·T_w + 0.2·T_g + 0.1·T_a.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature T_a [°C], -60..60.
    relative_humidity : float or array_like
        Relative humidity, 0..1 [-].
    wind_speed : float or array_like
        Wind speed at `wind_height`, 0..60 [m/s].
    pressure : float or array_like
        Air pressure where the WBGT is wanted, 30..110 kPa [Pa].
    solar_irradiance : float or array_like, optional
        Global horizontal irradiance, 0..1400 (default 0: shade or night) [W/m²]; capped at
        0.85 of the top-of-atmosphere value for the sun's height, as the method does.
    sun_elevation : float or array_like, optional
        Sun's elevation above the horizon, -90..90 (default 90) [deg].
    wind_height : float, optional
        Height of the wind measurement (default 10 m) [m].
    urban : bool, optional
        Urban wind-profile exponents instead of rural ones [-].
    sun_distance : float or array_like, optional
        Earth-sun distance (default 1; 0.983-1.017 through the year, changing the
        top-of-atmosphere irradiance by ±3.4 %) [AU] (pacing.weather.sun.sun_distance).

    Returns
    -------
    WbgtParts
        WBGT, natural wet-bulb and globe temperatures [°C], broadcast from the inputs.

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655. doi:10.1080/15459620802310770
    """
    celsius, humidity, wind, pressure, solar, elevation = _checked_weather(
        temperature, relative_humidity, wind_speed, pressure, solar_irradiance, sun_elevation)
    air = celsius + ZERO_CELSIUS
    cosine = np.sin(np.radians(elevation))
    sun_up = cosine > 0.0
    distance = finite_array(sun_distance, "sun distance")
    check_range(distance, 0.98, 1.02, "sun distance must be 0.98-1.02 AU")
    top = (LILJEGREN_2008["normalised_solar_max"] * LILJEGREN_2008["solar_constant"]
           * np.maximum(cosine, 0.0) / distance**2)
    solar = np.where(sun_up, np.minimum(solar, top), 0.0)
    fraction = direct_fraction(solar, cosine, distance)
    stability = stability_class(wind, solar, sun_up)
    wind_2m = wind_at_globe(wind, float(wind_height), stability, urban)
    parts = (air, humidity, pressure, wind_2m, solar, cosine, fraction)
    globe = globe_temperature(*parts) - ZERO_CELSIUS
    wet = natural_wet_bulb_temperature(*parts) - ZERO_CELSIUS
    return WbgtParts(wbgt=0.7 * wet + 0.2 * globe + 0.1 * celsius, natural_wet_bulb=wet,
                     globe=globe)


def wbgt_liljegren(temperature: ArrayLike, relative_humidity: ArrayLike,
                   wind_speed: ArrayLike, pressure: ArrayLike,
                   solar_irradiance: ArrayLike = 0.0, sun_elevation: ArrayLike = 90.0,
                   wind_height: float = 10.0, sun_distance: ArrayLike = 1.0) -> np.ndarray:
    """Outdoor WBGT by Liljegren et al. (2008) [°C]; see `wbgt_liljegren_parts`.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C].
    relative_humidity : float or array_like
        Relative humidity, 0..1 [-].
    wind_speed : float or array_like
        Wind speed at `wind_height` [m/s].
    pressure : float or array_like
        Air pressure [Pa].
    solar_irradiance : float or array_like, optional
        Global horizontal irradiance (default 0) [W/m²].
    sun_elevation : float or array_like, optional
        Sun's elevation (default 90) [deg].
    wind_height : float, optional
        Height of the wind measurement (default 10 m) [m].
    sun_distance : float or array_like, optional
        Earth-sun distance (default 1) [AU].

    Returns
    -------
    numpy.ndarray
        WBGT [°C].

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655.
    """
    return wbgt_liljegren_parts(temperature, relative_humidity, wind_speed, pressure,
                                solar_irradiance, sun_elevation, wind_height,
                                sun_distance=sun_distance).wbgt


def wbgt_bom_approximation(temperature: ArrayLike, relative_humidity: ArrayLike) -> np.ndarray:
    """WBGT by the Australian Bureau of Meteorology's approximation [°C].

    WBGT = 0.567·T_a + 0.393·e + 3.94,  e = h·6.105·exp(17.27·T_a/(237.7 + T_a)) [hPa]

    for moderately strong sun and light wind; it ignores both. Used when the weather gives
    no sun: it errs toward more heat stress than shade.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature T_a [°C].
    relative_humidity : float or array_like
        Relative humidity h, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        WBGT [°C].

    References
    ----------
    Australian Bureau of Meteorology, Thermal comfort observations (about WBGT); ACSM (1984),
    Prevention of thermal injuries during distance running, Med Sci Sports Exerc
    16(5):ix-xiv.

    Examples
    --------
    30 °C, 50 %: e = 0.5·6.105·exp(17.27·30/267.7) = 21.14 hPa, WBGT = 17.01 + 8.31 + 3.94:

    >>> float(wbgt_bom_approximation(30.0, 0.5))
    29.26
    """
    celsius = check_temperature(temperature)
    vapour_hpa = check_humidity(relative_humidity) * 6.105 * np.exp(
        17.27 * celsius / (237.7 + celsius))
    return 0.567 * celsius + 0.393 * vapour_hpa + 3.94


WBGT_METHODS: ModelRegistry[str] = ModelRegistry(
    {
        "liljegren-2008": "Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655: "
                          "energy balances of globe and wick, sun and wind included",
        "bom-approximation": "Australian Bureau of Meteorology approximation "
                             "0.567·T + 0.393·e + 3.94 (moderate sun, light wind)",
    },
    what="WBGT method",
)
"""How a WBGT is estimated, by key: the source and what it includes."""
