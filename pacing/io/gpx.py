"""Read and write GPX courses (GPX 1.0 and 1.1; tracks and routes).

Reading is hardened, and limits come before the work: only regular files are opened (a
device or a FIFO is refused before it is read), files over MAX_GPX_BYTES are refused by their
size, and a scan of the bytes counts the point tags (track, route and waypoints) and refuses
more than MAX_GPX_POINTS before any parser runs. The text is then walked by defusedxml (DTDs,
entities and external references forbidden, nesting bounded) as a stream, and only then
handed to gpxpy. Encodings the XML declares (with or without a byte-order mark, UTF-16
included) are read. Every problem becomes pacing.errors.InputError with a one-line message.

Points are taken from all tracks and their segments (or, without any, from the routes) with
their times; `load_course` keeps the tracks asked for, finds the gaps between points and
builds the course (pacing.course.recorded_course). Waypoints are counted, not used.

The demo courses (invented places) live in demo_routes/ beside the package; DEMO_ROUTES_DIR,
demo_route_paths() and DEFAULT_DEMO_ROUTE find them.
"""

from __future__ import annotations

import codecs
import dataclasses
import os
import re
from collections.abc import Iterable, Sequence
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import gpxpy
import gpxpy.gpx
import numpy as np
from numpy.typing import ArrayLike

from pacing.course.elevation import ElevationSmoothing
from pacing.course.geometry import DEFAULT_STEP, Course
from pacing.course.recorded_course import course_from_recording
from pacing.course.recording import Recording, RecordingPart
from pacing.course.track_checks import validate_track
from pacing.errors import InputError, first_line
from pacing.io.files import read_bounded
from pacing.io.safe_xml import local_name, walk_xml
from pacing.notices import warning

MAX_GPX_BYTES = 50 * 1024 * 1024
"""Largest GPX file accepted [bytes] (50 MiB: a day-long 1 s recording is about 10 MiB)."""

MAX_GPX_POINTS = 1_000_000
"""Most points (track, route and waypoints together) accepted in one file."""

MINIMUM_COURSE_LENGTH = 100.0
"""Shortest course accepted from a file [m]: anything shorter is a recording fault or a
wrong file, not a course to plan (one 10 m resampling step is 100 times shorter)."""

NO_HEIGHTS_MESSAGE = ("GPX file has no elevation data (no heights at any point); plan it as "
                      "flat ground if the course is flat")
"""The refusal of a course file without heights, in no surface's words: the command line adds
its flag, the page its checkbox (each knows how a user asks for a flat course)."""


class NoHeightsError(InputError):
    """A course file without any elevation, refused (message NO_HEIGHTS_MESSAGE); a surface
    that catches it may add how the user plans the course as flat there."""


DEMO_ROUTES_DIR = Path(__file__).resolve().parents[2] / "demo_routes"
"""Folder of the invented demo courses (in the source tree)."""

DEFAULT_DEMO_ROUTE = DEMO_ROUTES_DIR / "01_corravey_hill_loop_40k.gpx"
"""The demo course the app opens on: a hilly 40 km time-trial loop."""


def _read_bytes(source: Any) -> tuple[bytes, str]:
    """The file's bytes and a fallback name (pacing.io.files.read_bounded); GPX text given
    as a str is taken as it is."""
    if isinstance(source, str) and source.lstrip().startswith("<"):
        source = source.encode("utf-8")
    return read_bounded(source, "GPX file", MAX_GPX_BYTES)


_BYTE_ORDER_MARKS = (
    (codecs.BOM_UTF32_LE, "utf-32-le"), (codecs.BOM_UTF32_BE, "utf-32-be"),
    (codecs.BOM_UTF8, "utf-8"),
    (codecs.BOM_UTF16_LE, "utf-16-le"), (codecs.BOM_UTF16_BE, "utf-16-be"),
)
"""Byte-order marks and their encodings (UTF-32 first: its little-endian mark begins with
UTF-16's)."""

_WIDE_STARTS = ((b"<\x00?\x00", "utf-16-le"), (b"\x00<\x00?", "utf-16-be"))
"""How "<?" begins in UTF-16 without a byte-order mark (XML 1.0, Appendix F.1)."""


