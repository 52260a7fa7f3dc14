"""Real-looking recordings for the course tests, made by a forward model that shares no code
with pacing: positions placed with geographiclib (Karney 2013) along headings, a point every
so many metres, times from a riding speed, heights from a profile function; written as GPX
text by hand."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime, timedelta

import numpy as np
from geographiclib.geodesic import Geodesic

GEODESIC = Geodesic.WGS84
START = datetime(2025, 6, 14, 8, 0, 0, tzinfo=UTC)


@dataclass
class Leg:
    """Points along one heading: every `spacing` metres over `length` metres."""

    latitude: float
    longitude: float
    heading: float
    length: float
    spacing: float = 10.0

    def points(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        along = np.arange(0.0, self.length + 1e-9, self.spacing)
        lat, lon = [], []
        for s in along:
            found = GEODESIC.Direct(self.latitude, self.longitude, self.heading, float(s))
            lat.append(found["lat2"])
            lon.append(found["lon2"])
        return np.array(lat), np.array(lon), along

    def end(self) -> tuple[float, float]:
        found = GEODESIC.Direct(self.latitude, self.longitude, self.heading, self.length)
        return found["lat2"], found["lon2"]


def moved(latitude: float, longitude: float, heading: float, distance: float
          ) -> tuple[float, float]:
    """The point `distance` metres from (latitude, longitude) on `heading` (geographiclib)."""
    found = GEODESIC.Direct(latitude, longitude, heading, distance)
    return found["lat2"], found["lon2"]


def trkpt(lat: float, lon: float, ele: float | None, time: datetime | None) -> str:
    parts = [f'<trkpt lat="{lat:.8f}" lon="{lon:.8f}">']
    if ele is not None:
        parts.append(f"<ele>{ele:.2f}</ele>")
    if time is not None:
        parts.append(f"<time>{time.strftime('%Y-%m-%dT%H:%M:%SZ')}</time>")
    parts.append("</trkpt>")
    return "".join(parts)


def gpx(tracks: Sequence[tuple[str, Sequence[Sequence[str]]]]) -> str:
    """GPX 1.1 text of tracks, each (name, [segment, ...]) with each segment a list of
    <trkpt> strings."""
    body = []
    for name, segments in tracks:
        body.append(f"<trk><name>{name}</name>")
        for segment in segments:
            body.append("<trkseg>" + "".join(segment) + "</trkseg>")
        body.append("</trk>")
    return ('<?xml version="1.0" encoding="UTF-8"?><gpx version="1.1" creator="tests" '
            'xmlns="http://www.topografix.com/GPX/1/1">' + "".join(body) + "</gpx>")


def leg_points(leg: Leg, start_time: datetime | None, speed: float,
               height: Callable[[np.ndarray], np.ndarray] | None,
               start_along: float = 0.0) -> list[str]:
    """The <trkpt> strings of a leg, timed at `speed` [m/s] from `start_time`, heights from
    `height(distance along the whole recording)`."""
    lat, lon, along = leg.points()
    heights = None if height is None else height(start_along + along)
    rows = []
    for k in range(along.size):
        time = None if start_time is None else start_time + timedelta(seconds=along[k] / speed)
        rows.append(trkpt(lat[k], lon[k], None if heights is None else heights[k], time))
    return rows


def two_tracks_with_a_jump(jump: float = 12_700.0, length: float = 7_500.0) -> str:
    """Two recordings of 7.5 km each, the second starting `jump` metres east of the first's
    end, an hour later: a coach's merged file."""
    first = Leg(45.0, 7.0, 0.0, length)
    end_lat, end_lon = first.end()
    start_lat, start_lon = moved(end_lat, end_lon, 90.0, jump)
    second = Leg(start_lat, start_lon, 0.0, length)
    hilly = lambda s: 300.0 + 20.0 * np.sin(s / 800.0)  # noqa: E731
    return gpx([
        ("Morning part", [leg_points(first, START, 8.0, hilly)]),
        ("After the restart", [leg_points(second, START + timedelta(hours=1), 8.0, hilly)]),
    ])


