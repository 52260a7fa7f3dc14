"""Wind at the rider: the log wind profile, terrain roughness classes, head and cross parts.

Conventions (see DEVELOPERS.md): wind speed [m/s]; directions in degrees clockwise from true
north; the wind direction is where the wind blows FROM (meteorological convention); heading is
the rider's direction of travel. The headwind part is positive against the rider, the
crosswind part positive when the wind comes from the rider's right.

References
----------
Wieringa, J. (1992). Updating the Davenport roughness classification. J Wind Eng Ind Aerodyn
41(1-3):357-368.
WMO (2018). Guide to Instruments and Methods of Observation, WMO-No. 8, Vol. I ch. 5 (surface
wind), annex on the Davenport-Wieringa roughness classification.
Stull, R.B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer, ch. 9 (neutral
logarithmic wind profile in the surface layer).

Check values: docs/references.md, "Wind".
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.physics.inputs import finite_array

ROUGHNESS_LENGTHS: dict[str, float] = {
    "open water or pavement": 0.0002,
    "bare flat land": 0.005,
    "open grassland": 0.03,
    "low crops, few obstacles": 0.10,
    "high crops, scattered trees": 0.25,
    "parkland and bushes": 0.5,
    "suburb or forest": 1.0,
}
"""Terrain classes and their roughness length z0 [m], after the Davenport classification as
updated by Wieringa (1992) and tabulated in WMO-No. 8:

- open water or pavement: sea, lakes, tidal flats, paved areas, snow-covered flat plain;
- bare flat land: mud flats, snow, featureless land without vegetation or obstacles;
- open grassland: level country with grass or low vegetation, airfields, isolated obstacles;
- low crops, few obstacles: cultivated land with low crops, occasional large obstacles
  (spacing over 20 obstacle heights);
- high crops, scattered trees: high crops of varied height, hedgerows, scattered obstacles
  (spacing 15-20 heights);
- parkland and bushes: old cultivated landscape, orchards, farm fields with clumps of forest,
  numerous obstacles (spacing about 10 heights);
- suburb or forest: regular cover of large obstacles, villages, suburbs, forest.

