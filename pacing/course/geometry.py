"""Course geometry along the distance: resampled points, grades, headings, corner radii.

Conventions (see DEVELOPERS.md):
- N points at a uniform horizontal step; *point* arrays have length N.
- A *piece* is the stretch between point i and i+1; *piece* arrays have length N-1.
- Grade is rise over run (a fraction, 0.05 = 5 %); heading is degrees clockwise from true north
  in [0, 360).
- Segments are given by boundary point indices (`bounds`: increasing, first 0, last N-1); they
  are made and described in pacing.course.segments.

Building a course from a track (`build_course`):

1. validate the positions and elevations (pacing.course.track_checks), drop repeated
   consecutive points;
2. measure each raw piece on the WGS84 ellipsoid (pyproj.Geod, Karney 2013), which also handles
   tracks that cross the antimeridian;
3. resample along the track at a uniform step, moving along each raw piece's geodesic;
4. clean the elevation: smooth over a distance window (`ElevationSmoothing`, scipy.signal
   windows), then limit the grade except over stretches steep for at least the window (real
   climbing; pacing.course.elevation); the raw ascent is kept for comparison, and what the
   cleaning changed is told in notices;
5. heading of each piece (geodesic azimuth) and corner radius at each point (circumradius of
   points a few tens of metres apart, in an azimuthal equidistant projection around the point).

pyproj is the one library outside numpy/scipy this module imports (DEVELOPERS.md, Conventions).

References
----------
Karney, C.F.F. (2013). Algorithms for geodesics. J Geodesy 87:43-55. doi:10.1007/s00190-012-0578-z
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike
from pyproj import Geod

from pacing.course.elevation import (
    ElevationSmoothing,
    check_elevation_jumps,
    cleaning_notices,
    fill_missing_elevation,
    limit_grade,
    missing_elevation_notice,
    smooth_elevation,
    sustained_length,
    sustained_steep_pieces,
    total_ascent,
)
from pacing.course.track_checks import checked_skip, checked_step, validate_track
from pacing.errors import InputError
from pacing.notices import Notice

if TYPE_CHECKING:
    from pacing.course.recording import Gap, TrackFacts

STRAIGHT_ROAD_RADIUS = 1000.0
"""Corner radius reported for straight road [m]: larger radii never limit speed."""

DEFAULT_STEP = 10.0
"""Default resampling step along the course [m]: fine enough to keep the shape of a hairpin
bend, coarse enough that 200 km make 20,000 points."""

MAXIMUM_COURSE_POINTS = 2_000_000
"""Most points a resampled course may have (course length / step)."""

CORNER_SPAN = 20.0
"""Distance along the course from a point to each of the two neighbours used for its corner
radius [m]."""

REPEATED_POINT_DISTANCE = 1e-3
"""Consecutive points closer than this are one point [m]; the later ones are dropped."""

METRES_PER_DEGREE = 111_195.0
"""Length of one degree on the sphere of mean radius 6 371 km [m], used to place a synthetic
course's display positions."""

WGS84 = Geod(ellps="WGS84")
"""The WGS84 ellipsoid for geodesic distances and azimuths (pyproj, after Karney 2013)."""


# ---------------------------------------------------------------------------- the course itself