def _wide_encoding(data: bytes) -> str | None:
    """The UTF-16/32 encoding of the text by its byte-order mark or first bytes, or None for
    an encoding in which "<?xml" is ASCII (UTF-8, Latin-1, ...)."""
    for mark, encoding in _BYTE_ORDER_MARKS:
        if data.startswith(mark):
            return None if encoding == "utf-8" else encoding
    for start, encoding in _WIDE_STARTS:
        if data.startswith(start):
            return encoding
    return None


def _decode(data: bytes) -> str:
    """The text of the file: by its byte-order mark, as UTF-8, or in the encoding it declares
    (XML 1.0, Appendix F.1); InputError when none of them reads it."""
    wide = _wide_encoding(data)
    if wide is not None:
        mark = next((m for m, e in _BYTE_ORDER_MARKS if e == wide), b"")
        try:
            return data[len(mark) if data.startswith(mark) else 0:].decode(wide)
        except UnicodeDecodeError:
            raise InputError(f"GPX file is not valid {wide.upper()[:6]} text, as its first "
                             "bytes say it is") from None
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        pass
    declared = re.match(rb"""\s*<\?xml[^>]*encoding=["']([A-Za-z0-9._-]+)["']""", data)
    if declared:
        try:
            return data.decode(declared.group(1).decode("ascii"))
        except (LookupError, UnicodeDecodeError):
            pass
    raise InputError("GPX file is not valid UTF-8 text (nor in the encoding it declares)")


_DECLARATION = re.compile(r"""^\s*<\?xml[^>]*\?>""")


def _as_utf8(text: str) -> bytes:
    """The text as UTF-8 bytes with its XML declaration (if any) saying so, for the parsers."""
    declared = _DECLARATION.match(text)
    if declared:
        text = '<?xml version="1.0" encoding="UTF-8"?>' + text[declared.end():]
    return text.encode("utf-8")


_POINT_TAG = re.compile(rb"<(?:[A-Za-z_][A-Za-z0-9_.-]*:)?(?:trkpt|rtept|wpt)[\s/>]")
"""The start of a track point, route point or waypoint element, with or without a namespace
prefix (XML allows no space between "<" and the name)."""


def _count_points(data: bytes) -> None:
    """Refuse, before parsing, a file with more than MAX_GPX_POINTS point tags.

    A scan of the bytes (UTF-8 here): it may count a tag inside a comment, never misses one,
    so it bounds the number of points a parser would find, in a fraction of a second for the
    largest file accepted.
    """
    for count, _ in enumerate(_POINT_TAG.finditer(data), start=1):
        if count > MAX_GPX_POINTS:
            raise InputError(f"GPX file has too many points: more than {MAX_GPX_POINTS} "
                             "track, route and waypoints")


_POINT_KINDS = {"trkpt": "track point", "rtept": "route point", "wpt": "waypoint"}
_COORDINATES = {"lat": "latitude", "lon": "longitude"}


def _shown_value(text: str) -> str:
    """A value from the file fit for a one-line message (quoted, at most 40 characters)."""
    text = " ".join(text.split())
    return repr(text if len(text) <= 40 else text[:37] + "...")


def _check_xml(data: bytes) -> None:
    """Walk the document with defusedxml (no DTD, no entities, no external references, nesting
    bounded) before gpxpy, and check that every point's latitude, longitude and elevation are
    numbers; each point is dropped once checked, so memory stays bounded.

    gpxpy's own messages for such values ("Invalid value for <None>...") name neither the
    point nor the coordinate; these name both. Points are numbered from 1 in file order, each
    kind (track points, route points, waypoints) separately.
    """
    counts = dict.fromkeys(_POINT_KINDS, 0)
    open_elements: list[Any] = []
    for event, element, depth in walk_xml(data, "GPX file"):
        if event == "start":
            if depth == 1 and local_name(element.tag) != "gpx":
                raise InputError(f"not a GPX file: the root element is "
                                 f"<{local_name(element.tag)}>, not <gpx>")
            open_elements.append(element)
            continue
        open_elements.pop()
        kind = local_name(element.tag) if isinstance(element.tag, str) else ""
        if kind in _POINT_KINDS:
            counts[kind] += 1
            _check_point(element, f"{_POINT_KINDS[kind]} {counts[kind]}")
        if open_elements and (kind in _POINT_KINDS or kind in _DONE_WITH):
            parent = open_elements[-1]
            if len(parent) and parent[-1] is element:
                del parent[-1]  # checked: let it go, so memory stays bounded


