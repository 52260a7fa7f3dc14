"""A race recording placed on its planned course: the course distance of every sample.

By position (`align_by_position`), each sample is projected on the course's polyline within a
window ahead of the previous sample (so a loop ridden twice, or an out-and-back on one road, is
never matched to the wrong pass): among the pieces whose distance from the sample is within
MATCH_TOLERANCE of the nearest, the one closest to where the rider should be (the previous
match plus the distance ridden) wins: the score is the distance from the course plus
EXPECTED_WEIGHT times the distance from that expected place. GNSS noise along the track is then
taken out with the recorded distance, which is smooth over a few seconds (a wheel sensor, or the
speed integrated): the offset between the course distance of the projections and the recorded
distance is averaged over OFFSET_WINDOW samples within each stretch on the course (a moving
mean), and the result made monotonic by an isotonic (least-squares, non-decreasing) regression
(scipy.optimize.isotonic_regression), which has none of the upward bias of a running maximum.

- A sample farther than OFF_COURSE_DISTANCE from the course is off course: it keeps the course
  distance where the rider left the course (its time is counted there, its distance is not
  mapped to a jump along the course). A stretch of at least DETOUR_MIN_TIME is a detour (a
  warning each); shorter ones are GNSS spikes (one note).
- A sample without a position (a tunnel, a lost fix) is placed by the distance ridden since the
  previous sample.
- A time step longer than DROPOUT_GAP is a missed stretch (dropout): the course distance jumps
  across it and time along it is interpolated linearly (a warning each).
- Before the first sample on the course past FINISH_ZONE from the start, and after the first
  one within FINISH_ZONE of the finish, the course distance runs with the recorded distance
  (below 0 before the start, past the course length after the finish; a projection held at an
  end of the course says nothing of the distance), so the start and finish times are
  interpolated between samples, and riding to the start or on after the line is neither a
  detour nor counted.

By distance (`align_by_distance`, no positions), the recorded distance is scaled to the course
length (a note gives the factor, a warning when it differs from 1 by more than
DISTANCE_SCALE_WARNING).

The local map is equirectangular around each sample (pacing.fieldtest.ride.local_position):
over the few hundred metres of a window its error is far below GNSS noise; lengths along the
course are the course's own (geodesics, pacing.course.geometry).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import isotonic_regression

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.fieldtest.ride import local_position
from pacing.notices import Notice, note, warning
from pacing.review.recording import RaceRecording

OFF_COURSE_DISTANCE = 50.0
"""A sample farther than this from the course is off course [m] (our choice: consumer GNSS
errors are a few metres, rarely 20 m; a road and its verges are narrower)."""

EXPECTED_WEIGHT = 0.1
"""A candidate's score is its distance from the course plus this times its distance from where
the rider is expected along the course [-]: two passes of one road (an out-and-back, laps) are
told apart by the expected place, a neighbouring piece of the same pass by its distance."""

FINISH_ZONE = 25.0
"""A sample matched this close to the end of the course has reached the finish, one matched
this far from its start has left the start [m]; after the one and before the other the course
distance runs with the recorded distance."""

DETOUR_MIN_TIME = 10.0
"""An off-course stretch this long or longer is a detour; shorter ones are GNSS spikes [s]."""

DROPOUT_GAP = 10.0
"""A time step longer than this is a missed stretch of the recording [s] (1 Hz recording is
common practice; "smart" recording steps a few seconds)."""

WINDOW_BACK = 30.0
"""How far behind the previous match the search starts [m]."""

WINDOW_AHEAD = 60.0
"""Added to twice the distance ridden since the previous match, the search ahead [m]."""

LONGEST_GAP_SPEED = 25.0
"""Highest mean speed assumed over a missed stretch, for the search ahead [m/s]."""

OFFSET_WINDOW = 31
"""Samples over which the offset between course distance and recorded distance is averaged
(odd; about half a minute at 1 Hz) [-]."""

DISTANCE_SCALE_WARNING = 0.03
"""A recorded distance off the course length by more than this share is warned of [-]."""

DETOURS_SHOWN = 10
"""Detours and dropouts named one by one; more are counted."""


@dataclass(frozen=True, eq=False)
class Alignment:
    """Where each sample of a race lies on the course.

    Attributes
    ----------
    course_distance : numpy.ndarray
        Course distance of each sample, non-decreasing [m], length N: below 0 before the
        start, past the course length after the finish.
    cross_track : numpy.ndarray
        Distance of each sample from the course [m] (0 when aligned by distance), length N.
    off_course : numpy.ndarray
        True for samples off the course (bool), length N.
    dropout : numpy.ndarray
        True for time steps that are a missed stretch (bool), length N-1.
    method : str
        "position" or "distance".
    notices : tuple of pacing.notices.Notice
        Detours, dropouts, spikes and the distance scale ("review-…").
    """

    course_distance: np.ndarray
    cross_track: np.ndarray
    off_course: np.ndarray
    dropout: np.ndarray
    method: str
    notices: tuple[Notice, ...] = ()


def _runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(first index, index after the last) of each run of True in `mask`."""
    edges = np.flatnonzero(np.diff(np.concatenate(([0], mask.astype(np.int8), [0]))))
    return edges[::2], edges[1::2]


