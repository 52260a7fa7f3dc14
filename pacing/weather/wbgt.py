"""The wet-bulb globe temperature (WBGT) from the weather, and the heat-illness risk it means.

WBGT = 0.7·T_nw + 0.2·T_g + 0.1·T_a (natural wet bulb, black globe, air; ISO 7243). Outdoors it
is estimated from air temperature, humidity, wind, pressure and sun by Liljegren et al. (2008):
the globe's and the wick's energy balances (radiation from sky, ground and sun, convection,
and for the wick evaporation) solved for their temperatures. Without sun information the
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

from collections.abc import Callable
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

LILJEGREN_2008 = {
    "globe_diameter": 0.0508,      # [m], the standard 2-inch globe
    "globe_emissivity": 0.95,      # [-]
    "globe_albedo": 0.05,          # [-]
    "wick_diameter": 0.007,        # [m]
    "wick_length": 0.0254,         # [m]
    "wick_emissivity": 0.95,       # [-]
    "wick_albedo": 0.4,            # [-]
    "surface_albedo": 0.45,        # [-], the ground around
    "molar_mass_air": 28.97,       # [g/mol]
    "molar_mass_water": 18.015,    # [g/mol]
    "gas_constant": 8314.34,       # [J/(kmol·K)]
    "heat_capacity": 1003.5,       # c_p of air [J/(kg·K)]
    "stefan_boltzmann": 5.6696e-8,  # [W/(m²·K⁴)]
    "solar_constant": 1367.0,      # [W/m²]
    "minimum_wind": 0.13,          # lowest wind at 2 m [m/s]
    "normalised_solar_max": 0.85,  # largest irradiance as a share of the top of the atmosphere
    "lowest_sun_cosine": 0.00873,  # cos(89.5°): lower sun has no direct beam
    "wick_exponent": 0.56,         # (Pr/Sc)^0.56 in the wick's mass transfer
}
"""Constants of the Liljegren et al. (2008) model as in the authors' reference code."""

AIR_GAS_CONSTANT = LILJEGREN_2008["gas_constant"] / LILJEGREN_2008["molar_mass_air"]
"""R of dry air in the model, 287.0 [J/(kg·K)]."""

PRANDTL = LILJEGREN_2008["heat_capacity"] / (LILJEGREN_2008["heat_capacity"]
                                             + 1.25 * AIR_GAS_CONSTANT)
"""Prandtl number of air, c_p/(c_p + 1.25·R), 0.737 [-] (Liljegren et al. 2008)."""

STABILITY_EXPONENTS = {
    "rural": (0.07, 0.07, 0.10, 0.15, 0.35, 0.55),
    "urban": (0.15, 0.15, 0.20, 0.25, 0.30, 0.30),
}
"""Power-law exponents of the wind profile for stability classes A-F (Liljegren et al. 2008,
after the US EPA's meteorological monitoring guidance) [-]."""

DAY_STABILITY_CLASSES = (
    (1, 1, 2, 4),
    (1, 2, 3, 4),
    (2, 2, 3, 4),
    (3, 3, 4, 4),
    (3, 4, 4, 4),
)
"""Daytime stability class 1-6 (A-F) by 10-m wind (rows: <2, 2-3, 3-5, 5-6, ≥6 m/s) and solar
irradiance (columns: ≥925, ≥675, ≥175, <175 W/m²): the solar radiation / delta-T method as in
Liljegren et al. (2008)."""

DAY_WIND_EDGES = (2.0, 3.0, 5.0, 6.0)
"""10-m wind speeds between the rows of DAY_STABILITY_CLASSES [m/s]."""

DAY_SOLAR_EDGES = (925.0, 675.0, 175.0)
"""Irradiances between the columns of DAY_STABILITY_CLASSES, decreasing [W/m²]."""

NIGHT_STABILITY_CLASSES = (5, 5, 4)
"""Night-time stability class by 10-m wind: <2, 2-2.5, ≥2.5 m/s (Liljegren et al. 2008)."""

NIGHT_WIND_EDGES = (2.0, 2.5)
"""10-m wind speeds between the night-time classes [m/s]."""

BISECTION_STEPS = 32
"""Bisection halvings for the globe and wick temperatures: 140 K / 2^32 = 3e-8 K, far below
the 0.02 K the original code iterates to (and 32 steps keep 20 000 pieces near 0.25 s)."""


# --- properties of air and water (Liljegren et al. 2008, reference code) ---------------------


