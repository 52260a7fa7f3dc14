"""Small invented courses shared by several test modules (made in code, nothing committed)."""

from __future__ import annotations

import math

import gpxpy.gpx
import numpy as np


def hill_road_gpx(length_km: float = 6.0, climb_m: float = 60.0) -> bytes:
    """A made-up road heading north-east with one hill, points every ~20 m (GPX 1.1)."""
    gpx = gpxpy.gpx.GPX()
    track = gpxpy.gpx.GPXTrack(name="test hill road")
    segment = gpxpy.gpx.GPXTrackSegment()
    count = int(length_km * 50) + 1
    for i in range(count):
        along = i / (count - 1)
        metres = along * length_km * 1000.0
        lat = 47.0 + metres * math.cos(math.radians(40)) / 111_195.0
        lon = 8.0 + metres * math.sin(math.radians(40)) / (111_195.0 * math.cos(math.radians(47)))
        ele = 400.0 + climb_m * math.sin(math.pi * along) ** 2
        segment.points.append(gpxpy.gpx.GPXTrackPoint(lat, lon, elevation=ele))
    track.segments.append(segment)
    gpx.tracks.append(track)
    return gpx.to_xml(version="1.1").encode("utf-8")


def north_hill_gpx() -> str:
    """A 6 km course heading north: flat, a 5 % climb, a descent (GPX 1.1 text)."""
    metres_per_degree = 111_195.0
    distance = np.arange(0.0, 6001.0, 25.0)
    elevation = np.interp(distance, [0, 2000, 4000, 6000], [100, 100, 200, 120])
    points = "\n".join(
        f'<trkpt lat="{45.0 + d / metres_per_degree:.7f}" lon="6.0000000">'
        f"<ele>{e:.2f}</ele></trkpt>"
        for d, e in zip(distance, elevation, strict=True))
    return ('<?xml version="1.0" encoding="UTF-8"?>\n'
            '<gpx version="1.1" creator="tests" xmlns="http://www.topografix.com/GPX/1/1">'
            f"<trk><name>test hill</name><trkseg>\n{points}\n</trkseg></trk></gpx>\n")
