"""Running race plans on a course: equal effort, even pace, and the fastest that critical
speed and D′ allow, with their segment target rows.

The athlete's *effort* is the metabolic power of the flat-ground pace in still air at the
start's air density (pacing.running: Minetti et al. 2002 cost of running on grades plus air
resistance). An *equal-effort* plan runs every piece at the speed with that metabolic power; an
*even-pace* plan runs one speed everywhere; the *fastest* plan is the highest equal effort that
the runner's critical speed and D′ allow (D′ balance by Skiba's differential form, see
`pacing.running.distance_capacity_balance`). These names stay importable from pacing.running.

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
Poole, D.C. et al. (2016). Critical power: an important fatigue threshold in exercise
physiology. Med Sci Sports Exerc 48(11):2320-2334.
Skiba, P.F. et al. (2015). Intramuscular determinants of the ability to recover work capacity
above critical power. Eur J Appl Physiol 115(4):703-713.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from pacing.course import Course
from pacing.errors import InputError
from pacing.running import (
    RUNNING_COST_MODELS,
    Runner,
    check_critical_speed,
    distance_capacity_balance,
    flat_effort,
    metabolic_power,
    speed_for_metabolic_power,
)
from pacing.segments import split_every
from pacing.targets import SegmentTarget

DOWNHILL_SPEED_RATIO_CAP = 1.2
"""Default cap on speed on descents, as a multiple of the flat speed [-]. Our choice: the
Minetti polynomial's equal-effort speeds on descents are unrealistically high (its authors
say so): ×1.27 at −5 %, ×1.67 at −10 %. Runners in a self-paced hilly time trial ran 13.8 %
faster on descents than on level sections (Med Sci Sports Exerc 42(1):160-169, 2010,
"Spontaneous pacing during overground hill running"; authors Townshend et al. from
memory), so 1.2 leaves room for steeper descents without the model's excess."""

DEFAULT_SPLIT = 1000.0
"""Segment length when no segment bounds are given [m]: kilometre splits."""


