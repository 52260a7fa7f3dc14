"""Physical constants and standard values used across the package (SI units).

One place for each constant; modules import from here.
"""

STANDARD_GRAVITY = 9.80665
"""Standard acceleration of gravity [m/s²] (CGPM 1901; ISO 80000-3)."""

STANDARD_SEA_LEVEL_PRESSURE = 101325.0
"""ICAO standard atmosphere sea-level pressure [Pa] (ICAO Doc 7488; ISO 2533:1975)."""

STANDARD_SEA_LEVEL_TEMPERATURE = 288.15
"""ICAO standard atmosphere sea-level temperature [K]."""

STANDARD_LAPSE_RATE = 0.0065
"""ICAO troposphere temperature lapse rate [K/m]."""

SPECIFIC_GAS_CONSTANT_DRY_AIR = 287.05287
"""Specific gas constant of dry air used by the ICAO standard atmosphere [J/(kg·K)]."""

SPECIFIC_GAS_CONSTANT_WATER_VAPOUR = 461.52
"""Specific gas constant of water vapour [J/(kg·K)] (R / M_w, M_w = 18.01528 g/mol)."""

EARTH_RADIUS_GEOPOTENTIAL = 6356766.0
"""Earth radius used for geopotential height in the ICAO atmosphere [m]."""

ZERO_CELSIUS = 273.15
"""0 °C in kelvin [K]."""
