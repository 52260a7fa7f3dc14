"""A recording as the file holds it: its tracks and segments, the gaps between its points, and
the choice of what makes the course.

A coach's file is often last year's recording: several tracks (two devices, a restart),
satellites lost for a while, a point that jumps hundreds of kilometres. Before the course is
built (pacing.course.geometry.build_course) this module

- lists the tracks and their segments (points, distance, time span) as `TrackFacts`;
- keeps the tracks asked for (default all, in file order);
- finds the gaps (`find_gaps`): a piece between two consecutive points much longer than the
  recording's typical spacing, or, where both points have times, one covered at an implied
  speed no rider reaches;
- joins each gap with a straight line (default, with a warning naming it), drops its distance
  (the pieces on either side meet, the rise across the gap is not counted) or refuses the file;
- drops spikes (`find_spikes`): one or two points that jump tens of metres off the road and
  come back (a receiver's multipath fault), which would add false distance and false turns;
- says what it found as notices (pacing.notices): spikes, gaps, elevations that are all the
  same.

Only numpy and the geodesics of pacing.course.geometry: the numeric core.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.course.elevation import ElevationSmoothing
from pacing.course.geometry import (
    DEFAULT_STEP,
    REPEATED_POINT_DISTANCE,
    WGS84,
    Course,
    build_course,
    geodesic_pieces,
)
from pacing.errors import InputError
from pacing.notices import Notice, note, warning

GAP_CHOICES = ("join", "drop", "refuse")
"""What to do with a gap: join it with a straight line, drop its distance, or refuse the file."""

GAP_MIN_LENGTH = 500.0
"""A piece shorter than this is never a gap by its length alone [m] (a tunnel, a lost fix for
a minute at 30 km/h)."""

GAP_SPACING_FACTOR = 50.0
"""A piece longer than this many times the recording's median point spacing is a gap [-]
(common practice: a 1 s recording at 36 km/h has points 10 m apart, so 500 m missing; a
route drawn with points every 100 m, 5 km of straight line)."""

GAP_MAX_SPEED = 50.0
"""Implied speed beyond which a timed piece is a jump, not riding [m/s] (180 km/h: above the
fastest descents raced on a bicycle)."""

GAP_TIMED_MIN_LENGTH = 200.0
"""Shortest piece judged by its implied speed [m]: below it, timestamp jitter may fake a
speed."""

SPIKE_SPACING_FACTOR = 3.0
"""Both legs of a spike (onto the faulty points and back) are longer than this many times the
recording's median point spacing [-] (our own choice: a rider's spacing changes with speed by
far less than 3 from one point to the next, and a hairpin keeps the spacing)."""

SPIKE_MIN_LEG = 20.0
"""Both legs of a spike are longer than this [m] (our own choice: above the few metres of a
consumer receiver's scatter, so that noise at a standstill is not judged a spike)."""

SPIKE_DETOUR_FACTOR = 4.0
"""The way through the faulty points is longer than this many times the direct step from the
point before them to the point after [-] (our own choice: a hairpin or a turnaround drawn with
the road's spacing has legs near the spacing and is never this; a spike of 60 m off a road
recorded every 5 m makes a detour of 120 m for a step of 10 m, factor 12)."""

SPIKE_SPEED_FACTOR = 3.0
"""Where the points have times, both legs of a spike are covered faster than this many times
the recording's median speed [-] (our own choice: a rider does not triple his speed for one
point and slow down again the next second)."""

SPIKE_MAX_LEG = 200.0
"""Neither leg of a spike is longer than this [m] (our own choice: multipath faults throw a
fix tens of metres, rarely more than a hundred; a longer detour may be a ridden dead end)."""

SPIKE_MAX_POINTS = 2
"""Longest run of faulty points removed as one spike [-] (common practice: multipath faults
last a fix or two; longer detours may be ridden and are left alone)."""


@dataclass(frozen=True)
class RecordingPart:
    """One segment of one track (or one route) of a file, as a slice of its points.

    Attributes
    ----------
    track : int
        Index of the track (or route) in the file, from 0 [-].
    segment : int
        Index of the segment in its track, from 0 [-].
    name : str
        The track's name, "" when it has none [-].
    start : int
        Index of the part's first point in the file's points [-].
    stop : int
        Index after its last point [-].
    """

    track: int
    segment: int
    name: str
    start: int
    stop: int


@dataclass(frozen=True)
class Recording:
    """The points of a file in file order, with their times and the parts they belong to.

    Attributes
    ----------
    latitude : numpy.ndarray
        WGS84 latitude of each point, length M [deg].
    longitude : numpy.ndarray
        WGS84 longitude of each point, length M [deg].
    elevation : numpy.ndarray or None
        Elevation of each point, NaN where a point has none; None when no point has one [m].
    time : numpy.ndarray or None
        Time of each point, NaN where a point has none; None when no point has one
        [s since 1970-01-01 UTC].
    parts : tuple of RecordingPart
        The segments of the tracks (or the routes), in file order, covering all M points.
    name : str
        The track's (or route's, or file's) name; "" when the file names none [-].
    """

    latitude: np.ndarray
    longitude: np.ndarray
    elevation: np.ndarray | None
    time: np.ndarray | None
    parts: tuple[RecordingPart, ...]
    name: str = ""


@dataclass(frozen=True)
class TrackFacts:
    """What one track of the file holds.

    Attributes
    ----------
    index : int
        Its number in the file, from 1 (as --track counts) [-].
    name : str
        Its name, "" when it has none [-].
    points : int
        Number of points [-].
    segments : int
        Number of segments [-].
    distance : float
        Length along its points, jumps between its segments included [m].
    duration : float or None
        Last time minus first time, None without times [s].
    used : bool
        Whether the course is made of it [-].
    """

    index: int
    name: str
    points: int
    segments: int
    distance: float
    duration: float | None
    used: bool = True

    def as_dict(self) -> dict[str, object]:
        """JSON-ready form: name, points, distance_m, segments, duration_s, index, used."""
        return {"index": self.index, "name": self.name, "points": self.points,
                "distance_m": round(self.distance, 1), "segments": self.segments,
                "duration_s": None if self.duration is None else round(self.duration, 1),
                "used": self.used}


@dataclass(frozen=True)
class Gap:
    """A stretch between two consecutive points with no recording in between.

    Attributes
    ----------
    piece : int
        Index of the piece in the points the course is made of (point piece → piece+1) [-].
    at : float
        Where it starts, distance from the start of the course [m].
    length : float
        Its straight-line (geodesic) length [m].
    duration : float or None
        Time between its two points, None without times [s].
    handling : str
        "join" or "drop" (GAP_CHOICES) [-].
    """

    piece: int
    at: float
    length: float
    duration: float | None
    handling: str = "join"

    def as_dict(self) -> dict[str, object]:
        """JSON-ready form: at_m, length_m, duration_s, handling."""
        return {"at_m": round(self.at, 1), "length_m": round(self.length, 1),
                "duration_s": None if self.duration is None else round(self.duration, 1),
                "handling": self.handling}


def middle_value(values: np.ndarray) -> float:
    """The median of finite values: numpy.median's number, without its import of numpy.ma
    (about 15 ms at every start of the command line, for one median of the spacing).

    Parameters
    ----------
    values : numpy.ndarray
        At least one finite number [any unit].

    Returns
    -------
    float
        The middle value, or for an even count the mean of the two middle ones, computed as
        numpy.median does: (a + b) / 2 [the unit of `values`].

    Examples
    --------
    >>> middle_value(np.array([3.0, 1.0, 2.0])), middle_value(np.array([4.0, 1.0, 3.0, 2.0]))
    (2.0, 2.5)
    """
    half = values.size // 2
    if values.size % 2:
        return float(np.partition(values, half)[half])
    ordered = np.partition(values, (half - 1, half))
    return float((ordered[half - 1] + ordered[half]) / 2.0)


def gap_length_bound(length: np.ndarray) -> float:
    """Longest piece that is not a gap by its length: max(GAP_MIN_LENGTH, GAP_SPACING_FACTOR
    × median spacing) [m].

    Parameters
    ----------
    length : numpy.ndarray
        Length of each piece between consecutive points [m].

    Returns
    -------
    float
        The bound; infinite for fewer than two pieces (one piece is its own spacing) [m].

    Examples
    --------
    >>> gap_length_bound(np.array([10.0, 10.0, 12.0, 9.0]))
    500.0
    >>> gap_length_bound(np.array([100.0, 120.0, 100.0]))
    5000.0
    """
    moving = length[length > REPEATED_POINT_DISTANCE]
    if moving.size < 2:
        return math.inf
    return max(GAP_MIN_LENGTH, GAP_SPACING_FACTOR * middle_value(moving))


def find_gaps(length: np.ndarray, time: np.ndarray | None = None) -> np.ndarray:
    """Indices of the pieces that are gaps in the recording.

    A piece is a gap when it is longer than gap_length_bound, or when both its points have
    times, it is longer than GAP_TIMED_MIN_LENGTH and it was covered faster than
    GAP_MAX_SPEED (or in no time, or backwards in time).

    Parameters
    ----------
    length : numpy.ndarray
        Length of each piece between consecutive points, length M-1 [m].
    time : numpy.ndarray, optional
        Time of each point, NaN where unknown, length M [s].

    Returns
    -------
    numpy.ndarray
        Increasing piece indices [-].

    Examples
    --------
    Points 10 m apart and one jump of 12.7 km:

    >>> find_gaps(np.array([10.0, 10.0, 12_700.0, 10.0])).tolist()
    [2]
    """
    length = np.asarray(length, dtype=float)
    gap = length > gap_length_bound(length)
    if time is not None and time.size == length.size + 1:
        elapsed = np.diff(time)
        timed = np.isfinite(elapsed) & (length > GAP_TIMED_MIN_LENGTH)
        with np.errstate(divide="ignore", invalid="ignore"):
            too_fast = (elapsed <= 0.0) | (length / elapsed > GAP_MAX_SPEED)
        gap |= timed & too_fast
    return np.flatnonzero(gap)


# ------------------------------------------------------------------------------------ spikes

@dataclass(frozen=True)
class _Spacing:
    """What a pass of find_spikes compares with: the pieces of the points still kept."""

    length: np.ndarray
    elapsed: np.ndarray | None
    leg_bound: float
    speed_bound: float
    gap: np.ndarray


def _spacing(latitude: np.ndarray, longitude: np.ndarray,
             time: np.ndarray | None) -> _Spacing | None:
    """The pieces' lengths and the bounds a spike's legs must exceed, None with too few
    moving pieces to know a typical spacing."""
    length, _ = geodesic_pieces(latitude, longitude)
    moving = length > REPEATED_POINT_DISTANCE
    if np.count_nonzero(moving) < 2:
        return None
    leg_bound = max(SPIKE_MIN_LEG, SPIKE_SPACING_FACTOR * middle_value(length[moving]))
    gap = np.zeros(length.size, dtype=bool)
    gap[find_gaps(length, time)] = True
    elapsed, speed_bound = None, math.inf
    if time is not None and time.size == latitude.size:
        elapsed = np.diff(time)
        timed = moving & np.isfinite(elapsed) & (elapsed > 0.0)
        if timed.any():
            speed_bound = SPIKE_SPEED_FACTOR * middle_value(length[timed] / elapsed[timed])
    return _Spacing(length, elapsed, leg_bound, speed_bound, gap)


def _too_fast(spacing: _Spacing, piece: np.ndarray) -> np.ndarray:
    """Whether each piece was covered too fast to be ridden (SPIKE_SPEED_FACTOR × the median
    speed, or in no time); True where its time is unknown (the geometry alone decides)."""
    if spacing.elapsed is None:
        return np.ones(piece.size, dtype=bool)
    elapsed = spacing.elapsed[piece]
    with np.errstate(divide="ignore", invalid="ignore"):
        fast = (elapsed <= 0.0) | (spacing.length[piece] / elapsed > spacing.speed_bound)
    return fast | ~np.isfinite(elapsed)


def _regular_around(spacing: _Spacing, entry: np.ndarray, leave: np.ndarray) -> np.ndarray:
    """Whether the pieces just before and just after a run are no longer than the legs' bound
    (a spike sits on a regularly recorded stretch; a drawn route's dead end between long
    pieces does not); a track's first or last piece counts as regular."""
    count = spacing.length.size
    before = spacing.length[np.maximum(entry - 1, 0)]
    after = spacing.length[np.minimum(leave + 1, count - 1)]
    return (((entry == 0) | (before <= spacing.leg_bound))
            & ((leave == count - 1) | (after <= spacing.leg_bound)))


def _spike_starts(latitude: np.ndarray, longitude: np.ndarray, spacing: _Spacing,
                  run: int) -> tuple[np.ndarray, np.ndarray]:
    """First point of each run of `run` faulty points, and the distance each adds [m]."""
    first = np.arange(1, latitude.size - run)
    if first.size == 0:
        return first, np.zeros(0)
    entry, leave = first - 1, first + run - 1
    detour = sum(spacing.length[entry + k] for k in range(run + 1))
    crosses_gap = np.zeros(first.size, dtype=bool)
    for k in range(run + 1):
        crosses_gap |= spacing.gap[entry + k]
    _, _, direct = WGS84.inv(longitude[entry], latitude[entry], longitude[leave + 1],
                             latitude[leave + 1])
    direct = np.asarray(direct, dtype=float)
    legs = np.minimum(spacing.length[entry], spacing.length[leave])
    longest = np.maximum(spacing.length[entry], spacing.length[leave])
    spike = ((legs > spacing.leg_bound) & (longest <= SPIKE_MAX_LEG)
             & _regular_around(spacing, entry, leave)
             & (detour > SPIKE_DETOUR_FACTOR * direct) & ~crosses_gap
             & _too_fast(spacing, entry) & _too_fast(spacing, leave))
    return first[spike], (detour - direct)[spike]


def _separate(starts: np.ndarray, run: int) -> np.ndarray:
    """The spikes that share no point with an earlier one (the next pass judges the rest)."""
    kept: list[int] = []
    for start in starts.tolist():
        if not kept or start > kept[-1] + run:
            kept.append(start)
    return np.array(kept, dtype=int)


def find_spikes(latitude: np.ndarray, longitude: np.ndarray,
                time: np.ndarray | None = None) -> tuple[np.ndarray, float]:
    """The points that jump off the road and come back (GNSS spikes), and the distance they add.

    A run of one or two points (up to SPIKE_MAX_POINTS) is a spike when the leg onto it and
    the leg off it are both longer than SPIKE_MIN_LEG and SPIKE_SPACING_FACTOR × the median
    point spacing but no longer than SPIKE_MAX_LEG, when the pieces just before and after
    them are no longer than that bound (a regularly recorded stretch), when the way through
    it is longer than SPIKE_DETOUR_FACTOR × the direct step from the point before to the
    point after, when neither leg is a gap (find_gaps: the gaps are handled as gaps), and,
    where the legs' points have times, when both legs are
    covered faster than SPIKE_SPEED_FACTOR × the recording's median speed. Single points are
    judged first, then pairs, pass after pass on the points left until none is found.

    A turnaround or a hairpin recorded at the road's spacing is never a spike: its legs are
    the spacing. Without times, a dead end drawn as a single point between short pieces
    (shorter than SPIKE_MAX_LEG) cannot be told from a spike and is dropped.

    Parameters
    ----------
    latitude : numpy.ndarray
        WGS84 latitude of each point, length M [deg].
    longitude : numpy.ndarray
        WGS84 longitude of each point, length M [deg].
    time : numpy.ndarray, optional
        Time of each point, NaN where unknown, length M [s].

    Returns
    -------
    numpy.ndarray
        Boolean mask of the spike points, length M [-].
    float
        Distance the spikes add to the track: the way through them less the direct steps
        [m].

    Examples
    --------
    A road north every 5 m with one point 60 m east of it:

    >>> lat = np.arange(40) * 5.0 / 111_132.0
    >>> lon = np.zeros(40)
    >>> lon[20] = 60.0 / 111_319.0
    >>> spike, added = find_spikes(lat, lon)
    >>> np.flatnonzero(spike).tolist(), round(added)
    ([20], 110)
    """
    latitude = np.asarray(latitude, dtype=float)
    longitude = np.asarray(longitude, dtype=float)
    kept = np.arange(latitude.size)
    added = 0.0
    for _ in range(latitude.size):
        found = False
        for run in range(1, SPIKE_MAX_POINTS + 1):
            points = (latitude[kept], longitude[kept], None if time is None else time[kept])
            spacing = _spacing(*points)
            if spacing is None:
                break
            starts, extra = _spike_starts(points[0], points[1], spacing, run)
            separate = _separate(starts, run)
            if separate.size == 0:
                continue
            added += float(extra[np.searchsorted(starts, separate)].sum())
            drop = (separate[:, None] + np.arange(run)[None, :]).ravel()
            kept = np.delete(kept, drop)
            found = True
            break
        if not found:
            break
    spike = np.ones(latitude.size, dtype=bool)
    spike[kept] = False
    return spike, added


# ------------------------------------------------------------------------- tracks and choices

def parse_track_choice(text: str | None) -> tuple[int, ...] | None:
    """"1,3" → (1, 3): the tracks to keep, numbered from 1; None or "" for all.

    Parameters
    ----------
    text : str or None
        Track numbers separated by commas [-].

    Returns
    -------
    tuple of int or None
        The numbers in the order given, or None for all tracks [-].

    Examples
    --------
    >>> parse_track_choice("2, 1"), parse_track_choice(None)
    ((2, 1), None)
    """
    if text is None or not str(text).strip():
        return None
    try:
        numbers = tuple(int(part) for part in str(text).split(",") if part.strip())
    except ValueError:
        raise InputError(f"--track takes track numbers separated by commas (from 1), got "
                         f"{' '.join(str(text).split())[:40]!r}") from None
    if not numbers or min(numbers) < 1 or len(set(numbers)) != len(numbers):
        raise InputError("--track takes distinct track numbers from 1, e.g. --track 1,3")
    return numbers


def track_facts(recording: Recording, chosen: Sequence[int] | None = None) -> list[TrackFacts]:
    """The tracks of a recording: points, segments, distance and time span of each.

    Parameters
    ----------
    recording : Recording
        The file's points and parts.
    chosen : sequence of int, optional
        Track numbers (from 1) the course is made of; None for all [-].

    Returns
    -------
    list of TrackFacts
        One per track (or route), in file order.
    """
    facts = []
    for track in sorted({part.track for part in recording.parts}):
        parts = [part for part in recording.parts if part.track == track]
        start, stop = parts[0].start, parts[-1].stop
        length, _ = geodesic_pieces(recording.latitude[start:stop],
                                    recording.longitude[start:stop])
        duration = None
        if recording.time is not None:
            times = recording.time[start:stop]
            times = times[np.isfinite(times)]
            duration = float(times[-1] - times[0]) if times.size >= 2 else None
        facts.append(TrackFacts(index=track + 1, name=parts[0].name, points=stop - start,
                                segments=len(parts), distance=float(length.sum()),
                                duration=duration,
                                used=chosen is None or track + 1 in chosen))
    return facts


def chosen_points(recording: Recording, chosen: Sequence[int] | None) -> np.ndarray:
    """Indices of the points of the chosen tracks, in the order the tracks are chosen.

    Parameters
    ----------
    recording : Recording
        The file's points and parts.
    chosen : sequence of int, optional
        Track numbers from 1; None for all, in file order [-].

    Returns
    -------
    numpy.ndarray
        Point indices [-].
    """
    count = recording.latitude.size
    if chosen is None:
        return np.arange(count)
    tracks = sorted({part.track for part in recording.parts})
    missing = [number for number in chosen if number - 1 not in tracks]
    if missing:
        raise InputError(f"the file has {len(tracks)} track{'s' if len(tracks) != 1 else ''}; "
                         f"there is no track {missing[0]}")
    return np.concatenate([np.arange(part.start, part.stop) for number in chosen
                           for part in recording.parts if part.track == number - 1])


# ------------------------------------------------------------------------------ the course

def _gaps_handled(length: np.ndarray, time: np.ndarray | None,
                  handling: str) -> tuple[list[Gap], np.ndarray]:
    """The gaps with where they start on the course, and the mask of pieces left out."""
    if handling not in GAP_CHOICES:
        raise InputError(f"--gaps must be one of {', '.join(GAP_CHOICES)}, got {handling!r}")
    pieces = find_gaps(length, time)
    skip = np.zeros(length.size, dtype=bool)
    if pieces.size == 0:
        return [], skip
    if handling == "refuse":
        first = int(pieces[0])
        raise InputError(f"the recording has {pieces.size} gap{'s' if pieces.size > 1 else ''}"
                         f" (the first {length[first] / 1000:.1f} km long after "
                         f"{float(length[:first].sum()) / 1000:.1f} km); choose to join or "
                         "drop them, or fix the file")
    if handling == "drop":
        skip[pieces] = True
    counted = np.where(skip, 0.0, length)
    start = np.concatenate([[0.0], np.cumsum(counted)])
    gaps = []
    for piece in pieces.tolist():
        duration = None
        if time is not None:
            elapsed = float(time[piece + 1] - time[piece])
            duration = elapsed if math.isfinite(elapsed) else None
        gaps.append(Gap(piece=piece, at=float(start[piece]), length=float(length[piece]),
                        duration=duration, handling=handling))
    return gaps, skip


def _gap_notices(gaps: Sequence[Gap]) -> list[Notice]:
    """One warning per gap: "course-gap-joined" or "course-gap-dropped"."""
    notices = []
    for gap in gaps:
        values: dict[str, object] = {"at_m": gap.at, "length_m": gap.length}
        if gap.duration is not None:
            values["duration_s"] = gap.duration
        code = "course-gap-joined" if gap.handling == "join" else "course-gap-dropped"
        notices.append(Notice(code, values, "warning"))
    return notices


def constant_elevation_notice(elevation: np.ndarray | None) -> Notice | None:
    """A warning when every known elevation is the same number (a device that writes a
    placeholder such as 0 m, not heights), else None.

    Parameters
    ----------
    elevation : numpy.ndarray or None
        Elevation of each point, NaN where missing [m].

    Returns
    -------
    pacing.notices.Notice or None
        "elevation-constant" with elevation_m [m] and count [-].
    """
    if elevation is None:
        return None
    known = elevation[np.isfinite(elevation)]
    if known.size < 2 or np.ptp(known) > 0.0:
        return None
    return warning("elevation-constant", elevation_m=float(known[0]), count=int(known.size))


def course_from_recording(recording: Recording, step: float = DEFAULT_STEP,
                          smoothing: ElevationSmoothing | None = None, name: str = "course",
                          tracks: Sequence[int] | None = None,
                          gaps: str = "join") -> Course:
    """Build the course of a recording: the chosen tracks in order, spikes dropped
    (find_spikes), gaps joined, dropped or refused, and what was found as notices and facts on
    the Course.

    Parameters
    ----------
    recording : Recording
        The file's points (elevation must be given: a file without heights is made flat by
        the caller), times and parts.
    step : float, optional
        Resampling step [m].
    smoothing : ElevationSmoothing, optional
        Elevation cleaning; None for the defaults.
    name : str, optional
        Label of the course [-].
    tracks : sequence of int, optional
        Track numbers (from 1) the course is made of, in this order; None for all in file
        order [-].
    gaps : {"join", "drop", "refuse"}, optional
        What to do with gaps in the recording (GAP_CHOICES) [-].

    Returns
    -------
    Course
        With `tracks` (TrackFacts), `gaps` (Gap) and `notices`: a note counting the spikes
        dropped ("course-spikes-removed": count [-], distance_m the distance they added
        [m]), a warning per gap, one when all elevations are the same, and those of
        build_course.

    Raises
    ------
    InputError
        For a track number the file does not have, gaps with gaps="refuse", and whatever
        build_course refuses.
    """
    index = chosen_points(recording, tracks)
    latitude = recording.latitude[index]
    longitude = recording.longitude[index]
    if recording.elevation is None:
        raise InputError("the course has no elevation")
    elevation = recording.elevation[index]
    time = None if recording.time is None else recording.time[index]
    if latitude.size < 2:
        raise InputError(f"the {'course' if tracks is None else 'chosen tracks'} ha"
                         f"{'s' if tracks is None else 've'} only one point; a course needs at "
                         "least two")
    spike, added = find_spikes(latitude, longitude, time)
    notices = []
    if spike.any():
        kept = ~spike
        latitude, longitude, elevation = latitude[kept], longitude[kept], elevation[kept]
        time = None if time is None else time[kept]
        notices.append(note("course-spikes-removed", count=int(np.count_nonzero(spike)),
                            distance_m=added))
    length, _ = geodesic_pieces(latitude, longitude)
    found, skip = _gaps_handled(length, time, gaps)
    notices += _gap_notices(found)
    constant = constant_elevation_notice(elevation)
    if constant is not None:
        notices.append(constant)
    course = build_course(latitude, longitude, elevation, step=step,
                          smoothing=ElevationSmoothing() if smoothing is None else smoothing,
                          name=name, skip=skip)
    return dataclasses.replace(course, notices=tuple(notices) + course.notices,
                               tracks=tuple(track_facts(recording, tracks)),
                               gaps=tuple(found))