def _project(east: np.ndarray, north: np.ndarray, distance: np.ndarray,
             first: int, last: int) -> tuple[np.ndarray, np.ndarray]:
    """(course distance [m], distance from the course [m]) of the origin projected on each
    piece first..last-1 of the polyline (east, north) [m]."""
    ax, ay = east[first:last], north[first:last]
    dx, dy = east[first + 1:last + 1] - ax, north[first + 1:last + 1] - ay
    length2 = np.maximum(dx * dx + dy * dy, 1e-12)
    share = np.clip(-(ax * dx + ay * dy) / length2, 0.0, 1.0)
    gap = np.hypot(ax + share * dx, ay + share * dy)
    along = distance[first:last] + share * (distance[first + 1:last + 1] - distance[first:last])
    return along, gap


def _match(course: Course, lat: float, lon: float, low: float, high: float,
           expected: float) -> tuple[float, float]:
    """(course distance [m], distance from the course [m]) of one sample, searched between
    course distances low and high [m]."""
    distance = course.distance
    first = max(int(np.searchsorted(distance, low, side="right")) - 1, 0)
    last = min(int(np.searchsorted(distance, high, side="left")) + 1, distance.size - 1)
    last = max(last, first + 1)
    east, north = local_position(course.latitude[first:last + 1], course.longitude[first:last + 1],
                                 (lat, lon))
    along, gap = _project(np.asarray(east), np.asarray(north), distance[first:last + 1], 0,
                          last - first)
    pick = int(np.argmin(gap + EXPECTED_WEIGHT * np.abs(along - expected)))
    return float(along[pick]), float(gap[pick])


