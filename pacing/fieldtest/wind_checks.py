"""Whether an estimated wind can be trusted: its percentile interval from the bootstrap, a wind
the data do not pin down (`loose_wind_values`: too wide an interval, or the search at its
bound), and a wind that differs clearly from the one given (`undeclared_wind_notices`).

References
----------
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np

from pacing.fieldtest.steady_wind import WindEstimate, speed_at_report_height, wind_vector
from pacing.fieldtest.wind_fit import LARGEST_WIND
from pacing.notices import Notice, warning
from pacing.weather.conditions import Conditions


def percentile_interval(values: Sequence[float] | np.ndarray) -> tuple[float, float] | None:
    """Percentile 95 % interval (Efron & Tibshirani 1993), or None for fewer than 20 values."""
    array = np.asarray(values, dtype=float)
    array = array[np.isfinite(array)]
    if array.size < 20:
        return None
    low, high = np.percentile(array, [2.5, 97.5])
    return float(low), float(high)


WIND_INTERVAL_LIMIT = 2.0
"""Width of the 95 % interval of the 10 m wind speed above which the laps are taken not to
tell the wind from drag [m/s] (our choice: about two steps of the Beaufort scale's lower end;
laps at one speed on a loop, for one, let the wind trade freely against Crr)."""


def loose_wind_values(estimate: WindEstimate) -> dict[str, Any]:
    """Values of the "fieldtest-wind-inseparable" notice when the data do not pin the wind
    down (its 95 % interval wider than WIND_INTERVAL_LIMIT, or the fit at the bound), else {}.

    Parameters
    ----------
    estimate : WindEstimate
        The estimated wind with its interval.

    Returns
    -------
    dict
        ``reason`` "interval" (speed_ci95_low_mps, speed_ci95_high_mps, limit_mps) or "bound"
        (speed_mps), with ``correlation`` [-]; empty when the wind is pinned down.
    """
    interval = estimate.speed_ci95
    if interval is not None and interval[1] - interval[0] > WIND_INTERVAL_LIMIT:
        return {"reason": "interval", "speed_ci95_low_mps": interval[0],
                "speed_ci95_high_mps": interval[1], "limit_mps": WIND_INTERVAL_LIMIT,
                "correlation": estimate.correlation}
    if estimate.speed_at_rider > 0.95 * LARGEST_WIND:
        return {"reason": "bound", "speed_mps": estimate.speed,
                "correlation": estimate.correlation}
    return {}


DETECTED_DIFFERENCE = 0.5
"""Difference between the estimated and the given wind at rider height above which the
estimate is reported as a different wind [m/s] (our choice: half the calm-air limit of Lim et
al. 2011), when the given wind also lies outside the estimate's 95 % interval."""


def undeclared_wind_notices(estimate: WindEstimate, given: Conditions) -> list[Notice]:
    """A warning when the estimated wind differs clearly from the one given.

    Clearly: the two wind vectors at rider height differ by more than DETECTED_DIFFERENCE and,
    when the estimate has an interval, the given 10 m speed lies outside it.

    Parameters
    ----------
    estimate : WindEstimate
        The estimated wind.
    given : pacing.weather.conditions.Conditions
        The given wind (speed at wind_height [m/s], FROM [deg]).

    Returns
    -------
    list of pacing.notices.Notice
        "fieldtest-wind-undeclared" (speed_mps, from_deg of the estimate at 10 m;
        given_speed_mps, given_from_deg), or nothing.
    """
    given_vector = wind_vector(given.wind_at_rider, given.wind_from)
    found = wind_vector(estimate.speed_at_rider, estimate.wind_from)
    if float(np.hypot(*(found - given_vector))) <= DETECTED_DIFFERENCE:
        return []
    interval = estimate.speed_ci95
    given_at_10 = speed_at_report_height(given.wind_at_rider, given.rider_height,
                                         given.roughness_length)
    if interval is not None and interval[0] <= given_at_10 <= interval[1] \
            and given.wind_speed > 0:
        return []
    return [warning("fieldtest-wind-undeclared", speed_mps=estimate.speed,
                    from_deg=estimate.wind_from, given_speed_mps=given_at_10,
                    given_from_deg=float(given.wind_from))]
