"""What may mislead in a field test: the warnings of estimate_drag, as notices.

Each check looks at one thing the fit of pacing.fieldtest.estimate cannot see for itself (laps
without speed variety, too few laps for an interval, laps that disagree, unsteady runs, wind,
braking, a CdA or Crr no rider or tyre has) and returns notices (pacing.notices) with the
numbers behind them in SI units; pacing.display.fieldtest_words has their sentences. The
limits are documented constants here; the calm-wind and steady-speed limits belong to the
methods (pacing.fieldtest.methods).

References
----------
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from pacing.errors import InputError
from pacing.fieldtest.laps import LapTerms
from pacing.fieldtest.methods import FieldTestMethod
from pacing.fieldtest.ride import Ride
from pacing.notices import Notice, warning

PLAUSIBLE_ROLLING = (0.0025, 0.006)
"""Crr of road tyres from race tyres on smooth asphalt to ordinary asphalt [-] (from memory,
tabulated in many cycling-physics texts; see docs/references.md, "Typical CdA, Crr"): the span
shown for CdA when Crr is held, and the width beyond which an interval of Crr says less than a
typical value does."""

USUAL_DRAG_AREA = (0.1, 0.8)
"""CdA outside which a result is flagged as unusual [m²] (common practice: from a tucked
time-trial position to an upright rider in loose clothing)."""

USUAL_ROLLING = (0.0005, 0.03)
"""Crr outside which a fitted value is flagged as unusual [-] (common practice: from track
tyres on wood to loose gravel)."""

LAP_SPREAD_LIMIT = 0.05
"""Coefficient of variation of per-lap CdA above which the laps are reported as inconsistent
[-] (our choice)."""

SPREAD_LAPS = 3
"""Fewest laps whose spread of CdA is judged."""

BRAKING_DECELERATION = 1.0
"""Deceleration while hardly pedalling that marks a sample as braking [m/s²] (common practice:
coasting on a road rarely slows a rider by more than ~0.5 m/s²)."""

BRAKING_POWER = 20.0
"""Power below which a rider is hardly pedalling, for the braking check [W]."""

BRAKING_TIMES_SHOWN = 5
"""Times of suspected braking named in the warning; more are counted."""

MAX_BOOTSTRAP_DRAWS = 10_000
"""Most bootstrap draws a user may ask for [-]. Percentile intervals want about 1000 draws
(Efron & Tibshirani 1993, ch. 13 and 19); ten times that leaves the Monte Carlo error of the
interval ends far below their width, and takes about 0.6 s on six laps of one position
(measured). More only costs time: a bound keeps one request from holding a shared machine."""


def check_bootstrap_draws(draws: int, name: str = "bootstrap draws") -> int:
    """The number of bootstrap draws, refused outside 0..MAX_BOOTSTRAP_DRAWS.

    Parameters
    ----------
    draws : int
        Draws asked for [-] (0: no interval).
    name : str
        What the user called it, for the message ("--bootstrap" on the command line).

    Returns
    -------
    int
        `draws` [-].

    Raises
    ------
    InputError
        One line naming the bound, for a negative, fractional or too large number.

    References
    ----------
    Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
    """
    if isinstance(draws, bool) or not isinstance(draws, int | np.integer) or \
            not 0 <= draws <= MAX_BOOTSTRAP_DRAWS:
        raise InputError(f"{name} must be a whole number from 0 to {MAX_BOOTSTRAP_DRAWS} "
                         f"(1000 gives steady 95 % intervals), got {draws!r}")
    return int(draws)


def separation_notices(problem: Mapping[str, Any] | None, held_value: float | None,
                       labels: Sequence[str], areas: Sequence[float],
                       slopes: Sequence[float]) -> list[Notice]:
    """The speed-variety warning: Crr held (with CdA over PLAUSIBLE_ROLLING), or not separable.

    Parameters
    ----------
    problem : mapping or None
        Why the laps cannot separate CdA from Crr (values of the notice: ``reason`` and its
        numbers), or None when they can.
    held_value : float or None
        Crr held at the fallback [-]; None when the joint fit was kept.
    labels : sequence of str
        The positions.
    areas : sequence of float
        Fitted CdA of each position [m²].
    slopes : sequence of float
        d CdA / d Crr of each position [m²].

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-crr-held" or "fieldtest-inseparable", or nothing.

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291 (the typical Crr 0.0032).
    """
    if problem is None:
        return []
    if held_value is None:
        return [warning("fieldtest-inseparable", **problem)]
    low, high = PLAUSIBLE_ROLLING
    return [warning(
        "fieldtest-crr-held", **problem, held_rolling_coefficient=held_value,
        rolling_low=low, rolling_high=high, labels=tuple(labels),
        drag_area_at_high_rolling_m2=tuple(float(area + slope * (high - held_value))
                                           for area, slope in zip(areas, slopes, strict=True)),
        drag_area_at_low_rolling_m2=tuple(float(area + slope * (low - held_value))
                                          for area, slope in zip(areas, slopes, strict=True)))]


def interval_notices(few: Sequence[str], laps_needed: int, bootstrap: int,
                     valid: bool) -> list[Notice]:
    """Why there is no interval: too few laps, or too many failed bootstrap draws.

    Parameters
    ----------
    few : sequence of str
        Positions with fewer than `laps_needed` laps.
    laps_needed : int
        Fewest laps per position that get an interval.
    bootstrap : int
        Bootstrap draws asked for (0: no interval was asked for).
    valid : bool
        True when enough draws could be fitted.

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-few-laps" and/or "fieldtest-bootstrap-failed".
    """
    notices = []
    if few and bootstrap:
        notices.append(warning("fieldtest-few-laps", labels=tuple(few), count=laps_needed))
    if bootstrap and not valid and not few:
        notices.append(warning("fieldtest-bootstrap-failed", count=bootstrap))
    return notices


def lap_notices(label: str, ride: Ride, laps: Sequence[LapTerms], method: FieldTestMethod,
                lap_areas: np.ndarray) -> list[Notice]:
    """Lap-to-lap spread of CdA, and unsteady runs for the methods that need steady ones.

    Parameters
    ----------
    label : str
        The position.
    ride : pacing.fieldtest.ride.Ride
        Its ride (speed [m/s]).
    laps : sequence of LapTerms
        Its laps.
    method : pacing.fieldtest.methods.FieldTestMethod
        The method (its `steady_speed_limit` [-]).
    lap_areas : numpy.ndarray
        CdA of each lap alone [m²].

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-lap-spread" (share: coefficient of variation of the lap CdA [-]) and/or
        "fieldtest-unsteady-runs" (share: median coefficient of variation of the speed within
        the laps [-]).

    References
    ----------
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860 (steady runs).
    """
    notices = []
    if len(laps) >= SPREAD_LAPS:
        spread = float(np.std(lap_areas, ddof=1) / abs(np.mean(lap_areas)))
        if spread > LAP_SPREAD_LIMIT:
            notices.append(warning("fieldtest-lap-spread", label=label, share=spread))
    if method.steady_speed_limit is not None:
        variation = float(np.median([np.std(ride.speed[lap.start:lap.end + 1])
                                     / np.mean(ride.speed[lap.start:lap.end + 1])
                                     for lap in laps]))
        if variation > method.steady_speed_limit:
            notices.append(warning("fieldtest-unsteady-runs", label=label, share=variation,
                                   limit_share=method.steady_speed_limit))
    return notices


def conditions_notices(label: str, ride: Ride, headwind: float | np.ndarray,
                       crosswind: float | np.ndarray, method: FieldTestMethod) -> list[Notice]:
    """Wind above the method's calm-air limit, and suspected braking.

    Parameters
    ----------
    label : str
        The position.
    ride : pacing.fieldtest.ride.Ride
        Its ride.
    headwind : float or numpy.ndarray
        Wind against the direction of travel, per piece or scalar [m/s].
    crosswind : float or numpy.ndarray
        Wind across the direction of travel, per piece or scalar [m/s].
    method : pacing.fieldtest.methods.FieldTestMethod
        The method (its `wind_limit` [m/s]).

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-windy" (mean wind speed at rider height [m/s]) and/or "fieldtest-braking".

    References
    ----------
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860 (wind under 1.0 m/s).
    """
    notices = []
    wind = float(np.mean(np.hypot(headwind, crosswind)))
    if wind > method.wind_limit:
        notices.append(warning("fieldtest-windy", label=label, speed_mps=wind,
                               limit_mps=method.wind_limit))
    braking = braking_times(ride)
    if braking.size:
        notices.append(warning("fieldtest-braking", label=label, count=int(braking.size),
                               times_s=tuple(float(t) for t in braking[:BRAKING_TIMES_SHOWN])))
    return notices


def drag_area_notices(label: str, area: float,
                      interval: tuple[float, float] | None) -> list[Notice]:
    """A CdA not above 0 or outside USUAL_DRAG_AREA, and an interval reaching below 0.

    Parameters
    ----------
    label : str
        The position.
    area : float
        Its fitted CdA [m²].
    interval : tuple of float or None
        Its 95 % interval [m²].

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-cda-not-physical" or "fieldtest-cda-unusual", and/or
        "fieldtest-cda-interval-below-zero".
    """
    notices = []
    low, high = USUAL_DRAG_AREA
    if area <= 0:
        notices.append(warning("fieldtest-cda-not-physical", label=label, drag_area_m2=area))
    elif not low <= area <= high:
        notices.append(warning("fieldtest-cda-unusual", label=label, drag_area_m2=area,
                               low_m2=low, high_m2=high))
    if interval is not None and interval[0] <= 0 < area:
        notices.append(warning("fieldtest-cda-interval-below-zero", label=label,
                               low_m2=interval[0]))
    return notices


def rolling_notices(fitted: bool, crr: float,
                    interval: tuple[float, float] | None) -> list[Notice]:
    """A fitted Crr below 0 or outside USUAL_ROLLING, and an interval reaching below 0.

    Parameters
    ----------
    fitted : bool
        True when Crr was fitted (not given, not held).
    crr : float
        The Crr [-].
    interval : tuple of float or None
        Its 95 % interval [-].

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-crr-negative" or "fieldtest-crr-unusual", and/or
        "fieldtest-crr-interval-below-zero".
    """
    notices = []
    low, high = USUAL_ROLLING
    if fitted and crr < 0:
        notices.append(warning("fieldtest-crr-negative", rolling_coefficient=crr))
    elif fitted and not low <= crr <= high:
        notices.append(warning("fieldtest-crr-unusual", rolling_coefficient=crr,
                               rolling_low=low, rolling_high=high))
    if interval is not None and interval[0] < 0 <= crr:
        notices.append(warning("fieldtest-crr-interval-below-zero", rolling_ci95_low=interval[0]))
    return notices


def braking_times(ride: Ride, low_power: float = BRAKING_POWER) -> np.ndarray:
    """Times of samples that slow faster than BRAKING_DECELERATION while hardly pedalling.

    Parameters
    ----------
    ride : pacing.fieldtest.ride.Ride
        The cleaned ride (pauses are not braking).
    low_power : float
        Mean power of a piece below which the rider is hardly pedalling [W].

    Returns
    -------
    numpy.ndarray
        Time of the sample ending each braking piece [s].
    """
    rate = np.diff(ride.speed) / np.diff(ride.time)
    if ride.pause is not None:
        rate = np.where(ride.pause, 0.0, rate)
    idle = 0.5 * (ride.power[1:] + ride.power[:-1]) < low_power
    return ride.time[1:][(rate < -BRAKING_DECELERATION) & idle]
