"""The steady-state segment model of a course for cycling plans.

The plans are made on the coach's segments (one power per segment, not per point): every piece
i of segment k is ridden at the steady speed v_i(P_k) of the Martin et al. power balance, so the
segment takes t_k(P_k) = Σ L_i / v_i(P_k). Differentiating the balance η·P = v·F(v) gives
dv/dP = η / (F + v·F′) and d²v/dP² = −(2F′ + v·F″)·(dv/dP)³ / η, so t_k, t_k′ and t_k″ are exact
and cheap. The per-piece constants of the balance are computed once per model, the Newton
steps for the speeds start from the previous call's speeds, and calm crosswind skips the
apparent-wind square root: one evaluation over 4,000 pieces takes about 0.1 ms.

The Newton steps and, for solvers that need no second derivative (`steady_times`), the sums
run as compiled kernels (pacing.kernels) on long courses or once the kernels are loaded; they
repeat numpy's operations in numpy's order (its pairwise sums included), so a plan is the same
to the last bit with or without them. Not x**3, which numpy computes with its own vectorised
power: the second derivative stays in numpy.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from types import SimpleNamespace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from pacing import kernels
from pacing.course.geometry import Course
from pacing.course.segments import piece_segment_index
from pacing.errors import InputError
from pacing.physics.cycling import Rider, gravity_force, rolling_force, speed_for_power
from pacing.weather.conditions import CourseAir

prange = range
"""The pieces' loops of `_newton_speeds` and `_time_sums`: plain `range` here, numba.prange in
the compiled family (pacing.kernels.compiled), where they run on every core."""

_MINIMUM_SPEED = 0.05  # speed_for_power's floor (a stalled rider) [m/s]


@dataclass(frozen=True, eq=False)
class SegmentModel:
    """Pieces of a course grouped into segments, for the steady-state segment times.

    Attributes
    ----------
    length : numpy.ndarray
        Road length of each piece, horizontal length·√(1 + G²) (the speeds of the power
        balance are along the road, as in pacing.plan.simulate), length N-1 [m].
    grade : numpy.ndarray
        Grade of each piece, rise/run, length N-1 [-].
    density : numpy.ndarray
        Air density on each piece, length N-1 [kg/m³].
    headwind : numpy.ndarray
        Wind component against the direction of travel on each piece, length N-1 [m/s].
    crosswind : numpy.ndarray
        Wind component across the direction of travel on each piece, length N-1 [m/s].
    segment : numpy.ndarray
        Segment number of each piece, length N-1 [-].
    count : int
        Number of segments K [-].
    mean_grade : numpy.ndarray
        Net rise over horizontal length of each segment, length K [-].
    rider : pacing.physics.cycling.Rider
        The rider and bike [-].
    speed_guess : dict
        Cache of the last steady speeds found, to start the next solve from, and of the
        per-piece constants of the balance; results do not depend on it beyond the solver's
        tolerance [-].
    """

    length: np.ndarray
    grade: np.ndarray
    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray
    segment: np.ndarray
    count: int
    mean_grade: np.ndarray
    rider: Rider
    speed_guess: dict[str, Any] = field(default_factory=dict, repr=False)


def segment_model(course: Course, bounds: ArrayLike, rider: Rider, air: CourseAir
                  ) -> SegmentModel:
    """Build the SegmentModel of a course cut at `bounds`, with the air on each piece.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    bounds : array_like of int
        Segment boundary point indices, increasing, first 0, last N-1 [-].
    rider : pacing.physics.cycling.Rider
        The rider and bike [-].
    air : pacing.weather.conditions.CourseAir
        Air density [kg/m³], headwind [m/s] and crosswind [m/s] on every piece (arrays of
        length N-1, or one value each) [-].

    Returns
    -------
    SegmentModel
        The pieces with their road length, grade and air, numbered by segment [-].

    Raises
    ------
    InputError
        When the bounds are not increasing indices from 0 to N-1, or a piece value is not
        finite.
    """
    bounds = np.asarray(bounds)
    points = np.asarray(course.distance).size
    if (bounds.ndim != 1 or bounds.size < 2 or bounds[0] != 0 or bounds[-1] != points - 1
            or np.any(np.diff(bounds) <= 0)):
        raise InputError("segment bounds must be increasing point indices from 0 to N-1")
    bounds = bounds.astype(int)
    pieces = points - 1

    def per_piece(values: ArrayLike, name: str) -> np.ndarray:
        array = np.broadcast_to(np.asarray(values, dtype=float), (pieces,)).copy()
        if not np.all(np.isfinite(array)):
            raise InputError(f"{name} must be finite on every piece")
        return array

    elevation = np.asarray(course.elevation, dtype=float)
    distance = np.asarray(course.distance, dtype=float)
    grade = per_piece(course.grade, "grade")
    return SegmentModel(
        length=np.diff(distance) * np.sqrt(1.0 + grade**2),
        grade=grade,
        density=per_piece(air.density, "air density"),
        headwind=per_piece(air.headwind, "headwind"),
        crosswind=per_piece(air.crosswind, "crosswind"),
        segment=piece_segment_index(bounds),
        count=bounds.size - 1,
        mean_grade=np.diff(elevation[bounds]) / np.diff(distance[bounds]),
        rider=rider,
    )


def steady_segment_times(
    model: SegmentModel, segment_power: ArrayLike
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Steady-state time of each segment and its first two derivatives in power.

    Every piece i is ridden at the steady speed v_i of the power balance η·P = v·F(v)
    (Martin et al. 1998), F the resisting force; then

        t_k = Σ L_i / v_i,   t_k′ = −Σ L_i·v_i′ / v_i²,   t_k″ = Σ L_i·(2·v_i′²/v_i³ − v_i″/v_i²)

    with v′ = η/(F + v·F′) and v″ = −(2F′ + v·F″)·v′³/η, sums over the pieces of segment k.
    The slope of a yaw-drag table is neglected in F′ and F″ only.

    Parameters
    ----------
    model : SegmentModel
        The course's pieces grouped into segments [-].
    segment_power : array_like
        Crank power of each segment, length K [W].

    Returns
    -------
    time : numpy.ndarray
        Time of each segment, length K [s].
    dtime : numpy.ndarray
        Its derivative in the segment's power, length K [s/W].
    d2time : numpy.ndarray
        Its second derivative in the segment's power, length K [s/W²].

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation
    of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    """
    power = np.asarray(segment_power, dtype=float)[model.segment]
    speed = _steady_speed(model, power)
    piece = _piece_constants(model)
    slope, curvature = _force_slopes(model, piece, speed)
    efficiency = model.rider.drivetrain_efficiency
    inverse = 1.0 / speed
    force = efficiency * np.maximum(power, 0.0) * inverse
    first = efficiency / (force + speed * slope)
    second = -(2.0 * slope + speed * curvature) * first**3 / efficiency
    length_time = model.length * inverse  # L/v
    first_time = length_time * first * inverse  # L·v′/v²
    terms = np.empty((3, speed.size))
    terms[0] = length_time
    terms[1] = -first_time
    terms[2] = first_time * (2.0 * first * inverse) - length_time * inverse * second
    if piece.starts is None:
        count = model.count
        time, dtime, d2time = (np.bincount(model.segment, row, count) for row in terms)
        return time, dtime, d2time
    sums = np.add.reduceat(terms, piece.starts, axis=1)
    return sums[0], sums[1], sums[2]