def _raw_matches(recording: RaceRecording, course: Course,
                 dropout: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The windowed nearest-point match of every sample: (course distance, gap) [m]."""
    assert recording.latitude is not None and recording.longitude is not None
    size = recording.time.size
    along, gap = np.zeros(size), np.zeros(size)
    ridden = np.diff(recording.distance)
    steps = np.diff(recording.time)
    anchor, since = 0.0, 0.0  # last on-course match, distance ridden since it
    for i in range(size):
        if i:
            step = ridden[i - 1]
            if dropout[i - 1]:
                step = max(step, LONGEST_GAP_SPEED * steps[i - 1])
            since += step
        if not np.isfinite(recording.latitude[i]):  # no fix: by the distance ridden
            along[i], gap[i] = anchor + since, 0.0
            anchor, since = along[i], 0.0
            continue
        low = anchor - WINDOW_BACK
        high = anchor + 2.0 * since + WINDOW_AHEAD
        along[i], gap[i] = _match(course, float(recording.latitude[i]),
                                  float(recording.longitude[i]), low, high, anchor + since)
        if gap[i] <= OFF_COURSE_DISTANCE:
            anchor, since = along[i], 0.0
    return along, gap


def _held_off_course(fitted: np.ndarray, off: np.ndarray) -> np.ndarray:
    """Course distance of off-course samples held at the last on-course sample's [m]."""
    index = np.where(~off, np.arange(off.size), -1)
    last_on = np.maximum.accumulate(index)
    first_on = int(np.argmax(~off))
    last_on = np.where(last_on < 0, first_on, last_on)
    return fitted[last_on]


def _smoothed(along: np.ndarray, ridden: np.ndarray, off: np.ndarray,
              dropout: np.ndarray) -> np.ndarray:
    """Course distance of the on-course samples with the along-track noise averaged out: the
    recorded distance plus the moving mean (OFFSET_WINDOW samples) of the offset between the
    two, within each stretch on the course between detours and missed stretches [m]."""
    from scipy.ndimage import uniform_filter1d

    result = along.copy()
    starts, stops = _runs(~off)
    for start, stop in zip(starts, stops, strict=True):
        cuts = np.flatnonzero(dropout[start:stop - 1]) + start + 1
        for first, after in zip(np.r_[start, cuts], np.r_[cuts, stop], strict=True):
            offset = along[first:after] - ridden[first:after]
            result[first:after] = ridden[first:after] + uniform_filter1d(
                offset, size=min(OFFSET_WINDOW, offset.size), mode="nearest")
    return result


def _run_on(distance: np.ndarray, ridden: np.ndarray, off: np.ndarray,
            after: np.ndarray) -> np.ndarray:
    """Course distance before the first on-course sample and after the finish, run on with the
    recorded distance `ridden` [m]."""
    distance = distance.copy()
    first = int(np.argmax(~off))
    distance[:first] = distance[first] - (ridden[first] - ridden[:first])
    if after.any():
        last = int(np.argmax(after)) - 1
        distance[after] = distance[last] + (ridden[after] - ridden[last])
    return distance


def _detour_notices(recording: RaceRecording, distance: np.ndarray,
                    off: np.ndarray) -> list[Notice]:
    """A warning per detour (the first DETOURS_SHOWN), one note of the GNSS spikes."""
    notices: list[Notice] = []
    starts, stops = _runs(off)
    time = recording.time
    spikes = 0
    detours = 0
    for start, stop in zip(starts, stops, strict=True):
        end = min(stop, time.size - 1)
        duration = float(time[end] - time[max(start - 1, 0)])
        if duration < DETOUR_MIN_TIME:
            spikes += int(stop - start)
            continue
        detours += 1
        if detours <= DETOURS_SHOWN:
            notices.append(warning(
                "review-detour", distance_m=float(distance[start]), duration_s=duration,
                ridden_m=float(recording.distance[end] - recording.distance[max(start - 1, 0)]),
                rejoined_m=float(distance[end])))
    if detours > DETOURS_SHOWN:
        notices.append(warning("review-detours-more", count=detours - DETOURS_SHOWN))
    if spikes:
        notices.append(note("review-gnss-spikes", count=spikes,
                            distance_limit_m=OFF_COURSE_DISTANCE))
    return notices


def _dropout_notices(recording: RaceRecording, distance: np.ndarray,
                     dropout: np.ndarray) -> list[Notice]:
    """A warning per missed stretch (the first DETOURS_SHOWN), then a count."""
    notices: list[Notice] = []
    gaps = np.flatnonzero(dropout)
    for i in gaps[:DETOURS_SHOWN]:
        notices.append(warning("review-dropout", start_m=float(distance[i]),
                               end_m=float(distance[i + 1]),
                               duration_s=float(recording.time[i + 1] - recording.time[i])))
    if gaps.size > DETOURS_SHOWN:
        notices.append(warning("review-dropouts-more", count=int(gaps.size - DETOURS_SHOWN)))
    return notices


def align_by_position(recording: RaceRecording, course: Course) -> Alignment:
    """Course distance of every sample from its position (module docstring).

    Parameters
    ----------
    recording : RaceRecording
        The race, with positions.
    course : pacing.course.geometry.Course
        The planned course.

    Returns
    -------
    Alignment

    Raises
    ------
    InputError
        When no sample comes within OFF_COURSE_DISTANCE of the course.
    """
    if not recording.has_position:
        raise InputError("the race file has no positions: align it by distance")
    dropout = np.diff(recording.time) > DROPOUT_GAP
    along, gap = _raw_matches(recording, course, dropout)
    off = gap > OFF_COURSE_DISTANCE
    if off.all():
        raise InputError(f"no sample of the race file comes within {OFF_COURSE_DISTANCE:g} m "
                         "of the course: is it the right course?")
    length = float(course.distance[-1])
    finished = np.flatnonzero(~off & (along >= length - FINISH_ZONE))
    index = np.arange(along.size)
    after = index > (finished[0] if finished.size else along.size)
    started = np.flatnonzero(~off & (along >= float(course.distance[0]) + FINISH_ZONE))
    before = index < (started[0] if started.size else int(np.argmax(~off)))
    off &= ~after & ~before
    skip = off | after | before  # not fitted: held, or run on with the recorded distance
    fitted = np.zeros(along.size)
    smooth = _smoothed(along, recording.distance, skip, dropout)
    fitted[~skip] = isotonic_regression(smooth[~skip]).x
    distance = _held_off_course(fitted, skip)
    distance = _run_on(distance, recording.distance, skip & ~after, after)
    notices = [*_detour_notices(recording, distance, off),
               *_dropout_notices(recording, distance, dropout)]
    return Alignment(course_distance=distance, cross_track=gap, off_course=off,
                     dropout=dropout, method="position", notices=tuple(notices))


def align_by_distance(recording: RaceRecording, course: Course) -> Alignment:
    """Course distance of every sample from the recorded distance, scaled to the course.

    Parameters
    ----------
    recording : RaceRecording
        The race.
    course : pacing.course.geometry.Course
        The planned course.

    Returns
    -------
    Alignment
        Method "distance"; a note of the scale (warning past DISTANCE_SCALE_WARNING).
    """
    length = float(course.distance[-1] - course.distance[0])
    ridden = float(recording.distance[-1])
    if ridden <= 0.0:
        raise InputError("the race file covers no distance")
    scale = length / ridden
    make = warning if abs(scale - 1.0) > DISTANCE_SCALE_WARNING else note
    dropout = np.diff(recording.time) > DROPOUT_GAP
    distance = np.clip(recording.distance * scale, 0.0, length)
    notices = [make("review-distance-scaled", scale=scale, ridden_m=ridden, course_m=length),
               *_dropout_notices(recording, distance, dropout)]
    size = recording.time.size
    return Alignment(course_distance=distance, cross_track=np.zeros(size),
                     off_course=np.zeros(size, dtype=bool), dropout=dropout,
                     method="distance", notices=tuple(notices))


def align_to_course(recording: RaceRecording, course: Course) -> Alignment:
    """By position when the recording has positions, else by distance."""
    if recording.has_position:
        return align_by_position(recording, course)
    return align_by_distance(recording, course)
