"""Elevation of a course: the cleaning settings (ElevationSmoothing), smoothing over a distance
window, the grade limit, filling points without a height, the absurd-jump check, ascent, and
what the cleaning changed (as notices).

The profile is smoothed with a positive, symmetric kernel (Gaussian or flat, numpy; the ends
padded by odd reflection, so start and finish heights and a linear profile are kept and the
ascent never grows), then re-integrated with every grade clipped to the limit.
pacing.course.geometry builds courses with these.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.notices import Notice, note, warning

ELEVATION_JUMP_SLACK = 50.0
"""Elevation change between two track points is absurd beyond this height [m] plus
ELEVATION_JUMP_GRADE times their horizontal distance."""

ELEVATION_JUMP_GRADE = 1.0
"""Grade no road or path keeps between two track points (100 %) [-]."""

SUSTAINED_GRADE_LENGTH = 100.0
"""Shortest stretch beyond the grade limit kept as real climbing when there is no smoothing
window [m]; with one, the window itself (sustained_length)."""

GRADE_LIMIT_REPORT_HEIGHT = 5.0
"""The grade limit moving the profile by more than this is reported [m] (common practice: a
few metres, about what a consumer GNSS receiver's barometric altitude drifts)."""


@dataclass(frozen=True)
class ElevationSmoothing:
    """How a course's elevation is cleaned: smoothing over a distance window, then a grade limit.

    Both kernels are positive and symmetric; the ends are padded by odd reflection about the end
    points, so a straight or linear profile passes unchanged and the start and finish heights
    are kept, and the ascent of the cleaned course never exceeds that of the raw track (see
    smooth_elevation; padding with the end values is the fallback that guarantees it).

    Attributes
    ----------
    window : float
        Width of the smoothing window along the course, ≥ 0; for "gaussian" the kernel's
        standard deviation is window/4 (truncated at ±3 standard deviations), for
        "moving-average" it is a flat window of this width; 0 turns smoothing off [m].
    max_grade : float
        Steepest grade kept after smoothing, up or down, 0..1; steeper pieces are flattened
        to this grade, unless they make a stretch at least `sustained_length` long (real
        climbing, kept with a note) [-].
    method : {"gaussian", "moving-average", "none"}
        A key of SMOOTHING_METHODS [-].
    """

    window: float = 200.0
    max_grade: float = 0.25
    method: str = "gaussian"

    def __post_init__(self) -> None:
        if not (math.isfinite(self.window) and self.window >= 0):
            raise InputError(f"smoothing window must be a length >= 0 m, got {self.window!r}")
        if not (math.isfinite(self.max_grade) and 0 < self.max_grade <= 1.0):
            raise InputError(
                f"grade limit must be between 0 and 1 (100 %), got {self.max_grade!r}")
        if self.method not in SMOOTHING_METHODS:
            raise InputError(f"unknown smoothing method {self.method!r}; choose one of "
                             f"{', '.join(SMOOTHING_METHODS)}")


def sustained_length(smoothing: ElevationSmoothing) -> float:
    """Shortest stretch steeper than the grade limit that the cleaning keeps as real [m]:
    the smoothing window, at least SUSTAINED_GRADE_LENGTH.

    A spike or a step in recorded heights, smoothed over the window, is steep over less than
    the window; a real ramp stays steep over its length.

    Parameters
    ----------
    smoothing : ElevationSmoothing
        The cleaning settings.

    Returns
    -------
    float
        The length [m].

    Examples
    --------
    >>> sustained_length(ElevationSmoothing()), sustained_length(ElevationSmoothing(window=0))
    (200.0, 100.0)
    """
    return max(float(smoothing.window), SUSTAINED_GRADE_LENGTH)


def total_ascent(elevation: ArrayLike) -> float:
    """Sum of the rises between consecutive points, descents not subtracted [m].

    Parameters
    ----------
    elevation : array_like
        Elevation of consecutive points [m].

    Returns
    -------
    float
        Total ascent [m].

    Examples
    --------
    Up 5 m, down 2 m, up 7 m: 12 m of ascent.

    >>> total_ascent([100.0, 105.0, 103.0, 110.0])
    12.0
    """
    rise = np.diff(np.asarray(elevation, dtype=float))
    return float(rise[rise > 0].sum())


def check_elevation_jumps(length: np.ndarray, elevation: np.ndarray) -> None:
    """Raise InputError where the elevation changes absurdly between two track points.

    A change |Δz| > ELEVATION_JUMP_SLACK + ELEVATION_JUMP_GRADE·Δs (Δs the horizontal distance)
    is taken as a recording fault no cleaning should paper over.

    Parameters
    ----------
    length : numpy.ndarray
        Horizontal distance between consecutive track points Δs, length M-1 [m].
    elevation : numpy.ndarray
        Elevation of the track points, length M [m].
    """
    jump = np.abs(np.diff(elevation))
    bad = jump > ELEVATION_JUMP_SLACK + ELEVATION_JUMP_GRADE * length
    if bad.any():
        index = int(np.argmax(bad))
        raise InputError(f"absurd elevation jump of {jump[index]:.0f} m over "
                         f"{length[index]:.0f} m between points {index + 1} and {index + 2}")


def fill_missing_elevation(distance: np.ndarray, elevation: np.ndarray) -> np.ndarray:
    """Elevation with NaN points filled by linear interpolation along the distance [m].

    Points before the first (after the last) known height take that height; raises InputError
    when none has one (missing_elevation_notice says how many were filled).

    Parameters
    ----------
    distance : numpy.ndarray
        Distance of each track point from the start, increasing [m].
    elevation : numpy.ndarray
        Elevation of each point, NaN where the point has none [m].

    Returns
    -------
    numpy.ndarray
        Elevation of every point [m] (the input itself when none is missing).
    """
    known = np.isfinite(elevation)
    if known.all():
        return elevation
    if not known.any():
        raise InputError("the course has no elevation at any point")
    return np.interp(distance, distance[known], elevation[known])


def missing_elevation_notice(elevation: np.ndarray) -> Notice | None:
    """A warning saying how many points have no elevation (NaN), or None when all have one.

    Parameters
    ----------
    elevation : numpy.ndarray
        Elevation of each track point, NaN where missing [m].

    Returns
    -------
    pacing.notices.Notice or None
        "elevation-points-missing" with count and total [-].

    Examples
    --------
    >>> missing_elevation_notice(np.array([1.0, np.nan, 3.0])).values
    {'count': 1, 'total': 3}
    """
    missing = int(np.count_nonzero(~np.isfinite(elevation)))
    if missing == 0 or missing == elevation.size:
        return None
    return warning("elevation-points-missing", count=missing, total=int(elevation.size))


def cleaning_notices(distance: np.ndarray, raw: np.ndarray, smoothed: np.ndarray,
                     cleaned: np.ndarray, max_grade: float,
                     sustained: float = math.inf) -> list[Notice]:
    """What the cleaning did to the profile: the ascent it removed (a note), the stretches
    steeper than the limit it kept as real (a note), and a warning when the grade limit moved
    the profile by more than GRADE_LIMIT_REPORT_HEIGHT.

    Parameters
    ----------
    distance : numpy.ndarray
        Distance of each resampled point [m].
    raw : numpy.ndarray
        Elevation of the track points before resampling [m].
    smoothed : numpy.ndarray
        Resampled elevation after smoothing, before the grade limit [m].
    cleaned : numpy.ndarray
        Resampled elevation after the grade limit [m].
    max_grade : float
        The grade limit [-].
    sustained : float, optional
        Shortest steep stretch the limit kept (limit_grade) [m].

    Returns
    -------
    list of pacing.notices.Notice
        "elevation-cleaned" (note: raw_ascent_m, ascent_m, smoothing_removed_m,
        limit_removed_m [m]) when the raw track climbs; "steep-grade-kept" (note: at_m,
        length_m [m], steepest_grade, max_grade [-]) when a sustained stretch beyond the
        limit was kept; "grade-limit-cut" (warning: at_m, height_m [m], max_grade,
        steepest_grade [-]) when the limit moved the profile.
    """
    raw_ascent = total_ascent(raw)
    smoothed_ascent = total_ascent(smoothed)
    ascent = total_ascent(cleaned)
    notices = []
    if raw_ascent > 0.0:
        notices.append(note("elevation-cleaned", raw_ascent_m=raw_ascent, ascent_m=ascent,
                            smoothing_removed_m=max(raw_ascent - smoothed_ascent, 0.0),
                            limit_removed_m=max(smoothed_ascent - ascent, 0.0)))
    grade = np.diff(smoothed) / np.diff(distance)
    kept = sustained_steep_pieces(distance, smoothed, max_grade, sustained)
    if kept.any():
        first = int(np.argmax(kept))
        notices.append(note("steep-grade-kept", at_m=float(distance[first]),
                            length_m=float(np.diff(distance)[kept].sum()),
                            steepest_grade=float(np.max(np.abs(grade[kept]))),
                            max_grade=float(max_grade)))
    moved = np.abs(smoothed - cleaned)
    if moved.size and float(moved.max()) > GRADE_LIMIT_REPORT_HEIGHT:
        first = int(np.argmax((np.abs(grade) > max_grade) & ~kept))
        notices.append(warning("grade-limit-cut", at_m=float(distance[first]),
                               height_m=float(moved.max()), max_grade=float(max_grade),
                               steepest_grade=float(np.max(np.abs(grade)))))
    return notices


# The kernels and the convolution are a few lines of numpy: scipy.signal takes half a second to
# import (with scipy.stats), too much for one window on the command line's path.

def gaussian_window(length: int, deviation: float) -> np.ndarray:
    """Symmetric Gaussian window: w[n] = exp(−½·(n/σ)²) for n = −(M−1)/2 … (M−1)/2.

    The same numbers as scipy.signal.windows.gaussian(M, σ) (sym=True), computed the same way
    (exp of −n²/(2σ²)), so they agree to round-off.

    Parameters
    ----------
    length : int
        Number of points M, ≥ 0; M ≤ 1 gives ones [-].
    deviation : float
        Standard deviation σ, in points, > 0 [-].

    Returns
    -------
    numpy.ndarray
        The M weights, 1 at the centre when M is odd [-].

    Examples
    --------
    >>> gaussian_window(3, 1.0).round(6).tolist()
    [0.606531, 1.0, 0.606531]
    """
    if length <= 1:
        return np.ones(length)
    index = np.arange(0, length, dtype=float) - (length - 1.0) / 2.0
    return np.exp(-index ** 2 / (2 * deviation * deviation))


def _gaussian_kernel(window: float, step: float) -> np.ndarray:
    deviation = window / 4.0 / step
    if deviation < 0.5:
        return np.ones(1)
    half = int(math.ceil(3.0 * deviation))
    return gaussian_window(2 * half + 1, deviation)


def _moving_average_kernel(window: float, step: float) -> np.ndarray:
    half = int(round(window / step / 2.0))
    return np.ones(2 * half + 1)


SMOOTHING_METHODS = {
    "gaussian": _gaussian_kernel,
    "moving-average": _moving_average_kernel,
    "none": None,
}
"""Elevation smoothing kernels by name: function (window [m], step [m]) -> positive weights."""


def smooth_elevation(elevation: ArrayLike, step: float,
                     smoothing: ElevationSmoothing = ElevationSmoothing()) -> np.ndarray:
    """Elevation smoothed over a distance window [m] (no grade limit).

    z_s[i] = Σ_j w_j·z[i+j] / Σ_j w_j with positive, symmetric weights w (gaussian_window, or
    a flat window). Beyond the ends the profile is continued by odd reflection about the
    end point, z[-k] = 2·z[0] − z[k] (and likewise at the finish), so that

    - a linear profile a + b·s is returned unchanged (a symmetric kernel averages a straight
      line to itself), and so is every profile at its two end points: start and finish heights,
      hence the net rise and potential energy of the course, are kept exactly;
    - a monotonic climb or descent stays monotonic, with the same ascent or descent.

    Smoothing cannot invent climbing: the ascent of a weighted mean of shifted copies is at most
    the weighted mean of their ascents (positive weights). With odd reflection the rises of the
    padded profile are the raw rises mirrored at each end, and for a symmetric kernel the copies
    shifted by +j and −j points together hold every raw rise exactly twice, so their mean
    ascent is the raw ascent. Should rounding (or a kernel that is not symmetric) still give a
    larger ascent, the ends are padded with the end values instead, for which the same bound
    holds with any positive kernel.

    The odd reflection is numpy.pad(mode="reflect", reflect_type="odd").

    Parameters
    ----------
    elevation : array_like
        Elevation at points a uniform `step` apart [m].
    step : float
        Distance between the points [m].
    smoothing : ElevationSmoothing, optional
        Window [m] and method; its grade limit is not applied here.

    Returns
    -------
    numpy.ndarray
        Smoothed elevation, same length [m].

    Examples
    --------
    A straight climb passes unchanged (a symmetric kernel averages a line to itself):

    >>> smooth_elevation([100.0, 101.0, 102.0, 103.0, 104.0], 10.0).tolist()
    [100.0, 101.0, 102.0, 103.0, 104.0]
    """
    elevation = np.asarray(elevation, dtype=float)
    make_kernel = SMOOTHING_METHODS[smoothing.method]
    if make_kernel is None or smoothing.window <= 0 or elevation.size < 3:
        return elevation.copy()
    kernel = make_kernel(smoothing.window, step)
    if kernel.size == 1:
        return elevation.copy()
    kernel = kernel / kernel.sum()
    half = kernel.size // 2
    reflected = _convolve_padded(elevation, kernel, half, "odd")
    raw_ascent = total_ascent(elevation)
    if total_ascent(reflected) <= raw_ascent + ASCENT_TOLERANCE * max(1.0, raw_ascent):
        return reflected
    return _convolve_padded(elevation, kernel, half, "edge")


ASCENT_TOLERANCE = 1e-9
"""Relative rounding slack when checking that smoothing added no ascent [-]."""


def _convolve_padded(elevation: np.ndarray, kernel: np.ndarray, half: int,
                     padding: str) -> np.ndarray:
    """Convolve with `kernel` after padding `half` points each side ("odd" or "edge")."""
    if padding == "odd":
        padded = np.pad(elevation, half, mode="reflect", reflect_type="odd")
    else:
        padded = np.pad(elevation, half, mode="edge")
    return convolve_valid(padded, kernel)


def convolve_valid(signal: np.ndarray, kernel: np.ndarray) -> np.ndarray:
    """The "valid" part of the convolution of `signal` with a shorter `kernel`.

    Directly (numpy.convolve) or through the FFT, whichever the operation counts say is
    cheaper, with the constants scipy.signal.choose_conv_method uses for one dimension; where
    it goes direct the result is scipy.signal.convolve(…, mode="valid")'s to the bit, through
    the FFT to round-off.

    Parameters
    ----------
    signal : numpy.ndarray
        The padded profile, length N [m].
    kernel : numpy.ndarray
        The weights, length K ≤ N [-].

    Returns
    -------
    numpy.ndarray
        Length N − K + 1: Σ_j kernel[j]·signal[i + K − 1 − j] [m].

    Examples
    --------
    >>> convolve_valid(np.array([1.0, 2.0, 3.0, 4.0]), np.array([0.5, 0.5])).tolist()
    [1.5, 2.5, 3.5]
    """
    size, width = signal.size, kernel.size
    full = size + width - 1
    direct_operations = (size - width + 1) * width
    fft_operations = 3 * full * math.log(full)
    if _FFT_COST * fft_operations >= _DIRECT_COST * direct_operations + _COST_OFFSET:
        return np.convolve(signal, kernel, mode="valid")
    spectrum = np.fft.rfft(signal, full) * np.fft.rfft(kernel, full)
    return np.fft.irfft(spectrum, full)[width - 1:size]


_FFT_COST, _DIRECT_COST, _COST_OFFSET = 1.89095737e-9, 2.1364985e-10, -1e-3
"""Seconds per operation of an FFT convolution and of a direct one, and an offset [s]: the
constants scipy.signal.choose_conv_method weighs for a one-dimensional "valid" convolution
(scipy 1.17), so that convolve_valid chooses as scipy.signal.convolve(method="auto") did."""


def sustained_steep_pieces(distance: np.ndarray, elevation: np.ndarray, max_grade: float,
                           sustained: float) -> np.ndarray:
    """Which pieces belong to a stretch steeper than ±max_grade, one way, for at least
    `sustained` metres: real climbing (or descending) that a grade limit must keep.

    Parameters
    ----------
    distance : numpy.ndarray
        Distance of each point, increasing [m].
    elevation : numpy.ndarray
        Elevation of each point [m].
    max_grade : float
        The grade limit g [-].
    sustained : float
        Shortest stretch kept [m]; infinite keeps none.

    Returns
    -------
    numpy.ndarray
        One flag per piece [-].

    Examples
    --------
    Three 10 m pieces at 30 % then one at 5 %: a 30 m stretch is kept when 30 m is enough.

    >>> d = np.array([0.0, 10.0, 20.0, 30.0, 40.0]); z = np.array([0.0, 3.0, 6.0, 9.0, 9.5])
    >>> sustained_steep_pieces(d, z, 0.25, 30.0).tolist()
    [True, True, True, False]
    """
    length = np.diff(distance)
    rise = np.diff(elevation)
    sign = np.where(rise > max_grade * length, 1, np.where(rise < -max_grade * length, -1, 0))
    keep = np.zeros(length.size, dtype=bool)
    if not math.isfinite(sustained) or not sign.any():
        return keep
    change = np.flatnonzero(np.diff(sign)) + 1
    starts = np.concatenate([[0], change])
    stops = np.concatenate([change, [sign.size]])
    reach = np.concatenate([[0.0], np.cumsum(length)])
    for start, stop in zip(starts.tolist(), stops.tolist(), strict=True):
        if sign[start] != 0 and reach[stop] - reach[start] >= sustained:
            keep[start:stop] = True
    return keep


def limit_grade(distance: np.ndarray, elevation: np.ndarray, max_grade: float,
                sustained: float = math.inf) -> np.ndarray:
    """Elevation re-integrated with every piece's grade clipped to ±max_grade [m], except
    stretches steeper than that for at least `sustained` metres (sustained_steep_pieces).

    z'[0] = z[0]; z'[i+1] = z'[i] + clip(z[i+1] − z[i], −g·Δs, +g·Δs). Clipping only shrinks
    rises, so ascent never grows. A spike or a step in the recorded heights, smoothed, is steep
    over a short stretch and is flattened; a real ramp stays steep over its whole length and,
    given `sustained`, is kept.

    Parameters
    ----------
    distance : numpy.ndarray
        Distance of each point, increasing [m].
    elevation : numpy.ndarray
        Elevation of each point [m].
    max_grade : float
        g, the steepest grade kept [-].
    sustained : float, optional
        Stretches steeper than g for at least this long are kept; infinite (the default)
        keeps none [m].

    Returns
    -------
    numpy.ndarray
        Elevation with no piece steeper than g outside the sustained stretches [m].

    Examples
    --------
    A 10 m step between two points 10 m apart becomes a 25 % ramp of 2.5 m:

    >>> limit_grade(np.array([0.0, 10.0, 20.0]), np.array([0.0, 10.0, 10.0]), 0.25).tolist()
    [0.0, 2.5, 2.5]
    """
    length = np.diff(distance)
    rise = np.clip(np.diff(elevation), -max_grade * length, max_grade * length)
    if math.isfinite(sustained):
        kept = sustained_steep_pieces(distance, elevation, max_grade, sustained)
        rise = np.where(kept, np.diff(elevation), rise)
    return elevation[0] + np.concatenate([[0.0], np.cumsum(rise)])


def clean_elevation(distance: ArrayLike, elevation: ArrayLike,
                    smoothing: ElevationSmoothing = ElevationSmoothing()) -> np.ndarray:
    """Smooth the elevation over `smoothing.window`, then limit the grade, keeping stretches
    steeper than the limit for at least sustained_length(smoothing) [m].

    Parameters
    ----------
    distance : array_like
        Distance of each point, a uniform step except maybe the last piece [m].
    elevation : array_like
        Resampled raw elevation [m].
    smoothing : ElevationSmoothing, optional
        Window [m], grade limit [-] and method.

    Returns
    -------
    numpy.ndarray
        Cleaned elevation [m].

    Examples
    --------
    A 5 % climb keeps its end heights and its grade (the default 200 m Gaussian window):

    >>> distance = np.arange(0.0, 1001.0, 10.0)
    >>> clean_elevation(distance, 100.0 + 0.05 * distance)[[0, 50, 100]].round(6).tolist()
    [100.0, 125.0, 150.0]
    """
    distance = np.asarray(distance, dtype=float)
    step = float(distance[1] - distance[0]) if distance.size > 1 else 1.0
    smoothed = smooth_elevation(elevation, step, smoothing)
    return limit_grade(distance, smoothed, smoothing.max_grade, sustained_length(smoothing))