def steady_times(model: SegmentModel, segment_power: ArrayLike
                 ) -> tuple[np.ndarray, np.ndarray]:
    """Steady-state time of each segment and its derivative in power.

    The first two results of `steady_segment_times`, the same numbers to the last bit, for
    the solvers that need no second derivative (the SLSQP polish, the limit checks): on a long
    course, or once the compiled kernels are loaded, one compiled pass over the pieces.

    Parameters
    ----------
    model : SegmentModel
        The course's pieces grouped into segments [-].
    segment_power : array_like
        Crank power of each segment, length K [W].

    Returns
    -------
    time : numpy.ndarray
        Time of each segment, length K [s].
    dtime : numpy.ndarray
        Its derivative in the segment's power, length K [s/W].

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation
    of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    """
    power = np.asarray(segment_power, dtype=float)[model.segment]
    speed = _steady_speed(model, power)
    piece = _piece_constants(model)
    efficiency = model.rider.drivetrain_efficiency
    if piece.starts is not None and _use_kernel(speed.size):
        with kernels.parallel_turn() as ours:
            if ours:
                time, dtime = np.empty(model.count), np.empty(model.count)
                _compiled()._time_sums(speed, power, model.length, model.headwind,
                                       model.crosswind, piece.drag, piece.bearing, efficiency,
                                       piece.headwind, piece.calm_cross, piece.starts, time,
                                       dtime)
                return time, dtime
    slope = _force_slope(model, piece, speed)
    inverse = 1.0 / speed
    force = efficiency * np.maximum(power, 0.0) * inverse
    first = efficiency / (force + speed * slope)
    length_time = model.length * inverse  # L/v
    terms = np.empty((2, speed.size))
    terms[0] = length_time
    terms[1] = -(length_time * first * inverse)  # −L·v′/v²
    if piece.starts is None:
        return (np.bincount(model.segment, terms[0], model.count),
                np.bincount(model.segment, terms[1], model.count))
    sums = np.add.reduceat(terms, piece.starts, axis=1)
    return sums[0], sums[1]


