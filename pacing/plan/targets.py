"""Segment target tables: what the athlete aims for on each segment, as numbers.

One row per segment with the target power (and its band), the expected speed, the split and
cumulative times, the W′ balance at its end, the headwind and the length of any gap in the
recording joined by a straight line inside it. Values are SI (m, s, m/s, W, J);
pace is in seconds per kilometre because that is how every runner and coach reads it. Units and
formatting are left to the edges (pacing.display.units, the CLI, exports, the app).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Iterable, Sequence
from dataclasses import asdict, dataclass
from typing import TYPE_CHECKING, cast

import numpy as np
from numpy.typing import ArrayLike

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.plan.prediction import Prediction, SegmentResult, segment_results
from pacing.weather.conditions import CourseAir

if TYPE_CHECKING:
    from pacing.course.recording import Gap
    from pacing.plan.cycling import RacePlan

DEFAULT_BAND = 0.03
"""Half-width of the power band around a target power, as a fraction [-]: ±3 %, as the
issue on pacing strategies asks (a target with a tolerance band is common practice)."""


def power_band(target_power: ArrayLike, band: float = DEFAULT_BAND
               ) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper edge of the band around target powers.

    low = P·(1 − band), high = P·(1 + band).

    Parameters
    ----------
    target_power : array_like
        Target crank power, one number or an array, finite and ≥ 0 [W].
    band : float
        Half-width as a fraction, 0 ≤ band < 1 [-].

    Returns
    -------
    low : numpy.ndarray
        Lower edge [W].
    high : numpy.ndarray
        Upper edge [W].

    Raises
    ------
    InputError
        When the band is not a fraction 0..1 or a power is negative or not finite.
    """
    try:
        band = float(band)
    except (TypeError, ValueError):
        raise InputError(f"band must be a fraction 0..1, got {band!r}") from None
    if not (math.isfinite(band) and 0 <= band < 1):
        raise InputError(f"band must be a fraction 0..1, got {band}")
    power = np.asarray(target_power, dtype=float)
    if not np.all(np.isfinite(power)) or np.any(power < 0):
        raise InputError("target power must be finite and not negative")
    return power * (1.0 - band), power * (1.0 + band)


@dataclass(frozen=True)
class SegmentTarget:
    """The targets of one segment.

    Attributes
    ----------
    index : int
        Segment number, from 0 [-].
    start : float
        Course distance of its first point [m].
    end : float
        Course distance of its last point [m].
    length : float
        Horizontal length [m].
    grade : float
        Mean grade, rise/run [-].
    target_power : float or None
        Crank power to hold; None when the plan has no power (running) [W].
    power_low : float or None
        Lower edge of the band around the target power; None without a target power [W].
    power_high : float or None
        Upper edge of that band; None without a target power [W].
    target_pace : float or None
        Pace to hold; None unless pace is asked for (running) [s/km].
    speed : float
        Expected mean speed, length / time [m/s].
    time : float
        Expected time on the segment [s].
    cumulative_time : float
        Expected time from the start to its end [s].
    w_prime_balance : float or None
        W′ balance at its end; None without CP and W′ [J].
    headwind : float
        Length-weighted mean headwind component (negative = tailwind); 0 without air
        data [m/s].
    walking_distance : float
        Length walked (bike pushed) or ridden below walking pace [m].
    gap_length : float
        Total length of the recording's gaps joined by a straight line that start in this
        segment (pacing.course.recording.Gap); 0 when none [m].
    clock_time : str or None
        Clock time at its start, ISO 8601 (with the offset from UTC when known); None without
        a race day's start time [-].
    temperature : float or None
        Air temperature met on it (time-weighted, at the start's elevation); None without a
        race day [°C].
    wind_speed : float or None
        Wind speed met on it at 10 m (time-weighted vector mean); None without a race day
        [m/s].
    wind_from : float or None
        Direction that wind blows from; None without a race day [deg clockwise from north].
    """

    index: int
    start: float
    end: float
    length: float
    grade: float
    target_power: float | None
    power_low: float | None
    power_high: float | None
    target_pace: float | None
    speed: float
    time: float
    cumulative_time: float
    w_prime_balance: float | None
    headwind: float
    walking_distance: float = 0.0
    gap_length: float = 0.0
    clock_time: str | None = None
    temperature: float | None = None
    wind_speed: float | None = None
    wind_from: float | None = None


