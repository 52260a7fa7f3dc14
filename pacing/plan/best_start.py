"""The best start time over a window: the race day planned at every start of a grid, the best
narrowed by golden-section search (pacing.plan.race_day.plan_race_day at each start, warm-started
from the previous start's passing times). docs/race_day_weather.md, "Best start".
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from pacing.errors import InputError
from pacing.plan.race import RaceRequest
from pacing.plan.race_day import plan_race_day
from pacing.weather.timeline import WeatherSpanError, clock_text

BEST_START_STEP = 600.0
"""Step of the grid of start times a best-start search plans [s] (10 min)."""

BEST_START_TOLERANCE = 60.0
"""The search refines the best start of the grid to within this [s] (1 min)."""


@dataclass(frozen=True)
class BestStart:
    """The best start time over a window.

    Attributes
    ----------
    start : the start with the shortest finish time [s in the frame].
    finish_time : its finish time [s].
    grid : (start [s in the frame], finish time [s]) of every start planned, in time order;
        starts whose race the weather table does not cover are left out.
    utc_offset : the frame's offset from UTC [s], None for the local wall clock.
    """

    start: float
    finish_time: float
    grid: tuple[tuple[float, float], ...]
    utc_offset: float | None


def best_start(request: RaceRequest, first: float, last: float, step: float = BEST_START_STEP,
               tolerance: float = BEST_START_TOLERANCE) -> BestStart:
    """The start time with the shortest finish over a window, and the finish of each start.

    Plans every `step` from `first` to `last` (and `last`), then narrows the best of them by
    golden-section search within ± one step to `tolerance`. Starts whose race the weather
    table does not cover are left out.

    Parameters
    ----------
    request : RaceRequest
        A request whose race_day has a weather table.
    first, last : float
        The window of start times [s in the table's frame].
    step : float, optional
        Grid step [s].
    tolerance : float, optional
        Width the search narrows to [s].

    Returns
    -------
    BestStart

    Raises
    ------
    InputError
        Without a weather table, for a window that ends before it starts, or when no start
        of the window lets the table cover the race.
    """
    day = request.race_day
    if day is None or day.weather is None:
        raise InputError("a best start needs a weather table through the race")
    if not last >= first:
        raise InputError("the window of start times ends before it starts")
    planned: dict[float, float] = {}
    guess: list[np.ndarray] = []  # the last converged passing times: a warm start

    def finish(start: float) -> float:
        start = float(round(start))
        if start not in planned:
            try:
                result = plan_race_day(replace(request, race_day=replace(day, start=start)),
                                       first_guess=guess[-1] if guess else None, costs=False)
            except WeatherSpanError:
                planned[start] = float("inf")
            else:
                assert result.race_day is not None
                guess.append(result.race_day.point_time)
                planned[start] = result.finish_time
        return planned[start]

    for start in (*np.arange(first, last, step), last):
        finish(float(start))
    best = min(planned, key=planned.__getitem__)
    if not np.isfinite(planned[best]):
        raise InputError(f"no start between {clock_text(first, day.weather.utc_offset)} and "
                         f"{clock_text(last, day.weather.utc_offset)} lets the weather table "
                         "cover the race; add rows or move the window")
    _golden_section(finish, max(first, best - step), min(last, best + step), tolerance)
    best = min(planned, key=planned.__getitem__)
    grid = tuple((start, value) for start, value in sorted(planned.items())
                 if np.isfinite(value))
    return BestStart(start=best, finish_time=planned[best], grid=grid,
                     utc_offset=day.weather.utc_offset)


def _golden_section(function: Callable[[float], float], low: float, high: float,
                    tolerance: float) -> None:
    """Narrow [low, high] around a minimum of `function` to `tolerance` (golden section)."""
    ratio = (np.sqrt(5.0) - 1.0) / 2.0
    left, right = high - ratio * (high - low), low + ratio * (high - low)
    while high - low > tolerance:
        if function(left) <= function(right):
            high, right = right, left
            left = high - ratio * (high - low)
        else:
            low, left = left, right
            right = low + ratio * (high - low)