The classification goes on to city centres (z0 ≥ 2 m), where no profile law holds at rider
height; it is left out."""

DEFAULT_ROUGHNESS_CLASS = "open grassland"
"""The class weather stations are sited in, and our default (z0 = 0.03 m)."""

PROFILE_LOWEST_HEIGHT_RATIO = 2.0
"""The log profile is used no closer to the ground than this many roughness lengths [-]; see
`log_profile_factor`."""


def _positive(value: ArrayLike, name: str, unit: str) -> np.ndarray:
    array = finite_array(value, name)
    if not np.all(array > 0):
        bad = float(np.ravel(array)[np.argmax(np.ravel(~(array > 0)))])
        raise InputError(f"{name} must be positive [{unit}], got {bad:g}")
    return array


def _non_negative(value: ArrayLike, name: str, unit: str) -> np.ndarray:
    array = finite_array(value, name)
    if not np.all(array >= 0):
        bad = float(np.ravel(array)[np.argmax(np.ravel(~(array >= 0)))])
        raise InputError(f"{name} must not be negative [{unit}], got {bad:g}")
    return array


def log_profile_factor(measured_height: ArrayLike, height: ArrayLike,
                       roughness_length: ArrayLike) -> np.ndarray:
    """Ratio of the wind speed at a height to the speed at the measurement height [-].

    Neutral logarithmic profile:

        u(z) / u(z_m) = ln(z / z0') / ln(z_m / z0'),
        z0' = min(z0, min(z, z_m) / k),  k = PROFILE_LOWEST_HEIGHT_RATIO = 2

    The law describes the flow well above the roughness elements; at z ≤ z0 it would give zero
    or negative wind. Where either height is below k·z0, the roughness length is taken as
    min(z, z_m)/k instead: terrain rougher than that is treated like terrain whose profile
    still holds at that height. The clamp keeps the factor continuous, positive, increasing in
    the height, never increasing with z0, and at most 1 when z ≤ z_m. At 1 m it makes the two
    roughest classes (z0 0.5 and 1.0 m) read alike: 0.231 of the 10 m wind.

    Parameters
    ----------
    measured_height : float or array_like
        Height of the wind measurement z_m [m] (10 m for weather reports).
    height : float or array_like
        Height wanted z [m] (about 1 m for a rider's body).
    roughness_length : float or array_like
        Terrain roughness length z0 [m] (see ROUGHNESS_LENGTHS).

    Returns
    -------
    numpy.ndarray
        u(z)/u(z_m) [-], broadcast from the inputs.

    References
    ----------
    Stull, R.B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer, ch. 9.
    Wieringa, J. (1992). Updating the Davenport roughness classification. J Wind Eng Ind
    Aerodyn 41(1-3):357-368.
    docs/references.md, "Wind".

    Examples
    --------
    Open grassland (z0 = 0.03 m), 1 m above the ground: ln(1/0.03)/ln(10/0.03) = 0.6036 of the
    10 m wind.

    >>> float(log_profile_factor(10.0, 1.0, 0.03))
    0.6036
    """
    measured_height = _positive(measured_height, "wind measurement height", "m")
    height = _positive(height, "height", "m")
    roughness_length = _positive(roughness_length, "roughness length", "m")
    effective = np.minimum(
        roughness_length, np.minimum(height, measured_height) / PROFILE_LOWEST_HEIGHT_RATIO
    )
    return np.log(height / effective) / np.log(measured_height / effective)


def wind_at_height(wind_speed: ArrayLike, measured_height: ArrayLike, height: ArrayLike,
                   roughness_length: ArrayLike) -> np.ndarray:
    """Wind speed at another height by the log wind profile [m/s].

    u(z) = u(z_m) · ln(z / z0') / ln(z_m / z0')   (see `log_profile_factor` for z0')

    Parameters
    ----------
    wind_speed : float or array_like
        Mean wind speed at `measured_height` [m/s], ≥ 0.
    measured_height : float or array_like
        Height of the measurement z_m [m].
    height : float or array_like
        Height wanted z [m].
    roughness_length : float or array_like
        Terrain roughness length z0 [m].

    Returns
    -------
    numpy.ndarray
        Wind speed at `height` [m/s], broadcast from the inputs.

    References
    ----------
    Stull (1988), An Introduction to Boundary Layer Meteorology, ch. 9; Wieringa (1992), J Wind
    Eng Ind Aerodyn 41:357-368. docs/references.md, "Wind".

    Examples
    --------
    A 5 m/s wind at 10 m over open grassland (z0 = 0.03 m) blows at 5·0.6036 = 3.018 m/s 1 m
    above the ground:

    >>> float(wind_at_height(5.0, 10.0, 1.0, 0.03))
    3.018
    """
    wind_speed = _non_negative(wind_speed, "wind speed", "m/s")
    return wind_speed * log_profile_factor(measured_height, height, roughness_length)


def wind_components(heading: ArrayLike, wind_from: ArrayLike,
                    wind_speed: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Wind split along and across the rider's direction of travel [m/s].

    headwind  = W · cos(θ_from − θ_heading)   positive against the rider, negative = tailwind
    crosswind = W · sin(θ_from − θ_heading)   positive when the wind comes from the right

    Parameters
    ----------
    heading : float or array_like
        Direction of travel [deg clockwise from north].
    wind_from : float or array_like
        Direction the wind blows FROM [deg clockwise from north].
    wind_speed : float or array_like
        Wind speed W [m/s], ≥ 0 (usually already reduced to rider height).

    Returns
    -------
    headwind : numpy.ndarray
        Component against the direction of travel [m/s], broadcast from the inputs.
    crosswind : numpy.ndarray
        Component across it, positive from the rider's right [m/s].

    Examples
    --------
    Riding north (0°) in a 4 m/s wind from the north-east (45°): 4·cos 45° = 2.828 m/s against
    the rider and as much from the right.

    >>> headwind, crosswind = wind_components(0.0, 45.0, 4.0)
    >>> round(float(headwind), 3), round(float(crosswind), 3)
    (2.828, 2.828)
    """
    heading = finite_array(heading, "heading")
    wind_from = finite_array(wind_from, "wind direction")
    wind_speed = _non_negative(wind_speed, "wind speed", "m/s")
    angle = np.radians(wind_from - heading)
    return wind_speed * np.cos(angle), wind_speed * np.sin(angle)