def segment_gap_lengths(gaps: Iterable[Gap], ends: Sequence[float]) -> np.ndarray:
    """Total length of the joined gaps that start in each segment.

    A gap belongs to the segment whose [start, end) holds the course distance where it starts
    (`Gap.at`); one starting at or past the last end belongs to the last segment. A joined gap
    is a straight line the course follows where the recording has no points, so a segment may
    be longer than the part of it that was ridden; a dropped gap adds no distance and is not
    counted.

    Parameters
    ----------
    gaps : iterable of pacing.course.recording.Gap
        The course's gaps (Course.gaps), each with `at` [m], `length` [m] and `handling` [-].
    ends : sequence of float
        Course distance of each segment's end, increasing, one per segment [m].

    Returns
    -------
    numpy.ndarray
        Joined gap length per segment, zeros where none [m].

    Examples
    --------
    >>> from pacing.course.recording import Gap
    >>> segment_gap_lengths([Gap(750, 7_500.0, 12_700.0, None)], [5e3, 1e4, 2e4]).tolist()
    [0.0, 12700.0, 0.0]
    """
    limits = np.asarray(ends, dtype=float)
    total = np.zeros(limits.size)
    if limits.size == 0:
        return total
    for gap in gaps:
        if gap.handling != "join":
            continue
        index = min(int(np.searchsorted(limits, gap.at, side="right")), limits.size - 1)
        total[index] += gap.length
    return total


def with_gap_lengths(rows: Sequence[SegmentTarget], gaps: Iterable[Gap]
                     ) -> list[SegmentTarget]:
    """The rows with their `gap_length` filled from a course's gaps (segment_gap_lengths).

    Parameters
    ----------
    rows : sequence of SegmentTarget
        The target table, in course order [-].
    gaps : iterable of pacing.course.recording.Gap
        The course's gaps (Course.gaps) [-].

    Returns
    -------
    list of SegmentTarget
        The same rows, `gap_length` set [-].
    """
    lengths = segment_gap_lengths(gaps, [row.end for row in rows])
    return [dataclasses.replace(row, gap_length=float(length))
            for row, length in zip(rows, lengths, strict=True)]


def _optional(values: ArrayLike | None, count: int, name: str) -> np.ndarray | None:
    """One value per segment as an array, or None; InputError on a wrong length."""
    if values is None:
        return None
    array = np.asarray(values, dtype=float)
    if array.shape != (count,):
        raise InputError(f"{name} must have one value per segment ({count})")
    return array


def _segment_headwind(course: Course, bounds: np.ndarray, headwind: ArrayLike | None,
                      count: int) -> np.ndarray:
    """Length-weighted mean headwind of each segment [m/s] (zeros without wind data)."""
    if headwind is None:
        return np.zeros(count)
    piece_length = np.diff(np.asarray(course.distance, dtype=float))
    wind = np.broadcast_to(np.asarray(headwind, dtype=float), piece_length.shape)
    segment = np.repeat(np.arange(count), np.diff(bounds.astype(int)))
    return (np.bincount(segment, wind * piece_length, count)
            / np.bincount(segment, piece_length, count))


