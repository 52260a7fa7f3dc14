"""Specification of pacing.course.geometry: geodesy, resampling, building a course (with its
elevation cleaned), corner radius, and bad tracks refused (the checks themselves:
tests/test_course_track_checks.py; the cleaning itself: tests/test_course_elevation.py;
segments: tests/test_course_segments.py)."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from pacing.course.elevation import (
    ElevationSmoothing,
    sustained_length,
    sustained_steep_pieces,
)
from pacing.course.geometry import (
    DEFAULT_STEP,
    STRAIGHT_ROAD_RADIUS,
    build_course,
    corner_radius,
    geodesic_pieces,
    resample_distance,
    synthetic_course,
)
from pacing.course.segments import split_by_grade
from pacing.errors import InputError
from pacing.notices import warning

GEODESIC = Geodesic.WGS84  # reference library: Karney (2013), J Geodesy 87:43, geographiclib


def local_track(east, north, origin=(45.0, 7.0)):
    """Positions [deg] of points given in metres east/north of `origin`, placed with
    geographiclib's direct geodesic (an azimuthal equidistant projection)."""
    latitude, longitude = [], []
    for x, y in zip(np.atleast_1d(east), np.atleast_1d(north), strict=True):
        point = GEODESIC.Direct(origin[0], origin[1], math.degrees(math.atan2(x, y)),
                                math.hypot(x, y))
        latitude.append(point["lat2"])
        longitude.append(point["lon2"])
    return np.array(latitude), np.array(longitude)


def meridian_track(distance, latitude0=45.0, longitude=7.0):
    """Points due north along a meridian at the given distances [m] (geographiclib Direct)."""
    latitude = [GEODESIC.Direct(latitude0, longitude, 0.0, float(d))["lat2"] for d in distance]
    return np.array(latitude), np.full(len(distance), longitude)


def hill(distance):
    """A smooth hill, flat at both ends: 100 m + 40 m Gaussian bump (sd 800 m) at 5 km."""
    return 100.0 + 40.0 * np.exp(-0.5 * ((np.asarray(distance) - 5000.0) / 800.0) ** 2)


# ----------------------------------------------------------------------------- geodesy

def test_one_degree_of_latitude_at_the_equator_on_wgs84():
    # geographiclib (Karney 2013): Inverse(0, 0, 1, 0) → s12 = 110574.3886 m
    reference = GEODESIC.Inverse(0.0, 0.0, 1.0, 0.0)["s12"]
    assert reference == pytest.approx(110574.3886, abs=1e-4)
    length, azimuth = geodesic_pieces([0.0, 1.0], [0.0, 0.0])
    assert length[0] == pytest.approx(110574.3886, abs=1e-4)
    assert azimuth[0] == pytest.approx(0.0, abs=1e-12)
    course = build_course([0.0, 1.0], [0.0, 0.0], [0.0, 0.0])
    assert course.total_distance == pytest.approx(110574.3886, abs=1e-4)


def test_piece_lengths_and_azimuths_match_geographiclib():
    rng = np.random.default_rng(7)
    latitude = rng.uniform(-80, 80, 200)
    longitude = rng.uniform(-180, 180, 200)
    length, azimuth = geodesic_pieces(latitude, longitude)
    for i in range(199):
        ref = GEODESIC.Inverse(latitude[i], longitude[i], latitude[i + 1], longitude[i + 1])
        assert length[i] == pytest.approx(ref["s12"], rel=1e-6)  # geographiclib, Karney 2013
        difference = (azimuth[i] - ref["azi1"] + 180.0) % 360.0 - 180.0
        assert abs(difference) < 1e-6
        assert 0.0 <= azimuth[i] < 360.0


def test_course_distance_and_headings_match_geographiclib_along_a_track():
    rng = np.random.default_rng(3)
    east = np.cumsum(rng.uniform(20, 80, 60))
    north = np.cumsum(rng.uniform(-40, 40, 60))
    latitude, longitude = local_track(east, north)
    course = build_course(latitude, longitude, np.zeros(60))
    reference = sum(GEODESIC.Inverse(latitude[i], longitude[i], latitude[i + 1],
                                     longitude[i + 1])["s12"] for i in range(59))
    assert course.total_distance == pytest.approx(reference, rel=1e-6)
    for i in range(0, course.heading.size, 17):
        ref = GEODESIC.Inverse(course.latitude[i], course.longitude[i],
                               course.latitude[i + 1], course.longitude[i + 1])["azi1"]
        assert abs((course.heading[i] - ref + 180.0) % 360.0 - 180.0) < 1e-6