def saturation_vapour_pressure_buck(kelvin: np.ndarray, pressure: np.ndarray) -> np.ndarray:
    """Saturation vapour pressure with the enhancement factor, Buck (1981) as Liljegren uses [Pa].

    Over water (T > 0 °C): 611.21·exp(17.502·t/(T − 32.18))·(1.0007 + 3.46e-6·p[hPa]);
    over ice: 611.15·exp(22.452·t/(T − 0.6))·(1.0003 + 4.18e-6·p[hPa]), t = T − 273.15.

    Parameters
    ----------
    kelvin : numpy.ndarray
        Temperature T [K].
    pressure : numpy.ndarray
        Air pressure [Pa].

    Returns
    -------
    numpy.ndarray
        e_s [Pa].

    References
    ----------
    Buck, A.L. (1981), J Appl Meteorol 20:1527-1532; Liljegren et al. (2008).

    Examples
    --------
    At 20 °C and 1013.25 hPa: 2337.28 Pa·(1.0007 + 3.46e-6·1013.25) = 2347.11 Pa.

    >>> float(saturation_vapour_pressure_buck(np.array(293.15), np.array(101325.0)))
    2347.11
    """
    water = kelvin > ZERO_CELSIUS
    scale = np.where(water, 611.21, 611.15)
    slope = np.where(water, 17.502, 22.452)
    offset = np.where(water, 32.18, 0.6)
    enhancement = np.where(water, 1.0007 + 3.46e-8 * pressure, 1.0003 + 4.18e-8 * pressure)
    return scale * np.exp(slope * (kelvin - ZERO_CELSIUS) / (kelvin - offset)) * enhancement


def _viscosity(kelvin: np.ndarray) -> np.ndarray:
    """Dynamic viscosity of air [kg/(m·s)] (Lennard-Jones, σ = 3.617 Å, ε/k = 97 K)."""
    omega = (kelvin / 97.0 - 2.9) / 0.4 * (-0.034) + 1.048
    return 2.6693e-6 * np.sqrt(LILJEGREN_2008["molar_mass_air"] * kelvin) / (3.617**2 * omega)


def _diffusivity(kelvin: np.ndarray, pressure: np.ndarray) -> np.ndarray:
    """Diffusivity of water vapour in air [m²/s] (Bird, Stewart & Lightfoot)."""
    critical_pressure = (36.4 * 218.0) ** (1.0 / 3.0)
    critical_temperature = (132.0 * 647.3) ** (5.0 / 12.0)
    mixture = np.sqrt(1.0 / LILJEGREN_2008["molar_mass_air"]
                      + 1.0 / LILJEGREN_2008["molar_mass_water"])
    reduced = kelvin / np.sqrt(132.0 * 647.3)
    return (3.640e-4 * reduced**2.334 * critical_pressure * critical_temperature * mixture
            / (pressure / 101325.0) * 1e-4)


def _heat_of_evaporation(kelvin: np.ndarray) -> np.ndarray:
    """Latent heat of evaporation of water [J/kg]."""
    return (313.15 - kelvin) / 30.0 * (-71100.0) + 2.4073e6


def _sky_emissivity(kelvin: np.ndarray, relative_humidity: np.ndarray,
                    pressure: np.ndarray) -> np.ndarray:
    """Emissivity of the clear sky, 0.575·e^(1/7), e the vapour pressure [hPa]."""
    vapour_hpa = relative_humidity * saturation_vapour_pressure_buck(kelvin, pressure) / 100.0
    return 0.575 * vapour_hpa ** (1.0 / 7.0)


def _convection(kelvin: np.ndarray, pressure: np.ndarray, wind: np.ndarray, diameter: float,
                sphere: bool, viscosity: np.ndarray | None = None) -> np.ndarray:
    """Convective heat transfer coefficient of the globe (sphere) or the wick (cylinder)
    [W/(m²·K)]: Nu = 2 + 0.6·Re^½·Pr^⅓ or Nu = 0.281·Re^0.6·Pr^0.44, h = Nu·k/d, with the
    thermal conductivity k = (c_p + 1.25·R)·μ (Eucken)."""
    mu = _viscosity(kelvin) if viscosity is None else viscosity
    density = pressure / (AIR_GAS_CONSTANT * kelvin)
    reynolds = wind * density * diameter / mu
    if sphere:
        nusselt = 2.0 + 0.6 * np.sqrt(reynolds) * PRANDTL**0.3333
    else:
        nusselt = 0.281 * reynolds**0.6 * PRANDTL**0.44
    conductivity = (LILJEGREN_2008["heat_capacity"] + 1.25 * AIR_GAS_CONSTANT) * mu
    return nusselt * conductivity / diameter


# --- wind at 2 m and the direct share of the sunlight ----------------------------------------


