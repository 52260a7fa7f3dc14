"""Segments of a course: split it by grade, every so many metres or at given distances, and
describe each stretch (length, grades, ascent, heading, kind).

Segments are given by boundary point indices (`bounds`: increasing, first 0, last N-1) of a
pacing.course.Course; a *piece* joins point i to i+1 (DEVELOPERS.md, Conventions). These names
stay importable from pacing.course.
"""

from __future__ import annotations

import heapq
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.course import Course

CLIMB_GRADE = 0.02
"""Mean grade from which a segment is a climb (and below minus which a descent) [-]; common
practice."""


@dataclass(frozen=True)
class Segment:
    """A stretch of the course between two boundary points.

    Attributes
    ----------
    index : number of the segment, from 0.
    start, end : distance of its first and last point from the start [m].
    length : end - start [m].
    mean_grade : net rise over length [-].
    max_grade : grade of its steepest piece, with its sign (a descent's is negative) [-].
    ascent, descent : total rise and fall of the cleaned profile within it [m] (both >= 0).
    mean_heading : length-weighted circular mean of its pieces' headings [deg from north].
    kind : "climb" (mean grade >= CLIMB_GRADE), "descent" (<= -CLIMB_GRADE) or "flat".
    start_index, end_index : its boundary point indices in the course.
    """

    index: int
    start: float
    end: float
    length: float
    mean_grade: float
    max_grade: float
    ascent: float
    descent: float
    mean_heading: float
    kind: str
    start_index: int = 0
    end_index: int = 0


def grade_kind(grade: float, climb_grade: float = CLIMB_GRADE) -> str:
    """"climb", "descent" or "flat" for a mean grade [-]."""
    if grade >= climb_grade:
        return "climb"
    if grade <= -climb_grade:
        return "descent"
    return "flat"


def _check_bounds(course: Course, bounds: np.ndarray) -> np.ndarray:
    bounds = np.asarray(bounds)
    count = course.distance.size
    if bounds.dtype.kind == "f" and np.all(np.isfinite(bounds)) and np.all(bounds % 1 == 0):
        bounds = bounds.astype(int)  # whole numbers given as floats
    if (bounds.ndim != 1 or bounds.size < 2 or not np.issubdtype(bounds.dtype, np.integer)
            or bounds[0] != 0 or bounds[-1] != count - 1 or np.any(np.diff(bounds) <= 0)):
        raise InputError("segment bounds must be increasing point indices from 0 to N-1")
    return bounds.astype(int)


def split_by_grade(course: Course, climb_grade: float = CLIMB_GRADE,
                   min_length: float = 300.0) -> np.ndarray:
    """Split the course into climbs, flats and descents by grade.

    Each piece is classed by its cleaned grade (climb >= climb_grade, descent <= -climb_grade,
    else flat); runs of one class form segments. Then, while a segment is shorter than
    min_length, the shortest is merged into the neighbour whose mean grade is nearer its own,
    the merged segment is reclassed by its mean grade, and neighbours of one class are joined.

    Parameters
    ----------
    course : the course.
    climb_grade : grade threshold [-], > 0.
    min_length : shortest segment kept [m] (a course shorter than this is one segment).

    Returns
    -------
    bounds : boundary point indices, increasing, first 0, last N-1.
    """
    if not (math.isfinite(climb_grade) and climb_grade > 0):
        raise InputError(f"climb grade must be > 0, got {climb_grade!r}")
    if not (math.isfinite(min_length) and min_length >= 0):
        raise InputError(f"minimum segment length must be >= 0 m, got {min_length!r}")
    distance, elevation = course.distance, course.elevation
    grade = np.asarray(course.grade, dtype=float)
    kind = np.where(grade >= climb_grade, 1, np.where(grade <= -climb_grade, -1, 0))
    change = np.flatnonzero(np.diff(kind)) + 1
    starts = [0, *change.tolist()]
    ends = [*change.tolist(), distance.size - 1]

    def mean_grade(first: int, last: int) -> float:
        return float((elevation[last] - elevation[first]) / (distance[last] - distance[first]))

    def klass(first: int, last: int) -> int:
        value = mean_grade(first, last)
        return 1 if value >= climb_grade else (-1 if value <= -climb_grade else 0)

    # Segments as a doubly linked list; a heap gives the shortest (stale entries skipped).
    count = len(starts)
    previous = list(range(-1, count - 1))
    following = [*range(1, count), -1]
    alive = [True] * count
    version = [0] * count
    heap = [(float(distance[ends[k]] - distance[starts[k]]), 0, k) for k in range(count)]
    heapq.heapify(heap)

    def absorb(keep: int, gone: int) -> None:
        """Join segment `gone` into its neighbour `keep`."""
        starts[keep] = min(starts[keep], starts[gone])
        ends[keep] = max(ends[keep], ends[gone])
        alive[gone] = False
        if following[keep] == gone:
            following[keep] = following[gone]
            if following[gone] != -1:
                previous[following[gone]] = keep
        else:
            previous[keep] = previous[gone]
            if previous[gone] != -1:
                following[previous[gone]] = keep

    while heap:
        length, seen, node = heapq.heappop(heap)
        if not alive[node] or seen != version[node]:
            continue
        if length >= min_length or (previous[node] == -1 and following[node] == -1):
            break
        own = mean_grade(starts[node], ends[node])
        neighbours = [k for k in (previous[node], following[node]) if k != -1]
        target = min(neighbours, key=lambda k: abs(mean_grade(starts[k], ends[k]) - own))
        absorb(target, node)
        merged_class = klass(starts[target], ends[target])
        for side in (previous[target], following[target]):
            if side != -1 and klass(starts[side], ends[side]) == merged_class:
                absorb(target, side)
        version[target] += 1
        heapq.heappush(heap, (float(distance[ends[target]] - distance[starts[target]]),
                              version[target], target))

    node = next(k for k in range(count) if alive[k] and previous[k] == -1)
    bounds = [0]
    while node != -1:
        bounds.append(ends[node])
        node = following[node]
    return np.asarray(bounds, dtype=int)


