"""A steady wind as the field test and the race fit see it: a vector (east, north) at rider
height, its speed and direction, its head- and crosswind on a piece, the same wind at 10 m by
the inverted log profile (pacing.physics.wind), how the directions of travel spread, and in
which directions a wind can be fitted at all (`wind_basis`); `WindEstimate` holds the result.

What makes a wind identifiable is the direction of travel: a headwind on one leg is a tailwind
on the other. Ridden in one heading only, a steady wind is just more drag; on an out-and-back
only the part along the road shows at first order (the part across it enters as w_c², which
looks like Crr): then the wind is fitted along that axis only. The fit itself:
pacing.fieldtest.wind_fit.

Conventions: headings and the direction a wind blows FROM in degrees clockwise from north; the
vector points where the wind blows TO; wind speeds at 10 m unless named "at rider".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.physics.wind import log_profile_factor

REPORT_HEIGHT = 10.0
"""Height at which wind speeds are reported [m] (the weather-report standard, DEVELOPERS.md)."""


ONE_HEADING_RESULTANT = 0.9
"""Mean resultant length of the headings above which a ride goes one way only [-] (our choice:
0.9 is, e.g., every piece within about ±25° of one heading)."""


ONE_AXIS_SPREAD = 0.05
"""Share of the heading spread across the main axis below which a ride is one road ridden both
ways (an out-and-back) [-]: the wind across it is then not fitted (our choice: 0.05 is every
piece within about ±13° of the axis)."""


@dataclass(frozen=True)
class HeadingSpread:
    """How the directions of travel spread, weighted by distance.

    Attributes
    ----------
    resultant : float
        Mean resultant length |Σ u_i·l_i| / Σ l_i of the unit vectors of travel u_i over
        pieces of length l_i [-]: 1 = one heading, 0 = as much one way as back.
    across : float
        Smaller eigenvalue of the length-weighted mean of u_i·u_iᵀ [-], 0..0.5: the share of
        travel across the main axis (0 = one road, 0.5 = every direction alike).
    axis : float
        Main axis of travel [deg clockwise from north], 0-180.
    """

    resultant: float
    across: float
    axis: float


@dataclass(frozen=True)
class WindEstimate:
    """A steady wind: estimated, or as given, with what the data said about it.

    Attributes
    ----------
    estimated : bool
        True when the wind was estimated from the data (else it is the given one, or calm).
    speed_at_rider : float
        Wind speed at rider height [m/s].
    speed : float
        The same wind at REPORT_HEIGHT (10 m), by the inverted log profile [m/s].
    wind_from : float
        Direction the wind blows FROM [deg clockwise from north] (0 when calm).
    speed_ci95 : tuple of float or None
        95 % bootstrap interval of `speed` [m/s] (10 m), or None.
    separable : bool
        False when the data could not separate the wind from CdA and Crr.
    correlation : float
        Largest |correlation| of a wind component with the CdA or Crr estimate [-].
    spread : HeadingSpread or None
        How the headings spread (None without headings).
    along_axis_only : bool
        True when only the wind along the main axis was fitted (an out-and-back).
    """

    estimated: bool
    speed_at_rider: float
    speed: float
    wind_from: float
    speed_ci95: tuple[float, float] | None = None
    separable: bool = True
    correlation: float = 0.0
    spread: HeadingSpread | None = None
    along_axis_only: bool = False


def wind_vector(speed: float, wind_from: float) -> np.ndarray:
    """The vector a wind blows TOWARDS, (east, north) [m/s].

    Parameters
    ----------
    speed : float
        Wind speed [m/s].
    wind_from : float
        Direction the wind blows FROM [deg clockwise from north].

    Returns
    -------
    numpy.ndarray
        (east, north) [m/s].

    Examples
    --------
    A 2 m/s wind from the north blows towards the south:

    >>> wind_vector(2.0, 0.0).round(9).tolist()
    [-0.0, -2.0]
    """
    towards = np.radians(wind_from + 180.0)
    return np.array([speed * np.sin(towards), speed * np.cos(towards)])


def speed_and_direction(vector: ArrayLike) -> tuple[float, float]:
    """(speed [m/s], direction it blows FROM [deg, 0-360]) of a wind vector (east, north).

    Parameters
    ----------
    vector : array_like
        (east, north) the wind blows towards [m/s].

    Returns
    -------
    tuple of float
        Speed [m/s] and FROM direction [deg clockwise from north]; 0 deg when calm.

    Examples
    --------
    >>> speed_and_direction([3.0, 0.0])  # blowing east: from the west
    (3.0, 270.0)
    """
    east, north = (float(v) for v in np.asarray(vector, dtype=float))
    speed = float(np.hypot(east, north))
    if speed == 0.0:
        return 0.0, 0.0
    return speed, float((np.degrees(np.arctan2(east, north)) + 180.0) % 360.0)


def head_and_cross(heading: ArrayLike, vector: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Headwind and crosswind on pieces of a heading for a wind vector [m/s].

        w_h = −(u_e·sin ψ + u_n·cos ψ),   w_c = u_n·sin ψ − u_e·cos ψ

    the same components as pacing.physics.wind.wind_components (headwind positive against the
    rider, crosswind positive from the rider's right).

    Parameters
    ----------
    heading : array_like
        Direction of travel ψ [deg clockwise from north].
    vector : array_like
        (east, north) the wind blows towards [m/s].

    Returns
    -------
    tuple of numpy.ndarray
        (headwind [m/s], crosswind [m/s]).
    """
    east, north = (float(v) for v in np.asarray(vector, dtype=float))
    psi = np.radians(np.asarray(heading, dtype=float))
    sin, cos = np.sin(psi), np.cos(psi)
    return -(east * sin + north * cos), north * sin - east * cos