_DONE_WITH = {"trk", "trkseg", "rte", "metadata", "extensions"}
"""Elements let go once complete while checking (their points are checked as they end)."""


def _check_point(element: Any, where: str) -> None:
    """Raise InputError unless the point has a numeric latitude, longitude and elevation."""
    for attribute, meaning in _COORDINATES.items():
        value = element.get(attribute)
        if value is None:
            raise InputError(f"not a valid GPX file: {where} has no {meaning}")
        _check_number(value, f"{where} has {meaning}")
    for child in element:
        name = local_name(child.tag) if isinstance(child.tag, str) else ""
        if name == "ele" and child.text and child.text.strip():
            _check_number(child.text, f"{where} has elevation")
        elif name == "time" and child.text and not _ISO_DATE.match(child.text):
            raise InputError(f"not a valid GPX file: {where} has time "
                             f"{_shown_value(child.text)}, not a date and time "
                             "(ISO 8601, e.g. 2024-05-01T10:00:00Z)")


_ISO_DATE = re.compile(r"\s*[+-]?\d{4}-\d{2}-\d{2}")
"""How a GPX time begins: an ISO 8601 date (GPX 1.1 schema: xsd:dateTime)."""


def _check_number(value: str, what: str) -> None:
    """Raise InputError "not a valid GPX file: <what> 'value', not a number" unless it is one."""
    try:
        float(value.strip())
    except ValueError:
        raise InputError(f"not a valid GPX file: {what} {_shown_value(value)}, "
                         "not a number") from None


def _seconds(moment: datetime | None) -> float:
    """A point's time in seconds since 1970-01-01 UTC (a time without zone taken as UTC), NaN
    for none."""
    if moment is None:
        return float("nan")
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=UTC)
    return moment.timestamp()


def _points(document: gpxpy.gpx.GPX) -> tuple[list[Any], list[RecordingPart], str]:
    """The points of all tracks and segments in order, or without any those of all routes;
    the parts (one per track segment, or per route) and the first name found among them."""
    points: list[Any] = []
    parts: list[RecordingPart] = []
    for index, track in enumerate(document.tracks):
        for number, segment in enumerate(track.segments):
            if segment.points:
                parts.append(RecordingPart(index, number, _one_line_name(track.name),
                                           len(points), len(points) + len(segment.points)))
                points.extend(segment.points)
    if points:
        return points, parts, next((t.name for t in document.tracks if t.name), "")
    for index, route in enumerate(document.routes):
        if route.points:
            parts.append(RecordingPart(index, 0, _one_line_name(route.name), len(points),
                                       len(points) + len(route.points)))
            points.extend(route.points)
    return points, parts, next((r.name for r in document.routes if r.name), "")


def _one_line_name(name: str | None) -> str:
    """A name from the file on one line ("" for none), at most 80 characters."""
    text = " ".join((name or "").split())
    return text if len(text) <= 80 else text[:77] + "..."


def _parsed(data: bytes) -> tuple[str, gpxpy.gpx.GPX]:
    """The file's text and its gpxpy document, limits and checks first."""
    if not data.strip():
        raise InputError("GPX file is empty")
    if _wide_encoding(data) is None:
        _count_points(data)
        text = _decode(data)
        checked = data
    else:
        text = _decode(data)
        checked = _as_utf8(text)
        _count_points(checked)
    if not text.strip():
        raise InputError("GPX file is empty")
    _check_xml(checked)
    try:
        return text, gpxpy.parse(text)
    except (gpxpy.gpx.GPXException, ValueError, TypeError, AttributeError, KeyError,
            RecursionError, OverflowError) as error:
        message = first_line(error)
        raise InputError(f"not a valid GPX file: {message}") from None