def target_table(
    course: Course,
    bounds: ArrayLike,
    plan: RacePlan | Prediction,
    *,
    segment_power: ArrayLike | None = None,
    segment_w_prime_balance: ArrayLike | None = None,
    air: CourseAir | None = None,
    band: float | None = None,
    pace: bool = False,
) -> list[SegmentTarget]:
    """The target table of a plan, one SegmentTarget per segment.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    bounds : array_like of int
        Segment boundary point indices, first 0, last N-1 [-].
    plan : RacePlan or Prediction
        A pacing.plan.cycling.RacePlan, or a pacing.plan.prediction.Prediction (anything with
        the Prediction fields distance, time, speed, power) [-].
    segment_power : array_like or None
        Target power per segment (default: the RacePlan's segment power; for a bare
        Prediction, the time-weighted mean power it rode on each segment; none when `pace` is
        set and no power is given) [W].
    segment_w_prime_balance : array_like or None
        W′ balance at each segment end (default: the RacePlan's) [J].
    air : pacing.weather.conditions.CourseAir or None
        Per-piece air for the headwind column; default the Prediction's headwind when it has
        one [-].
    band : float or None
        Half-width of the power band as a fraction (default the RacePlan request's band, else
        DEFAULT_BAND, 0.03) [-].
    pace : bool
        Also give the target pace in s/km (running) [-].

    Returns
    -------
    list of SegmentTarget
        One row per segment, in course order, with the length of the course's joined gaps
        that start in it (segment_gap_lengths) [-].

    Raises
    ------
    InputError
        When the band is not a fraction 0..1, the bounds are not valid, or a per-segment
        array has the wrong length.
    """
    prediction = cast(Prediction, getattr(plan, "prediction", plan))
    bounds = np.asarray(bounds)
    if band is None:
        request = getattr(plan, "request", None)
        band = request.band if request is not None else DEFAULT_BAND
    if not (math.isfinite(band) and 0 <= band < 1):
        raise InputError(f"band must be a fraction 0..1, got {band}")
    results = segment_results(course, prediction, bounds)
    count = len(results)
    if segment_power is None:
        segment_power = getattr(plan, "segment_power", None)
        if segment_power is None and not pace:
            segment_power = [r.power for r in results]
    power = _optional(segment_power, count, "segment power")
    if segment_w_prime_balance is None:
        segment_w_prime_balance = getattr(plan, "segment_w_prime_balance", None)
    balance = _optional(segment_w_prime_balance, count, "W′ balance")
    headwind = _segment_headwind(
        course, bounds, air.headwind if air is not None else getattr(prediction, "headwind",
                                                                     None), count)
    rows = _rows(results, power, balance, headwind, band, pace)
    return with_gap_lengths(rows, course.gaps) if course.gaps else rows


def _rows(results: list[SegmentResult], power: np.ndarray | None, balance: np.ndarray | None,
          headwind: np.ndarray, band: float, pace: bool) -> list[SegmentTarget]:
    """The SegmentTarget rows from the segments' results and the per-segment columns."""
    rows = []
    elapsed = 0.0
    for k, result in enumerate(results):
        elapsed += result.time
        target = None if power is None else float(power[k])
        rows.append(SegmentTarget(
            index=result.index,
            start=result.start,
            end=result.end,
            length=result.length,
            grade=result.grade,
            target_power=target,
            power_low=None if target is None else float(power_band(target, band)[0]),
            power_high=None if target is None else float(power_band(target, band)[1]),
            target_pace=1000.0 / result.speed if pace else None,
            speed=result.speed,
            time=result.time,
            cumulative_time=elapsed,
            w_prime_balance=None if balance is None else float(balance[k]),
            headwind=float(headwind[k]),
            walking_distance=result.walking_distance,
        ))
    return rows


RECORD_KEYS = {
    "index": "index",
    "start": "start_m",
    "end": "end_m",
    "length": "length_m",
    "grade": "grade",
    "target_power": "power_w",
    "power_low": "power_low_w",
    "power_high": "power_high_w",
    "target_pace": "pace_s_per_km",
    "speed": "speed_m_s",
    "time": "time_s",
    "cumulative_time": "cumulative_time_s",
    "w_prime_balance": "w_prime_balance_j",
    "headwind": "headwind_m_s",
    "walking_distance": "walking_distance_m",
    "gap_length": "gap_length_m",
    "clock_time": "clock_time",
    "temperature": "temperature_c",
    "wind_speed": "wind_speed_m_s",
    "wind_from": "wind_from_deg",
}
"""Field of SegmentTarget → key in exported records (SI units in the key's suffix)."""


def targets_as_records(rows: list[SegmentTarget]) -> list[dict[str, float | int | None]]:
    """Rows as plain dicts with SI-suffixed keys (RECORD_KEYS), for JSON and CSV exports.

    Parameters
    ----------
    rows : list of SegmentTarget
        The target table [-].

    Returns
    -------
    list of dict
        One dict per row, keys of RECORD_KEYS, values in SI units [-].
    """
    return [{RECORD_KEYS[name]: value for name, value in asdict(row).items()} for row in rows]
