"""What the rider did along the course: time, moving time, work and stops at every course
point, and where the rider braked or stopped, from an aligned race recording.

Each step of the recording (sample i to i+1) covers course distance x_i..x_(i+1) (from the
alignment, non-decreasing). Its time, its work P̄·Δt (moving steps only) and its stopped time
are summed from the first sample; the sums are read at any course distance
d by the first passage: the sums at the first sample that reaches d, linear between samples
(a missed stretch is interpolated in time). A stop at d therefore counts on the piece after d.
The time spent at the start line before leaving it, and after reaching the finish, is left out.

A step is stopped when its mean speed is below STOP_SPEED (the field test's stop speed,
pacing.fieldtest.ride). A braking stretch is a run of steps that slow faster than
BRAKING_DECELERATION while the rider hardly pedals (below BRAKING_POWER; the field test's rule,
pacing.fieldtest.checks.braking_times); `slow_points` gives the lowest
speed of each and where it was, and each stop's place (speed 0): the race review makes its
model replay slow down to them as to a corner's limit (pacing.review.attribution).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import Course
from pacing.fieldtest.checks import BRAKING_DECELERATION, BRAKING_POWER
from pacing.fieldtest.ride import STOP_SPEED
from pacing.review.align import Alignment
from pacing.review.recording import RaceRecording


@dataclass(frozen=True, eq=False)
class Along:
    """Cumulative sums of the ride at every course point (length N, from 0 at the start).

    Attributes
    ----------
    time : numpy.ndarray
        Time since leaving the start [s].
    moving_time : numpy.ndarray
        Time moving (steps not stopped) [s].
    work : numpy.ndarray
        Crank work while moving [J].
    stopped_time : numpy.ndarray
        Time stationary [s].
    """

    time: np.ndarray
    moving_time: np.ndarray
    work: np.ndarray
    stopped_time: np.ndarray

    @property
    def finish_time(self) -> float:
        """Time from leaving the start to the finish [s]."""
        return float(self.time[-1])

    def piece_power(self) -> np.ndarray:
        """Mean crank power while moving on each piece [W], length N-1 (0 where the rider
        did not move)."""
        moving = np.diff(self.moving_time)
        work = np.diff(self.work)
        return np.where(moving > 1e-9, work / np.where(moving > 1e-9, moving, 1.0), 0.0)


@dataclass(frozen=True)
class SlowPoints:
    """Where the rider slowed down by braking or stopped, as speed limits along the course.

    Attributes
    ----------
    distance : numpy.ndarray
        Course distance of each lowest speed [m].
    speed : numpy.ndarray
        The lowest speed there [m/s] (0 for a stop).
    stops : int
        How many of them are stops.
    """

    distance: np.ndarray
    speed: np.ndarray
    stops: int = 0


def slow_points(recording: RaceRecording, alignment: Alignment) -> SlowPoints:
    """The braking stretches' and the stops' lowest speeds and where they were (module
    docstring): a braking stretch is a run of steps that slow faster than
    BRAKING_DECELERATION while the rider hardly pedals (below BRAKING_POWER); a stop is a run
    of steps slower than STOP_SPEED on average.

    Parameters
    ----------
    recording : RaceRecording
        The race.
    alignment : Alignment
        Its course distance per sample.

    Returns
    -------
    SlowPoints
    """
    time, speed, power = recording.time, recording.speed, recording.power
    mean_speed = 0.5 * (speed[1:] + speed[:-1])
    stopped = mean_speed < STOP_SPEED
    braking = ((np.diff(speed) / np.diff(time) < -BRAKING_DECELERATION)
               & (0.5 * (power[1:] + power[:-1]) < BRAKING_POWER)
               & ~alignment.dropout & ~stopped)
    where, lowest = [], []
    stop_starts, _ = _runs(stopped)
    for first in stop_starts:
        where.append(alignment.course_distance[first])
        lowest.append(0.0)
    for _first, after in zip(*_runs(braking), strict=True):
        if np.any(stop_starts == after):  # braking into a stop: the stop is the limit
            continue
        k = after  # the lowest speed: where the slowing that the braking began ends
        while k + 1 < speed.size and speed[k + 1] <= speed[k] and not stopped[k]:
            k += 1
        where.append(alignment.course_distance[k])
        lowest.append(float(speed[k]))
    order = np.argsort(where, kind="stable")
    return SlowPoints(distance=np.asarray(where, dtype=float)[order],
                      speed=np.asarray(lowest, dtype=float)[order], stops=len(stop_starts))


def _runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(first index, index after the last) of each run of True in `mask`."""
    edges = np.flatnonzero(np.diff(np.concatenate(([0], mask.astype(np.int8), [0]))))
    return edges[::2], edges[1::2]


def _first_passage(distance: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(distinct course distances, index of the sample that first reaches each); the start
    line's index is the last sample there (the time waiting at the start is left out)."""
    values, first = np.unique(distance, return_index=True)
    first = first.copy()
    first[0] = int(np.flatnonzero(distance == values[0])[-1])
    return values, first


def along_course(recording: RaceRecording, alignment: Alignment, course: Course) -> Along:
    """The ride's cumulative time, moving time, work, stops and braking at every course point.

    Parameters
    ----------
    recording : RaceRecording
        The race.
    alignment : Alignment
        Its course distance per sample.
    course : pacing.course.geometry.Course
        The course (its points' distances).

    Returns
    -------
    Along
        Sums from the start line at every course point.
    """
    dt = np.diff(recording.time)
    mean_speed = 0.5 * (recording.speed[1:] + recording.speed[:-1])
    stopped = mean_speed < STOP_SPEED
    work = np.where(stopped, 0.0, 0.5 * (recording.power[1:] + recording.power[:-1]) * dt)
    steps = {"time": dt, "moving_time": np.where(stopped, 0.0, dt), "work": work,
             "stopped_time": np.where(stopped, dt, 0.0)}
    values, first = _first_passage(alignment.course_distance)
    points = np.asarray(course.distance, dtype=float)
    sums = {}
    for key, step in steps.items():
        cumulative = np.concatenate(([0.0], np.cumsum(step)))[first]
        if values.size == 1:
            sums[key] = np.zeros(points.size)
            continue
        at = np.interp(points, values, cumulative)
        sums[key] = at - at[0]
    return Along(**sums)