def speed_at_report_height(speed_at_rider: float, rider_height: float = 1.0,
                           roughness_length: float = 0.03,
                           report_height: float = REPORT_HEIGHT) -> float:
    """Wind at the reporting height from the wind at rider height: the log profile inverted.

        u(10 m) = u(z_r) / f,   f = log_profile_factor(10 m, z_r, z0)

    Parameters
    ----------
    speed_at_rider : float
        Wind speed at rider height [m/s].
    rider_height : float
        Rider height z_r [m].
    roughness_length : float
        Terrain roughness length z0 [m].
    report_height : float
        Height wanted [m] (10 m).

    Returns
    -------
    float
        Wind speed at `report_height` [m/s].

    References
    ----------
    Stull, R.B. (1988). An Introduction to Boundary Layer Meteorology. Kluwer, ch. 9.

    Examples
    --------
    Over open grassland 1 m above the ground the wind is 0.6036 of the 10 m wind:

    >>> round(speed_at_report_height(0.6036, 1.0, 0.03), 4)
    1.0
    """
    factor = float(log_profile_factor(report_height, rider_height, roughness_length))
    return speed_at_rider / factor


def heading_spread(heading: ArrayLike, weight: ArrayLike) -> HeadingSpread:
    """How the directions of travel spread (`HeadingSpread`), weighted by distance.

    Parameters
    ----------
    heading : array_like
        Direction of travel of each piece [deg].
    weight : array_like
        Length of each piece [m] (or any non-negative weight).

    Returns
    -------
    HeadingSpread
        Mean resultant length [-], share across the main axis [-] and the axis [deg].

    Examples
    --------
    An out-and-back: no resultant, nothing across the axis, axis north-south.

    >>> s = heading_spread([0.0, 180.0], [1.0, 1.0])
    >>> round(s.resultant, 6), round(s.across, 6), round(s.axis, 6)
    (0.0, 0.0, 0.0)
    """
    psi = np.radians(np.asarray(heading, dtype=float))
    w = np.asarray(weight, dtype=float) * np.ones_like(psi)
    total = float(w.sum())
    if total <= 0:
        return HeadingSpread(1.0, 0.0, 0.0)
    east, north = np.sin(psi), np.cos(psi)
    resultant = float(np.hypot(np.sum(w * east), np.sum(w * north)) / total)
    tensor = np.array([[np.sum(w * east * east), np.sum(w * east * north)],
                       [np.sum(w * east * north), np.sum(w * north * north)]]) / total
    values, vectors = np.linalg.eigh(tensor)
    main = vectors[:, 1]
    axis = float(np.degrees(np.arctan2(main[0], main[1])) % 180.0)
    axis = 0.0 if axis > 180.0 - 1e-9 else axis
    return HeadingSpread(min(resultant, 1.0), float(max(values[0], 0.0)), axis)


def wind_basis(spread: HeadingSpread | None) -> np.ndarray | None:
    """The directions in which a wind can be fitted, as columns (east, north) [-].

    Parameters
    ----------
    spread : HeadingSpread or None
        How the ride's headings spread (None: no headings).

    Returns
    -------
    numpy.ndarray or None
        2×2 identity (both components), 2×1 along the main axis (an out-and-back: the wind
        across the road cannot be told from Crr), or None (no headings, or one heading only:
        a steady wind is then just more drag).
    """
    if spread is None or spread.resultant > ONE_HEADING_RESULTANT:
        return None
    if spread.across < ONE_AXIS_SPREAD:
        axis = np.radians(spread.axis)
        return np.array([[np.sin(axis)], [np.cos(axis)]])
    return np.eye(2)
