"""Benchmark of the course pipeline: GPX parsing (defusedxml + gpxpy) and building the Course
(geodesics, resampling, smoothing, corner radius). Prints times and the same in units of
bench_table's calibration workload (machine-independent); never asserts.

    .venv/bin/python bench/bench_course.py
"""

from __future__ import annotations

import time

import numpy as np
from bench_table import calibration_seconds

from pacing.course.geometry import build_course
from pacing.course.segments import split_by_grade
from pacing.io.gpx import DEFAULT_DEMO_ROUTE, load_course, read_track, write_gpx


def best_of(function, repeats=3):
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
    return min(times), result


def long_track(kilometres, spacing=10.0, seed=1):
    """A wandering track of `kilometres` with a point every `spacing` metres [deg, deg, m]."""
    rng = np.random.default_rng(seed)
    count = int(kilometres * 1000 / spacing)
    heading = np.cumsum(rng.normal(0, 0.05, count))
    east = np.cumsum(spacing * np.sin(heading))
    north = np.cumsum(spacing * np.cos(heading))
    latitude = 45.0 + north / 111_132.0
    longitude = 7.0 + east / (111_320.0 * np.cos(np.radians(45.0)))
    elevation = 300 + 200 * np.sin(np.arange(count) * spacing / 7000) + rng.normal(0, 0.5, count)
    return latitude, longitude, elevation


def main() -> None:
    unit = calibration_seconds()
    print(f"calibration {unit * 1000:.1f} ms (times below also as multiples of it: ×)")
    data = DEFAULT_DEMO_ROUTE.read_bytes()
    parse, track = best_of(lambda: read_track(data))
    build, course = best_of(lambda: build_course(track.latitude, track.longitude,
                                                 track.elevation))
    split, bounds = best_of(lambda: split_by_grade(course))
    print(f"demo 40 km loop: {track.latitude.size} GPX points -> {course.distance.size} points")
    print(f"  read GPX      {parse * 1000:7.1f} ms {parse / unit:6.2f}×")
    print(f"  build course  {build * 1000:7.1f} ms {build / unit:6.2f}×")
    print(f"  split by grade{split * 1000:7.1f} ms {split / unit:6.2f}× "
          f"({bounds.size - 1} segments)")
    for kilometres in (50, 100, 200):
        track = long_track(kilometres)
        latitude = track[0]
        seconds, big = best_of(lambda track=track: build_course(*track))
        print(f"build {kilometres:3d} km ({latitude.size} points): {seconds * 1000:7.1f} ms "
              f"{seconds / unit:6.2f}×, {seconds / big.distance.size * 1e6:.2f} us per course "
              f"point")
    latitude, longitude, elevation = long_track(200)
    big = build_course(latitude, longitude, elevation)
    text = write_gpx(big).encode()
    seconds, _ = best_of(lambda: load_course(text), repeats=1)
    print(f"load a 200 km GPX ({len(text) / 2**20:.1f} MiB): {seconds:.2f} s "
          f"{seconds / unit:.1f}× "
          f"(parse share {best_of(lambda: read_track(text), 1)[0] / seconds:.0%})")


if __name__ == "__main__":
    main()
