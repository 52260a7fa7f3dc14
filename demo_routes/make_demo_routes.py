"""Generate the demo courses: invented roads on the fictional Isle of Quillmoor.

    python demo_routes/make_demo_routes.py        (or: make demo-routes)

Every name and place here is made up; the island sits in open ocean (about 47° N, 31° W) so no
course lies over a real town. Each course is drawn as straight roads joined by circular bends,
given an elevation profile, then "recorded": points at an uneven spacing, with GPS-like noise
(slowly wandering position error of about 2 m plus jitter; elevation error that drifts by a few
metres plus jitter, rounded to 0.1 m), the way a head unit records a ride. The random numbers
come from a fixed seed, so running the script again writes the same files.
"""

from __future__ import annotations

import math
from pathlib import Path

import gpxpy.gpx
import numpy as np
from pyproj import Geod

HERE = Path(__file__).resolve().parent
SEED = 20260
ORIGIN = (47.05, -31.40)  # latitude, longitude [deg] of the island's centre (open ocean)
WGS84 = Geod(ellps="WGS84")


# ------------------------------------------------------------------------------ geometry

def filleted_path(vertices, radius, closed=False, spacing=1.0):
    """Dense points [m] (east, north) along straight legs joined by circular bends.

    vertices : corner points of the road [m]; radius : bend radius at each inner vertex [m]
    (scalar or one per vertex). With closed=True the path starts and ends at the middle of the
    first leg and goes round every vertex.
    """
    vertices = np.asarray(vertices, dtype=float)
    radii = np.broadcast_to(np.asarray(radius, dtype=float), (len(vertices),))
    if closed:
        middle = (vertices[0] + vertices[1]) / 2
        vertices = np.vstack([middle, vertices[1:], vertices[:1], middle])
        radii = np.concatenate([[0.0], radii[1:], radii[:1], [0.0]])
    out = [vertices[0]]
    current = vertices[0]
    for k in range(1, len(vertices) - 1):
        before, corner, after = vertices[k - 1], vertices[k], vertices[k + 1]
        d1 = (corner - before) / np.linalg.norm(corner - before)
        d2 = (after - corner) / np.linalg.norm(after - corner)
        turn = math.atan2(d1[0] * d2[1] - d1[1] * d2[0], float(d1 @ d2))
        tangent = radii[k] * math.tan(abs(turn) / 2)
        entry, leave = corner - tangent * d1, corner + tangent * d2
        out.append(_line(current, entry, spacing))
        left = np.array([-d1[1], d1[0]])
        centre = entry + math.copysign(radii[k], turn) * left
        start_angle = math.atan2(*(entry - centre)[::-1])
        count = max(2, int(abs(turn) * radii[k] / spacing) + 1)
        angle = start_angle + np.linspace(0, turn, count)
        out.append(centre + radii[k] * np.column_stack([np.cos(angle), np.sin(angle)]))
        current = leave
    out.append(_line(current, vertices[-1], spacing))
    path = np.vstack([np.atleast_2d(p) for p in out])
    keep = np.concatenate([[True], np.linalg.norm(np.diff(path, axis=0), axis=1) > 1e-9])
    return path[keep]


def _line(a, b, spacing):
    count = max(2, int(np.linalg.norm(b - a) / spacing) + 1)
    return a + np.linspace(0, 1, count)[:, None] * (b - a)


def path_length(path):
    return np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(path, axis=0), axis=1))])


def scaled_path(vertices, radius, target, closed=False):
    """filleted_path with the vertices scaled so the path is `target` metres long."""
    scale = 1.0
    for _ in range(4):
        path = filleted_path(np.asarray(vertices) * scale, radius, closed)
        scale *= target / path_length(path)[-1]
    return filleted_path(np.asarray(vertices) * scale, radius, closed)


def out_and_back(vertices, radius, turn_radius=4.0):
    """An out-and-back road: out on the right-hand side, a U-turn, back 2·turn_radius to the
    left of the outbound line (right-hand traffic). Returns the path and, for each point, the
    distance along the outbound road it stands beside [m]."""
    out = filleted_path(vertices, radius)
    along = path_length(out)
    direction = np.gradient(out, axis=0)
    direction /= np.linalg.norm(direction, axis=1)[:, None]
    left = np.column_stack([-direction[:, 1], direction[:, 0]])
    back = (out + 2 * turn_radius * left)[::-1]
    centre = out[-1] + turn_radius * left[-1]
    start = math.atan2(*(out[-1] - centre)[::-1])
    angle = start + np.linspace(0, math.pi, 14)[1:-1]
    turn = centre + turn_radius * np.column_stack([np.cos(angle), np.sin(angle)])
    path = np.vstack([out, turn, back])
    beside = np.concatenate([along, np.full(len(turn), along[-1]), along[::-1]])
    return path, beside