def _force_slope(model: SegmentModel, piece: _PieceConstants, speed: np.ndarray
                 ) -> np.ndarray:
    """F′ of the resisting force at the steady speeds [N·s/m] (`_force_slopes` without F″)."""
    drag = piece.drag
    along = speed + model.headwind if piece.headwind else speed
    if piece.calm_cross:
        return 2.0 * (drag * np.abs(along)) + piece.bearing
    apparent = np.hypot(along, model.crosswind)
    safe = np.where(apparent > 0, apparent, 1.0)
    return drag * (apparent + along**2 / safe) + piece.bearing


def _force_slopes(model: SegmentModel, piece: _PieceConstants, speed: np.ndarray
                  ) -> tuple[np.ndarray, np.ndarray]:
    """F′ [N·s/m] and F″ [N·s²/m²] of the resisting force at the steady speeds [m/s]."""
    drag = piece.drag
    along = speed + model.headwind if piece.headwind else speed
    if piece.calm_cross:
        # no crosswind: apparent = |along|, so the slope is 2k·|along| and the curvature
        # 2k·sign(along) (the general expressions below with w_c = 0)
        pull = drag * np.abs(along)
        return 2.0 * pull + piece.bearing, 2.0 * drag * np.sign(along)
    apparent = np.hypot(along, model.crosswind)
    safe = np.where(apparent > 0, apparent, 1.0)
    slope = drag * (apparent + along**2 / safe) + piece.bearing
    curvature = drag * (3.0 * along / safe - along**3 / safe**3)
    return slope, curvature


@dataclass(frozen=True, eq=False)
class _PieceConstants:
    """Per-piece quantities of the power balance that do not depend on power.

    drag: drag factor k = ½ρ·(CdA·(1 − drafting) + wheel CdA) [kg/m]; constant: the
    speed-independent resistance (rolling, gravity, bearings) [N]; bearing: the bearing force
    per speed [N·s/m]; starts: the first piece of each segment (None when the segments are not
    consecutive runs 0..K-1); headwind, calm_cross: whether the wind has a headwind component
    at all, and whether it has no crosswind; sources: the model's inputs they were made from.
    """

    drag: np.ndarray
    constant: np.ndarray
    bearing: float
    starts: np.ndarray | None
    headwind: bool
    calm_cross: bool
    sources: tuple


