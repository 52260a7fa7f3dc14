"""The course made of a recording (`course_from_recording`): the chosen tracks in order, spikes
dropped (pacing.course.spikes), gaps joined, dropped or refused (pacing.course.gaps), elevations
that are all the same reported, then the course built (pacing.course.geometry.build_course) with
what was found as notices and facts on the Course.

Only numpy and the geodesics of pacing.course.geometry: the numeric core.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence

import numpy as np

from pacing.course.elevation import ElevationSmoothing
from pacing.course.gaps import gap_notices, gaps_handled
from pacing.course.geometry import DEFAULT_STEP, Course, build_course, geodesic_pieces
from pacing.course.recording import Recording, chosen_points, track_facts
from pacing.course.spikes import find_spikes
from pacing.errors import InputError
from pacing.notices import Notice, note, warning


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
    found, skip = gaps_handled(length, time, gaps)
    notices += gap_notices(found)
    constant = constant_elevation_notice(elevation)
    if constant is not None:
        notices.append(constant)
    course = build_course(latitude, longitude, elevation, step=step,
                          smoothing=ElevationSmoothing() if smoothing is None else smoothing,
                          name=name, skip=skip)
    return dataclasses.replace(course, notices=tuple(notices) + course.notices,
                               tracks=tuple(track_facts(recording, tracks)),
                               gaps=tuple(found))