@dataclass(frozen=True, eq=False)
class Course:
    """A course resampled along its horizontal distance.

    Attributes
    ----------
    distance : numpy.ndarray
        Horizontal distance of each point from the start, length N, a uniform step except
        possibly the last piece [m].
    latitude : numpy.ndarray
        WGS84 latitude of each point, length N [deg].
    longitude : numpy.ndarray
        WGS84 longitude of each point, length N [deg].
    elevation : numpy.ndarray
        Cleaned elevation of each point, length N [m].
    raw_elevation : numpy.ndarray
        Elevation of each point before cleaning, resampled, length N [m].
    grade : numpy.ndarray
        Grade of each piece, rise/run, length N-1 [-].
    heading : numpy.ndarray
        Direction of travel of each piece, clockwise from north, length N-1 [deg].
    corner_radius : numpy.ndarray
        Radius of the road's curve at each point, capped at STRAIGHT_ROAD_RADIUS, length N [m].
    name : str
        A label for the course [-].
    raw_ascent : float
        Total ascent of the raw track, before resampling and cleaning [m].
    smoothing : ElevationSmoothing or None
        The elevation cleaning used (None for a course made from numbers).
    notices : tuple of pacing.notices.Notice
        What reading and building the course found: gaps, missing or constant elevations,
        ascent removed by the cleaning, profile changed by the grade limit.
    tracks : tuple of pacing.course.recording.TrackFacts
        The tracks of the file it was read from (empty for a course made from numbers).
    gaps : tuple of pacing.course.recording.Gap
        The gaps found in the recording, joined or dropped.
    """

    distance: np.ndarray
    latitude: np.ndarray
    longitude: np.ndarray
    elevation: np.ndarray
    raw_elevation: np.ndarray
    grade: np.ndarray
    heading: np.ndarray
    corner_radius: np.ndarray
    name: str = "course"
    raw_ascent: float = float("nan")
    smoothing: ElevationSmoothing | None = None
    notices: tuple[Notice, ...] = ()
    tracks: tuple[TrackFacts, ...] = ()
    gaps: tuple[Gap, ...] = ()

    @property
    def piece_length(self) -> np.ndarray:
        """Horizontal length of each piece [m], length N-1."""
        return np.diff(self.distance)

    @property
    def total_distance(self) -> float:
        """Horizontal length of the course [m]."""
        return float(self.distance[-1] - self.distance[0])

    @property
    def ascent(self) -> float:
        """Total ascent of the cleaned profile [m]."""
        return total_ascent(self.elevation)

    @property
    def descent(self) -> float:
        """Total descent of the cleaned profile [m] (a positive number)."""
        return total_ascent(-np.asarray(self.elevation))

    @property
    def highest_elevation(self) -> float:
        """Highest point of the cleaned profile [m]."""
        return float(np.max(self.elevation))

    @property
    def lowest_elevation(self) -> float:
        """Lowest point of the cleaned profile [m]."""
        return float(np.min(self.elevation))


def synthetic_course(
    distance: ArrayLike,
    elevation: ArrayLike,
    heading: ArrayLike = 0.0,
    corner_radius: ArrayLike = STRAIGHT_ROAD_RADIUS,
    name: str = "synthetic",
) -> Course:
    """A course straight from arrays, for tests and for courses described by numbers.

    Latitude and longitude are placed on a flat-earth approximation around (0, 0) following the
    headings; they are for display only. The elevation is taken as it is (no cleaning).

    Parameters
    ----------
    distance : array_like
        Horizontal distance of each point, strictly increasing, length N ≥ 2 [m].
    elevation : array_like
        Elevation of each point, length N [m].
    heading : float or array_like, optional
        Direction of travel of each piece, a number or length N-1 [deg clockwise from north].
    corner_radius : float or array_like, optional
        Radius of the road's curve at each point, a number or length N [m].
    name : str, optional
        Label of the course [-].

    Returns
    -------
    Course
        The course, grades from the elevation differences.

    Examples
    --------
    500 m up 25 m (5 %) and 500 m down 5 m (−1 %):

    >>> course = synthetic_course([0.0, 500.0, 1000.0], [100.0, 125.0, 120.0])
    >>> course.grade.tolist(), course.ascent, course.descent
    ([0.05, -0.01], 25.0, 5.0)
    """
    distance = np.asarray(distance, dtype=float)
    elevation = np.asarray(elevation, dtype=float)
    if distance.ndim != 1 or distance.size < 2 or elevation.shape != distance.shape:
        raise InputError("distance and elevation must be 1-D arrays of equal length >= 2")
    step = np.diff(distance)
    if np.any(step <= 0):
        raise InputError("distance must be strictly increasing")
    heading = np.broadcast_to(np.asarray(heading, dtype=float), step.shape) % 360.0
    radius = np.broadcast_to(np.asarray(corner_radius, dtype=float), distance.shape)
    north = np.concatenate([[0.0], np.cumsum(step * np.cos(np.radians(heading)))])
    east = np.concatenate([[0.0], np.cumsum(step * np.sin(np.radians(heading)))])
    rise = np.diff(elevation)
    return Course(
        distance=distance,
        latitude=north / METRES_PER_DEGREE,
        longitude=east / METRES_PER_DEGREE,
        elevation=elevation,
        raw_elevation=elevation.copy(),
        grade=rise / step,
        heading=np.array(heading),
        corner_radius=np.minimum(np.array(radius), STRAIGHT_ROAD_RADIUS),
        name=name,
        raw_ascent=float(rise[rise > 0].sum()),
    )


