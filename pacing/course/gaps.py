"""Gaps in a recording: stretches between two consecutive points with nothing recorded in
between (satellites lost for a while, two tracks far apart, a point that jumps hundreds of
kilometres).

- `find_gaps`: a piece much longer than the recording's typical spacing, or, where both
  points have times, one covered at an implied speed no rider reaches;
- `gaps_handled`: each gap (pacing.course.recording.Gap) joined with a straight line
  (default), its distance dropped (the pieces on either side meet) or the file refused;
- `gap_notices`: one warning naming each gap.

Only numpy: the numeric core.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from pacing.course.geometry import REPEATED_POINT_DISTANCE
from pacing.course.recording import Gap, middle_value
from pacing.errors import InputError
from pacing.notices import Notice

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


def gaps_handled(length: np.ndarray, time: np.ndarray | None,
                 handling: str) -> tuple[list[Gap], np.ndarray]:
    """The gaps (find_gaps) with where they start on the course, and the pieces left out.

    Parameters
    ----------
    length : numpy.ndarray
        Length of each piece between consecutive points, length M-1 [m].
    time : numpy.ndarray or None
        Time of each point, NaN where unknown, length M [s].
    handling : {"join", "drop", "refuse"}
        What to do with them (GAP_CHOICES) [-].

    Returns
    -------
    list of Gap
        The gaps in course order; a dropped gap's `at` counts no earlier dropped distance.
    numpy.ndarray
        Boolean mask of the pieces left out (the dropped gaps), length M-1 [-].

    Raises
    ------
    InputError
        For an unknown handling, or any gap with handling="refuse".
    """
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


def gap_notices(gaps: Sequence[Gap]) -> list[Notice]:
    """One warning per gap: "course-gap-joined" or "course-gap-dropped".

    Parameters
    ----------
    gaps : sequence of Gap
        The gaps of the course.

    Returns
    -------
    list of pacing.notices.Notice
        With at_m and length_m [m], and duration_s [s] where the gap's points have times.
    """
    notices = []
    for gap in gaps:
        values: dict[str, object] = {"at_m": gap.at, "length_m": gap.length}
        if gap.duration is not None:
            values["duration_s"] = gap.duration
        code = "course-gap-joined" if gap.handling == "join" else "course-gap-dropped"
        notices.append(Notice(code, values, "warning"))
    return notices