# ------------------------------------------------------------------------------ profiles

def bumps(distance, hills, base):
    """Elevation [m]: base plus Gaussian hills (centre [m], height [m], half-width [m])."""
    z = np.full_like(distance, base, dtype=float)
    for centre, height, width in hills:
        z += height * np.exp(-0.5 * ((distance - centre) / width) ** 2)
    return z


def from_grades(distance, knots, base):
    """Elevation [m] integrating a grade that varies linearly between (distance, grade) knots."""
    grade = np.interp(distance, [k[0] for k in knots], [k[1] for k in knots])
    step = np.diff(distance)
    return base + np.concatenate([[0.0], np.cumsum(step * (grade[1:] + grade[:-1]) / 2)])


# ------------------------------------------------------------------------------ recording

def wander(rng, count, deviation, correlation_points):
    """Slowly wandering noise (AR(1)) with the given standard deviation [m]."""
    keep = math.exp(-1.0 / correlation_points)
    kick = rng.normal(0.0, deviation * math.sqrt(1 - keep**2), count)
    value = np.empty(count)
    value[0] = rng.normal(0.0, deviation)
    for i in range(1, count):
        value[i] = keep * value[i - 1] + kick[i]
    return value


def record(rng, path, elevation, spacing, jitter=0.6):
    """Sample the clean road every ~spacing metres (±30 %) and add GPS-like noise.

    Position: an error wandering over ~350 m of road (standard deviation 1.8 m per axis) plus
    `jitter` [m]. Elevation: a drift over ~2 km (1.5 m) plus 0.5 m jitter, rounded to 0.1 m.
    Returns east, north [m] and elevation [m] of the recorded points.
    """
    along = path_length(path)
    gaps = spacing * rng.uniform(0.7, 1.3, int(along[-1] / spacing * 1.5) + 10)
    marks = np.concatenate([[0.0], np.cumsum(gaps)])
    marks = np.append(marks[marks < along[-1]], along[-1])
    east = np.interp(marks, along, path[:, 0])
    north = np.interp(marks, along, path[:, 1])
    height = np.interp(marks, along, elevation)
    n = marks.size
    east = east + wander(rng, n, 1.8, 350 / spacing) + rng.normal(0, jitter, n)
    north = north + wander(rng, n, 1.8, 350 / spacing) + rng.normal(0, jitter, n)
    height = height + wander(rng, n, 1.5, 2000 / spacing) + rng.normal(0, 0.5, n)
    return east, north, np.round(height, 1)


def to_lat_lon(east, north):
    """Local east/north [m] around ORIGIN → latitude, longitude [deg] (azimuthal equidistant,
    via geodesics from the origin)."""
    azimuth = np.degrees(np.arctan2(east, north))
    distance = np.hypot(east, north)
    lon, lat, _ = WGS84.fwd(np.full(east.shape, ORIGIN[1]), np.full(east.shape, ORIGIN[0]),
                            azimuth, distance)
    return np.asarray(lat), np.asarray(lon)


def write(filename, title, description, east, north, height, offset=(0.0, 0.0)):
    lat, lon = to_lat_lon(east + offset[0], north + offset[1])
    document = gpxpy.gpx.GPX()
    document.creator = "pacing demo_routes/make_demo_routes.py"
    document.name = title
    document.description = description
    track = gpxpy.gpx.GPXTrack(name=title, description=description)
    segment = gpxpy.gpx.GPXTrackSegment()
    for la, lo, h in zip(lat, lon, height, strict=True):
        segment.points.append(gpxpy.gpx.GPXTrackPoint(round(float(la), 6), round(float(lo), 6),
                                                      elevation=float(h)))
    track.segments.append(segment)
    document.tracks.append(track)
    (HERE / filename).write_text(document.to_xml(version="1.1"), encoding="utf-8")
    return HERE / filename


# ------------------------------------------------------------------------------ the courses

FICTION = "Invented course on the fictional Isle of Quillmoor (not a real place or event). "