# ------------------------------------------------------------------------------ geodesy

def geodesic_pieces(latitude: ArrayLike, longitude: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    """Length and initial azimuth of the geodesic between consecutive points on WGS84.

    Solved with pyproj.Geod.inv, Karney's (2013) algorithm, accurate to nanometres; a piece that
    crosses the antimeridian is measured the short way.

    Parameters
    ----------
    latitude : array_like
        Latitude of each point, length N ≥ 1 [deg].
    longitude : array_like
        Longitude of each point, length N [deg].

    Returns
    -------
    length : numpy.ndarray
        Geodesic length of each piece, length N-1 [m].
    azimuth : numpy.ndarray
        Direction at the start of each piece, 0..360, length N-1 [deg clockwise from north].

    References
    ----------
    Karney, C.F.F. (2013). Algorithms for geodesics. J Geodesy 87:43-55.
    doi:10.1007/s00190-012-0578-z

    Examples
    --------
    One degree of latitude north from the equator; geographiclib's Inverse(0, 0, 1, 0) gives
    110 574.3886 m:

    >>> length, azimuth = geodesic_pieces([0.0, 1.0], [0.0, 0.0])
    >>> round(float(length[0]), 4), float(azimuth[0])
    (110574.3886, 0.0)
    """
    latitude = np.asarray(latitude, dtype=float)
    longitude = np.asarray(longitude, dtype=float)
    if latitude.size < 2:
        return np.zeros(0), np.zeros(0)
    azimuth, _, length = WGS84.inv(longitude[:-1], latitude[:-1], longitude[1:], latitude[1:])
    return np.asarray(length, dtype=float), np.mod(np.asarray(azimuth, dtype=float), 360.0)


def resample_distance(total: float, step: float) -> np.ndarray:
    """Uniform distances 0, step, 2·step, … and the total [m].

    The last piece is kept between 0.1·step and 1.1·step long so that no sliver piece remains.

    Parameters
    ----------
    total : float
        Length of the course [m].
    step : float
        Resampling step [m].

    Returns
    -------
    numpy.ndarray
        Distances of the resampled points [m].

    Examples
    --------
    A 0.5 m sliver at the end is joined to the last piece, which becomes 10.5 m long:

    >>> resample_distance(30.5, 10.0).tolist()
    [0.0, 10.0, 20.0, 30.5]
    """
    grid = np.arange(0.0, total, step)
    if grid.size > 1 and total - grid[-1] < 0.1 * step:
        grid = grid[:-1]
    return np.append(grid, total)


def circumradius(latitude: np.ndarray, longitude: np.ndarray, offset: int) -> np.ndarray:
    """Circumradius of each point i with points i-k and i+k, k = min(offset, i, N-1-i) [m].

    R = a·b·c / (4·area) for the triangle, in an azimuthal equidistant projection centred on
    point i (coordinates from the geodesic distance and azimuth to each neighbour: exact at the
    centre, valid across the antimeridian). Infinite for collinear points and at the two ends.

    Parameters
    ----------
    latitude : numpy.ndarray
        Latitude of each point, length N [deg].
    longitude : numpy.ndarray
        Longitude of each point, length N [deg].
    offset : int
        k, the number of points to each neighbour [-].

    Returns
    -------
    numpy.ndarray
        Circumradius at each point, length N [m].
    """
    count = latitude.size
    radius = np.full(count, np.inf)
    if count < 3:
        return radius
    index = np.arange(1, count - 1)
    reach = np.minimum(offset, np.minimum(index, count - 1 - index))
    before, after = index - reach, index + reach
    azimuth_a, _, distance_a = WGS84.inv(longitude[index], latitude[index],
                                         longitude[before], latitude[before])
    azimuth_b, _, distance_b = WGS84.inv(longitude[index], latitude[index],
                                         longitude[after], latitude[after])
    distance_a, distance_b = np.asarray(distance_a), np.asarray(distance_b)
    ax = distance_a * np.sin(np.radians(azimuth_a))
    ay = distance_a * np.cos(np.radians(azimuth_a))
    bx = distance_b * np.sin(np.radians(azimuth_b))
    by = distance_b * np.cos(np.radians(azimuth_b))
    chord = np.hypot(bx - ax, by - ay)
    twice_area = np.abs(ax * by - ay * bx)
    with np.errstate(divide="ignore", invalid="ignore"):
        inner = distance_a * distance_b * chord / (2.0 * twice_area)
    radius[index] = np.where(np.isfinite(inner), inner, np.inf)
    return radius


def corner_radius(latitude: ArrayLike, longitude: ArrayLike, step: float,
                  span: float = CORNER_SPAN) -> np.ndarray:
    """Radius of the road's curve at each point [m], capped at STRAIGHT_ROAD_RADIUS.

    R = max(R(span), R(2·span) / 2), where R(s) is the circumradius of the point and the points
    s before and after it (see `circumradius`). A real bend curves both triangles alike (for
    bends of 12 m radius or more, R(2s)/2 stays below R(s)), while GPS jitter of a metre bends
    a 40 m chord into a false radius of ~200 m but a 80 m chord hardly at all; the second term
    removes most such false bends. Straight road and the two end points get
    STRAIGHT_ROAD_RADIUS.

    Parameters
    ----------
    latitude : array_like
        Latitude of points a uniform step apart, length N [deg].
    longitude : array_like
        Longitude of the points, length N [deg].
    step : float
        Distance between the points [m].
    span : float, optional
        Distance to each neighbour, rounded to a whole number of steps (at least one) [m].

    Returns
    -------
    numpy.ndarray
        Corner radius at each point, length N [m].
    """
    latitude = np.asarray(latitude, dtype=float)
    longitude = np.asarray(longitude, dtype=float)
    offset = max(1, int(round(span / step)))
    radius = np.maximum(circumradius(latitude, longitude, offset),
                        circumradius(latitude, longitude, 2 * offset) / 2.0)
    return np.minimum(radius, STRAIGHT_ROAD_RADIUS)


# ------------------------------------------------------------------------------ build

def _without_repeated_points(latitude: np.ndarray, longitude: np.ndarray,
                             elevation: np.ndarray, skip: np.ndarray
                             ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The track without points closer than REPEATED_POINT_DISTANCE to the one before; a piece
    that replaces several is left out when any of them was."""
    length, _ = geodesic_pieces(latitude, longitude)
    keep = np.concatenate([[True], length > REPEATED_POINT_DISTANCE])
    latitude, longitude, elevation = latitude[keep], longitude[keep], elevation[keep]
    if latitude.size < 2:
        raise InputError("all points of the course are at the same place")
    skipped_before = np.concatenate([[0], np.cumsum(skip)])[np.flatnonzero(keep)]
    return latitude, longitude, elevation, np.diff(skipped_before) > 0


def _level_across(heights: np.ndarray, skip: np.ndarray) -> np.ndarray:
    """Heights shifted after each left-out piece so that the piece has no rise [m]: the
    climbing across a stretch that was not ridden is not counted."""
    if not skip.any():
        return heights
    rise = np.where(skip, 0.0, np.diff(heights))
    return heights[0] + np.concatenate([[0.0], np.cumsum(rise)])


def _positions_at(distance: np.ndarray, latitude: np.ndarray, longitude: np.ndarray,
                  track_distance: np.ndarray, length: np.ndarray,
                  azimuth: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Latitude and longitude [deg] at distances along the track, each moved along its raw
    piece's geodesic (pyproj.Geod.fwd); the last point is the track's last point."""
    piece = np.clip(np.searchsorted(track_distance, distance, side="right") - 1,
                    0, length.size - 1)
    along = distance - track_distance[piece]
    new_longitude, new_latitude, _ = WGS84.fwd(longitude[piece], latitude[piece],
                                               azimuth[piece], along)
    new_latitude = np.asarray(new_latitude, dtype=float)
    new_longitude = np.asarray(new_longitude, dtype=float)
    new_latitude[-1], new_longitude[-1] = latitude[-1], longitude[-1]
    new_longitude = (new_longitude + 180.0) % 360.0 - 180.0
    return new_latitude, new_longitude


def build_course(latitude: ArrayLike, longitude: ArrayLike, elevation: ArrayLike | None,
                 step: float = DEFAULT_STEP,
                 smoothing: ElevationSmoothing = ElevationSmoothing(),  # noqa: B008 (frozen)
                 name: str = "course", skip: ArrayLike | None = None) -> Course:
    """Build a Course from a raw track (positions in order along the course).

    Raises InputError (one-line message) for bad positions, elevations, step, a track whose
    points are all at one place, absurd elevation jumps, or a course too long for the step.
    Repeated consecutive points are dropped silently.

    Parameters
    ----------
    latitude : array_like
        WGS84 latitude of the track points, length M ≥ 2 [deg].
    longitude : array_like
        WGS84 longitude of the track points, length M [deg].
    elevation : array_like
        Elevation of each track point, length M; NaN where a point has none (filled by
        interpolation along the distance, with a notice saying how many) [m].
    step : float, optional
        Resampling step, MINIMUM_STEP..MAXIMUM_STEP of pacing.course.track_checks [m].
    smoothing : ElevationSmoothing, optional
        Elevation cleaning.
    name : str, optional
        Label of the course [-].
    skip : array_like of bool, optional
        Pieces between track points left out of the course (a gap not ridden), length M-1:
        each counts 0 m and no rise; None for none [-].

    Returns
    -------
    Course
        `distance` along the track (sum of geodesic piece lengths), elevation cleaned, grade
        from the cleaned elevation, heading and corner radius from the resampled positions;
        `notices`: points without elevation, the ascent the cleaning removed, a profile
        changed by the grade limit (pacing.course.elevation.cleaning_notices).

    References
    ----------
    Karney, C.F.F. (2013). Algorithms for geodesics. J Geodesy 87:43-55.
    doi:10.1007/s00190-012-0578-z

    Examples
    --------
    One degree of latitude north from the equator measures 110 574.3886 m on WGS84
    (geographiclib's Inverse(0, 0, 1, 0)), resampled every 10 m:

    >>> course = build_course([0.0, 1.0], [0.0, 0.0], [0.0, 0.0])
    >>> round(course.total_distance, 4), course.distance.size
    (110574.3886, 11059)
    """
    step = checked_step(step)
    if smoothing is None:
        smoothing = ElevationSmoothing()
    if elevation is None:
        raise InputError("the course has no elevation")
    latitude, longitude, heights = validate_track(latitude, longitude, elevation)
    if heights is None:  # never: an elevation was given (narrows the type)
        raise InputError("the course has no elevation")
    skipped = checked_skip(skip, latitude.size - 1)
    latitude, longitude, heights, skipped = _without_repeated_points(latitude, longitude,
                                                                     heights, skipped)
    missing = missing_elevation_notice(heights)
    length, azimuth = geodesic_pieces(latitude, longitude)
    counted = np.where(skipped, 0.0, length)
    track_distance = np.concatenate([[0.0], np.cumsum(counted)])
    heights = fill_missing_elevation(track_distance, heights)
    check_elevation_jumps(length, heights)
    heights = _level_across(heights, skipped)
    total = float(track_distance[-1])
    if total / step > MAXIMUM_COURSE_POINTS:
        raise InputError(f"course of {total / 1000:.0f} km is too long for a {step:g} m step "
                         f"(at most {MAXIMUM_COURSE_POINTS} points)")

    distance = resample_distance(total, step)
    new_latitude, new_longitude = _positions_at(distance, latitude, longitude, track_distance,
                                                length, azimuth)
    raw_elevation = np.interp(distance, track_distance, heights)
    smoothed = smooth_elevation(raw_elevation, float(distance[1] - distance[0])
                                if distance.size > 1 else 1.0, smoothing)
    sustained = sustained_length(smoothing)
    cleaned = limit_grade(distance, smoothed, smoothing.max_grade, sustained)
    notices = ([] if missing is None else [missing]) + cleaning_notices(
        distance, heights, smoothed, cleaned, smoothing.max_grade, sustained)
    piece_length = np.diff(distance)
    grade = np.diff(cleaned) / piece_length
    if not sustained_steep_pieces(distance, smoothed, smoothing.max_grade, sustained).any():
        # the limit holds everywhere: clip the rounding of limit_grade's re-integration
        grade = np.clip(grade, -smoothing.max_grade, smoothing.max_grade)
    _, heading = geodesic_pieces(new_latitude, new_longitude)
    return Course(
        distance=distance,
        latitude=new_latitude,
        longitude=new_longitude,
        elevation=cleaned,
        raw_elevation=raw_elevation,
        grade=grade,
        heading=heading,
        corner_radius=corner_radius(new_latitude, new_longitude, step),
        name=str(name),
        raw_ascent=total_ascent(heights),
        smoothing=smoothing,
        notices=tuple(notices),
    )
