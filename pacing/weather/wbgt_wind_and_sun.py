"""What the WBGT's globe and wick are exposed to, after Liljegren et al. (2008): the
atmosphere's stability class (the solar radiation / delta-T method), the 10 m wind reduced to
the globe's 2 m by the stability-class power law, and the direct share of the sunlight on a
horizontal surface.

Units: wind [m/s], solar irradiance [W/m²] on a horizontal surface.

References
----------
Liljegren, J.C., Carhart, R.A., Lawday, P., Tschopp, S. & Sharp, R. (2008). Modeling the wet
bulb globe temperature using standard meteorological measurements. J Occup Environ Hyg
5(10):645-655. doi:10.1080/15459620802310770
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.weather.wbgt_properties import LILJEGREN_2008

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