def test_resampled_points_lie_on_the_track_at_their_distance():
    # A straight meridian: a point at distance d lies d metres north (geographiclib Direct).
    latitude, longitude = meridian_track([0.0, 1234.5])
    course = build_course(latitude, longitude, [0.0, 0.0])
    for i in (1, 50, 100):
        expected = GEODESIC.Direct(45.0, 7.0, 0.0, course.distance[i])["lat2"]
        assert course.latitude[i] == pytest.approx(expected, abs=1e-9)


def test_a_track_over_the_antimeridian_measures_like_the_same_track_elsewhere():
    latitude = np.array([10.0, 10.003, 10.001, 10.004])
    crossing = np.array([179.995, 179.9995, -179.998, -179.99])
    shifted = crossing - 180.0 + 360.0 * (crossing < 0)  # the same shape, 180° away, near 0°
    over = build_course(latitude, crossing, np.zeros(4))
    elsewhere = build_course(latitude, shifted, np.zeros(4))
    assert over.total_distance == pytest.approx(elsewhere.total_distance, rel=1e-9)
    assert over.total_distance < 5_000  # not the long way round the earth
    assert np.all(np.abs(over.longitude) <= 180.0)
    np.testing.assert_allclose(over.heading, elsewhere.heading, atol=1e-6)


# --------------------------------------------------------------------------- resampling

def test_points_are_a_uniform_step_apart_and_piece_arrays_are_one_shorter():
    latitude, longitude = meridian_track(np.linspace(0, 2345.0, 40))
    course = build_course(latitude, longitude, np.zeros(40), step=25.0)
    steps = np.diff(course.distance)
    np.testing.assert_allclose(steps[:-1], 25.0, rtol=1e-12)
    assert 0.1 * 25.0 <= steps[-1] <= 1.1 * 25.0
    assert course.distance[-1] == pytest.approx(2345.0, rel=1e-9)
    n = course.distance.size
    for name in ("latitude", "longitude", "elevation", "raw_elevation", "corner_radius"):
        assert getattr(course, name).shape == (n,)
    assert course.grade.shape == course.heading.shape == (n - 1,)
    assert DEFAULT_STEP == 10.0


def test_repeated_consecutive_points_are_dropped_silently():
    latitude, longitude = meridian_track([0.0, 500.0, 1000.0])
    elevation = np.array([10.0, 20.0, 15.0])
    once = build_course(latitude, longitude, elevation)
    twice = build_course(np.repeat(latitude, [1, 3, 2]), np.repeat(longitude, [1, 3, 2]),
                         np.repeat(elevation, [1, 3, 2]))
    np.testing.assert_allclose(twice.distance, once.distance)
    np.testing.assert_allclose(twice.elevation, once.elevation)
    assert twice.raw_ascent == once.raw_ascent == 10.0


def test_missing_elevations_at_some_points_are_interpolated_along_the_distance():
    latitude, longitude = meridian_track([0.0, 100.0, 300.0])
    course = build_course(latitude, longitude, [10.0, np.nan, 40.0],
                          smoothing=ElevationSmoothing(method="none"))
    assert course.raw_elevation[10] == pytest.approx(20.0)  # 100 m of 300 m → 10 + 30/3
    assert course.notices[0] == warning("elevation-points-missing", count=1, total=3)


def test_a_track_with_every_elevation_gives_no_warning():
    latitude, longitude = meridian_track([0.0, 100.0, 300.0])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        course = build_course(latitude, longitude, [10.0, 20.0, 40.0])
    assert [n.code for n in course.notices] == ["elevation-cleaned"]


# ------------------------------------------------------------------- a known profile

