"""Segments of a course: split it by grade (also at turnarounds, with a longest segment),
every so many metres or at given distances, and describe each stretch (length, grades, ascent,
heading, kind).

Segments are given by boundary point indices (`bounds`: increasing, first 0, last N-1) of a
pacing.course.geometry.Course; a *piece* joins point i to i+1 (DEVELOPERS.md, Conventions).
"""

from __future__ import annotations

import heapq
import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.course.geometry import Course

CLIMB_GRADE = 0.02
"""Mean grade from which a segment is a climb (and below minus which a descent) [-]; common
practice."""

MAX_SEGMENT_LENGTH = 2000.0
"""Longest segment of the automatic split [m]: a 10 km climb or a 20 km flat still gets a
target every 2 km or less, where power or pace can follow the road and the wind."""

TURN_ANGLE = 120.0
"""Change of the road's direction that starts a new segment in the automatic split [deg]: a
turnaround (180) or a hairpin between long straights, not an ordinary corner (90)."""

TURN_SPAN = 500.0
"""Length of road on each side of a point over which its direction is averaged when looking
for turns [m]."""


@dataclass(frozen=True)
class Segment:
    """A stretch of the course between two boundary points.

    Attributes
    ----------
    index : int
        Number of the segment, from 0 [-].
    start : float
        Distance of its first point from the start [m].
    end : float
        Distance of its last point from the start [m].
    length : float
        end − start [m].
    mean_grade : float
        Net rise over length [-].
    max_grade : float
        Grade of its steepest piece, with its sign (a descent's is negative) [-].
    ascent : float
        Total rise of the cleaned profile within it, ≥ 0 [m].
    descent : float
        Total fall of the cleaned profile within it, ≥ 0 [m].
    mean_heading : float
        Length-weighted circular mean of its pieces' headings [deg clockwise from north].
    kind : {"climb", "descent", "flat"}
        "climb" (mean grade ≥ CLIMB_GRADE), "descent" (≤ −CLIMB_GRADE) or "flat" [-].
    start_index : int
        Boundary point index of its first point in the course [-].
    end_index : int
        Boundary point index of its last point in the course [-].
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
    """"climb", "descent" or "flat" for a mean grade.

    Parameters
    ----------
    grade : float
        Mean grade, rise/run [-].
    climb_grade : float, optional
        Grade from which a stretch is a climb, and below minus which a descent [-].

    Returns
    -------
    str
        "climb", "descent" or "flat".

    Examples
    --------
    >>> grade_kind(0.03), grade_kind(-0.03), grade_kind(0.01)
    ('climb', 'descent', 'flat')
    """
    if grade >= climb_grade:
        return "climb"
    if grade <= -climb_grade:
        return "descent"
    return "flat"


def _check_bounds(course: Course, bounds: ArrayLike) -> np.ndarray:
    bounds = np.asarray(bounds)
    count = course.distance.size
    if bounds.dtype.kind == "f" and np.all(np.isfinite(bounds)) and np.all(bounds % 1 == 0):
        bounds = bounds.astype(int)  # whole numbers given as floats
    if (bounds.ndim != 1 or bounds.size < 2 or not np.issubdtype(bounds.dtype, np.integer)
            or bounds[0] != 0 or bounds[-1] != count - 1 or np.any(np.diff(bounds) <= 0)):
        raise InputError("segment bounds must be increasing point indices from 0 to N-1")
    return bounds.astype(int)


def split_by_grade(course: Course, climb_grade: float = CLIMB_GRADE,
                   min_length: float = 300.0, max_length: float = MAX_SEGMENT_LENGTH,
                   turn_angle: float | None = TURN_ANGLE) -> np.ndarray:
    """Split the course into climbs, flats and descents by grade, at turnarounds, and so that
    no segment is longer than max_length.

    1. Turns: the course is first cut where its direction turns by turn_angle or more (see
       `turn_points`), e.g. at the turnaround of an out-and-back, so that the way out and the
       way back (opposite winds) are separate segments.
    2. Grade, within each stretch between turns: each piece is classed by its cleaned grade
       (climb >= climb_grade, descent <= -climb_grade, else flat); runs of one class form
       segments. Then, while a segment is shorter than min_length, the shortest is merged into
       the neighbour whose mean grade is nearer its own, the merged segment is reclassed by its
       mean grade, and neighbours of one class are joined.
    3. Length: a segment longer than max_length is split evenly into ceil(length/max_length)
       parts (fewer if parts would be shorter than min_length), so that a long climb or a long
       flat still gets targets every few kilometres.

    Parameters
    ----------
    course : Course
        The course.
    climb_grade : float, optional
        Grade threshold, > 0 [-].
    min_length : float, optional
        Shortest segment kept (a course shorter than this is one segment) [m].
    max_length : float, optional
        Longest segment, ≥ min_length; math.inf for no limit [m].
    turn_angle : float or None, optional
        Change of direction that cuts the course, 0 < angle ≤ 180; None for no cut at turns
        [deg].

    Returns
    -------
    numpy.ndarray
        Boundary point indices, increasing, first 0, last N-1 [-].

    Examples
    --------
    1 km flat, 1 km at 6 %, 1 km flat, points every 10 m:

    >>> from pacing.course.geometry import synthetic_course
    >>> distance = np.arange(0.0, 3001.0, 10.0)
    >>> elevation = np.interp(distance, [0, 1000, 2000, 3000], [100, 100, 160, 160])
    >>> split_by_grade(synthetic_course(distance, elevation)).tolist()
    [0, 100, 200, 300]
    """
    if not (math.isfinite(climb_grade) and climb_grade > 0):
        raise InputError(f"climb grade must be > 0, got {climb_grade!r}")
    if not (math.isfinite(min_length) and min_length >= 0):
        raise InputError(f"minimum segment length must be >= 0 m, got {min_length!r}")
    if not (max_length >= min_length and max_length > 0):  # also refuses NaN
        raise InputError(f"maximum segment length must be > 0 m and at least the minimum "
                         f"({min_length:g} m), got {max_length!r}")
    distance = np.asarray(course.distance, dtype=float)
    cuts = [0] if turn_angle is None else [0, *turn_points(course, turn_angle,
                                                           min_distance=min_length)]
    cuts.append(distance.size - 1)
    bounds = [0]
    for first, last in zip(cuts[:-1], cuts[1:], strict=True):
        within = _split_stretch_by_grade(distance[first:last + 1],
                                         np.asarray(course.elevation[first:last + 1], float),
                                         np.asarray(course.grade[first:last], float),
                                         climb_grade, min_length)
        bounds.extend((first + within[1:]).tolist())
    return _cap_length(distance, np.asarray(bounds, dtype=int), min_length, max_length)


def turn_points(course: Course, turn_angle: float = TURN_ANGLE, span: float = TURN_SPAN,
                min_distance: float = 300.0) -> np.ndarray:
    """Points where the course turns by turn_angle or more, e.g. the turnaround of an
    out-and-back.

    At each point i, B is the sum of the unit direction vectors of the pieces within `span`
    before it, weighted by their lengths, and A the same after it (the mean direction of the
    road before and after). The point is a candidate when the angle between A and B is at least
    turn_angle and the road keeps a direction on both sides (|A| and |B| at least half the
    length they sum, which rules out zigzags and GPS wander). Among candidates, the point with
    the largest |A − B| (the sharpest, most central change) is taken first; candidates within
    min_distance of a taken point or of either end are dropped.

    Parameters
    ----------
    course : Course
        The course.
    turn_angle : float, optional
        Change of direction, 0 < angle ≤ 180 [deg].
    span : float, optional
        Length of road on each side over which the direction is averaged, > 0 [m].
    min_distance : float, optional
        Smallest distance between two turn points, and from either end [m].

    Returns
    -------
    numpy.ndarray
        Point indices, increasing (empty when the course never turns that much) [-].

    Examples
    --------
    Out 2 km due north and back due south: the turn is at the far end, point 200.

    >>> from pacing.course.geometry import synthetic_course
    >>> distance = np.arange(0.0, 4001.0, 10.0)
    >>> heading = np.where(distance[:-1] < 2000.0, 0.0, 180.0)
    >>> turn_points(synthetic_course(distance, 0 * distance, heading=heading)).tolist()
    [200]
    """
    if turn_angle is None or not (0 < turn_angle <= 180):
        raise InputError(f"turn angle must be between 0 and 180 deg, got {turn_angle!r}")
    if not (math.isfinite(span) and span > 0):
        raise InputError(f"turn span must be > 0 m, got {span!r}")
    distance = np.asarray(course.distance, dtype=float)
    count = distance.size
    if count < 3:
        return np.zeros(0, dtype=int)
    length = np.diff(distance)
    angle = np.radians(np.asarray(course.heading, dtype=float))
    east = np.concatenate([[0.0], np.cumsum(length * np.sin(angle))])
    north = np.concatenate([[0.0], np.cumsum(length * np.cos(angle))])
    point = np.arange(1, count - 1)
    before = np.searchsorted(distance, distance[point] - span, side="left")
    after = np.searchsorted(distance, distance[point] + span, side="right") - 1
    b_east, b_north = east[point] - east[before], north[point] - north[before]
    a_east, a_north = east[after] - east[point], north[after] - north[point]
    b_size, a_size = np.hypot(b_east, b_north), np.hypot(a_east, a_north)
    b_road = distance[point] - distance[before]
    a_road = distance[after] - distance[point]
    with np.errstate(invalid="ignore", divide="ignore"):
        cosine = (a_east * b_east + a_north * b_north) / (a_size * b_size)
    straight = (b_size >= 0.5 * b_road) & (a_size >= 0.5 * a_road) & (b_road > 0) & (a_road > 0)
    inside = ((distance[point] - distance[0] >= min_distance)
              & (distance[-1] - distance[point] >= min_distance))
    turning = straight & inside & (cosine <= math.cos(math.radians(turn_angle)) + 1e-12)
    candidates = point[turning]
    if candidates.size == 0:
        return np.zeros(0, dtype=int)
    change = np.hypot(a_east - b_east, a_north - b_north)[turning]
    taken: list[int] = []
    for index in candidates[np.argsort(-change, kind="stable")]:
        if all(abs(distance[index] - distance[t]) >= min_distance for t in taken):
            taken.append(int(index))
    return np.asarray(sorted(taken), dtype=int)


def _cap_length(distance: np.ndarray, bounds: np.ndarray, min_length: float,
                max_length: float) -> np.ndarray:
    """Bounds with every segment longer than max_length split evenly (parts >= min_length)."""
    if not math.isfinite(max_length):
        return bounds
    result = [int(bounds[0])]
    for first, last in zip(bounds[:-1], bounds[1:], strict=True):
        length = float(distance[last] - distance[first])
        parts = math.ceil(length / max_length - 1e-9)
        if min_length > 0:
            parts = min(parts, max(1, math.floor(length / min_length)))
        if parts > 1:
            marks = distance[first] + length * np.arange(1, parts) / parts
            inner = np.clip(np.rint(np.interp(marks, distance[first:last + 1],
                                              np.arange(first, last + 1))).astype(int),
                            first + 1, last - 1)
            result.extend(sorted(set(inner.tolist())))  # np.unique would import numpy.ma
        result.append(int(last))
    return np.asarray(result, dtype=int)


class _GradeRuns:
    """Runs of pieces of one grade class in a stretch, kept as a doubly linked list so that a
    short run can be merged into a neighbour in constant time (step 2 of split_by_grade)."""

    def __init__(self, distance: np.ndarray, elevation: np.ndarray, grade: np.ndarray,
                 climb_grade: float) -> None:
        self.distance = distance
        self.elevation = elevation
        self.climb_grade = climb_grade
        kind = np.where(grade >= climb_grade, 1, np.where(grade <= -climb_grade, -1, 0))
        change = np.flatnonzero(np.diff(kind)) + 1
        self.starts = [0, *change.tolist()]
        self.ends = [*change.tolist(), distance.size - 1]
        count = len(self.starts)
        self.previous = list(range(-1, count - 1))
        self.following = [*range(1, count), -1]
        self.alive = [True] * count

    def length(self, run: int) -> float:
        """Length of a run [m]."""
        return float(self.distance[self.ends[run]] - self.distance[self.starts[run]])

    def mean_grade(self, run: int) -> float:
        """Net rise over length of a run [-]."""
        first, last = self.starts[run], self.ends[run]
        return float((self.elevation[last] - self.elevation[first])
                     / (self.distance[last] - self.distance[first]))

    def klass(self, run: int) -> int:
        """1 for a climb, -1 for a descent, 0 for flat, by the run's mean grade."""
        value = self.mean_grade(run)
        return 1 if value >= self.climb_grade else (-1 if value <= -self.climb_grade else 0)

    def absorb(self, keep: int, gone: int) -> None:
        """Join run `gone` into its neighbour `keep`."""
        self.starts[keep] = min(self.starts[keep], self.starts[gone])
        self.ends[keep] = max(self.ends[keep], self.ends[gone])
        self.alive[gone] = False
        following, previous = self.following, self.previous
        if following[keep] == gone:
            following[keep] = following[gone]
            if following[gone] != -1:
                previous[following[gone]] = keep
        else:
            previous[keep] = previous[gone]
            if previous[gone] != -1:
                following[previous[gone]] = keep

    def merge_short(self, min_length: float) -> None:
        """While a run is shorter than min_length, merge the shortest into the neighbour whose
        mean grade is nearer its own, then join neighbours of the merged run's class (a heap
        gives the shortest; stale entries are skipped)."""
        version = [0] * len(self.starts)
        heap = [(self.length(k), 0, k) for k in range(len(self.starts))]
        heapq.heapify(heap)
        while heap:
            length, seen, node = heapq.heappop(heap)
            if not self.alive[node] or seen != version[node]:
                continue
            if length >= min_length or (self.previous[node] == -1
                                        and self.following[node] == -1):
                break
            own = self.mean_grade(node)
            neighbours = [k for k in (self.previous[node], self.following[node]) if k != -1]
            target = min(neighbours, key=lambda k: abs(self.mean_grade(k) - own))
            self.absorb(target, node)
            merged_class = self.klass(target)
            for side in (self.previous[target], self.following[target]):
                if side != -1 and self.klass(side) == merged_class:
                    self.absorb(target, side)
            version[target] += 1
            heapq.heappush(heap, (self.length(target), version[target], target))

    def bounds(self) -> np.ndarray:
        """Boundary point indices of the runs, local to the stretch."""
        node = next(k for k in range(len(self.starts))
                    if self.alive[k] and self.previous[k] == -1)
        bounds = [0]
        while node != -1:
            bounds.append(self.ends[node])
            node = self.following[node]
        return np.asarray(bounds, dtype=int)


