"""Small invented courses, airs and independent forward models shared by several test modules
(made in code, nothing committed)."""

from __future__ import annotations

import math
from functools import lru_cache
from types import SimpleNamespace

import gpxpy.gpx
import numpy as np
from scipy import optimize

from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.physics.cycling import MARTIN_1998
from pacing.weather.conditions import CourseAir, still_air


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


@lru_cache
def atkinson_hills():
    """Atkinson et al. 2007 course (i): 10 km of alternating 1 km at +10 % and −10 %
    (grades as in the abstract [read])."""
    distance = np.arange(0.0, 10000.0 + 5.0, 10.0)
    section = np.minimum(distance // 1000, 9)
    into = distance - 1000.0 * section
    elevation = np.where(section % 2 == 0, 0.1 * into, 100.0 - 0.1 * into)
    course = synthetic_course(distance, elevation)
    return course, np.arange(0, distance.size, 100), still_air(course, 1.2)


@lru_cache
def atkinson_winds():
    """Atkinson et al. 2007 course (ii): 40 km flat, alternating 5 km into a 4.4 m/s headwind
    and with a 4.4 m/s tailwind (abstract [read])."""
    distance = np.arange(0.0, 40000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance))
    middle = 0.5 * (distance[:-1] + distance[1:])
    headwind = np.where((middle // 5000) % 2 == 0, 4.4, -4.4)
    pieces = distance.size - 1
    air = CourseAir(np.full(pieces, 1.2), headwind, np.zeros(pieces))
    return course, np.arange(0, distance.size, 500), air


@lru_cache
def random_hills_and_winds(seed: int):
    rng = np.random.default_rng(seed)
    distance = np.arange(0.0, 6000.0 + 5.0, 20.0)
    section = np.minimum((distance[:-1] // 500).astype(int), 11)
    grade = rng.uniform(-0.08, 0.10, 12)[section]
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * 20.0)])
    pieces = distance.size - 1
    air = CourseAir(np.full(pieces, 1.15), rng.uniform(-5.0, 5.0, 12)[section],
                    rng.uniform(-3.0, 3.0, 12)[section])
    return course, np.arange(0, distance.size, 25), air


def still(course, density=1.2, headwind=0.0, crosswind=0.0):
    """A CourseAir-like object: the same air on every piece."""
    pieces = course.distance.size - 1
    return SimpleNamespace(density=np.full(pieces, density),
                           headwind=np.full(pieces, float(headwind)),
                           crosswind=np.full(pieces, float(crosswind)))


def hilly_course(length=5000.0, step=10.0):
    """Rolling hills up to ±10 %, a heading that turns, for whole-course checks."""
    distance = np.arange(0.0, length + step / 2, step)
    middle = distance[:-1] + step / 2
    grade = 0.08 * np.sin(middle / 600.0) + 0.02 * np.sin(middle / 97.0)
    elevation = np.concatenate([[0.0], np.cumsum(grade * step)])
    heading = (middle / 20.0) % 360.0
    return synthetic_course(distance, elevation, heading)


def windy_air(course, speed=3.0, wind_from=200.0):
    relative = np.radians(wind_from - course.heading)
    return SimpleNamespace(density=np.full(course.heading.size, 1.15),
                           headwind=speed * np.cos(relative),
                           crosswind=speed * np.sin(relative))


def flat_course(length: float = 10_000.0, step: float = 10.0):
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, np.zeros_like(distance), heading=0.0)


def six_km_hill(step: float = 10.0):
    """6 km heading east: 2 km flat, 2 km at 5 %, 2 km down at 4 %, pieces of `step` m."""
    distance = np.arange(0.0, 6000.0 + step / 2, step)
    elevation = np.interp(distance, [0, 2000, 4000, 6000], [100, 100, 200, 120])
    return synthetic_course(distance, elevation, heading=90.0)


def martin_steady_speed(power, drag_area, mass, density,
                        rolling=MARTIN_1998["rolling_coefficient"]):
    """Independent steady speed on flat ground in still air: scipy brentq on
    η·P = v·(½ρ(CdA + F_w)v² + Crr·m·g + a + b·v) (Martin et al. 1998, constants of its
    Table; docs/references.md, "Cycling power balance (Martin et al. 1998)")."""
    m = MARTIN_1998

    def balance(v):
        return v * (0.5 * density * (drag_area + m["wheel_drag_area"]) * v**2
                    + rolling * mass * STANDARD_GRAVITY + m["bearing_force_constant"]
                    + m["bearing_force_per_speed"] * v) - m["drivetrain_efficiency"] * power

    return optimize.brentq(balance, 0.5, 40.0, xtol=1e-14)