def read_track(source: str | os.PathLike | bytes | bytearray | memoryview | Any) -> Recording:
    """Read the points of a GPX file.

    Raises InputError: empty file, not a regular file, not XML or not GPX, DTD or entities,
    nesting too deep, too large, too many points, no points, bad coordinates, a latitude,
    longitude or elevation that is not a number (the message names the point and the value).

    Parameters
    ----------
    source : str, os.PathLike, bytes or file-like
        A path, the file's bytes, or a binary or text file-like object; a str that starts with
        "<" is taken as the GPX text itself [-].

    Returns
    -------
    pacing.course.recording.Recording
        The points of all tracks and track segments in order (or, without any, of all routes),
        validated for range (latitude -90..90 [deg], longitude -180..180 [deg]), with their
        times [s] and the parts they belong to.

    References
    ----------
    GPX 1.1 schema, https://www.topografix.com/GPX/1/1/ (tracks, routes, <ele> in metres).
    Extensible Markup Language (XML) 1.0, Appendix F.1, https://www.w3.org/TR/xml/ (detecting
    the encoding).

    Examples
    --------
    >>> text = ('<gpx version="1.1" creator="x" xmlns="http://www.topografix.com/GPX/1/1">'
    ...         '<trk><name>Loop</name><trkseg><trkpt lat="45.0" lon="7.0"><ele>210</ele>'
    ...         '</trkpt><trkpt lat="45.001" lon="7.0"><ele>215</ele></trkpt></trkseg></trk>'
    ...         '</gpx>')
    >>> track = read_track(text)
    >>> track.name, track.latitude.tolist(), track.elevation.tolist()
    ('Loop', [45.0, 45.001], [210.0, 215.0])
    """
    data, fallback = _read_bytes(source)
    _, document = _parsed(data)
    points, parts, name = _points(document)
    if not points:
        raise InputError("GPX file has no track or route points")
    if len(points) > MAX_GPX_POINTS:
        raise InputError(f"GPX file has too many points: {len(points)} "
                         f"(limit {MAX_GPX_POINTS})")
    latitude = np.array([p.latitude for p in points], dtype=float)
    longitude = np.array([p.longitude for p in points], dtype=float)
    heights = [p.elevation for p in points]
    elevation = (None if all(h is None for h in heights)
                 else np.array([np.nan if h is None else h for h in heights], dtype=float))
    times = np.array([_seconds(p.time) for p in points], dtype=float)
    if len(points) >= 2:
        latitude, longitude, elevation = validate_track(latitude, longitude, elevation)
    lines = (name or document.name or fallback or "").strip().splitlines()
    return Recording(latitude=latitude, longitude=longitude, elevation=elevation,
                     time=times if np.isfinite(times).any() else None,
                     parts=tuple(parts) or (RecordingPart(0, 0, "", 0, latitude.size),),
                     name=lines[0] if lines else "")


def load_course(source: str | os.PathLike | bytes | bytearray | memoryview | Any,
                step: float | None = None,
                smoothing: ElevationSmoothing | None = None,
                allow_missing_elevation: bool = False, name: str | None = None,
                tracks: Sequence[int] | None = None, gaps: str = "join") -> Course:
    """Read a GPX file and build its Course (pacing.course.recorded_course.course_from_recording).

    Raises InputError for everything read_track and course_from_recording refuse, and for a
    course shorter than MINIMUM_COURSE_LENGTH.

    Parameters
    ----------
    source : str, os.PathLike, bytes or file-like
        Path, bytes or file-like object of a GPX file (see read_track) [-].
    step : float, optional
        Resampling step; None for DEFAULT_STEP [m].
    smoothing : ElevationSmoothing, optional
        Elevation cleaning; None for the ElevationSmoothing() defaults.
    allow_missing_elevation : bool, optional
        Treat a file without any elevation as flat (elevation 0 m, so sea-level air unless
        conditions say otherwise) with a warning among the course's notices; otherwise it is
        refused. Points missing some elevations are interpolated with a warning either way
        [-].
    name : str, optional
        Label of the course; None for the file's own name [-].
    tracks : sequence of int, optional
        Track numbers (from 1) that make the course, in this order; None for all in file
        order [-].
    gaps : {"join", "drop", "refuse"}, optional
        What to do with gaps between consecutive points: join them with a straight line
        (default), drop their distance, or refuse the file [-].

    Returns
    -------
    Course
        The course resampled every `step` metres, with its notices (warnings and notes as
        data), the file's tracks and the gaps found.

    Raises
    ------
    NoHeightsError
        A file without any elevation when `allow_missing_elevation` is False (an InputError).
    """
    recording = read_track(source)
    notices = []
    if recording.elevation is None:
        if not allow_missing_elevation:
            raise NoHeightsError(NO_HEIGHTS_MESSAGE)
        notices.append(warning("elevation-missing"))
        recording = dataclasses.replace(recording, elevation=np.zeros_like(recording.latitude))
    course = course_from_recording(recording, step=DEFAULT_STEP if step is None else step,
                                   smoothing=smoothing, name=name or recording.name or "course",
                                   tracks=tracks, gaps=gaps)
    if course.total_distance < MINIMUM_COURSE_LENGTH:
        raise InputError(f"the course is only {course.total_distance:.1f} m long; a course "
                         f"must be at least {MINIMUM_COURSE_LENGTH:g} m")
    if not notices:
        return course
    return dataclasses.replace(course, notices=tuple(notices) + tuple(
        n for n in course.notices if n.code != "elevation-constant"))