def _piece_constants(model: SegmentModel) -> _PieceConstants:
    """The model's _PieceConstants, computed once per model and kept in its cache."""
    cache = model.speed_guess
    found = cache.get("piece")
    sources = (model.segment, model.grade, model.density, model.headwind, model.crosswind,
               model.rider)
    # a model copied with dataclasses.replace shares the cache: recompute if an input changed
    if found is None or any(a is not b for a, b in zip(found.sources, sources, strict=True)):
        rider = model.rider
        pieces = model.segment.size
        area = rider.drag_area * (1.0 - rider.drafting_reduction) + rider.wheel_drag_area
        first = np.flatnonzero(np.diff(model.segment, prepend=-1))
        # segments not in consecutive runs 0..K-1: sum with bincount (starts None)
        consecutive = first.size == model.count and not np.any(np.diff(model.segment) < 0)
        found = _PieceConstants(
            drag=np.broadcast_to(0.5 * model.density * area, (pieces,)).copy(),
            constant=np.broadcast_to(
                rolling_force(model.grade, rider) + gravity_force(model.grade, rider)
                + rider.bearing_force_constant, (pieces,)).copy(),
            bearing=rider.bearing_force_per_speed,
            starts=first if consecutive else None,
            headwind=bool(np.any(model.headwind)),
            calm_cross=not np.any(model.crosswind),
            sources=sources,
        )
        cache["piece"] = found
    return found


# ------------------------------------------------------------------ kernel
# A plain function of floats, bools and arrays (pacing.kernels): compiled by numba for long
# courses or once the kernels are loaded; the same steps as `_newton_speeds_numpy`, operation
# for operation, so both give the same speeds to the last bit. The pieces' loops run on every
# core (prange): each piece is its own, and the only reductions are a max and a min, which
# give the same number in any order, so the result does not depend on the threads.

KERNELS = ("_newton_speeds", "_pairwise_sum", "_segment_sum", "_time_sums")
"""The kernel functions of this module (pacing.kernels.compiled)."""

_NEWTON_STEPS = 8  # most Newton steps from the previous speeds before the fallback


def _newton_speeds(speed: np.ndarray, step: np.ndarray, headwind: np.ndarray,
                   crosswind: np.ndarray, drag: np.ndarray, constant: np.ndarray,
                   bearing: float, drive: np.ndarray, has_headwind: bool, calm_cross: bool
                   ) -> int:
    """Newton steps on g(v) = F(v) − η·P/v for every piece, all pieces per step (on every core
    when compiled; called holding kernels.PARALLEL_LOCK), until every step is within 1e-12 of
    the slowest speed (at most _NEWTON_STEPS): `speed` [m/s] and the last `step` [m/s] of each
    piece are written in place. A step that is not a number (or a zero speed) leaves the piece
    to the caller's fallback. Returns the number of pieces the caller must solve again: step
    not within 1e-12 of the piece's speed, or a speed not a number, infinite or at most
    _MINIMUM_SPEED [-] (0: no check of the arrays needed)."""
    count = speed.size
    for _ in range(_NEWTON_STEPS):
        largest = 0.0
        smallest = math.inf
        undefined = 0
        for i in prange(count):
            v = speed[i]
            if v == 0.0:
                undefined += 1
                step[i] = math.nan
                speed[i] = math.nan
                continue
            along = v + headwind[i] if has_headwind else v
            pushed = drive[i] / v
            if calm_cross:
                pull = drag[i] * abs(along)
                value = pull * along + constant[i] + bearing * v - pushed
                slope = 2.0 * pull + bearing + pushed / v
            else:
                apparent = math.hypot(along, crosswind[i])
                safe = apparent if apparent > 0 else 1.0
                value = drag[i] * apparent * along + constant[i] + bearing * v - pushed
                slope = drag[i] * (apparent + along * along / safe) + bearing + pushed / v
            change = value / slope if slope != 0.0 else math.nan
            v = v - change
            step[i] = change
            speed[i] = v
            if change != change or v != v:
                undefined += 1
            else:
                largest = max(largest, abs(change))
                smallest = min(smallest, abs(v))
        if not undefined and largest <= 1e-12 * smallest:
            break
    unsolved = 0
    for i in prange(count):
        v = speed[i]
        if not (abs(step[i]) <= 1e-12 * abs(v) and _MINIMUM_SPEED < v < math.inf):
            unsolved += 1
    return unsolved