def split_every(course: Course, length: float) -> np.ndarray:
    """Split the course every `length` metres (the last segment takes the rest).

    Parameters
    ----------
    length : segment length [m], > 0.

    Returns bounds (point indices nearest to each multiple of length; a last segment shorter than
    half a step is merged into the one before).
    """
    try:
        length = float(length)
    except (TypeError, ValueError):
        raise InputError(f"segment length must be a number of metres, got {length!r}") from None
    if not (math.isfinite(length) and length > 0):
        raise InputError(f"segment length must be > 0 m, got {length:g}")
    total = course.total_distance
    if total / length > course.distance.size:
        raise InputError(f"segment length {length:g} m is shorter than the course's step")
    marks = np.arange(length, total, length) + course.distance[0]
    return _bounds_at(course, marks)


def split_at(course: Course, distances) -> np.ndarray:
    """Split the course at the given distances from the start [m].

    Distances are sorted; each is moved to the nearest point; ones at the start, the finish or
    repeated are ignored. Raises InputError for values that are not finite numbers or lie
    outside 0..course length.
    """
    try:
        marks = np.asarray(distances, dtype=float).ravel()
    except (TypeError, ValueError):
        raise InputError("split distances must be numbers of metres") from None
    total = course.total_distance
    bad = ~np.isfinite(marks) | (marks < 0) | (marks > total)
    if bad.any():
        raise InputError(f"split distance {marks[bad][0]:g} m is outside the course "
                         f"(0..{total:.0f} m)")
    return _bounds_at(course, np.sort(marks) + course.distance[0])


def _bounds_at(course: Course, marks: np.ndarray) -> np.ndarray:
    distance = course.distance
    last = distance.size - 1
    index = np.clip(np.searchsorted(distance, marks), 1, last)
    nearer_before = np.abs(distance[index - 1] - marks) <= np.abs(distance[index] - marks)
    index = np.where(nearer_before, index - 1, index)
    inner = np.unique(index[(index > 0) & (index < last)])
    return np.concatenate([[0], inner, [last]]).astype(int)


def piece_segment_index(bounds: np.ndarray) -> np.ndarray:
    """Segment number of each piece (length N-1) from the boundary point indices."""
    bounds = np.asarray(bounds, dtype=int)
    return np.repeat(np.arange(bounds.size - 1), np.diff(bounds))


def describe_segments(course: Course, bounds: np.ndarray,
                      climb_grade: float = CLIMB_GRADE) -> list[Segment]:
    """One Segment per stretch between consecutive bounds (see Segment for the fields)."""
    bounds = _check_bounds(course, bounds)
    distance, elevation = course.distance, course.elevation
    grade, heading = np.asarray(course.grade), np.asarray(course.heading)
    piece_length = np.diff(distance)
    segments = []
    for number, (first, last) in enumerate(zip(bounds[:-1], bounds[1:], strict=True)):
        rise = np.diff(elevation[first:last + 1])
        length = float(distance[last] - distance[first])
        pieces = slice(first, last)
        steepest = int(np.argmax(np.abs(grade[pieces])))
        weight = piece_length[pieces]
        angle = np.radians(heading[pieces])
        mean_heading = math.degrees(math.atan2(float(np.sum(weight * np.sin(angle))),
                                               float(np.sum(weight * np.cos(angle))))) % 360.0
        mean_grade = float((elevation[last] - elevation[first]) / length)
        segments.append(Segment(
            index=number,
            start=float(distance[first]),
            end=float(distance[last]),
            length=length,
            mean_grade=mean_grade,
            max_grade=float(grade[pieces][steepest]),
            ascent=float(np.maximum(rise, 0.0).sum()),
            descent=float(np.maximum(-rise, 0.0).sum()),
            mean_heading=mean_heading,
            kind=grade_kind(mean_grade, climb_grade),
            start_index=int(first),
            end_index=int(last),
        ))
    return segments
