"""Air density along a course: standard atmosphere, lapse rate and humid air.

Units (see DEVELOPERS.md): elevation [m] above mean sea level (geometric, as in a GPX file),
pressure [Pa], temperature [°C], relative humidity as a fraction 0..1, density [kg/m³].

The chain used for a course (pacing.weather.conditions):

1. pressure at each elevation from the ICAO standard atmosphere, scaled by the day's
   sea-level pressure (`standard_pressure`);
2. temperature given at the start, following the standard lapse rate elsewhere
   (`temperature_at_elevation`);
3. density of humid air by CIPM-2007 (`air_density`) or an ideal-gas mixture
   (`air_density_ideal_gas`); both are listed in `AIR_DENSITY_MODELS`.

Humidity is relative to saturation over liquid water at every temperature (the meteorological
convention, also below 0 °C).

References
----------
ICAO (1993). Manual of the ICAO Standard Atmosphere, Doc 7488/3; ISO 2533:1975 Standard
Atmosphere.
Picard, A., Davis, R.S., Gläser, M. & Fujii, K. (2008). Revised formula for the density of moist
air (CIPM-2007). Metrologia 45(2):149-155. doi:10.1088/0026-1394/45/2/004
Davis, R.S. (1992). Equation for the determination of the density of moist air (1981/91).
Metrologia 29(1):67-70.
Hardy, B. (1998). ITS-90 formulations for vapor pressure, frostpoint temperature, dewpoint
temperature, and enhancement factors in the range -100 to +100 °C. Proc. 3rd International
Symposium on Humidity & Moisture, NPL, London, pp. 214-221.
Alduchov, O.A. & Eskridge, R.E. (1996). Improved Magnus form approximation of saturation vapor
pressure. J Appl Meteorol 35(4):601-609.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

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

TEMPERATURE_RANGE = (-60.0, 60.0)
"""Air temperatures accepted [°C]; outside them the input is almost surely a mistake."""

GEOPOTENTIAL_HEIGHT_RANGE = (-2000.0, 11000.0)
"""Geopotential heights where the troposphere formula holds [m] (ISO 2533 tabulates the
troposphere from -2000 m to the tropopause at 11000 m)."""

PRESSURE_EXPONENT = STANDARD_GRAVITY / (STANDARD_LAPSE_RATE * SPECIFIC_GAS_CONSTANT_DRY_AIR)
"""g0 / (L·R) of the ICAO troposphere, 5.25588 [-]."""

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
"""Coefficients g0..g7 of Hardy (1998), saturation over water on ITS-90."""

ALDUCHOV_ESKRIDGE_1996 = (610.94, 17.625, 243.04)
"""Magnus-form coefficients of Alduchov & Eskridge (1996): C [Pa], A [-], B [°C]."""

DEFAULT_CO2_MOLE_FRACTION = 0.0004
"""CO2 mole fraction assumed by CIPM-2007 unless measured [-]."""


# --- input checks -----------------------------------------------------------------------------


def _as_array(value, name: str) -> np.ndarray:
    """`value` as a float array, or InputError naming `name` when it is not a finite number
    (the one input check of pacing.physics.air and pacing.physics.wind)."""
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


def _check_range(array: np.ndarray, low: float, high: float, message: str) -> None:
    ok = (array >= low) & (array <= high)
    if not np.all(ok):
        raise InputError(f"{message}, got {_first_bad(array, ok):g}")


def _check_temperature(temperature, name: str = "temperature") -> np.ndarray:
    array = _as_array(temperature, name)
    low, high = TEMPERATURE_RANGE
    _check_range(array, low, high, f"{name} must be between {low:g} and {high:g} °C")
    return array


def _check_pressure(pressure, name: str = "pressure") -> np.ndarray:
    array = _as_array(pressure, name)
    if not np.all(array > 0):
        raise InputError(f"{name} must be positive [Pa], got {_first_bad(array, array > 0):g}")
    return array


def _check_humidity(relative_humidity) -> np.ndarray:
    array = _as_array(relative_humidity, "relative humidity")
    ok = (array >= 0.0) & (array <= 1.0)
    if not np.all(ok):
        bad = _first_bad(array, ok)
        raise InputError(f"relative humidity must be 0-100 %, got {100 * bad:g} % "
                         f"(fraction {bad:g})")
    return array


# --- standard atmosphere ----------------------------------------------------------------------


def geopotential_height(elevation) -> np.ndarray:
    """Geopotential height of a geometric elevation [m].

    H = r0·z / (r0 + z), r0 = 6 356 766 m (ICAO Doc 7488; ISO 2533).

    Parameters
    ----------
    elevation : geometric height above mean sea level z [m].
    """
    elevation = _as_array(elevation, "elevation")
    return EARTH_RADIUS_GEOPOTENTIAL * elevation / (EARTH_RADIUS_GEOPOTENTIAL + elevation)


def _troposphere_height(elevation) -> np.ndarray:
    height = geopotential_height(elevation)
    low, high = GEOPOTENTIAL_HEIGHT_RANGE
    _check_range(height, low, high, f"elevation must be between {low:g} and {high:g} m")
    return height


def standard_pressure(elevation, sea_level_pressure: float = STANDARD_SEA_LEVEL_PRESSURE):
    """Air pressure at an elevation by the ICAO standard atmosphere, troposphere [Pa].

    p = p_sl · (T(H) / T0)^(g0 / (L·R)),  T(H) = T0 − L·H

    with H the geopotential height, T0 = 288.15 K, L = 0.0065 K/m, R = 287.05287 J/(kg·K),
    g0 = 9.80665 m/s² (exponent 5.25588). With the standard p_sl = 101325 Pa this is the ICAO
    table; another sea-level pressure (the day's QFF-style reading) scales it in proportion.

    Parameters
    ----------
    elevation : geometric height above mean sea level [m], -2000..11000 m geopotential.
    sea_level_pressure : pressure reduced to sea level [Pa].

    References
    ----------
    ICAO Doc 7488/3 (1993); ISO 2533:1975.
    """
    height = _troposphere_height(elevation)
    sea_level_pressure = _check_pressure(sea_level_pressure, "sea-level pressure")
    temperature = STANDARD_SEA_LEVEL_TEMPERATURE - STANDARD_LAPSE_RATE * height
    return sea_level_pressure * (temperature / STANDARD_SEA_LEVEL_TEMPERATURE) ** PRESSURE_EXPONENT


def temperature_at_elevation(elevation, start_temperature, start_elevation):
    """Air temperature at an elevation, from the temperature at the start [°C].

    T(z) = T_start − L·(H(z) − H(z_start)),  L = 0.0065 K/m (ICAO troposphere lapse rate),

    H the geopotential height (so that 15 °C at 0 m gives the ICAO standard temperature at
    every elevation). A real day's lapse rate varies (inversions, sun on the road); this is the
    neutral assumption.

    Parameters
    ----------
    elevation : geometric height above mean sea level [m].
    start_temperature : air temperature at start_elevation [°C].
    start_elevation : elevation where start_temperature holds [m].

    References
    ----------
    ICAO Doc 7488/3 (1993); ISO 2533:1975.
    """
    start_temperature = _check_temperature(start_temperature, "start temperature")
    height = _troposphere_height(elevation)
    start_height = _troposphere_height(start_elevation)
    return start_temperature - STANDARD_LAPSE_RATE * (height - start_height)


# --- saturation vapour pressure ---------------------------------------------------------------


def saturation_vapour_pressure_hardy_1998(temperature):
    """Saturation vapour pressure over liquid water, Hardy (1998) on ITS-90 [Pa].

    ln e_s = Σ_{i=0..6} g_i·T^(i−2) + g7·ln T,  T [K]

    Stated for -100..100 °C (supercooled water below 0 °C); within 0.006 % of IAPWS-95
    (CoolProp) from 0 to 60 °C.

    Parameters
    ----------
    temperature : air temperature [°C], -60..60.

    References
    ----------
    Hardy, B. (1998), Proc. 3rd Int. Symp. on Humidity & Moisture, NPL London, 214-221.
    """
    kelvin = _check_temperature(temperature) + ZERO_CELSIUS
    g = HARDY_1998
    exponent = g[7] * np.log(kelvin)
    for i in range(7):
        exponent = exponent + g[i] * kelvin ** (i - 2)
    return np.exp(exponent)


def saturation_vapour_pressure_cipm_2007(temperature):
    """Saturation vapour pressure of CIPM-2007 (Davis 1992) [Pa].

    e_s = 1 Pa · exp(A·T² + B·T + C + D/T),  T [K]

    Parameters
    ----------
    temperature : air temperature [°C], -60..60 (the formula was fitted for 15-27 °C; it
        stays within 0.06 % of Hardy 1998 from -40 to 60 °C and 0.22 % at -60 °C).

    References
    ----------
    Picard et al. (2008), Metrologia 45:149; Davis (1992), Metrologia 29:67.
    """
    kelvin = _check_temperature(temperature) + ZERO_CELSIUS
    c = CIPM_2007
    return np.exp(
        c["saturation_a"] * kelvin**2
        + c["saturation_b"] * kelvin
        + c["saturation_c"]
        + c["saturation_d"] / kelvin
    )


def saturation_vapour_pressure_magnus(temperature):
    """Saturation vapour pressure over water, Magnus form of Alduchov & Eskridge (1996) [Pa].

    e_s = 610.94 Pa · exp(17.625·t / (243.04 + t)),  t [°C]

    Parameters
    ----------
    temperature : air temperature [°C], -60..60.

    References
    ----------
    Alduchov & Eskridge (1996), J Appl Meteorol 35:601.
    """
    celsius = _check_temperature(temperature)
    scale, slope, offset = ALDUCHOV_ESKRIDGE_1996
    return scale * np.exp(slope * celsius / (offset + celsius))


SATURATION_VAPOUR_PRESSURE_MODELS: dict[str, Callable] = {
    "hardy_1998": saturation_vapour_pressure_hardy_1998,
    "cipm_2007": saturation_vapour_pressure_cipm_2007,
    "magnus_alduchov_eskridge_1996": saturation_vapour_pressure_magnus,
}
"""Saturation vapour pressure formulas by name: temperature [°C] → pressure [Pa]."""


def saturation_vapour_pressure(temperature):
    """Saturation vapour pressure over liquid water [Pa]: Hardy (1998), the default.

    See `saturation_vapour_pressure_hardy_1998`; the alternatives are in
    `SATURATION_VAPOUR_PRESSURE_MODELS`.

    Parameters
    ----------
    temperature : air temperature [°C], -60..60.
    """
    return saturation_vapour_pressure_hardy_1998(temperature)


# --- humid air density ------------------------------------------------------------------------


def enhancement_factor(temperature, pressure):
    """Enhancement factor of water vapour in air, CIPM-2007 [-].

    f = α + β·p + γ·t²  (t [°C], p [Pa])

    Parameters
    ----------
    temperature : [°C]; pressure : total pressure [Pa].

    References
    ----------
    Picard et al. (2008), Metrologia 45:149.
    """
    celsius = _check_temperature(temperature)
    pressure = _check_pressure(pressure)
    c = CIPM_2007
    return c["enhancement_alpha"] + c["enhancement_beta"] * pressure + c["enhancement_gamma"] * (
        celsius**2
    )


def vapour_mole_fraction(temperature, pressure, relative_humidity):
    """Mole fraction of water vapour in humid air, CIPM-2007 [-].

    x_v = h · f(p, t) · e_s(T) / p

    Parameters
    ----------
    temperature : [°C]; pressure : total pressure [Pa]; relative_humidity : h, 0..1 [-].

    References
    ----------
    Picard et al. (2008), Metrologia 45:149.
    """
    humidity = _check_humidity(relative_humidity)
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


def compressibility_factor(temperature, pressure, vapour_fraction):
    """Compressibility factor Z of humid air, CIPM-2007 [-].

    Z = 1 − (p/T)·[a0 + a1·t + a2·t² + (b0 + b1·t)·x_v + (c0 + c1·t)·x_v²]
          + (p²/T²)·(d + e·x_v²)

    with T [K], t [°C], p [Pa].

    Parameters
    ----------
    temperature : [°C]; pressure : total pressure [Pa]; vapour_fraction : x_v [-].

    References
    ----------
    Picard et al. (2008), Metrologia 45:149.
    """
    celsius = _check_temperature(temperature)
    pressure = _check_pressure(pressure)
    fraction = _as_array(vapour_fraction, "vapour mole fraction")
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
    temperature, pressure, relative_humidity, co2_mole_fraction: float = DEFAULT_CO2_MOLE_FRACTION
):
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
    temperature : air temperature [°C], -60..60.
    pressure : total air pressure [Pa], > 0.
    relative_humidity : h, relative to saturation over water, 0..1 [-].
    co2_mole_fraction : x_CO2 [-] (default 0.0004).

    References
    ----------
    Picard, Davis, Gläser & Fujii (2008), Metrologia 45:149-155.
    """
    celsius = _check_temperature(temperature)
    pressure = _check_pressure(pressure)
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


def air_density_ideal_gas(temperature, pressure, relative_humidity):
    """Density of humid air as a mixture of ideal gases [kg/m³].

    ρ = (p − e)/(R_d·T) + e/(R_v·T),  e = h·e_s(t) (Hardy 1998)

    R_d = 287.05287 J/(kg·K) (the ICAO value, so dry air on the standard atmosphere gives the
    ICAO table exactly), R_v = 461.52 J/(kg·K). Reads 0.03-0.09 % below CIPM-2007 (no
    compressibility, no enhancement factor; 0.04 % near 20 °C).

    Parameters
    ----------
    temperature : [°C], -60..60; pressure : total pressure [Pa], > 0;
    relative_humidity : h, 0..1 [-].

    References
    ----------
    Dalton's law with the ideal-gas law (common practice); ICAO Doc 7488/3 for R_d.
    """
    celsius = _check_temperature(temperature)
    pressure = _check_pressure(pressure)
    humidity = _check_humidity(relative_humidity)
    vapour = humidity * saturation_vapour_pressure(celsius)
    if not np.all(vapour < pressure):
        raise InputError("water vapour pressure exceeds the air pressure: check temperature "
                         "and pressure")
    kelvin = celsius + ZERO_CELSIUS
    return (pressure - vapour) / (SPECIFIC_GAS_CONSTANT_DRY_AIR * kelvin) + vapour / (
        SPECIFIC_GAS_CONSTANT_WATER_VAPOUR * kelvin
    )


AIR_DENSITY_MODELS: dict[str, Callable] = {
    "cipm_2007": air_density,
    "ideal_gas": air_density_ideal_gas,
}
"""Humid-air density models by name: (temperature [°C], pressure [Pa], relative humidity
[0..1]) → density [kg/m³]. The first is the default."""