def test_a_synthetic_course_with_a_known_profile_is_recovered():
    # Flat 2 km, 3 km at 5 %, flat 1 km, 2 km at -4 %, flat 2 km; track points every 20 m.
    distance = np.arange(0.0, 10_000.0 + 1, 20.0)
    grade = np.select([distance < 2000, distance < 5000, distance < 6000, distance < 8000],
                      [0.0, 0.05, 0.0, -0.04], 0.0)
    elevation = 200.0 + np.concatenate([[0.0], np.cumsum(grade[:-1] * 20.0)])
    latitude, longitude = meridian_track(distance)
    course = build_course(latitude, longitude, elevation)
    assert course.total_distance == pytest.approx(10_000.0, rel=1e-9)
    assert course.ascent == pytest.approx(150.0, abs=0.5)
    assert course.descent == pytest.approx(80.0, abs=0.5)
    assert course.raw_ascent == pytest.approx(150.0, abs=1e-9)
    middle = lambda a, b: (course.distance[:-1] > a) & (course.distance[1:] < b)  # noqa: E731
    np.testing.assert_allclose(course.grade[middle(2300, 4700)], 0.05, atol=1e-6)
    np.testing.assert_allclose(course.grade[middle(6300, 7700)], -0.04, atol=1e-6)
    np.testing.assert_allclose(course.grade[middle(300, 1700)], 0.0, atol=1e-6)
    np.testing.assert_allclose(course.heading, 0.0, atol=1e-6)
    np.testing.assert_array_equal(course.corner_radius, STRAIGHT_ROAD_RADIUS)


@pytest.mark.parametrize(("start", "finish"), [(200.0, 800.0), (1000.0, 200.0)])
def test_a_straight_climb_or_descent_keeps_its_end_heights_and_ascent(start, finish):
    # Issue 2: "a known smooth profile passes through unchanged". 10 km at a constant +6 % or
    # -8 %, track points every 20 m: a symmetric smoothing kernel maps a straight line to itself
    # (common practice), and odd reflection at the ends continues the line beyond them.
    distance = np.arange(0.0, 10_000.0 + 1, 20.0)
    elevation = start + (finish - start) * distance / 10_000.0
    course = build_course(*meridian_track(distance), elevation)
    assert course.elevation[0] == pytest.approx(start, abs=0.1)
    assert course.elevation[-1] == pytest.approx(finish, abs=0.1)
    assert course.ascent == pytest.approx(max(finish - start, 0.0), abs=0.1)
    assert course.descent == pytest.approx(max(start - finish, 0.0), abs=0.1)
    assert np.max(np.abs(course.elevation - course.raw_elevation)) < 0.1
    np.testing.assert_allclose(course.grade, (finish - start) / 10_000.0, atol=1e-6)


def noisy_hill_track(seed, noise):
    """Track points every 7-13 m over a hill, elevation with white noise of sd `noise` [m]."""
    rng = np.random.default_rng(seed)
    raw_distance = np.cumsum(rng.uniform(7.0, 13.0, 1000))
    raw_distance -= raw_distance[0]
    latitude, longitude = meridian_track(raw_distance)
    return latitude, longitude, hill(raw_distance) + rng.normal(0.0, noise, raw_distance.size)


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_injected_noise_is_removed(seed):
    track = noisy_hill_track(seed, noise=0.5)
    course = build_course(*track)
    true_ascent = 40.0  # the hill's height; flat at both ends
    assert course.raw_ascent > 5 * true_ascent  # the noise alone climbs ~250 m
    excess_raw = course.raw_ascent - true_ascent
    assert true_ascent - 0.5 < course.ascent < true_ascent + 0.03 * excess_raw  # 97 % removed
    error = course.elevation - hill(course.distance)
    assert np.sqrt(np.mean(error**2)) < 0.2
    wider = build_course(*track, smoothing=ElevationSmoothing(window=400.0))
    assert wider.ascent == pytest.approx(true_ascent, rel=0.04)


# --------------------------------------------------------------------------- corners