def stability_class(wind_speed: np.ndarray, solar_irradiance: np.ndarray,
                    sun_up: np.ndarray) -> np.ndarray:
    """Atmospheric stability class 1-6 (A-F) from the 10-m wind and the sun [-].

    Parameters
    ----------
    wind_speed : numpy.ndarray
        Wind speed at 10 m [m/s].
    solar_irradiance : numpy.ndarray
        Global horizontal irradiance [W/m²].
    sun_up : numpy.ndarray
        True where the sun is above the horizon [-].

    Returns
    -------
    numpy.ndarray
        Class 1 (A, very unstable) to 6 (F, stable), integers [-].

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655 (solar radiation / delta-T
    method of the US EPA).

    Examples
    --------
    >>> stability_class(np.array([1.0, 4.0, 1.0]), np.array([950.0, 500.0, 0.0]),
    ...                 np.array([True, True, False])).tolist()
    [1, 3, 5]
    """
    day_row = np.searchsorted(DAY_WIND_EDGES, wind_speed, side="right")
    day_column = np.searchsorted(-np.asarray(DAY_SOLAR_EDGES), -solar_irradiance, side="left")
    day = np.asarray(DAY_STABILITY_CLASSES)[day_row, day_column]
    night = np.asarray(NIGHT_STABILITY_CLASSES)[
        np.searchsorted(NIGHT_WIND_EDGES, wind_speed, side="right")]
    return np.where(sun_up, day, night)


def wind_at_globe(wind_speed: np.ndarray, wind_height: float, stability: np.ndarray,
                  urban: bool = False) -> np.ndarray:
    """Wind speed at the globe's 2 m by the stability-class power law [m/s].

    u₂ = max(u·(2/z)^p, 0.13 m/s), p by stability class (`STABILITY_EXPONENTS`).

    Parameters
    ----------
    wind_speed : numpy.ndarray
        Wind speed at `wind_height` [m/s].
    wind_height : float
        Height of the wind measurement [m].
    stability : numpy.ndarray
        Stability class 1-6 [-].
    urban : bool, optional
        Urban exponents instead of rural ones [-].

    Returns
    -------
    numpy.ndarray
        Wind speed at 2 m [m/s].

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655.

    Examples
    --------
    Neutral class D (4), rural: 5·(2/10)^0.15 = 3.928 m/s.

    >>> float(wind_at_globe(np.array(5.0), 10.0, np.array(4)))
    3.928
    """
    exponents = np.asarray(STABILITY_EXPONENTS["urban" if urban else "rural"])
    reduced = wind_speed * (2.0 / wind_height) ** exponents[stability - 1]
    return np.maximum(reduced, LILJEGREN_2008["minimum_wind"])


def direct_fraction(solar_irradiance: np.ndarray, sun_cosine: np.ndarray,
                    sun_distance: ArrayLike = 1.0) -> np.ndarray:
    """Share of the global irradiance coming straight from the sun's disc [-].

    s* = min(S/(S₀·cos z/d²), 0.85),  f = exp(3 − 1.34·s* − 1.65/s*) kept within 0..0.9;
    no direct beam with the sun below 0.5° or without sunlight.

    Parameters
    ----------
    solar_irradiance : numpy.ndarray
        Global horizontal irradiance S [W/m²].
    sun_cosine : numpy.ndarray
        Cosine of the solar zenith angle, cos z [-].
    sun_distance : float or array_like, optional
        Earth-sun distance d (default 1) [AU] (pacing.weather.sun.sun_distance).

    Returns
    -------
    numpy.ndarray
        f [-].

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655.

    Examples
    --------
    Clear noon, 900 W/m² with the sun at 60° elevation: s* = 0.7602,
    f = exp(3 − 1.0187 − 2.1704) = 0.828.

    >>> float(direct_fraction(np.array(900.0), np.array(np.cos(np.radians(30.0)))))
    0.828
    """
    lit = (sun_cosine > LILJEGREN_2008["lowest_sun_cosine"]) & (solar_irradiance > 0.0)
    top = (LILJEGREN_2008["solar_constant"] * np.where(lit, sun_cosine, 1.0)
           / np.asarray(sun_distance, dtype=float) ** 2)
    normalised = np.clip(np.where(lit, solar_irradiance, 1.0) / top, 1e-6,
                         LILJEGREN_2008["normalised_solar_max"])
    fraction = np.clip(np.exp(3.0 - 1.34 * normalised - 1.65 / normalised), 0.0, 0.9)
    return np.where(lit, fraction, 0.0)


# --- the globe's and the wick's energy balances -------------------------------------------------


def _bisect(balance: Callable[[np.ndarray], np.ndarray], low: np.ndarray,
            high: np.ndarray) -> np.ndarray:
    """Root of a decreasing `balance` between low and high, elementwise, by bisection."""
    for _ in range(BISECTION_STEPS):
        middle = 0.5 * (low + high)
        positive = balance(middle) > 0.0
        low = np.where(positive, middle, low)
        high = np.where(positive, high, middle)
    return 0.5 * (low + high)