def _pairwise_sum(values: np.ndarray, first: int, count: int) -> float:
    """Σ values[first:first + count] in numpy's pairwise order (8 accumulators in blocks of at
    most 128, halves above), so the compiled sums equal numpy's to the last bit."""
    if count < 8:
        total = 0.0
        for i in range(first, first + count):
            total += values[i]
        return total
    if count <= 128:
        r0, r1, r2, r3 = values[first], values[first + 1], values[first + 2], values[first + 3]
        r4, r5, r6, r7 = values[first + 4], values[first + 5], values[first + 6], values[first + 7]
        i = 8
        whole = count - count % 8
        while i < whole:
            at = first + i
            r0 += values[at]
            r1 += values[at + 1]
            r2 += values[at + 2]
            r3 += values[at + 3]
            r4 += values[at + 4]
            r5 += values[at + 5]
            r6 += values[at + 6]
            r7 += values[at + 7]
            i += 8
        total = ((r0 + r1) + (r2 + r3)) + ((r4 + r5) + (r6 + r7))
        while i < count:
            total += values[first + i]
            i += 1
        return total
    half = count // 2
    half -= half % 8
    return (_pairwise_sum(values, first, half)
            + _pairwise_sum(values, first + half, count - half))


def _segment_sum(values: np.ndarray, first: int, stop: int) -> float:
    """Σ values[first:stop] as numpy's add.reduceat sums one segment: its first value plus
    the pairwise sum of the rest."""
    if stop - first <= 1:
        return values[first]
    return values[first] + _pairwise_sum(values, first + 1, stop - first - 1)


def _time_sums(speed: np.ndarray, power: np.ndarray, length: np.ndarray,
               headwind: np.ndarray, crosswind: np.ndarray, drag: np.ndarray, bearing: float,
               efficiency: float, has_headwind: bool, calm_cross: bool, starts: np.ndarray,
               time: np.ndarray, dtime: np.ndarray) -> None:
    """Segment times t_k = Σ L/v [s] and t_k′ = −Σ L·v′/v² [s/W] written into `time` and
    `dtime`, operation for operation as `steady_times` does them with numpy (pieces, then
    segments, on every core when compiled; called holding kernels.PARALLEL_LOCK)."""
    count = speed.size
    length_time = np.empty(count)
    first_time = np.empty(count)
    for i in prange(count):
        v = speed[i]
        along = v + headwind[i] if has_headwind else v
        if calm_cross:
            slope = 2.0 * (drag[i] * abs(along)) + bearing
        else:
            apparent = math.hypot(along, crosswind[i])
            safe = apparent if apparent > 0 else 1.0
            slope = drag[i] * (apparent + along * along / safe) + bearing
        inverse = 1.0 / v
        force = efficiency * max(power[i], 0.0) * inverse
        first = efficiency / (force + v * slope)
        length_time[i] = length[i] * inverse
        first_time[i] = -(length_time[i] * first * inverse)
    segments = starts.size
    for k in prange(segments):
        stop = starts[k + 1] if k + 1 < segments else count
        time[k] = _segment_sum(length_time, starts[k], stop)
        dtime[k] = _segment_sum(first_time, starts[k], stop)


def _compiled() -> SimpleNamespace:
    """This module's kernels compiled by numba (built once per process), the pieces' loops
    parallel."""
    return kernels.compiled(globals(), KERNELS, parallel=("_newton_speeds", "_time_sums"))


def _use_kernel(pieces: int) -> bool:
    """Whether the compiled Newton steps serve a course of `pieces` pieces: as
    pacing.kernels.use_compiled decides (the work is pieces × _NEWTON_STEPS), except with
    NUMBA_DISABLE_JIT=1, where the kernel would be a Python loop and numpy is faster."""
    if os.environ.get("NUMBA_DISABLE_JIT", "0") not in ("", "0"):
        return False
    return kernels.use_compiled(pieces * _NEWTON_STEPS)


