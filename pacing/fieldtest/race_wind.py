"""The wind of a race day in the drag fit (pacing.fieldtest.race_fit): the given wind (or
calm), the wind estimated with CdA and Crr when the headings can separate them
(pacing.fieldtest.wind_fit: variable projection over a steady wind vector), a given wind
checked against the race, the interval of the 10 m speed from the bootstrap's draws, and the
notes and warnings about it.

Wind speeds are at 10 m unless named "at rider"; directions in degrees clockwise from north,
the wind's the one it blows FROM.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from pacing.fieldtest.race_blocks import RacePieces, block_problem, bootstrap_draws
from pacing.fieldtest.steady_wind import (
    WindEstimate,
    heading_spread,
    speed_and_direction,
    speed_at_report_height,
    wind_basis,
    wind_vector,
)
from pacing.fieldtest.wind_checks import (
    loose_wind_values,
    percentile_interval,
    undeclared_wind_notices,
)
from pacing.fieldtest.wind_fit import SEPARATION_CORRELATION, fit_wind, joint_correlation
from pacing.notices import Notice, note, warning
from pacing.weather.conditions import Conditions


def given_wind(wind: Conditions | None) -> tuple[np.ndarray, WindEstimate]:
    """The given wind (or calm) as a vector at rider height and as a WindEstimate."""
    if wind is None or wind.wind_speed == 0:
        return np.zeros(2), WindEstimate(False, 0.0, 0.0, 0.0)
    at_rider = wind.wind_at_rider
    return (wind_vector(at_rider, wind.wind_from),
            WindEstimate(False, at_rider, float(wind.wind_speed), float(wind.wind_from)))


def fitted_wind(race: RacePieces, rows, rolling: float | None, wind: Conditions | None,
                estimate: bool, notices: list[Notice]
                ) -> tuple[np.ndarray | None, np.ndarray, WindEstimate]:
    """(basis or None, wind vector, WindEstimate before intervals) of the point fit."""
    given_vector, given = given_wind(wind)
    if not estimate:
        return None, given_vector, given
    used = ~race.left_out
    spread = heading_spread(race.heading[used], (race.speed[1:] + race.speed[:-1])[used])
    basis = wind_basis(spread)
    if basis is None:
        notices.append(warning("fieldtest-wind-inseparable", reason="one-heading",
                               heading_spread=1.0 - spread.resultant, correlation=1.0))
        return None, given_vector, given
    problem = block_problem(race, rows, rolling)
    vector, beta = fit_wind(problem, basis, given_vector)
    correlation = joint_correlation(problem, basis, vector, beta)
    if correlation > SEPARATION_CORRELATION:
        notices.append(warning("fieldtest-wind-inseparable", reason="correlation",
                               heading_spread=1.0 - spread.resultant, correlation=correlation))
        return None, given_vector, given
    at_rider, wind_from = speed_and_direction(vector)
    heights = race.heights
    speed = speed_at_report_height(at_rider, heights.rider_height, heights.roughness_length)
    return basis, vector, WindEstimate(True, at_rider, speed, wind_from,
                                       correlation=correlation, spread=spread,
                                       along_axis_only=basis.shape[1] == 1)


CHECK_DRAWS = 50
"""Bootstrap draws of the wind alone when a given wind is only checked [-]."""


def checked_given_wind(race: RacePieces, rows, rolling: float | None, wind: Conditions,
                       blocks: int, length: float, seed: int) -> list[Notice]:
    """The given wind checked against the race: a warning when the race shows a clearly
    different one (pacing.fieldtest.wind_fit.undeclared_wind_notices), else nothing."""
    quiet: list[Notice] = []
    basis, vector, estimate = fitted_wind(race, rows, rolling, wind, True, quiet)
    if basis is None:
        return []
    draws = bootstrap_draws(race, blocks, length, rolling, basis, vector, CHECK_DRAWS, seed)
    estimate = with_wind_interval(estimate, vector, draws, race.heights)
    if loose_wind_values(estimate):
        return []
    return undeclared_wind_notices(estimate, wind)


def with_wind_interval(estimate: WindEstimate, vector: np.ndarray, draws: np.ndarray,
                       heights: Conditions) -> WindEstimate:
    """The wind estimate at the final fit, with the interval of its 10 m speed (`heights`:
    rider height and roughness of the conversion)."""
    if not estimate.estimated:
        return estimate
    at_rider, wind_from = speed_and_direction(vector)
    factor = speed_at_report_height(1.0, heights.rider_height, heights.roughness_length)
    interval = None
    if draws.size:
        interval = percentile_interval(factor * np.hypot(draws[:, 2], draws[:, 3]))
    return WindEstimate(True, at_rider, factor * at_rider, wind_from, interval,
                        estimate.separable, estimate.correlation, estimate.spread,
                        estimate.along_axis_only)


def wind_notices(estimate: WindEstimate, wind: Conditions | None,
                 estimating: bool) -> list[Notice]:
    """The estimated wind (note), and a detected wind that differs from the given one."""
    if not estimate.estimated:
        return []
    values: dict[str, Any] = {"speed_mps": estimate.speed,
                              "speed_at_rider_mps": estimate.speed_at_rider,
                              "from_deg": estimate.wind_from,
                              "along_axis_only": estimate.along_axis_only}
    if estimate.speed_ci95 is not None:
        values.update(speed_ci95_low_mps=estimate.speed_ci95[0],
                      speed_ci95_high_mps=estimate.speed_ci95[1])
    notices = [note("fieldtest-wind-estimated", **values)]
    if wind is not None and estimating:
        notices += undeclared_wind_notices(estimate, wind)
    return notices
