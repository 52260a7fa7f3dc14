"""GNSS spikes: one or two points that jump tens of metres off the road and come back (a
receiver's multipath fault), which would add false distance and false turns to a course.

`find_spikes` finds them pass after pass (single points first, then pairs) and says how much
distance they add; pacing.course.recording drops them before the course is built.

Only numpy and the geodesics of pacing.course.geometry: the numeric core.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pacing.course.gaps import find_gaps
from pacing.course.geometry import REPEATED_POINT_DISTANCE, WGS84, geodesic_pieces
from pacing.course.recording import middle_value

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