def warm_up_kernels() -> None:
    """Load (or compile) this module's kernel on two pieces (pacing.kernels.warm_up)."""
    two = np.ones(2)
    for calm in (True, False):
        with kernels.PARALLEL_LOCK:
            _compiled()._newton_speeds(np.full(2, 8.0), np.empty(2), two, two, 0.2 * two,
                                       3.0 * two, 0.01, 200.0 * two, True, calm)
            _compiled()._time_sums(np.full(2, 8.0), 200.0 * two, 10.0 * two, two, two,
                                   0.2 * two, 0.01, 0.976, True, calm, np.array([0, 1]),
                                   np.empty(2), np.empty(2))


def _newton_speeds_numpy(model: SegmentModel, piece: _PieceConstants, drive: np.ndarray,
                         speed: np.ndarray) -> np.ndarray:
    """`_newton_speeds` on numpy arrays, every piece at once: `speed` [m/s] updated in place;
    the last step of each piece [m/s]."""
    drag, constant, bearing = piece.drag, piece.constant, piece.bearing
    step = np.full(speed.shape, np.inf)
    with np.errstate(all="ignore"):
        for _ in range(_NEWTON_STEPS):
            along = speed + model.headwind if piece.headwind else speed
            pushed = drive / speed  # η·P/v
            if piece.calm_cross:
                pull = drag * np.abs(along)  # k·|v_a|: drag k·|v_a|·v_a, slope 2k·|v_a|
                value = pull * along + constant + bearing * speed - pushed
                slope = 2.0 * pull + bearing + pushed / speed
            else:
                apparent = np.hypot(along, model.crosswind)
                value = drag * apparent * along + constant + bearing * speed - pushed
                slope = (drag * (apparent + along**2 / np.where(apparent > 0, apparent, 1.0))
                         + bearing + pushed / speed)
            step = value / slope
            speed -= step
            # every piece within 1e-12 of its speed (a max against a min: one pass each)
            if np.abs(step).max() <= 1e-12 * np.abs(speed).min():
                break
    return step


def _steady_speed(model: SegmentModel, power: np.ndarray) -> np.ndarray:
    """Steady speed on every piece [m/s].

    pacing.physics.cycling.speed_for_power, or, when the model holds the speeds of a previous
    solve, Newton steps from them on the same balance g(v) = F(v) − η·P/v (pieces that do not
    converge fast fall back to speed_for_power).
    """
    rider = model.rider
    guess = model.speed_guess.get("speed")
    if guess is None or rider.yaw_drag_table is not None:
        speed = speed_for_power(power, model.grade, model.density, rider, model.headwind,
                                model.crosswind)
        model.speed_guess["speed"] = speed
        return speed
    piece = _piece_constants(model)
    drive = rider.drivetrain_efficiency * np.maximum(power, 0.0)
    speed = guess.copy()
    step = None
    if _use_kernel(speed.size):
        with kernels.parallel_turn() as ours:
            if ours:
                step = np.empty(speed.size)
                unsolved = _compiled()._newton_speeds(
                    speed, step, model.headwind, model.crosswind, piece.drag, piece.constant,
                    piece.bearing, drive, piece.headwind, piece.calm_cross)
    if step is None:  # plain numpy, or another thread runs a parallel kernel
        step = _newton_speeds_numpy(model, piece, drive, speed)
        unsolved = 1  # not counted: check the arrays
    if unsolved:
        converged = np.abs(step) <= 1e-12 * np.abs(speed)
        bad = ~(converged & np.isfinite(speed) & (speed > _MINIMUM_SPEED))
        if bad.any():
            speed[bad] = speed_for_power(power[bad], model.grade[bad], model.density[bad],
                                         rider, model.headwind[bad], model.crosswind[bad])
    model.speed_guess["speed"] = speed
    return speed
