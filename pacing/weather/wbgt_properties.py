"""Properties of air and water in the WBGT model of Liljegren et al. (2008), as in the authors'
reference code: its constants, the saturation vapour pressure (Buck 1981 with the enhancement
factor), the viscosity of air, the diffusivity of water vapour, the heat of evaporation, the
clear sky's emissivity and the convective heat transfer of the globe and the wick
(pacing.weather.wbgt_balances uses them).

Units: temperatures [K], pressure [Pa], wind [m/s].

References
----------
Liljegren, J.C., Carhart, R.A., Lawday, P., Tschopp, S. & Sharp, R. (2008). Modeling the wet
bulb globe temperature using standard meteorological measurements. J Occup Environ Hyg
5(10):645-655. doi:10.1080/15459620802310770
Buck, A.L. (1981). New equations for computing vapor pressure and enhancement factor. J Appl
Meteorol 20:1527-1532.
"""

from __future__ import annotations

import numpy as np

from pacing.constants import ZERO_CELSIUS

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


def air_viscosity(kelvin: np.ndarray) -> np.ndarray:
    """Dynamic viscosity of air [kg/(m·s)] (Lennard-Jones, σ = 3.617 Å, ε/k = 97 K)."""
    omega = (kelvin / 97.0 - 2.9) / 0.4 * (-0.034) + 1.048
    return 2.6693e-6 * np.sqrt(LILJEGREN_2008["molar_mass_air"] * kelvin) / (3.617**2 * omega)


def vapour_diffusivity(kelvin: np.ndarray, pressure: np.ndarray) -> np.ndarray:
    """Diffusivity of water vapour in air [m²/s] (Bird, Stewart & Lightfoot)."""
    critical_pressure = (36.4 * 218.0) ** (1.0 / 3.0)
    critical_temperature = (132.0 * 647.3) ** (5.0 / 12.0)
    mixture = np.sqrt(1.0 / LILJEGREN_2008["molar_mass_air"]
                      + 1.0 / LILJEGREN_2008["molar_mass_water"])
    reduced = kelvin / np.sqrt(132.0 * 647.3)
    return (3.640e-4 * reduced**2.334 * critical_pressure * critical_temperature * mixture
            / (pressure / 101325.0) * 1e-4)


def heat_of_evaporation(kelvin: np.ndarray) -> np.ndarray:
    """Latent heat of evaporation of water [J/kg]."""
    return (313.15 - kelvin) / 30.0 * (-71100.0) + 2.4073e6


def sky_emissivity(kelvin: np.ndarray, relative_humidity: np.ndarray,
                   pressure: np.ndarray) -> np.ndarray:
    """Emissivity of the clear sky, 0.575·e^(1/7), e the vapour pressure [hPa]."""
    vapour_hpa = relative_humidity * saturation_vapour_pressure_buck(kelvin, pressure) / 100.0
    return 0.575 * vapour_hpa ** (1.0 / 7.0)


def convection_coefficient(kelvin: np.ndarray, pressure: np.ndarray, wind: np.ndarray,
                           diameter: float, sphere: bool,
                           viscosity: np.ndarray | None = None) -> np.ndarray:
    """Convective heat transfer coefficient of the globe (sphere) or the wick (cylinder)
    [W/(m²·K)]: Nu = 2 + 0.6·Re^½·Pr^⅓ or Nu = 0.281·Re^0.6·Pr^0.44, h = Nu·k/d, with the
    thermal conductivity k = (c_p + 1.25·R)·μ (Eucken)."""
    mu = air_viscosity(kelvin) if viscosity is None else viscosity
    density = pressure / (AIR_GAS_CONSTANT * kelvin)
    reynolds = wind * density * diameter / mu
    if sphere:
        nusselt = 2.0 + 0.6 * np.sqrt(reynolds) * PRANDTL**0.3333
    else:
        nusselt = 0.281 * reynolds**0.6 * PRANDTL**0.44
    conductivity = (LILJEGREN_2008["heat_capacity"] + 1.25 * AIR_GAS_CONSTANT) * mu
    return nusselt * conductivity / diameter
