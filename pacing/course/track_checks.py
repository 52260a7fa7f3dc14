"""The checks a raw track passes before a course is built from it (pacing.course.geometry.
build_course): positions in range, plausible elevations, a resampling step within bounds, one
flag per piece left out. Each refusal is an InputError of one line naming the point or value.

Only numpy: the numeric core.
"""

from __future__ import annotations

import math

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError

MINIMUM_STEP = 1.0
"""Smallest resampling step accepted [m]."""

MAXIMUM_STEP = 1000.0
"""Largest resampling step accepted [m]."""


LOWEST_ELEVATION = -500.0
"""Lowest plausible elevation of a course [m] (the shore of the Dead Sea is about -430 m)."""

HIGHEST_ELEVATION = 9000.0
"""Highest plausible elevation of a course [m] (Everest is 8849 m)."""


def validate_track(
    latitude: ArrayLike, longitude: ArrayLike, elevation: ArrayLike | None = None
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    """Check the raw track's arrays and return them as float arrays.

    Raises InputError for unequal lengths, fewer than two points, non-finite or out-of-range
    positions, elevations outside LOWEST_ELEVATION..HIGHEST_ELEVATION. NaN elevations mean
    "missing at that point" and are kept (build_course fills them).

    Parameters
    ----------
    latitude : array_like
        Latitude of each track point, -90..90 [deg].
    longitude : array_like
        Longitude of each track point, -180..180 [deg].
    elevation : array_like, optional
        Elevation of each track point, NaN where missing [m].

    Returns
    -------
    latitude : numpy.ndarray
        Flat float array [deg].
    longitude : numpy.ndarray
        Flat float array [deg].
    elevation : numpy.ndarray or None
        Flat float array, or None when none was given [m].
    """
    try:
        latitude = np.asarray(latitude, dtype=float).ravel()
        longitude = np.asarray(longitude, dtype=float).ravel()
        heights = (None if elevation is None
                   else np.asarray(elevation, dtype=float).ravel())
    except (TypeError, ValueError):
        raise InputError("positions and elevations must be numbers") from None
    if latitude.size != longitude.size or (heights is not None
                                           and heights.size != latitude.size):
        raise InputError("latitude, longitude and elevation must have the same number of points")
    if latitude.size == 0:
        raise InputError("the course has no points")
    if latitude.size == 1:
        raise InputError("the course has only one point; a course needs at least two")
    bad = ~np.isfinite(latitude) | (np.abs(latitude) > 90.0)
    if bad.any():
        index = int(np.argmax(bad))
        raise InputError(f"latitude out of range -90..90 deg at point {index + 1}: "
                         f"{latitude[index]:g}")
    bad = ~np.isfinite(longitude) | (np.abs(longitude) > 180.0)
    if bad.any():
        index = int(np.argmax(bad))
        raise InputError(f"longitude out of range -180..180 deg at point {index + 1}: "
                         f"{longitude[index]:g}")
    if heights is not None:
        with np.errstate(invalid="ignore"):
            bad = np.isinf(heights) | (heights < LOWEST_ELEVATION) | (
                heights > HIGHEST_ELEVATION)
        if bad.any():
            index = int(np.argmax(bad))
            raise InputError(f"elevation {heights[index]:g} m at point {index + 1} is outside "
                             f"the plausible range {LOWEST_ELEVATION:g}..{HIGHEST_ELEVATION:g} m")
    return latitude, longitude, heights



def checked_step(step: float) -> float:
    """The resampling step as a float, or InputError unless MINIMUM_STEP ≤ step ≤ MAXIMUM_STEP."""
    try:
        step = float(step)
    except (TypeError, ValueError):
        raise InputError(f"step must be a number of metres, got {step!r}") from None
    if not (math.isfinite(step) and MINIMUM_STEP <= step <= MAXIMUM_STEP):
        raise InputError(f"step must be between {MINIMUM_STEP:g} and {MAXIMUM_STEP:g} m, "
                         f"got {step:g}")
    return step


def checked_skip(skip: ArrayLike | None, pieces: int) -> np.ndarray:
    """The pieces left out as a boolean array of length `pieces` (none when None)."""
    if skip is None:
        return np.zeros(pieces, dtype=bool)
    mask = np.asarray(skip, dtype=bool).ravel()
    if mask.size != pieces:
        raise InputError("skip must have one flag per piece between track points")
    return mask