def teleport(jump: float = 500_000.0) -> str:
    """3 km on one road with one point 500 km away in the middle (a receiver fault), timed at
    one point a second."""
    leg = Leg(45.0, 7.0, 0.0, 3_000.0)
    rows = leg_points(leg, START, 10.0, lambda s: 200.0 + 0.01 * s)
    lat, lon, _ = leg.points()
    middle = len(rows) // 2
    far_lat, far_lon = moved(lat[middle], lon[middle], 90.0, jump)
    rows[middle] = trkpt(far_lat, far_lon, 200.0 + 0.01 * 10.0 * middle,
                         START + timedelta(seconds=middle))
    return gpx([("Teleport", [rows])])


def jump_in_one_track(jump: float = 500_000.0) -> str:
    """1.5 km, then a jump of `jump` metres east in one second, then 1.5 km more."""
    first = Leg(45.0, 7.0, 0.0, 1_500.0)
    end_lat, end_lon = first.end()
    second = Leg(*moved(end_lat, end_lon, 90.0, jump), 0.0, 1_500.0)
    rows = leg_points(first, START, 10.0, lambda s: 100.0 + 0.0 * s)
    rows += leg_points(second, START + timedelta(seconds=151), 10.0,
                       lambda s: 100.0 + 0.01 * s)
    return gpx([("Jump", [rows])])


def zero_elevations(length: float = 5_000.0) -> str:
    """A recording whose every <ele> is 0 (a device that writes a placeholder)."""
    leg = Leg(45.0, 7.0, 30.0, length)
    return gpx([("Zeros", [leg_points(leg, START, 8.0, lambda s: 0.0 * s)])])


def ramp(grade: float = 0.30, ramp_length: float = 600.0, flat: float = 1_000.0) -> str:
    """Flat road, a straight ramp of `grade` over `ramp_length` metres, flat road again, a
    point every 10 m (no noise)."""
    total = 2 * flat + ramp_length
    leg = Leg(45.0, 7.0, 0.0, total)
    height = lambda s: 100.0 + grade * np.clip(s - flat, 0.0, ramp_length)  # noqa: E731
    return gpx([("Ramp", [leg_points(leg, None, 5.0, height)])])


def height_step(step: float = 55.0, at: float = 1_000.0, total: float = 2_000.0) -> str:
    """Flat road whose recorded height jumps by `step` metres between two points 10 m apart
    (a barometric altimeter recalibrating), then stays there."""
    leg = Leg(45.0, 7.0, 0.0, total)
    height = lambda s: 100.0 + np.where(s >= at, step, 0.0)  # noqa: E731
    return gpx([("Step", [leg_points(leg, None, 5.0, height)])])


