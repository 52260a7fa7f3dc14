"""Density of humid air: saturation vapour pressure, CIPM-2007 and an ideal-gas mixture.

Units (see DEVELOPERS.md): pressure [Pa], temperature [°C], relative humidity as a fraction 0..1,
density [kg/m³].

The last step of the chain used for a course (pacing.weather.conditions), after pressure and
temperature at each elevation (pacing.physics.atmosphere): density of humid air by CIPM-2007
(`air_density`) or an ideal-gas mixture (`air_density_ideal_gas`); both are listed in
`AIR_DENSITY_MODELS` ("cipm-2007", the default, and "ideal-gas"; the old keys "cipm_2007" and
"ideal_gas" are still accepted).

Check values for every formula here are in docs/references.md, "Air".

Humidity is relative to saturation over liquid water at every temperature (the meteorological
convention, also below 0 °C).

References
----------
Picard, A., Davis, R.S., Gläser, M. & Fujii, K. (2008). Revised formula for the density of moist
air (CIPM-2007). Metrologia 45(2):149-155. doi:10.1088/0026-1394/45/2/004
Davis, R.S. (1992). Equation for the determination of the density of moist air (1981/91).
Metrologia 29(1):67-70.
Hardy, B. (1998). ITS-90 formulations for vapor pressure, frostpoint temperature, dewpoint
temperature, and enhancement factors in the range -100 to +100 °C. Proc. 3rd International
Symposium on Humidity & Moisture, NPL, London, pp. 214-221.
Alduchov, O.A. & Eskridge, R.E. (1996). Improved Magnus form approximation of saturation vapor
pressure. J Appl Meteorol 35(4):601-609.
ICAO (1993). Manual of the ICAO Standard Atmosphere, Doc 7488/3 (R_d of dry air).
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import (
    SPECIFIC_GAS_CONSTANT_DRY_AIR,
    SPECIFIC_GAS_CONSTANT_WATER_VAPOUR,
    ZERO_CELSIUS,
)
from pacing.errors import InputError
from pacing.physics.inputs import check_humidity, check_pressure, check_temperature, finite_array
from pacing.physics.registry import ModelRegistry

CIPM_2007 = {
    "molar_gas_constant": 8.314472,
    "molar_mass_dry_air": 28.96546e-3,
    "molar_mass_co2_slope": 12.011e-3,
    "molar_mass_water": 18.01528e-3,
    "saturation_a": 1.2378847e-5,
    "saturation_b": -1.9121316e-2,
    "saturation_c": 33.93711047,
    "saturation_d": -6.3431645e3,
    "enhancement_alpha": 1.00062,
    "enhancement_beta": 3.14e-8,
    "enhancement_gamma": 5.6e-7,
    "a0": 1.58123e-6,
    "a1": -2.9331e-8,
    "a2": 1.1043e-10,
    "b0": 5.707e-6,
    "b1": -2.051e-8,
    "c0": 1.9898e-4,
    "c1": -2.376e-6,
    "d": 1.83e-11,
    "e": -0.765e-8,
}
"""Constants of CIPM-2007 (Picard et al. 2008): R [J/(mol·K)];
M_a at x_CO2 = 0.0004 and its slope with x_CO2 [kg/mol]; M_v [kg/mol]; saturation-pressure
A [K⁻²], B [K⁻¹], C [-], D [K]; enhancement factor α [-], β [Pa⁻¹], γ [K⁻²]; compressibility
a0 [K/Pa], a1 [Pa⁻¹], a2 [1/(K·Pa)], b0 [K/Pa], b1 [Pa⁻¹], c0 [K/Pa], c1 [Pa⁻¹], d [K²/Pa²],
e [K²/Pa²]."""

HARDY_1998 = (
    -2.8365744e3,
    -6.028076559e3,
    1.954263612e1,
    -2.737830188e-2,
    1.6261698e-5,
    7.0229056e-10,
    -1.8680009e-13,
    2.7150305,
)
"""Coefficients g0..g7 of Hardy (1998), saturation over water on ITS-90: g0 [K²], g1 [K],
g2 [-], g3 [K⁻¹], g4 [K⁻²], g5 [K⁻³], g6 [K⁻⁴], g7 [-] (of ln T)."""

ALDUCHOV_ESKRIDGE_1996 = (610.94, 17.625, 243.04)
"""Magnus-form coefficients of Alduchov & Eskridge (1996): C [Pa], A [-], B [°C]."""

DEFAULT_CO2_MOLE_FRACTION = 0.0004
"""CO2 mole fraction assumed by CIPM-2007 unless measured [-]."""


# --- saturation vapour pressure ---------------------------------------------------------------


def saturation_vapour_pressure_hardy_1998(temperature: ArrayLike) -> np.ndarray:
    """Saturation vapour pressure over liquid water, Hardy (1998) on ITS-90 [Pa].

    ln e_s = Σ_{i=0..6} g_i·T^(i−2) + g7·ln T,  T [K]

    Stated for -100..100 °C (supercooled water below 0 °C); within 0.006 % of IAPWS-95
    (CoolProp) from 0 to 60 °C.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.

    Returns
    -------
    numpy.ndarray
        Saturation vapour pressure e_s [Pa], the shape of `temperature`.

    References
    ----------
    Hardy, B. (1998). ITS-90 formulations for vapor pressure, frostpoint temperature, dewpoint
    temperature, and enhancement factors in the range -100 to +100 °C. Proc. 3rd Int. Symp. on
    Humidity & Moisture, NPL London, 214-221. docs/references.md, "Air".

    Examples
    --------
    At 20 °C: 2339.26 Pa (CoolProp's IAPWS-95 saturation pressure is 2339.32 Pa):

    >>> float(saturation_vapour_pressure_hardy_1998(20.0))
    2339.26
    """
    kelvin = check_temperature(temperature) + ZERO_CELSIUS
    g = HARDY_1998
    exponent: np.ndarray = g[7] * np.log(kelvin)
    for i in range(7):
        exponent = exponent + g[i] * kelvin ** (i - 2)
    return np.exp(exponent)


def saturation_vapour_pressure_cipm_2007(temperature: ArrayLike) -> np.ndarray:
    """Saturation vapour pressure of CIPM-2007 (Davis 1992) [Pa].

    e_s = 1 Pa · exp(A·T² + B·T + C + D/T),  T [K]

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60 (the formula was fitted for 15-27 °C; it stays within
        0.06 % of Hardy 1998 from -40 to 60 °C and 0.22 % at -60 °C).

    Returns
    -------
    numpy.ndarray
        Saturation vapour pressure e_s [Pa], the shape of `temperature`.

    References
    ----------
    Picard, A., Davis, R.S., Gläser, M. & Fujii, K. (2008). Revised formula for the density of
    moist air (CIPM-2007). Metrologia 45(2):149-155. doi:10.1088/0026-1394/45/2/004
    Davis, R.S. (1992). Metrologia 29(1):67-70.

    Examples
    --------
    At 20 °C the formula gives 2339.16 Pa, 0.004 % below Hardy (1998):

    >>> float(saturation_vapour_pressure_cipm_2007(20.0))
    2339.16
    """
    kelvin = check_temperature(temperature) + ZERO_CELSIUS
    c = CIPM_2007
    return np.exp(
        c["saturation_a"] * kelvin**2
        + c["saturation_b"] * kelvin
        + c["saturation_c"]
        + c["saturation_d"] / kelvin
    )


def saturation_vapour_pressure_magnus(temperature: ArrayLike) -> np.ndarray:
    """Saturation vapour pressure over water, Magnus form of Alduchov & Eskridge (1996) [Pa].

    e_s = 610.94 Pa · exp(17.625·t / (243.04 + t)),  t [°C]

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.

    Returns
    -------
    numpy.ndarray
        Saturation vapour pressure e_s [Pa], the shape of `temperature`.

    References
    ----------
    Alduchov, O.A. & Eskridge, R.E. (1996). Improved Magnus form approximation of saturation
    vapor pressure. J Appl Meteorol 35(4):601-609.

    Examples
    --------
    At 20 °C: 610.94·exp(17.625·20/263.04) = 2333.44 Pa, 0.25 % below Hardy (1998):

    >>> float(saturation_vapour_pressure_magnus(20.0))
    2333.44
    """
    celsius = check_temperature(temperature)
    scale, slope, offset = ALDUCHOV_ESKRIDGE_1996
    return scale * np.exp(slope * celsius / (offset + celsius))


SATURATION_VAPOUR_PRESSURE_MODELS: ModelRegistry[Callable[[ArrayLike], np.ndarray]] = (
    ModelRegistry(
        {
            "hardy-1998": saturation_vapour_pressure_hardy_1998,
            "cipm-2007": saturation_vapour_pressure_cipm_2007,
            "magnus-alduchov-eskridge-1996": saturation_vapour_pressure_magnus,
        },
        aliases={
            "hardy_1998": "hardy-1998",
            "cipm_2007": "cipm-2007",
            "magnus_alduchov_eskridge_1996": "magnus-alduchov-eskridge-1996",
        },
        what="saturation vapour pressure formula",
    )
)
"""Saturation vapour pressure formulas by name: temperature [°C] → pressure [Pa]. The
underscore spellings of earlier versions are accepted on lookup."""


def saturation_vapour_pressure(temperature: ArrayLike) -> np.ndarray:
    """Saturation vapour pressure over liquid water [Pa]: Hardy (1998), the default.

    See `saturation_vapour_pressure_hardy_1998`; the alternatives are in
    `SATURATION_VAPOUR_PRESSURE_MODELS`.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.

    Returns
    -------
    numpy.ndarray
        Saturation vapour pressure e_s [Pa], the shape of `temperature`.

    References
    ----------
    Hardy (1998), Proc. 3rd Int. Symp. on Humidity & Moisture, NPL London, 214-221.

    Examples
    --------
    The triple point of water, 0.01 °C, has 611.657 Pa (IAPWS):

    >>> float(saturation_vapour_pressure(0.01))
    611.657
    """
    return saturation_vapour_pressure_hardy_1998(temperature)


# --- humid air density ------------------------------------------------------------------------


def enhancement_factor(temperature: ArrayLike, pressure: ArrayLike) -> np.ndarray:
    """Enhancement factor of water vapour in air, CIPM-2007 [-].

    f = α + β·p + γ·t²  (t [°C], p [Pa])

    Parameters
    ----------
    temperature : float or array_like
        Air temperature t [°C], -60..60.
    pressure : float or array_like
        Total air pressure p [Pa], > 0.

    Returns
    -------
    numpy.ndarray
        f [-], broadcast from the inputs.

    References
    ----------
    Picard et al. (2008), Metrologia 45:149-155. doi:10.1088/0026-1394/45/2/004

    Examples
    --------
    From the formula at 20 °C and 101 325 Pa: 1.00062 + 3.14e-8·101325 + 5.6e-7·400 = 1.00403.

    >>> float(enhancement_factor(20.0, 101325.0))
    1.00403
    """
    celsius = check_temperature(temperature)
    pressure = check_pressure(pressure)
    c = CIPM_2007
    return c["enhancement_alpha"] + c["enhancement_beta"] * pressure + c["enhancement_gamma"] * (
        celsius**2
    )


def vapour_mole_fraction(temperature: ArrayLike, pressure: ArrayLike,
                         relative_humidity: ArrayLike) -> np.ndarray:
    """Mole fraction of water vapour in humid air, CIPM-2007 [-].

    x_v = h · f(p, t) · e_s(T) / p

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.
    pressure : float or array_like
        Total air pressure [Pa], > 0.
    relative_humidity : float or array_like
        h, relative to saturation over water, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        x_v [-], broadcast from the inputs. Raises InputError when the vapour pressure would
        exceed the total pressure.

    References
    ----------
    Picard et al. (2008), Metrologia 45:149-155. doi:10.1088/0026-1394/45/2/004

    Examples
    --------
    Half-saturated air at 20 °C and one atmosphere: 0.5·1.00403·2339.16/101325 = 0.011589.

    >>> float(vapour_mole_fraction(20.0, 101325.0, 0.5))
    0.011589
    """
    humidity = check_humidity(relative_humidity)
    fraction = (
        humidity
        * enhancement_factor(temperature, pressure)
        * saturation_vapour_pressure_cipm_2007(temperature)
        / np.asarray(pressure, dtype=float)
    )
    if not np.all(fraction < 1.0):
        raise InputError("water vapour pressure exceeds the air pressure: check temperature "
                         "and pressure")
    return fraction


def compressibility_factor(temperature: ArrayLike, pressure: ArrayLike,
                           vapour_fraction: ArrayLike) -> np.ndarray:
    """Compressibility factor Z of humid air, CIPM-2007 [-].

    Z = 1 − (p/T)·[a0 + a1·t + a2·t² + (b0 + b1·t)·x_v + (c0 + c1·t)·x_v²]
          + (p²/T²)·(d + e·x_v²)

    with T [K], t [°C], p [Pa].

    Parameters
    ----------
    temperature : float or array_like
        Air temperature t [°C], -60..60.
    pressure : float or array_like
        Total air pressure p [Pa], > 0.
    vapour_fraction : float or array_like
        Mole fraction of water vapour x_v [-].

    Returns
    -------
    numpy.ndarray
        Z [-], broadcast from the inputs.

    References
    ----------
    Picard et al. (2008), Metrologia 45:149-155. doi:10.1088/0026-1394/45/2/004

    Examples
    --------
    Dry air at 20 °C and one atmosphere, from the formula: Z = 0.999643.

    >>> float(compressibility_factor(20.0, 101325.0, 0.0))
    0.999643
    """
    celsius = check_temperature(temperature)
    pressure = check_pressure(pressure)
    fraction = finite_array(vapour_fraction, "vapour mole fraction")
    kelvin = celsius + ZERO_CELSIUS
    c = CIPM_2007
    bracket = (
        c["a0"]
        + c["a1"] * celsius
        + c["a2"] * celsius**2
        + (c["b0"] + c["b1"] * celsius) * fraction
        + (c["c0"] + c["c1"] * celsius) * fraction**2
    )
    return 1.0 - pressure / kelvin * bracket + (pressure / kelvin) ** 2 * (
        c["d"] + c["e"] * fraction**2
    )


def air_density(
    temperature: ArrayLike,
    pressure: ArrayLike,
    relative_humidity: ArrayLike,
    co2_mole_fraction: float = DEFAULT_CO2_MOLE_FRACTION,
) -> np.ndarray:
    """Density of humid air by CIPM-2007 [kg/m³].

    ρ = p·M_a / (Z·R·T) · [1 − x_v·(1 − M_v/M_a)]

    M_a = [28.96546 + 12.011·(x_CO2 − 0.0004)]·1e-3 kg/mol, M_v = 18.01528e-3 kg/mol,
    R = 8.314472 J/(mol·K), x_v the vapour mole fraction (with the enhancement factor) and Z the
    compressibility factor. The formula was made for 15-27 °C and 60-110 kPa (relative
    uncertainty 22 ppm there); across the range accepted here it stays within 0.005 % of
    CoolProp's humid-air model near room conditions and within 0.04 % at the extremes
    (saturated air at 60 °C), far below what matters for a rider.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.
    pressure : float or array_like
        Total air pressure [Pa], > 0.
    relative_humidity : float or array_like
        h, relative to saturation over water, 0..1 [-].
    co2_mole_fraction : float, optional
        x_CO2 [-] (default 0.0004).

    Returns
    -------
    numpy.ndarray
        Density ρ [kg/m³], broadcast from the inputs.

    References
    ----------
    Picard, A., Davis, R.S., Gläser, M. & Fujii, K. (2008). Revised formula for the density of
    moist air (CIPM-2007). Metrologia 45(2):149-155. doi:10.1088/0026-1394/45/2/004
    docs/references.md, "Air".

    Examples
    --------
    20 °C, 101 325 Pa, 50 % relative humidity: 1.19931 kg/m³ (CoolProp's HAPropsSI humid-air
    model gives 1.19936 kg/m³, 0.004 % more):

    >>> float(air_density(20.0, 101325.0, 0.5))
    1.19931
    """
    celsius = check_temperature(temperature)
    pressure = check_pressure(pressure)
    fraction = vapour_mole_fraction(celsius, pressure, relative_humidity)
    c = CIPM_2007
    dry_molar_mass = c["molar_mass_dry_air"] + c["molar_mass_co2_slope"] * (
        co2_mole_fraction - DEFAULT_CO2_MOLE_FRACTION
    )
    compressibility = compressibility_factor(celsius, pressure, fraction)
    kelvin = celsius + ZERO_CELSIUS
    return (
        pressure
        * dry_molar_mass
        / (compressibility * c["molar_gas_constant"] * kelvin)
        * (1.0 - fraction * (1.0 - c["molar_mass_water"] / dry_molar_mass))
    )


def air_density_ideal_gas(temperature: ArrayLike, pressure: ArrayLike,
                          relative_humidity: ArrayLike) -> np.ndarray:
    """Density of humid air as a mixture of ideal gases [kg/m³].

    ρ = (p − e)/(R_d·T) + e/(R_v·T),  e = h·e_s(t) (Hardy 1998)

    R_d = 287.05287 J/(kg·K) (the ICAO value, so dry air on the standard atmosphere gives the
    ICAO table exactly), R_v = 461.52 J/(kg·K). Reads 0.03-0.09 % below CIPM-2007 (no
    compressibility, no enhancement factor; 0.04 % near 20 °C).

    Parameters
    ----------
    temperature : float or array_like
        Air temperature [°C], -60..60.
    pressure : float or array_like
        Total air pressure [Pa], > 0.
    relative_humidity : float or array_like
        h, relative to saturation over water, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        Density ρ [kg/m³], broadcast from the inputs.

    References
    ----------
    Dalton's law with the ideal-gas law (common practice); ICAO (1993), Doc 7488/3 for R_d.

    Examples
    --------
    Dry air on the standard atmosphere at 2000 m geopotential height (2000.629 m geometric),
    where the ICAO table gives 1.00649 kg/m³:

    >>> from pacing.physics.atmosphere import standard_pressure, temperature_at_elevation
    >>> elevation = 2000.629
    >>> air = temperature_at_elevation(elevation, 15.0, 0.0), standard_pressure(elevation)
    >>> float(air_density_ideal_gas(*air, 0.0))
    1.00649
    """
    celsius = check_temperature(temperature)
    pressure = check_pressure(pressure)
    humidity = check_humidity(relative_humidity)
    vapour = humidity * saturation_vapour_pressure(celsius)
    if not np.all(vapour < pressure):
        raise InputError("water vapour pressure exceeds the air pressure: check temperature "
                         "and pressure")
    kelvin = celsius + ZERO_CELSIUS
    return (pressure - vapour) / (SPECIFIC_GAS_CONSTANT_DRY_AIR * kelvin) + vapour / (
        SPECIFIC_GAS_CONSTANT_WATER_VAPOUR * kelvin
    )


AirDensityModel = Callable[[ArrayLike, ArrayLike, ArrayLike], np.ndarray]
"""(temperature [°C], pressure [Pa], relative humidity [0..1]) → density [kg/m³]."""

AIR_DENSITY_MODELS: ModelRegistry[AirDensityModel] = ModelRegistry(
    {
        "cipm-2007": air_density,
        "ideal-gas": air_density_ideal_gas,
    },
    aliases={"cipm_2007": "cipm-2007", "ideal_gas": "ideal-gas"},
    what="air density model",
)
"""Humid-air density models by name: (temperature [°C], pressure [Pa], relative humidity
[0..1]) → density [kg/m³]. The first, "cipm-2007", is the default; the old keys "cipm_2007"
and "ideal_gas" are accepted on lookup (stored plans may hold them)."""

DEFAULT_AIR_DENSITY_MODEL = "cipm-2007"
"""Key of the default humid-air density model in AIR_DENSITY_MODELS."""