@dataclass(frozen=True)
class RunningSegment:
    """One row of a running plan's target table (numbers only; formatting at the edges).

    Attributes
    ----------
    start, end : distance from the start [m].
    grade : mean grade, rise/run [-].
    headwind : length-weighted mean headwind component [m/s] (negative: tailwind).
    speed : mean ground speed [m/s].
    pace : target pace [s/km].
    time : expected time on the segment [s].
    cumulative_time : elapsed time at the segment's end [s].
    effort_ratio : time-weighted mean metabolic power relative to the effort target [-].
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


@dataclass(frozen=True, eq=False)
class RunningPlan:
    """A running plan on a course and its prediction.

    Attributes
    ----------
    strategy : "equal-effort", "even-pace" or "fastest".
    speed : ground speed on each piece [m/s], length N-1.
    time : time on each piece [s], length N-1.
    metabolic_power : on each piece [W/kg], length N-1.
    effort : the effort target, metabolic power of the flat speed in still air [W/kg].
    flat_speed : the flat-ground, still-air speed of that effort [m/s].
    segments : target rows.
    d_prime_balance : D′ balance at the end of each piece [m] (fastest plan; else None).
    notes : cautions to show beside the numbers.
    """

    strategy: str
    speed: np.ndarray
    time: np.ndarray
    metabolic_power: np.ndarray
    effort: float
    flat_speed: float
    segments: tuple[RunningSegment, ...]
    d_prime_balance: np.ndarray | None = None
    notes: tuple[str, ...] = ()

    @property
    def finish_time(self) -> float:
        """[s]."""
        return float(self.time.sum())

    @property
    def distance(self) -> float:
        """[m]."""
        return float((self.speed * self.time).sum())

    @property
    def average_speed(self) -> float:
        """[m/s]."""
        return self.distance / self.finish_time

    @property
    def mean_effort_ratio(self) -> float:
        """Time-weighted mean metabolic power relative to the effort target [-] (below 1 for
        an equal-effort plan where the descent cap holds the runner back)."""
        return float(np.sum(self.metabolic_power * self.time) / self.finish_time / self.effort)


@dataclass(frozen=True)
class _Air:
    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray


def _air(course: Course, air_density, headwind, crosswind) -> _Air:
    shape = course.grade.shape
    arrays = []
    for name, value in (("air density", air_density), ("headwind", headwind),
                        ("crosswind", crosswind)):
        array = np.asarray(value, dtype=float)
        if array.ndim > 1 or (array.ndim == 1 and array.shape != shape):
            raise InputError(f"{name} must be a number or one value per piece of the course")
        array = np.broadcast_to(array, shape)
        if not np.all(np.isfinite(array)):
            raise InputError(f"{name} must be finite")
        arrays.append(array)
    if np.any(arrays[0] <= 0.3) or np.any(arrays[0] > 1.6):
        raise InputError("air density must be 0.3-1.6 kg/m³")
    return _Air(*arrays)


def _check_bounds(course: Course, bounds) -> np.ndarray:
    if bounds is None:
        return split_every(course, DEFAULT_SPLIT)
    bounds = np.asarray(bounds, dtype=int)
    n = course.distance.size
    if bounds.ndim != 1 or bounds.size < 2 or bounds[0] != 0 or bounds[-1] != n - 1 \
            or np.any(np.diff(bounds) <= 0):
        raise InputError("segment bounds must increase from 0 to the last point of the course")
    return bounds


def _segments(course: Course, bounds: np.ndarray, speed: np.ndarray, time: np.ndarray,
              power: np.ndarray, effort: float, headwind: np.ndarray) -> tuple:
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
        ))
    return tuple(rows)


def _grade_notes(course: Course, runner: Runner) -> list[str]:
    low, high = RUNNING_COST_MODELS[runner.cost_model].grade_range
    outside = int(np.count_nonzero((course.grade < low) | (course.grade > high)))
    if outside:
        return [f"{outside} piece(s) steeper than the cost model's range {low:+.0%}..{high:+.0%}"
                " were costed at its edge"]
    return []


def _equal_effort_speeds(course, runner, effort, flat_speed, air, downhill_speed_ratio_cap):
    speed = speed_for_metabolic_power(effort, course.grade, air.density, runner, air.headwind,
                                      air.crosswind)
    capped = np.zeros(speed.shape, dtype=bool)
    if downhill_speed_ratio_cap is not None:
        if not downhill_speed_ratio_cap >= 1.0:
            raise InputError(
                f"downhill speed cap must be at least 1 × flat speed, got "
                f"{downhill_speed_ratio_cap}"
            )
        limit = downhill_speed_ratio_cap * flat_speed
        capped = (course.grade < 0) & (speed > limit)
        speed = np.where(capped, limit, speed)
    return speed, capped


def plan_equal_effort(
    course: Course,
    runner: Runner,
    flat_speed: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    downhill_speed_ratio_cap: float | None = DOWNHILL_SPEED_RATIO_CAP,
) -> RunningPlan:
    """Equal effort: on every piece the speed whose metabolic power equals the flat effort.

    effort = P_met(flat_speed, grade 0, still air, ρ at the first piece); then on each piece
    P_met(v) = effort is solved for v, and on descents v ≤ cap × flat_speed.

    Parameters
    ----------
    course : Course; runner : Runner; flat_speed : speed held on flat ground in still air
    [m/s]; air_density : per piece or scalar [kg/m³]; headwind, crosswind : per piece or
    scalar [m/s] at the runner; bounds : segment boundary point indices (default: every km);
    downhill_speed_ratio_cap : highest speed on descents as a multiple of flat_speed [-], None
    for no cap.
    """
    air = _air(course, air_density, headwind, crosswind)
    bounds = _check_bounds(course, bounds)
    effort = flat_effort(flat_speed, float(air.density[0]), runner)
    speed, capped = _equal_effort_speeds(course, runner, effort, flat_speed, air,
                                         downhill_speed_ratio_cap)
    time = course.piece_length / speed
    power = metabolic_power(speed, course.grade, air.density, runner, air.headwind,
                            air.crosswind)
    notes = _grade_notes(course, runner)
    if capped.any():
        notes.append(
            f"descent speed capped at {downhill_speed_ratio_cap:g} × flat speed on "
            f"{capped.mean():.0%} of the course: the cost model's downhill speeds are "
            "unrealistic"
        )
    return RunningPlan(
        strategy="equal-effort", speed=speed, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(flat_speed),
        segments=_segments(course, bounds, speed, time, power, effort, air.headwind),
        notes=tuple(notes),
    )


def plan_even_pace(
    course: Course,
    runner: Runner,
    flat_speed: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    speed: float | None = None,
) -> RunningPlan:
    """Even pace, the naive plan: one speed everywhere, and what it costs.

    By default the speed is the one whose time-weighted mean metabolic power over the course
    equals the flat effort (the same average effort as the flat pace): at constant speed the
    time on each piece is proportional to its length, so Σ P_met,j(v)·L_j / Σ L_j = effort is
    solved for v (scipy brentq). Each segment's `effort_ratio` shows what the even pace costs
    there (above 1 on climbs and into the wind). Where the descent cap holds an equal-effort
    plan below its effort, that plan's mean effort is lower than this one's, and even pace can
    then finish sooner: compare `mean_effort_ratio` too.

    Parameters
    ----------
    as plan_equal_effort; speed : hold this speed instead [m/s].
    """
    air = _air(course, air_density, headwind, crosswind)
    bounds = _check_bounds(course, bounds)
    effort = flat_effort(flat_speed, float(air.density[0]), runner)
    length = course.piece_length

    def mean_power(v: float) -> float:
        power = metabolic_power(v, course.grade, air.density, runner, air.headwind,
                                air.crosswind)
        return float(np.sum(power * length) / length.sum())

    if speed is None:
        high = 2.0 * flat_speed
        while mean_power(high) < effort:
            high *= 2.0
        speed = brentq(lambda v: mean_power(v) - effort, 1e-3, high, xtol=1e-12, rtol=1e-14)
    elif not np.isfinite(speed) or not 0.5 <= speed <= 12.0:
        raise InputError(f"even pace must be 1:24-33:20 per km (0.5-12 m/s), got {speed} m/s")
    speeds = np.full(length.shape, float(speed))
    time = length / speeds
    power = metabolic_power(speeds, course.grade, air.density, runner, air.headwind,
                            air.crosswind)
    notes = _grade_notes(course, runner)
    peak = float(power.max() / effort)
    if peak > 1.05:
        notes.append(f"even pace costs up to {peak:.0%} of the flat effort on the hardest piece")
    return RunningPlan(
        strategy="even-pace", speed=speeds, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(flat_speed),
        segments=_segments(course, bounds, speeds, time, power, effort, air.headwind),
        notes=tuple(notes),
    )


def plan_fastest(
    course: Course,
    runner: Runner,
    critical_speed: float,
    d_prime: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    downhill_speed_ratio_cap: float | None = DOWNHILL_SPEED_RATIO_CAP,
    d_prime_reserve: float = 0.0,
    tolerance: float = 1e-6,
) -> RunningPlan:
    """The fastest equal-effort plan that critical speed and D′ allow.

    Each effort level is expressed as its flat-equivalent speed u (flat ground, still air,
    start density). The plan is equal effort at level u; its D′ balance along the course is
    computed with `distance_capacity_balance` (pieces where the descent cap holds the runner
    back run below the level and may recover). The highest u whose balance never falls below
    `d_prime_reserve` is found by bisection. On a flat still-air course this is u = d/t with
    t = (d − D′)/CS (`critical_speed_flat_race_time`).

    Caution: the recovery below critical speed uses Skiba's constants from cycling.

    Parameters
    ----------
    as plan_equal_effort; critical_speed : CS [m/s]; d_prime : D′ [m]; d_prime_reserve :
    balance never to go below [m]; tolerance : on u [m/s].
    """
    check_critical_speed(critical_speed, d_prime)
    if not 0.0 <= d_prime_reserve < d_prime:
        raise InputError(f"D′ reserve must be 0 to D′ ({d_prime:g} m), got {d_prime_reserve}")
    air = _air(course, air_density, headwind, crosswind)
    bounds = _check_bounds(course, bounds)
    start_density = float(air.density[0])
    length = course.piece_length
    if course.total_distance <= d_prime - d_prime_reserve:
        raise InputError(
            f"course ({course.total_distance:.0f} m) must be longer than the usable D′ "
            f"({d_prime - d_prime_reserve:.0f} m)"
        )

    def attempt(level: float):
        effort = flat_effort(level, start_density, runner)
        speed, capped = _equal_effort_speeds(course, runner, effort, level, air,
                                             downhill_speed_ratio_cap)
        time = length / speed
        power = metabolic_power(speed, course.grade, air.density, runner, air.headwind,
                                air.crosswind)
        equivalent = np.full(speed.shape, level)
        if capped.any():
            equivalent[capped] = speed_for_metabolic_power(power[capped], 0.0, start_density,
                                                           runner)
        balance = distance_capacity_balance(equivalent, time, critical_speed, d_prime)
        return effort, speed, time, power, capped, balance

    low = critical_speed
    high = critical_speed * 1.05 + 0.1
    while attempt(high)[-1].min() >= d_prime_reserve:
        low, high = high, high * 1.5
        if high > 12.0:
            raise InputError("critical speed and D′ allow an unrealistically fast pace")
    while high - low > tolerance:
        middle = 0.5 * (low + high)
        if attempt(middle)[-1].min() >= d_prime_reserve:
            low = middle
        else:
            high = middle
    effort, speed, time, power, capped, balance = attempt(low)
    notes = _grade_notes(course, runner)
    notes.append("D′ recovery below critical speed uses Skiba's constants from cycling")
    if capped.any():
        notes.append(
            f"descent speed capped at {downhill_speed_ratio_cap:g} × flat-equivalent speed on "
            f"{capped.mean():.0%} of the course"
        )
    return RunningPlan(
        strategy="fastest", speed=speed, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(low),
        segments=_segments(course, bounds, speed, time, power, effort, air.headwind),
        d_prime_balance=balance, notes=tuple(notes),
    )


RUNNING_STRATEGIES = ("equal-effort", "even-pace", "fastest")
"""Names of the running plans (the CLI's --strategy values)."""


def running_targets(plan: RunningPlan) -> list[SegmentTarget]:
    """The plan's segments as pacing.targets.SegmentTarget rows (for exports and the app).

    Power fields and W′ balance are None; target_pace is the segment's pace [s/km].
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
