"""Segment by segment: planned against ridden time, power, speed and W′ balance.

The planned numbers come from the plan's verified prediction (pacing.plan.cycling.RacePlan), the
ridden ones from the race's sums along the course (pacing.review.along.Along) read at the
segment bounds. Power is the mean crank power while moving (stops left out, as the plan's
power leaves walking out); speed is the segment length over its time, stops included. W′
balance (Skiba's differential model, pacing.physiology.critical_power) is given as its lowest
value on the segment, planned and ridden, when CP and W′ are known.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.physiology.critical_power import w_prime_balance
from pacing.review.along import Along


@dataclass(frozen=True)
class SegmentComparison:
    """One segment, planned against ridden (SI).

    Attributes
    ----------
    start, end : float
        Course distance of its first and last point [m].
    planned_time, actual_time : float
        Time on the segment [s] (ridden: stops included).
    planned_power, actual_power : float
        Mean crank power while moving [W].
    planned_speed, actual_speed : float
        Length over time [m/s].
    stopped_time : float
        Time stationary on the segment [s].
    planned_min_w_prime, actual_min_w_prime : float or None
        Lowest W′ balance on the segment [J]; None without CP and W′.
    """

    start: float
    end: float
    planned_time: float
    actual_time: float
    planned_power: float
    actual_power: float
    planned_speed: float
    actual_speed: float
    stopped_time: float = 0.0
    planned_min_w_prime: float | None = None
    actual_min_w_prime: float | None = None

    @property
    def delta(self) -> float:
        """Ridden − planned time [s]: positive where time was lost."""
        return self.actual_time - self.planned_time


def ridden_w_prime_balance(time: np.ndarray, power: np.ndarray, critical_power: float,
                           w_prime: float) -> np.ndarray:
    """W′ balance at every sample of the race [J] (differential model, starting full).

    Parameters
    ----------
    time : numpy.ndarray
        Sample times [s], length N.
    power : numpy.ndarray
        Crank power [W], length N.
    critical_power : float
        CP [W].
    w_prime : float
        W′ [J].

    Returns
    -------
    numpy.ndarray
        Balance at each sample, length N (W′ at the first) [J].

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713.
    """
    steps = 0.5 * (power[1:] + power[:-1])
    balance = w_prime_balance(steps, np.diff(time), critical_power, w_prime)
    return np.concatenate(([w_prime], balance))


def _lowest_by_segment(values: np.ndarray, where: np.ndarray, edges: np.ndarray,
                       ) -> list[float | None]:
    """Lowest of `values` at distances `where` [m] within each pair of `edges` [m]."""
    lowest: list[float | None] = []
    for start, end in zip(edges[:-1], edges[1:], strict=True):
        inside = (where >= start) & (where <= end)
        lowest.append(float(np.min(values[inside])) if inside.any() else None)
    return lowest


def _ratio(numerator: float, denominator: float) -> float:
    """numerator/denominator, 0 when the denominator is 0."""
    return numerator / denominator if denominator > 1e-9 else 0.0


def compare_segments(distance: np.ndarray, bounds: np.ndarray, planned_time: np.ndarray,
                     planned_power: np.ndarray, along: Along,
                     planned_w_prime: np.ndarray | None = None,
                     ridden_w_prime: tuple[np.ndarray, np.ndarray] | None = None,
                     ) -> list[SegmentComparison]:
    """Planned against ridden, segment by segment.

    Parameters
    ----------
    distance : numpy.ndarray
        Course distance of each point [m], length N.
    bounds : numpy.ndarray
        Segment boundary point indices (first 0, last N-1).
    planned_time : numpy.ndarray
        Planned time at each point [s], length N.
    planned_power : numpy.ndarray
        Planned mean crank power of each segment (ridden pieces) [W], length K
        (pacing.plan.prediction.segment_results).
    along : Along
        The race's sums at every course point.
    planned_w_prime : numpy.ndarray or None
        Planned W′ balance at each point [J], length N.
    ridden_w_prime : tuple of numpy.ndarray or None
        (course distance of each sample [m], W′ balance at each sample [J]).

    Returns
    -------
    list of SegmentComparison
    """
    edges = distance[bounds]
    lowest_plan = (_lowest_by_segment(planned_w_prime, distance, edges)
                   if planned_w_prime is not None else [None] * (bounds.size - 1))
    lowest_ride = (_lowest_by_segment(ridden_w_prime[1], ridden_w_prime[0], edges)
                   if ridden_w_prime is not None else [None] * (bounds.size - 1))
    rows = []
    for k, (first, last) in enumerate(zip(bounds[:-1], bounds[1:], strict=True)):
        length = float(distance[last] - distance[first])
        planned = float(planned_time[last] - planned_time[first])
        actual = float(along.time[last] - along.time[first])
        rows.append(SegmentComparison(
            start=float(distance[first]), end=float(distance[last]),
            planned_time=planned, actual_time=actual,
            planned_power=float(planned_power[k]),
            actual_power=_ratio(along.work[last] - along.work[first],
                                along.moving_time[last] - along.moving_time[first]),
            planned_speed=_ratio(length, planned), actual_speed=_ratio(length, actual),
            stopped_time=float(along.stopped_time[last] - along.stopped_time[first]),
            planned_min_w_prime=lowest_plan[k], actual_min_w_prime=lowest_ride[k]))
    return rows