def hill_loop(rng):
    """Corravey hill loop: a hilly ~40 km time-trial loop, start and finish at one place."""
    vertices = [(0, 0), (2.1, 0.4), (4.0, 1.9), (5.6, 1.6), (7.4, 3.0), (8.2, 5.2), (7.0, 6.9),
                (5.1, 7.6), (3.3, 7.0), (1.6, 7.8), (-0.4, 6.6), (-1.2, 4.5), (-0.6, 2.4)]
    radii = [25, 25, 40, 18, 30, 60, 22, 35, 15, 30, 45, 20, 25]
    path = scaled_path(np.array(vertices) * 1000.0, radii, 40_000.0, closed=True)
    distance = path_length(path)
    hills = [(4_500, 55, 800), (11_000, 120, 1_400), (17_500, 40, 500), (24_000, 150, 1_900),
             (31_000, 70, 800), (36_500, 35, 450)]
    elevation = bumps(distance, hills, 85.0)
    elevation += 85.0 * (1 - np.cos(2 * np.pi * distance / distance[-1])) / 2 * 0.4
    return write("01_corravey_hill_loop_40k.gpx", "Corravey hill loop",
                 FICTION + "Hilly time-trial loop, about 40 km.",
                 *record(rng, path, elevation, 14.0), offset=(-6_000.0, -5_000.0))


def dyke_out_and_back(rng):
    """Skelmarsh dyke: a flat ~20 km out-and-back along an exposed sea wall."""
    vertices = np.array([(0, 0), (1.6, 1.1), (3.9, 2.2), (6.1, 4.6), (8.0, 5.3),
                         (9.55, 6.55)]) * 850.0
    path, beside = out_and_back(vertices, [0, 120, 80, 150, 60, 0])
    bridge = 5.5 * np.exp(-0.5 * ((beside - 4_300) / 120) ** 2)
    elevation = 4.0 + 0.8 * np.sin(beside / 900.0) + bridge
    return write("02_skelmarsh_dyke_out_and_back_20k.gpx", "Skelmarsh dyke out-and-back",
                 FICTION + "Flat out-and-back on a sea wall open to the wind, about 20 km.",
                 *record(rng, path, elevation, 14.0), offset=(9_000.0, -14_000.0))


def pass_climb(rng):
    """Tarnwhistle Pass: a ~10 km mountain climb with hairpin bends, point to point."""
    vertices = [(0, 0), (900, 700), (1_700, 1_300), (2_300, 1_500), (1_750, 1_850),
                (2_500, 2_050), (1_900, 2_420), (2_650, 2_650), (2_100, 3_000), (2_900, 3_200),
                (3_600, 4_100), (3_300, 4_900), (4_000, 5_600), (4_300, 6_100)]
    radii = [0, 60, 40, 14, 12, 12, 11, 12, 13, 35, 50, 30, 0, 0]
    path = scaled_path(vertices, radii, 10_000.0)
    distance = path_length(path)
    knots = [(0, 0.035), (1_000, 0.05), (2_500, 0.075), (3_500, 0.065), (4_500, 0.09),
             (5_200, 0.105), (6_000, 0.08), (7_500, 0.07), (8_500, 0.095), (9_300, 0.06),
             (10_000, 0.04)]
    elevation = from_grades(distance, knots, 380.0)
    return write("03_tarnwhistle_pass_climb_10k.gpx", "Tarnwhistle Pass climb",
                 FICTION + "Mountain climb with hairpin bends, about 10 km.",
                 *record(rng, path, elevation, 9.0), offset=(-15_000.0, 6_000.0))


def town_half_marathon(rng):
    """Larchwick half marathon: a hilly 21.1 km running loop through an invented town."""
    vertices = [(0, 0), (1.2, 0.0), (1.2, 0.9), (2.4, 1.0), (3.1, 2.2), (2.3, 3.3), (2.9, 4.2),
                (1.6, 4.6), (0.9, 3.6), (-0.3, 4.1), (-1.4, 3.2), (-0.9, 2.1), (-2.0, 1.4),
                (-1.5, 0.3)]
    radii = [12, 10, 12, 15, 25, 12, 18, 10, 15, 20, 12, 15, 20, 10]
    path = scaled_path(np.array(vertices) * 1000.0, radii, 21_097.5, closed=True)
    distance = path_length(path)
    hills = [(3_000, 28, 400), (6_500, 45, 700), (10_800, 22, 300), (14_000, 55, 900),
             (18_200, 30, 450)]
    elevation = bumps(distance, hills, 38.0)
    return write("04_larchwick_half_marathon.gpx", "Larchwick half marathon",
                 FICTION + "Hilly running course through town, 21.1 km.",
                 *record(rng, path, elevation, 8.0, jitter=0.25), offset=(3_000.0, 12_000.0))


def main() -> None:
    rng = np.random.default_rng(SEED)
    for make in (hill_loop, dyke_out_and_back, pass_climb, town_half_marathon):
        path = make(rng)
        print(f"wrote {path.relative_to(HERE.parent)} ({path.stat().st_size // 1024} KiB)")


if __name__ == "__main__":
    main()
