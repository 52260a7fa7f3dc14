"""A running plan as data: speed, time and metabolic power on every piece of the course, its
segment target rows, and the even pace it is compared with.

The three running plans (equal effort, even pace, fastest under critical speed and D′) are made
in pacing.plan.running; the even-pace references in pacing.plan.even_pace. Here they are
packaged: one RunningSegment per segment (pace, time, effort relative to the target, D′
balance) and the rows of the common target table (pacing.plan.targets.SegmentTarget). Numbers
only, in SI; formatting is at the edges.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import Course
from pacing.course.segments import split_every
from pacing.errors import InputError
from pacing.notices import Notice
from pacing.plan.even_pace import EvenPaceReference
from pacing.plan.request import check_plan_size
from pacing.plan.targets import SegmentTarget
from pacing.weather.conditions import CourseAir

DEFAULT_SPLIT = 1000.0
"""Segment length when no segment bounds are given [m]: kilometre splits."""


@dataclass(frozen=True)
class RunningSegment:
    """One row of a running plan's target table (numbers only; formatting at the edges).

    Attributes
    ----------
    start : float
        Distance of the segment's start from the course's first point [m].
    end : float
        Distance of the segment's end from the course's first point [m].
    grade : float
        Mean grade, rise/run [-].
    headwind : float
        Length-weighted mean headwind component (negative: tailwind) [m/s].
    speed : float
        Mean ground speed [m/s].
    pace : float
        Target pace [s/km].
    time : float
        Expected time on the segment [s].
    cumulative_time : float
        Elapsed time at the segment's end [s].
    effort_ratio : float
        Time-weighted mean metabolic power relative to the effort target [-].
    max_speed : float
        Highest speed on a piece of the segment [m/s].
    d_prime_balance : float or None
        D′ balance at the segment's end; None without critical speed and D′ [m].
    """

    start: float
    end: float
    grade: float
    headwind: float
    speed: float
    pace: float
    time: float
    cumulative_time: float
    effort_ratio: float
    max_speed: float
    d_prime_balance: float | None = None


@dataclass(frozen=True, eq=False)
class RunningPlan:
    """A running plan on a course and its prediction.

    Attributes
    ----------
    strategy : str
        "equal-effort", "even-pace" or "fastest" [-].
    speed : numpy.ndarray
        Ground speed on each piece, length N-1 [m/s].
    time : numpy.ndarray
        Time on each piece, length N-1 [s].
    metabolic_power : numpy.ndarray
        Metabolic power on each piece, length N-1 [W/kg].
    effort : float
        The effort target, metabolic power of the flat speed in still air [W/kg].
    flat_speed : float
        The flat-ground, still-air speed of that effort [m/s].
    segments : tuple of RunningSegment
        The target rows [-].
    d_prime_balance : numpy.ndarray or None
        D′ balance at the end of each piece (fastest plan, or any plan given critical speed
        and D′; else None) [m].
    notes : tuple of Notice
        What the user must be told beside the numbers (pacing.notices) [-].
    even_pace_speed : float or None
        The even pace with this plan's time-weighted mean metabolic power [m/s].
    even_pace_time : float or None
        Finish time of that even pace, the reference of `time_saved` [s].
    even_pace_peak_effort_ratio : float or None
        That even pace's highest piece effort over the effort target [-].
    limited_even_pace_time : float or None
        Finish time of the fastest even pace within critical speed and D′ (fastest plan;
        else None) [s].
    """

    strategy: str
    speed: np.ndarray
    time: np.ndarray
    metabolic_power: np.ndarray
    effort: float
    flat_speed: float
    segments: tuple[RunningSegment, ...]
    d_prime_balance: np.ndarray | None = None
    notes: tuple[Notice, ...] = ()
    even_pace_speed: float | None = None
    even_pace_time: float | None = None
    even_pace_peak_effort_ratio: float | None = None
    limited_even_pace_time: float | None = None

    @property
    def finish_time(self) -> float:
        """Time from start to finish [s]."""
        return float(self.time.sum())

    @property
    def distance(self) -> float:
        """Distance covered, the sum of speed × time over the pieces [m]."""
        return float((self.speed * self.time).sum())

    @property
    def average_speed(self) -> float:
        """Distance over finish time [m/s]."""
        return self.distance / self.finish_time

    @property
    def mean_effort_ratio(self) -> float:
        """Time-weighted mean metabolic power relative to the effort target [-] (below 1 for
        an equal-effort plan where the descent cap holds the runner back)."""
        return float(np.sum(self.metabolic_power * self.time) / self.finish_time / self.effort)

    @property
    def peak_effort_ratio(self) -> float:
        """Highest metabolic power on a piece relative to the effort target [-] (1 for an
        equal-effort plan; above 1 on the climbs of an even pace)."""
        return float(self.metabolic_power.max() / self.effort)

    @property
    def max_speed(self) -> float:
        """Highest speed on a piece [m/s]."""
        return float(self.speed.max())

    @property
    def time_saved(self) -> float | None:
        """Seconds this plan finishes before the even pace at the same time-weighted mean
        metabolic power [s] (negative: that even pace is faster, at the price of efforts
        above the target on climbs; see pacing.plan.running's module docstring). None without a
        reference."""
        return None if self.even_pace_time is None else self.even_pace_time - self.finish_time

    @property
    def min_d_prime_balance(self) -> float | None:
        """Lowest D′ balance along the course [m] (None without critical speed and D′)."""
        return None if self.d_prime_balance is None else float(self.d_prime_balance.min())

    @property
    def min_d_prime_distance(self) -> float | None:
        """Distance from the start where the D′ balance is lowest [m] (None without it)."""
        if self.d_prime_balance is None:
            return None
        return float(np.cumsum(self.speed * self.time)[int(np.argmin(self.d_prime_balance))])


def running_segment_bounds(course: Course, bounds: np.ndarray | None) -> np.ndarray:
    """The segment bounds of a running plan: as given (checked), or kilometre splits.

    Parameters
    ----------
    course : Course
        The course, N points [-].
    bounds : numpy.ndarray or None
        Segment boundary point indices, increasing from 0 to N-1; None for a split every
        DEFAULT_SPLIT metres [-].

    Returns
    -------
    numpy.ndarray
        The segment boundary point indices [-].

    Raises
    ------
    InputError
        When the given bounds do not increase from 0 to the last point of the course, or
        the plan is too big (pacing.plan.request.check_plan_size).
    """
    if bounds is None:
        return split_every(course, DEFAULT_SPLIT)
    bounds = np.asarray(bounds, dtype=int)
    n = course.distance.size
    if bounds.ndim != 1 or bounds.size < 2 or bounds[0] != 0 or bounds[-1] != n - 1 \
            or np.any(np.diff(bounds) <= 0):
        raise InputError("segment bounds must increase from 0 to the last point of the course")
    check_plan_size(int(n), int(bounds.size) - 1)
    return bounds


def running_segments(course: Course, bounds: np.ndarray, speed: np.ndarray, time: np.ndarray,
                     power: np.ndarray, effort: float, headwind: np.ndarray,
                     balance: np.ndarray | None = None) -> tuple[RunningSegment, ...]:
    """One RunningSegment per pair of bounds, from what the plan does on every piece.

    Distances are from the course's first point; the grade is the segment's rise over its
    run; the headwind is averaged over the pieces' lengths and the effort over their times.

    Parameters
    ----------
    course : Course
        The course, N points [-].
    bounds : numpy.ndarray
        Segment boundary point indices, increasing from 0 to N-1 [-].
    speed : numpy.ndarray
        Ground speed on each piece, length N-1 [m/s].
    time : numpy.ndarray
        Time on each piece, length N-1 [s].
    power : numpy.ndarray
        Metabolic power on each piece, length N-1 [W/kg].
    effort : float
        The effort target the segments' effort ratios refer to [W/kg].
    headwind : numpy.ndarray
        Headwind component on each piece (negative: tailwind), length N-1 [m/s].
    balance : numpy.ndarray or None, optional
        D′ balance at the end of each piece, length N-1; None without critical speed and
        D′ [m].

    Returns
    -------
    tuple of RunningSegment
        One row per segment [SI].
    """
    length = course.piece_length
    cumulative = np.concatenate([[0.0], np.cumsum(time)])
    rows = []
    for first, last in zip(bounds[:-1], bounds[1:], strict=True):
        pieces = slice(first, last)
        run = float(course.distance[last] - course.distance[first])
        seg_time = float(time[pieces].sum())
        seg_speed = run / seg_time
        rows.append(RunningSegment(
            start=float(course.distance[first] - course.distance[0]),
            end=float(course.distance[last] - course.distance[0]),
            grade=float((course.elevation[last] - course.elevation[first]) / run),
            headwind=float(np.average(headwind[pieces], weights=length[pieces])),
            speed=seg_speed,
            pace=1000.0 / seg_speed,
            time=seg_time,
            cumulative_time=float(cumulative[last]),
            effort_ratio=float(np.average(power[pieces], weights=time[pieces]) / effort),
            max_speed=float(speed[pieces].max()),
            d_prime_balance=None if balance is None else float(balance[last - 1]),
        ))
    return tuple(rows)


def assemble_running_plan(strategy: str, course: Course, bounds: np.ndarray, air: CourseAir,
                          speed: np.ndarray, time: np.ndarray, power: np.ndarray,
                          effort: float, flat_speed: float, balance: np.ndarray | None,
                          notes: list[Notice], reference: EvenPaceReference,
                          limited_even_pace_time: float | None = None) -> RunningPlan:
    """The RunningPlan of what a plan does on every piece, with its target rows and the even
    pace it is compared with.

    Parameters
    ----------
    strategy : str
        "equal-effort", "even-pace" or "fastest" [-].
    course : Course
        The course, N points [-].
    bounds : numpy.ndarray
        Segment boundary point indices, increasing from 0 to N-1 [-].
    air : CourseAir
        The air on every piece (its headwind goes into the rows) [-].
    speed : numpy.ndarray
        Ground speed on each piece, length N-1 [m/s].
    time : numpy.ndarray
        Time on each piece, length N-1 [s].
    power : numpy.ndarray
        Metabolic power on each piece, length N-1 [W/kg].
    effort : float
        The effort target, metabolic power of the flat speed in still air [W/kg].
    flat_speed : float
        The flat-ground, still-air speed of that effort [m/s].
    balance : numpy.ndarray or None
        D′ balance at the end of each piece, length N-1; None without critical speed and
        D′ [m].
    notes : list of Notice
        What the user must be told beside the numbers [-].
    reference : EvenPaceReference
        The even pace at the plan's time-weighted mean metabolic power: speed [m/s], finish
        time [s] and peak effort ratio [-].
    limited_even_pace_time : float or None, optional
        Finish time of the fastest even pace within critical speed and D′ (fastest plan) [s].

    Returns
    -------
    RunningPlan
        The plan [SI].
    """
    return RunningPlan(
        strategy=strategy, speed=speed, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(flat_speed),
        segments=running_segments(course, bounds, speed, time, power, effort, air.headwind,
                                  balance),
        d_prime_balance=balance, notes=tuple(notes), even_pace_speed=reference.speed,
        even_pace_time=reference.time, even_pace_peak_effort_ratio=reference.peak_effort_ratio,
        limited_even_pace_time=limited_even_pace_time,
    )


def running_targets(plan: RunningPlan) -> list[SegmentTarget]:
    """The plan's segments as segment target rows, for exports and the app.

    Parameters
    ----------
    plan : RunningPlan
        A running plan [-].

    Returns
    -------
    list of pacing.plan.targets.SegmentTarget
        One row per segment, SI; the power fields and the W′ balance are None, target_pace
        is the segment's pace [s/km].
    """
    return [
        SegmentTarget(
            index=index, start=row.start, end=row.end, length=row.end - row.start,
            grade=row.grade, target_power=None, power_low=None, power_high=None,
            target_pace=row.pace, speed=row.speed, time=row.time,
            cumulative_time=row.cumulative_time, w_prime_balance=None, headwind=row.headwind,
        )
        for index, row in enumerate(plan.segments)
    ]
