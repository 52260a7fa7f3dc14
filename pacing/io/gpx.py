"""Read and write GPX courses (GPX 1.0 and 1.1; tracks and routes).

Reading is hardened: the text is first parsed by defusedxml with DTDs, entities and external
references forbidden, and only then handed to gpxpy. Files over MAX_GPX_BYTES or with more than
MAX_GPX_POINTS points are refused. Every problem becomes pacing.errors.InputError with a
one-line message.

Points are taken from all tracks and their segments, joined in file order; a file without track
points falls back to its routes. Waypoints are ignored.

The demo courses (invented places) live in demo_routes/ beside the package; DEMO_ROUTES_DIR,
demo_route_paths() and DEFAULT_DEMO_ROUTE find them.
"""

from __future__ import annotations

import os
import re
import warnings
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import gpxpy
import gpxpy.gpx
import numpy as np
from numpy.typing import ArrayLike

from pacing.course.elevation import ElevationSmoothing
from pacing.course.geometry import DEFAULT_STEP, Course, build_course, validate_track
from pacing.errors import InputError, first_line
from pacing.io.safe_xml import local_name, parse_xml

MAX_GPX_BYTES = 50 * 1024 * 1024
"""Largest GPX file accepted [bytes] (50 MiB: a day-long 1 s recording is about 10 MiB)."""

MAX_GPX_POINTS = 1_000_000
"""Most track or route points accepted in one file."""

MINIMUM_COURSE_LENGTH = 100.0
"""Shortest course accepted from a file [m]: anything shorter is a recording fault or a
wrong file, not a course to plan (one 10 m resampling step is 100 times shorter)."""

DEMO_ROUTES_DIR = Path(__file__).resolve().parents[2] / "demo_routes"
"""Folder of the invented demo courses (in the source tree)."""

DEFAULT_DEMO_ROUTE = DEMO_ROUTES_DIR / "01_corravey_hill_loop_40k.gpx"
"""The demo course the app opens on: a hilly 40 km time-trial loop."""


@dataclass(frozen=True, eq=False)
class Track:
    """The raw points of a GPX file, in order along the course.

    Attributes
    ----------
    latitude : numpy.ndarray
        WGS84 latitude of each point, length M [deg].
    longitude : numpy.ndarray
        WGS84 longitude of each point, length M [deg].
    elevation : numpy.ndarray or None
        Elevation of each point, NaN where a point has none; None when no point of the file
        has an elevation [m].
    name : str
        The track's (or route's, or file's) name; "" when the file names none [-].
    """

    latitude: np.ndarray
    longitude: np.ndarray
    elevation: np.ndarray | None
    name: str = ""


def _shown(path: Path) -> str:
    """A path fit for a one-line message (no line breaks, at most 200 characters)."""
    text = " ".join(str(path).split())
    return text if len(text) <= 200 else text[:197] + "..."


def _read_bytes(source: Any) -> tuple[bytes, str]:
    """The file's bytes and a fallback name, from a path, bytes or a file-like object."""
    if isinstance(source, bytes | bytearray | memoryview):
        data = bytes(source)
        fallback = ""
    elif isinstance(source, str) and source.lstrip().startswith("<"):
        data = source.encode("utf-8")  # GPX text given as a string
        fallback = ""
    elif isinstance(source, str | os.PathLike):
        path = Path(source)
        try:
            size = path.stat().st_size
        except FileNotFoundError:
            raise InputError(f"GPX file not found: {_shown(path)}") from None
        except OSError as error:
            raise InputError(f"cannot read {_shown(path)}: {error.strerror}") from None
        if path.is_dir():
            raise InputError(f"{_shown(path)} is a folder, not a GPX file")
        if size > MAX_GPX_BYTES:
            raise InputError(f"GPX file is too large: {size / 2**20:.0f} MiB "
                             f"(limit {MAX_GPX_BYTES // 2**20} MiB)")
        try:
            data = path.read_bytes()
        except OSError as error:
            raise InputError(f"cannot read {_shown(path)}: {error.strerror}") from None
        fallback = path.stem
    elif hasattr(source, "read"):
        data = source.read(MAX_GPX_BYTES + 1)
        if isinstance(data, str):
            data = data.encode("utf-8")
        fallback = Path(str(getattr(source, "name", ""))).stem if hasattr(source, "name") else ""
    else:
        raise InputError(f"cannot read a GPX course from {type(source).__name__}")
    if len(data) > MAX_GPX_BYTES:
        raise InputError(f"GPX file is too large (limit {MAX_GPX_BYTES // 2**20} MiB)")
    return data, fallback


def _decode(data: bytes) -> str:
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


_POINT_KINDS = {"trkpt": "track point", "rtept": "route point", "wpt": "waypoint"}
_COORDINATES = {"lat": "latitude", "lon": "longitude"}


def _shown_value(text: str) -> str:
    """A value from the file fit for a one-line message (quoted, at most 40 characters)."""
    text = " ".join(text.split())
    return repr(text if len(text) <= 40 else text[:37] + "...")


