"""A recording as the file holds it: its tracks and segments, what each track holds, the tracks
chosen for the course, and the facts a course keeps about its recording (`TrackFacts`, `Gap`).

A coach's file is often last year's recording: several tracks (two devices, a restart),
satellites lost for a while, a point that jumps hundreds of kilometres. The course is made of
it in pacing.course.recorded_course: spikes dropped (pacing.course.spikes), gaps joined, dropped
or refused (pacing.course.gaps).

Only numpy and the geodesics of pacing.course.geometry: the numeric core.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import geodesic_pieces
from pacing.errors import InputError


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


