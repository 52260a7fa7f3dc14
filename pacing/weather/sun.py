"""The sun for the heat on race day: its elevation at a time and place, and the irradiance on
the ground under a cloud cover (pacing.weather.wbgt needs both when a forecast gives clouds but
no irradiance).

References
----------
Michalsky, J.J. (1988). The Astronomical Almanac's algorithm for approximate solar position
(1950-2050). Solar Energy 40(3):227-235. doi:10.1016/0038-092X(88)90045-X
US Naval Observatory. The Astronomical Almanac, section C (low-precision sun).
Kasten, F. & Czeplak, G. (1980). Solar and terrestrial radiation dependent on the amount and
type of cloud. Solar Energy 24(2):177-189. doi:10.1016/0038-092X(80)90391-6
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.physics.inputs import check_range, finite_array

SECONDS_PER_DAY = 86400.0
"""[s]"""

J2000_SECONDS = 946728000.0
"""2000-01-01 12:00 UTC in seconds since 1970 (the epoch J2000.0) [s]."""


def solar_elevation(time_utc: ArrayLike, latitude: ArrayLike, longitude: ArrayLike) -> np.ndarray:
    """Elevation of the sun's centre above the horizon, no refraction [deg].

    The Astronomical Almanac's low-precision formulas as Michalsky (1988) gives them (about
    0.01° from 1950 to 2050): with n the days from J2000.0 (2000-01-01 12:00 UTC),

        mean longitude L = 280.460° + 0.9856474°·n,  mean anomaly g = 357.528° + 0.9856003°·n
        ecliptic longitude λ = L + 1.915°·sin g + 0.020°·sin 2g,  obliquity ε = 23.439° − 4e-7°·n
        right ascension α = atan2(cos ε·sin λ, cos λ),  declination δ = asin(sin ε·sin λ)
        hour angle = 15°·(18.697374558 + 24.06570982441908·n) + longitude − α
        sin(elevation) = sin φ·sin δ + cos φ·cos δ·cos(hour angle)

    Parameters
    ----------
    time_utc : float or array_like
        Seconds since 1970-01-01 00:00 UTC [s].
    latitude : float or array_like
        Latitude φ, -90..90 [deg north].
    longitude : float or array_like
        Longitude, -180..180 [deg east].

    Returns
    -------
    numpy.ndarray
        Sun elevation, -90..90 [deg], broadcast from the inputs.

    References
    ----------
    Michalsky, J.J. (1988). The Astronomical Almanac's algorithm for approximate solar
    position (1950-2050). Solar Energy 40(3):227-235. doi:10.1016/0038-092X(88)90045-X

    Examples
    --------
    Midsummer noon (UTC, 2026-06-21) on the Greenwich meridian at 51.48° N: about
    90 − 51.48 + 23.44 = 61.96:

    >>> round(float(solar_elevation(1782043200.0, 51.48, 0.0)), 2)
    61.96
    """
    latitude = finite_array(latitude, "latitude")
    check_range(latitude, -90.0, 90.0, "latitude must be -90 to 90 degrees")
    longitude = finite_array(longitude, "longitude")
    check_range(longitude, -180.0, 180.0, "longitude must be -180 to 180 degrees")
    days = (finite_array(time_utc, "time") - J2000_SECONDS) / SECONDS_PER_DAY
    mean_longitude = np.radians((280.460 + 0.9856474 * days) % 360.0)
    anomaly = np.radians((357.528 + 0.9856003 * days) % 360.0)
    ecliptic = mean_longitude + np.radians(1.915 * np.sin(anomaly) + 0.020 * np.sin(2 * anomaly))
    obliquity = np.radians(23.439 - 4e-7 * days)
    ascension = np.arctan2(np.cos(obliquity) * np.sin(ecliptic), np.cos(ecliptic))
    declination = np.arcsin(np.sin(obliquity) * np.sin(ecliptic))
    sidereal = np.radians(((18.697374558 + 24.06570982441908 * days) % 24.0) * 15.0)
    hour_angle = sidereal + np.radians(longitude) - ascension
    phi = np.radians(latitude)
    sine = (np.sin(phi) * np.sin(declination)
            + np.cos(phi) * np.cos(declination) * np.cos(hour_angle))
    return np.degrees(np.arcsin(np.clip(sine, -1.0, 1.0)))


def sun_distance(time_utc: ArrayLike) -> np.ndarray:
    """Distance from the Earth to the sun [AU].

    d = 1.00014 − 0.01671·cos g − 0.00014·cos 2g,  g = 357.528° + 0.9856003°·n,

    n the days from J2000.0 (the Astronomical Almanac's low-precision formula, good to about
    1e-5 AU between 1950 and 2050).

    Parameters
    ----------
    time_utc : float or array_like
        Seconds since 1970-01-01 00:00 UTC [s].

    Returns
    -------
    numpy.ndarray
        d [AU].

    References
    ----------
    US Naval Observatory, The Astronomical Almanac, section C (low-precision formulas for the
    sun).

    Examples
    --------
    Near perihelion in early January and aphelion in early July:

    >>> round(float(sun_distance(1767657600.0)), 4), round(float(sun_distance(1783296000.0)), 4)
    (0.9833, 1.0167)
    """
    days = (finite_array(time_utc, "time") - J2000_SECONDS) / SECONDS_PER_DAY
    anomaly = np.radians((357.528 + 0.9856003 * days) % 360.0)
    return 1.00014 - 0.01671 * np.cos(anomaly) - 0.00014 * np.cos(2.0 * anomaly)


def irradiance_from_cloud_cover(sun_elevation: ArrayLike, cloud_cover: ArrayLike) -> np.ndarray:
    """Global horizontal irradiance from the sun's elevation and the cloud cover [W/m²].

    G = (910·sin h − 30)·(1 − 0.75·N^3.4), at least 0 (Kasten & Czeplak 1980), N the cloud
    cover as a fraction (eighths / 8).

    Parameters
    ----------
    sun_elevation : float or array_like
        Sun's elevation h [deg].
    cloud_cover : float or array_like
        Share of the sky covered, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        G [W/m²].

    References
    ----------
    Kasten, F. & Czeplak, G. (1980), Solar Energy 24(2):177-189.

    Examples
    --------
    Sun at 60°, half the sky covered: (910·0.8660 − 30)·(1 − 0.75·0.5^3.4) = 704.2 W/m².

    >>> float(irradiance_from_cloud_cover(60.0, 0.5))
    704.2
    """
    elevation = finite_array(sun_elevation, "sun elevation")
    check_range(elevation, -90.0, 90.0, "sun elevation must be -90 to 90 degrees")
    cover = finite_array(cloud_cover, "cloud cover")
    check_range(cover, 0.0, 1.0, "cloud cover must be 0-100 %")
    clear = 910.0 * np.sin(np.radians(elevation)) - 30.0
    return np.maximum(clear * (1.0 - 0.75 * cover**3.4), 0.0)