def _check_xml(data: bytes) -> None:
    """Parse with defusedxml (no DTD, no entities, no external references) before gpxpy, and
    check that every point's latitude, longitude and elevation are numbers.

    gpxpy's own messages for such values ("Invalid value for <None>...") name neither the
    point nor the coordinate; these name both. Points are numbered from 1 in file order, each
    kind (track points, route points, waypoints) separately.
    """
    root = parse_xml(data, "GPX file")
    tag = local_name(root.tag)
    if tag != "gpx":
        raise InputError(f"not a GPX file: the root element is <{tag}>, not <gpx>")
    counts = dict.fromkeys(_POINT_KINDS, 0)
    for element in root.iter():
        kind = local_name(element.tag) if isinstance(element.tag, str) else ""
        if kind not in _POINT_KINDS:
            continue
        counts[kind] += 1
        where = f"{_POINT_KINDS[kind]} {counts[kind]}"
        for attribute, meaning in _COORDINATES.items():
            value = element.get(attribute)
            if value is None:
                raise InputError(f"not a valid GPX file: {where} has no {meaning}")
            _check_number(value, f"{where} has {meaning}")
        for child in element:
            if isinstance(child.tag, str) and local_name(child.tag) == "ele" and child.text:
                if child.text.strip():
                    _check_number(child.text, f"{where} has elevation")


def _check_number(value: str, what: str) -> None:
    """Raise InputError "not a valid GPX file: <what> 'value', not a number" unless it is one."""
    try:
        float(value.strip())
    except ValueError:
        raise InputError(f"not a valid GPX file: {what} {_shown_value(value)}, "
                         "not a number") from None


def _points(document: gpxpy.gpx.GPX) -> tuple[list[gpxpy.gpx.GPXTrackPoint]
                                               | list[gpxpy.gpx.GPXRoutePoint], str]:
    """The points of all tracks and segments in order, or without any those of all routes, and
    the first name found among them."""
    track_points = [point for track in document.tracks for segment in track.segments
                    for point in segment.points]
    if track_points:
        return track_points, next((t.name for t in document.tracks if t.name), "")
    route_points = [point for route in document.routes for point in route.points]
    return route_points, next((r.name for r in document.routes if r.name), "")


def read_track(source: str | os.PathLike | bytes | bytearray | memoryview | Any) -> Track:
    """Read the points of a GPX file.

    Raises InputError: empty file, not XML or not GPX, DTD or entities, too large, no points,
    bad coordinates, a latitude, longitude or elevation that is not a number (the message
    names the point and the value).

    Parameters
    ----------
    source : str, os.PathLike, bytes or file-like
        A path, the file's bytes, or a binary or text file-like object; a str that starts with
        "<" is taken as the GPX text itself [-].

    Returns
    -------
    Track
        The points of all tracks and track segments in order (or, without any, of all routes),
        validated for range (latitude -90..90 [deg], longitude -180..180 [deg]).

    References
    ----------
    GPX 1.1 schema, https://www.topografix.com/GPX/1/1/ (tracks, routes, <ele> in metres).

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
    if not data.strip():
        raise InputError("GPX file is empty")
    _check_xml(data)
    text = _decode(data)
    try:
        document = gpxpy.parse(text)
    except (gpxpy.gpx.GPXException, ValueError, TypeError, AttributeError, KeyError) as error:
        message = first_line(error)
        raise InputError(f"not a valid GPX file: {message}") from None

    points, name = _points(document)
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
    if len(points) >= 2:
        latitude, longitude, elevation = validate_track(latitude, longitude, elevation)
    lines = (name or document.name or fallback or "").strip().splitlines()
    return Track(latitude=latitude, longitude=longitude, elevation=elevation,
                 name=lines[0] if lines else "")


def load_course(source: str | os.PathLike | bytes | bytearray | memoryview | Any,
                step: float | None = None,
                smoothing: ElevationSmoothing | None = None,
                allow_missing_elevation: bool = False, name: str | None = None) -> Course:
    """Read a GPX file and build its Course (see pacing.course.geometry.build_course).

    Raises InputError for everything read_track and build_course refuse, and for a course
    shorter than MINIMUM_COURSE_LENGTH.

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
        conditions say otherwise) with a UserWarning; otherwise it is refused. Points missing
        some elevations are interpolated with a UserWarning either way [-].
    name : str, optional
        Label of the course; None for the file's own name [-].

    Returns
    -------
    Course
        The course resampled every `step` metres.
    """
    track = read_track(source)
    elevation = track.elevation
    if elevation is None:
        if not allow_missing_elevation:
            raise InputError("GPX file has no elevation data; use --flat (command line) or "
                             "'A file without heights is a flat course' (app) to treat it "
                             "as flat")
        warnings.warn("GPX file has no elevation data: the course is treated as flat",
                      UserWarning, stacklevel=2)
        elevation = np.zeros_like(track.latitude)
    course = build_course(track.latitude, track.longitude, elevation,
                          step=DEFAULT_STEP if step is None else step,
                          smoothing=ElevationSmoothing() if smoothing is None else smoothing,
                          name=name or track.name or "course")
    if course.total_distance < MINIMUM_COURSE_LENGTH:
        raise InputError(f"the course is only {course.total_distance:.1f} m long; a course "
                         f"must be at least {MINIMUM_COURSE_LENGTH:g} m")
    return course


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
              waypoints: Iterable[tuple[float, str, str | None]] | None = None) -> str:
    """The course as GPX 1.1 text: one track of its points (cleaned elevation) and waypoints.

    Parameters
    ----------
    course : Course
        The course.
    waypoints : iterable of (float, str, str or None), optional
        (distance from the start [m], name, description) of each waypoint, placed on the
        course at that distance.

    Returns
    -------
    str
        GPX 1.1 text (positions to 7 decimals [deg], elevations to 2 [m]).
    """
    document = gpxpy.gpx.GPX()
    document.creator = "pacing"
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