def _split_stretch_by_grade(distance: np.ndarray, elevation: np.ndarray, grade: np.ndarray,
                            climb_grade: float, min_length: float) -> np.ndarray:
    """Grade split (step 2 of split_by_grade) of one stretch; bounds local to the stretch."""
    runs = _GradeRuns(distance, elevation, grade, climb_grade)
    runs.merge_short(min_length)
    return runs.bounds()


def split_every(course: Course, length: float) -> np.ndarray:
    """Split the course every `length` metres (the last segment takes the rest).

    Parameters
    ----------
    course : Course
        The course.
    length : float
        Segment length, > 0 [m].

    Returns
    -------
    numpy.ndarray
        Boundary point indices, the nearest points to each multiple of `length` (a last segment
        shorter than half a step is merged into the one before) [-].

    Examples
    --------
    >>> from pacing.course.geometry import synthetic_course
    >>> distance = np.arange(0.0, 3001.0, 10.0)
    >>> split_every(synthetic_course(distance, 0 * distance), 1000.0).tolist()
    [0, 100, 200, 300]
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


def split_at(course: Course, distances: ArrayLike) -> np.ndarray:
    """Split the course at given distances from the start.

    Distances are sorted; each is moved to the nearest point; ones at the start, the finish or
    repeated are ignored. Raises InputError for values that are not finite numbers or lie
    outside 0..course length.

    Parameters
    ----------
    course : Course
        The course.
    distances : array_like
        Distances of the splits from the start [m].

    Returns
    -------
    numpy.ndarray
        Boundary point indices [-].

    Examples
    --------
    1234 m lies nearest point 123 on a course with points every 10 m:

    >>> from pacing.course.geometry import synthetic_course
    >>> distance = np.arange(0.0, 3001.0, 10.0)
    >>> split_at(synthetic_course(distance, 0 * distance), [1234.0]).tolist()
    [0, 123, 300]
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
    # the distinct indices in order (np.unique would import numpy.ma, 15 ms at start-up)
    inner = np.array(sorted(set(index[(index > 0) & (index < last)].tolist())), dtype=int)
    return np.concatenate([[0], inner, [last]]).astype(int)