def arc_track(radius, turn_degrees, leg=300.0, spacing=2.0):
    """East/north [m] of a straight leg, a circular bend turning left, and another leg."""
    first = np.column_stack([np.arange(0.0, leg, spacing), np.zeros(int(leg / spacing))])
    angle = np.linspace(-np.pi / 2, -np.pi / 2 + np.radians(turn_degrees),
                        max(3, int(np.radians(turn_degrees) * radius / spacing)))
    bend = np.column_stack([leg + radius * np.cos(angle), radius + radius * np.sin(angle)])
    heading = np.radians(turn_degrees)
    steps = np.arange(spacing, leg, spacing)[:, None]
    second = bend[-1] + steps * np.array([np.cos(heading), np.sin(heading)])
    return np.vstack([first, bend[1:], second])


@pytest.mark.parametrize("radius", [15.0, 25.0, 50.0, 120.0])
def test_corner_radius_of_a_circular_bend(radius):
    # Circumradius of points on a circle is the circle's radius (Euclid). Where the bend is
    # shorter than the 2 x 20 m span, the triangle reaches the straights and reads larger:
    # up to 15 % for a 15 m radius turning 120 deg (31 m of arc).
    points = arc_track(radius, 120.0)
    latitude, longitude = local_track(points[:, 0], points[:, 1])
    course = build_course(latitude, longitude, np.zeros(len(points)))
    assert 0.97 * radius <= course.corner_radius.min() <= 1.15 * radius


def test_straight_road_reads_as_straight_even_with_gps_jitter():
    rng = np.random.default_rng(5)
    east = np.arange(0.0, 3000.0, 5.0)
    north = rng.normal(0.0, 0.5, east.size)
    latitude, longitude = local_track(east, north)
    course = build_course(latitude, longitude, np.zeros(east.size))
    clean = build_course(*local_track(east, 0 * east), np.zeros(east.size))
    np.testing.assert_array_equal(clean.corner_radius, STRAIGHT_ROAD_RADIUS)
    assert np.median(course.corner_radius) == STRAIGHT_ROAD_RADIUS
    assert np.mean(course.corner_radius < 100.0) < 0.01


def test_corner_radius_is_capped_and_ends_are_straight():
    latitude, longitude = local_track(*arc_track(30.0, 90.0).T)
    radius = corner_radius(latitude, longitude, step=2.0)
    assert radius[0] == radius[-1] == STRAIGHT_ROAD_RADIUS
    assert np.all((radius > 0) & (radius <= STRAIGHT_ROAD_RADIUS))


# ------------------------------------------------------------------------- bad tracks

@pytest.mark.parametrize(("latitude", "longitude", "elevation", "message"), [
    ([], [], [], "no points"),
    ([45.0], [7.0], [1.0], "only one point"),
    ([45.0, 45.0, 45.0], [7.0, 7.0, 7.0], [1.0, 2.0, 3.0], "same place"),
    ([45.0, 91.0], [7.0, 7.0], [0.0, 0.0], "latitude out of range"),
    ([45.0, np.nan], [7.0, 7.0], [0.0, 0.0], "latitude out of range"),
    ([45.0, 45.1], [7.0, 181.0], [0.0, 0.0], "longitude out of range"),
    ([45.0, 45.1], [7.0, 7.0], [0.0], "same number of points"),
    ([45.0, 45.001], [7.0, 7.0], [0.0, 500.0], "absurd elevation jump"),
    ([45.0, 45.1], [7.0, 7.0], [0.0, -9999.0], "plausible range"),
    ([45.0, 45.1], [7.0, 7.0], [np.nan, np.nan], "no elevation"),
    ([45.0, 45.1], [7.0, 7.0], None, "no elevation"),
])
def test_bad_tracks_raise_one_line_input_errors(latitude, longitude, elevation, message):
    with pytest.raises(InputError, match=message) as error:
        build_course(latitude, longitude, elevation)
    assert "\n" not in str(error.value)


def test_synthetic_course_refuses_bad_arrays_with_input_error():
    with pytest.raises(InputError):
        synthetic_course([0.0, 0.0], [1.0, 1.0])


# --------------------------------------------------------------------------- properties