def globe_temperature(air: np.ndarray, relative_humidity: np.ndarray, pressure: np.ndarray,
                      wind: np.ndarray, solar: np.ndarray, sun_cosine: np.ndarray,
                      fraction: np.ndarray) -> np.ndarray:
    """Black globe temperature from the globe's energy balance [K].

    T_g⁴ = ½(1 + ε_a)·T_a⁴ − h/(ε_g·σ)·(T_g − T_a)
           + S/(2·ε_g·σ)·(1 − α_g)·[1 + (1/(2·cos z) − 1)·f + α_sfc]

    (ground at air temperature, emissivity 1; h of a sphere at ½(T_g + T_a)).

    Parameters
    ----------
    air : numpy.ndarray
        Air temperature T_a [K].
    relative_humidity : numpy.ndarray
        Relative humidity, 0..1 [-].
    pressure : numpy.ndarray
        Air pressure [Pa].
    wind : numpy.ndarray
        Wind at 2 m [m/s].
    solar : numpy.ndarray
        Global horizontal irradiance S [W/m²].
    sun_cosine : numpy.ndarray
        cos z, kept ≥ cos(89.5°) [-].
    fraction : numpy.ndarray
        Direct share f [-].

    Returns
    -------
    numpy.ndarray
        T_g [K].

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655, eq. 4.
    """
    c = LILJEGREN_2008
    sigma_g = c["globe_emissivity"] * c["stefan_boltzmann"]
    cosine = np.maximum(sun_cosine, c["lowest_sun_cosine"])
    gains = (0.5 * (1.0 + _sky_emissivity(air, relative_humidity, pressure)) * air**4
             + solar / (2.0 * sigma_g) * (1.0 - c["globe_albedo"])
             * (1.0 + (0.5 / cosine - 1.0) * fraction + c["surface_albedo"]))

    def balance(globe: np.ndarray) -> np.ndarray:
        h = _convection(0.5 * (globe + air), pressure, wind, c["globe_diameter"], sphere=True)
        return gains - h / sigma_g * (globe - air) - globe**4

    return _bisect(balance, air - 50.0, air + 90.0)


def natural_wet_bulb_temperature(air: np.ndarray, relative_humidity: np.ndarray,
                                 pressure: np.ndarray, wind: np.ndarray, solar: np.ndarray,
                                 sun_cosine: np.ndarray, fraction: np.ndarray) -> np.ndarray:
    """Natural (unventilated, sunlit) wet-bulb temperature from the wick's balance [K].

    T_w = T_a − ΔH/(c_p·M_a/M_w)·(e_w − e_a)/(p − e_w)·(Pr/Sc)^0.56 + F/h,
    F = ε_w·σ·(½(1 + ε_a)·T_a⁴ − T_w⁴) + (1 − α_w)·S·[(1 − f)(1 + d/4L)
        + f·(tan z/π + d/4L) + α_sfc]

    (properties at ½(T_w + T_a); h of a cylinder in cross flow).

    Parameters
    ----------
    air, relative_humidity, pressure, wind, solar, sun_cosine, fraction : numpy.ndarray
        As for `globe_temperature` [K, -, Pa, m/s, W/m², -, -].

    Returns
    -------
    numpy.ndarray
        T_w [K].

    References
    ----------
    Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655, eq. 7.
    """
    c = LILJEGREN_2008
    cosine = np.maximum(sun_cosine, c["lowest_sun_cosine"])
    tangent = np.sqrt(1.0 - cosine**2) / cosine
    end_share = c["wick_diameter"] / (4.0 * c["wick_length"])
    sunlight = (1.0 - c["wick_albedo"]) * solar * (
        (1.0 - fraction) * (1.0 + end_share) + fraction * (tangent / np.pi + end_share)
        + c["surface_albedo"])
    sky = 0.5 * (1.0 + _sky_emissivity(air, relative_humidity, pressure)) * air**4
    vapour = relative_humidity * saturation_vapour_pressure_buck(air, pressure)
    ratio = c["heat_capacity"] * c["molar_mass_air"] / c["molar_mass_water"]

    def balance(wet: np.ndarray) -> np.ndarray:
        film = 0.5 * (wet + air)
        wick_vapour = saturation_vapour_pressure_buck(wet, pressure)
        density = pressure / (AIR_GAS_CONSTANT * film)
        viscosity = _viscosity(film)
        schmidt = viscosity / (density * _diffusivity(film, pressure))
        h = _convection(film, pressure, wind, c["wick_diameter"], sphere=False,
                        viscosity=viscosity)
        radiation = c["wick_emissivity"] * c["stefan_boltzmann"] * (sky - wet**4) + sunlight
        return (air - _heat_of_evaporation(film) / ratio * (wick_vapour - vapour)
                / (pressure - wick_vapour) * (PRANDTL / schmidt) ** c["wick_exponent"]
                + radiation / h - wet)

    low = air - (1.0 - relative_humidity) * 20.0 - 50.0
    return _bisect(balance, low, np.minimum(air + 70.0, 340.0))


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