def piece_segment_index(bounds: ArrayLike) -> np.ndarray:
    """Segment number of each piece from the boundary point indices.

    Parameters
    ----------
    bounds : array_like
        Boundary point indices, increasing, first 0, last N-1 [-].

    Returns
    -------
    numpy.ndarray
        Segment number of each piece, length N-1 [-].

    Examples
    --------
    >>> piece_segment_index([0, 2, 5]).tolist()
    [0, 0, 1, 1, 1]
    """
    bounds = np.asarray(bounds, dtype=int)
    return np.repeat(np.arange(bounds.size - 1), np.diff(bounds))


def describe_segments(course: Course, bounds: ArrayLike,
                      climb_grade: float = CLIMB_GRADE) -> list[Segment]:
    """One Segment per stretch between consecutive bounds (see Segment for the fields).

    Parameters
    ----------
    course : Course
        The course.
    bounds : array_like
        Boundary point indices, increasing, first 0, last N-1 [-].
    climb_grade : float, optional
        Mean grade from which a segment is a climb (and below minus which a descent) [-].

    Returns
    -------
    list of Segment
        The segments in order.

    Examples
    --------
    >>> from pacing.course.geometry import synthetic_course
    >>> course = synthetic_course([0.0, 500.0, 1000.0], [100.0, 125.0, 120.0])
    >>> [(s.kind, s.length, s.ascent) for s in describe_segments(course, [0, 1, 2])]
    [('climb', 500.0, 25.0), ('flat', 500.0, 0.0)]
    """
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