@st.composite
def tracks(draw):
    count = draw(st.integers(2, 40))
    steps = draw(st.lists(st.floats(0.0, 300.0), min_size=count - 1, max_size=count - 1))
    turns = draw(st.lists(st.floats(-180.0, 180.0), min_size=count - 1, max_size=count - 1))
    heading = np.radians(np.cumsum(turns))
    east = np.concatenate([[0.0], np.cumsum(np.array(steps) * np.sin(heading))])
    north = np.concatenate([[0.0], np.cumsum(np.array(steps) * np.cos(heading))])
    rises = draw(st.lists(st.floats(-0.35, 0.35), min_size=count - 1, max_size=count - 1))
    elevation = 4000.0 + np.concatenate([[0.0], np.cumsum(np.array(rises) * np.array(steps))])
    origin = (draw(st.floats(-70.0, 70.0)), draw(st.floats(-180.0, 180.0)))
    return east, north, elevation, origin


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(track=tracks(), window=st.sampled_from([0.0, 50.0, 150.0, 400.0]),
       max_grade=st.sampled_from([0.1, 0.25, 0.5]),
       method=st.sampled_from(["gaussian", "moving-average", "none"]),
       step=st.sampled_from([5.0, 10.0, 25.0]))
def test_random_valid_tracks_give_sound_courses(track, window, max_grade, method, step):
    east, north, elevation, origin = track
    latitude, longitude = local_track(east, north, origin)
    smoothing = ElevationSmoothing(window=window, max_grade=max_grade, method=method)
    try:
        course = build_course(latitude, longitude, elevation, step=step, smoothing=smoothing)
    except InputError as error:  # only a track with all points at one place is refused
        assert "same place" in str(error)
        return
    for name in ("distance", "latitude", "longitude", "elevation", "grade", "heading",
                 "corner_radius"):
        assert np.all(np.isfinite(getattr(course, name))), name
    assert np.all(course.piece_length > 0)
    # beyond the grade limit only over stretches steep for at least the sustained length
    beyond = np.abs(course.grade) > max_grade + 1e-12
    kept = sustained_steep_pieces(course.distance, course.elevation, max_grade,
                                  sustained_length(smoothing))
    assert not np.any(beyond & ~kept)
    assert course.ascent <= course.raw_ascent + 1e-6
    assert np.all((course.heading >= 0) & (course.heading < 360))
    assert np.all((course.corner_radius > 0) & (course.corner_radius <= STRAIGHT_ROAD_RADIUS))
    bounds = split_by_grade(course)
    assert bounds[0] == 0 and bounds[-1] == course.distance.size - 1
    assert np.all(np.diff(bounds) > 0)


def test_a_course_shorter_than_one_step_has_two_points():
    latitude, longitude = meridian_track([0.0, 4.0])
    course = build_course(latitude, longitude, [0.0, 0.2], step=10.0)
    np.testing.assert_allclose(course.distance, [0.0, 4.0], atol=1e-9)
    assert course.grade[0] == pytest.approx(0.05)


def test_resampling_keeps_no_sliver_piece_at_the_end():
    # by hand: the last piece is kept between 0.1 and 1.1 steps long
    assert resample_distance(30.5, 10.0).tolist() == [0.0, 10.0, 20.0, 30.5]
    assert resample_distance(32.0, 10.0).tolist() == [0.0, 10.0, 20.0, 30.0, 32.0]
    assert resample_distance(4.0, 10.0).tolist() == [0.0, 4.0]


def test_synthetic_course_follows_its_headings_and_keeps_its_elevation():
    # 1 km east then 1 km north; display positions on a sphere of 111 195 m per degree
    course = synthetic_course([0.0, 1000.0, 2000.0], [10.0, 30.0, 20.0], heading=[90.0, 0.0])
    east = 1000.0 / 111_195.0
    np.testing.assert_allclose(course.longitude, [0.0, east, east], atol=1e-12)
    np.testing.assert_allclose(course.latitude, [0.0, 0.0, 1000.0 / 111_195.0], atol=1e-12)
    np.testing.assert_allclose(course.grade, [0.02, -0.01])
    np.testing.assert_array_equal(course.elevation, course.raw_elevation)
    assert course.raw_ascent == course.ascent == 20.0
    assert course.smoothing is None