def position_at(course: Course, distance: ArrayLike) -> tuple[np.ndarray, np.ndarray,
                                                               np.ndarray]:
    """Latitude, longitude and elevation at distances along the course.

    Interpolated linearly between the course's points (longitude unwrapped first, so a course
    over the antimeridian interpolates the short way).

    Parameters
    ----------
    course : Course
        The course.
    distance : float or array_like
        Distance from the start [m].

    Returns
    -------
    latitude : numpy.ndarray
        [deg].
    longitude : numpy.ndarray
        [deg], in -180..180.
    elevation : numpy.ndarray
        Cleaned elevation [m].
    """
    distance = np.asarray(distance, dtype=float)
    longitude = np.degrees(np.unwrap(np.radians(course.longitude)))
    lat = np.interp(distance, course.distance, course.latitude)
    lon = (np.interp(distance, course.distance, longitude) + 180.0) % 360.0 - 180.0
    return lat, lon, np.interp(distance, course.distance, course.elevation)


def write_gpx(course: Course,
              waypoints: Iterable[tuple[float, str, str | None]] | None = None,
              description: str | None = None) -> str:
    """The course as GPX 1.1 text: one track of its points (cleaned elevation) and waypoints.

    Parameters
    ----------
    course : Course
        The course.
    waypoints : iterable of (float, str, str or None), optional
        (distance from the start [m], name, description) of each waypoint, placed on the
        course at that distance.
    description : str, optional
        The document's description (GPX 1.1 <metadata><desc>), e.g. the plan's warnings.

    Returns
    -------
    str
        GPX 1.1 text (positions to 7 decimals [deg], elevations to 2 [m]).
    """
    document = gpxpy.gpx.GPX()
    document.creator = "pacing"
    if description:
        document.description = description
    track = gpxpy.gpx.GPXTrack(name=course.name)
    segment = gpxpy.gpx.GPXTrackSegment()
    for lat, lon, ele in zip(course.latitude, course.longitude, course.elevation, strict=True):
        segment.points.append(gpxpy.gpx.GPXTrackPoint(
            latitude=round(float(lat), 7), longitude=round(float(lon), 7),
            elevation=round(float(ele), 2)))
    track.segments.append(segment)
    document.tracks.append(track)
    total = course.total_distance
    for entry in waypoints or []:
        try:
            distance, label, description = entry
            distance = float(distance)
        except (TypeError, ValueError):
            raise InputError("each waypoint must be (distance_m, name, description)") from None
        if not (np.isfinite(distance) and -1e-6 <= distance - course.distance[0] <= total + 1e-6):
            raise InputError(f"waypoint at {distance:g} m is outside the course "
                             f"(0..{total:.0f} m)")
        lat, lon, ele = position_at(course, distance)
        document.waypoints.append(gpxpy.gpx.GPXWaypoint(
            latitude=round(float(lat), 7), longitude=round(float(lon), 7),
            elevation=round(float(ele), 2), name=str(label),
            description=None if description is None else str(description)))
    return document.to_xml(version="1.1")


def demo_route_paths() -> dict[str, Path]:
    """The demo courses by name (file stem), sorted, the default first; {} if none is found.

    Returns
    -------
    dict of str to pathlib.Path
        File stem → path of each demo GPX file.
    """
    if not DEMO_ROUTES_DIR.is_dir():
        return {}
    return {path.stem: path for path in sorted(DEMO_ROUTES_DIR.glob("*.gpx"))}
