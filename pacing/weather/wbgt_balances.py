"""The globe's and the wick's energy balances of the WBGT model of Liljegren et al. (2008):
radiation from sky, ground and sun, convection, and for the wick evaporation, each solved for
its temperature by bisection (the black globe temperature T_g and the natural wet bulb
temperature T_nw of WBGT = 0.7·T_nw + 0.2·T_g + 0.1·T_a, pacing.weather.wbgt).

Units: temperatures [K], humidity 0..1, pressure [Pa], wind at 2 m [m/s], solar irradiance
[W/m²] on a horizontal surface.

References
----------
Liljegren, J.C., Carhart, R.A., Lawday, P., Tschopp, S. & Sharp, R. (2008). Modeling the wet
bulb globe temperature using standard meteorological measurements. J Occup Environ Hyg
5(10):645-655. doi:10.1080/15459620802310770
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from pacing.weather.wbgt_properties import (
    AIR_GAS_CONSTANT,
    LILJEGREN_2008,
    PRANDTL,
    air_viscosity,
    convection_coefficient,
    heat_of_evaporation,
    saturation_vapour_pressure_buck,
    sky_emissivity,
    vapour_diffusivity,
)

BISECTION_STEPS = 32
"""Bisection halvings for the globe and wick temperatures: 140 K / 2^32 = 3e-8 K, far below
the 0.02 K the original code iterates to (and 32 steps keep 20 000 pieces near 0.25 s)."""


def bisect_decreasing(balance: Callable[[np.ndarray], np.ndarray], low: np.ndarray,
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
    gains = (0.5 * (1.0 + sky_emissivity(air, relative_humidity, pressure)) * air**4
             + solar / (2.0 * sigma_g) * (1.0 - c["globe_albedo"])
             * (1.0 + (0.5 / cosine - 1.0) * fraction + c["surface_albedo"]))

    def balance(globe: np.ndarray) -> np.ndarray:
        h = convection_coefficient(0.5 * (globe + air), pressure, wind, c["globe_diameter"],
                                   sphere=True)
        return gains - h / sigma_g * (globe - air) - globe**4

    return bisect_decreasing(balance, air - 50.0, air + 90.0)


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
    sky = 0.5 * (1.0 + sky_emissivity(air, relative_humidity, pressure)) * air**4
    vapour = relative_humidity * saturation_vapour_pressure_buck(air, pressure)
    ratio = c["heat_capacity"] * c["molar_mass_air"] / c["molar_mass_water"]

    def balance(wet: np.ndarray) -> np.ndarray:
        film = 0.5 * (wet + air)
        wick_vapour = saturation_vapour_pressure_buck(wet, pressure)
        density = pressure / (AIR_GAS_CONSTANT * film)
        viscosity = air_viscosity(film)
        schmidt = viscosity / (density * vapour_diffusivity(film, pressure))
        h = convection_coefficient(film, pressure, wind, c["wick_diameter"], sphere=False,
                                   viscosity=viscosity)
        radiation = c["wick_emissivity"] * c["stefan_boltzmann"] * (sky - wet**4) + sunlight
        return (air - heat_of_evaporation(film) / ratio * (wick_vapour - vapour)
                / (pressure - wick_vapour) * (PRANDTL / schmidt) ** c["wick_exponent"]
                + radiation / h - wet)

    low = air - (1.0 - relative_humidity) * 20.0 - 50.0
    return bisect_decreasing(balance, low, np.minimum(air + 70.0, 340.0))