def noisy_flat(sigma: float = 3.0, length: float = 5_000.0, seed: int = 7) -> str:
    """Flat road at 150 m recorded with independent Gaussian height noise of `sigma` metres
    per point, a point every 10 m."""
    leg = Leg(45.0, 7.0, 60.0, length)
    noise = np.random.default_rng(seed).normal(0.0, sigma, int(length // 10.0) + 1)
    return gpx([("Noisy", [leg_points(leg, START, 8.0, lambda s: 150.0 + noise[:s.size])])])


def _timed_rows(lat: Sequence[float], lon: Sequence[float], speed: float | None,
                spacing: float) -> list[str]:
    """<trkpt> strings a point every `spacing` metres at `speed` [m/s] (None: no times),
    rising 0.5 % from 120 m."""
    return [trkpt(lat[k], lon[k], 120.0 + 0.005 * spacing * k,
                  None if speed is None else START + timedelta(seconds=k * spacing / speed))
            for k in range(len(lat))]


def spiky_road(spikes: Sequence[tuple[float, float, int]] = ((700.0, 60.0, 1),
                                                            (1_800.0, 40.0, 1),
                                                            (2_400.0, 80.0, 2)),
               spacing: float = 5.0, speed: float | None = 5.0
               ) -> tuple[str, float, float]:
    """A 3 km road (1.5 km heading 30°, then 1.5 km heading 120°) with a point every
    `spacing` metres, where each spike (at [m], offset [m], points) moves that many points
    starting at that distance `offset` metres to the left of the road (a multipath fault).

    Returns the GPX text, the clean road's length and the spiky track's length, both summed
    over the points' geodesic pieces by geographiclib [m]."""
    first = Leg(45.0, 7.0, 30.0, 1_500.0, spacing)
    second = Leg(*first.end(), 120.0, 1_500.0, spacing)
    lat1, lon1, _ = first.points()
    lat2, lon2, _ = second.points()
    lat = np.r_[lat1, lat2[1:]]
    lon = np.r_[lon1, lon2[1:]]
    heading = np.r_[np.full(lat1.size, 30.0), np.full(lat2.size - 1, 120.0)]
    clean = _track_length(lat, lon)
    for at, offset, count in spikes:
        for k in range(int(round(at / spacing)), int(round(at / spacing)) + count):
            lat[k], lon[k] = moved(lat[k], lon[k], heading[k] - 90.0, offset)
    rows = _timed_rows(lat.tolist(), lon.tolist(), speed, spacing)
    return gpx([("Spiky", [rows])]), clean, _track_length(lat, lon)


def out_and_back(length: float = 1_000.0, spacing: float = 5.0, lane: float = 0.0,
                 speed: float | None = 5.0) -> tuple[str, float]:
    """Out `length` metres north and back south a point every `spacing` metres, the way back
    `lane` metres east of the way out (0: the same line, a 180° turn on the spot; a few
    metres: a hairpin). Returns the GPX text and the track's length (geographiclib) [m]."""
    out = Leg(45.0, 7.0, 0.0, length, spacing)
    back = Leg(*moved(*out.end(), 90.0, lane), 180.0, length, spacing)
    lat_out, lon_out, _ = out.points()
    lat_back, lon_back, _ = back.points()
    lat = np.r_[lat_out, lat_back[1:] if lane == 0.0 else lat_back]
    lon = np.r_[lon_out, lon_back[1:] if lane == 0.0 else lon_back]
    rows = _timed_rows(lat.tolist(), lon.tolist(), speed, spacing)
    return gpx([("Out and back", [rows])]), _track_length(lat, lon)


def _track_length(lat: np.ndarray, lon: np.ndarray) -> float:
    """Sum of the geodesic pieces between consecutive points (geographiclib) [m]."""
    return float(sum(GEODESIC.Inverse(lat[k], lon[k], lat[k + 1], lon[k + 1])["s12"]
                     for k in range(lat.size - 1)))


def drawn_spur(spur: float = 150.0) -> tuple[str, float]:
    """A route drawn without times: 1 km north as ten straight 100 m pieces, a dead end
    `spur` metres east drawn as one point and back to the junction, then 1 km east a point
    every 5 m. Returns the GPX text and the route's length (geographiclib) [m]."""
    straight = Leg(45.0, 7.0, 0.0, 1_000.0, 100.0)
    lat1, lon1, _ = straight.points()
    junction = straight.end()
    end_lat, end_lon = moved(*junction, 90.0, spur)
    dense = Leg(*junction, 90.0, 1_000.0, 5.0)
    lat2, lon2, _ = dense.points()
    lat = np.r_[lat1, end_lat, lat2]
    lon = np.r_[lon1, end_lon, lon2]
    rows = _timed_rows(lat.tolist(), lon.tolist(), None, 5.0)
    return gpx([("Drawn", [rows])]), _track_length(lat, lon)
