"""Specification of pacing.course.segments: splitting a course by grade, every so many metres or at
given distances, and describing the segments."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.course.geometry import DEFAULT_STEP, build_course, synthetic_course
from pacing.course.segments import (
    MAX_SEGMENT_LENGTH,
    TURN_ANGLE,
    TURN_SPAN,
    describe_segments,
    piece_segment_index,
    split_at,
    split_by_grade,
    split_every,
    turn_points,
)
from pacing.errors import InputError
from pacing.io.gpx import demo_route_paths, load_course


def profile_course():
    """Synthetic: 2 km flat, 1.5 km at 6 %, 1 km flat, 1 km at -5 %, 0.5 km flat (10 m)."""
    distance = np.arange(0.0, 6000.0 + 1, 10.0)
    grade = np.select([distance < 2000, distance < 3500, distance < 4500, distance < 5500],
                      [0.0, 0.06, 0.0, -0.05], 0.0)[:-1]
    elevation = np.concatenate([[50.0], 50.0 + np.cumsum(grade * 10.0)])
    return synthetic_course(distance, elevation, heading=90.0)


def test_split_by_grade_finds_the_climb_the_flats_and_the_descent():
    course = profile_course()
    bounds = split_by_grade(course)
    segments = describe_segments(course, bounds)
    assert [s.kind for s in segments] == ["flat", "climb", "flat", "descent", "flat"]
    np.testing.assert_allclose(course.distance[bounds], [0, 2000, 3500, 4500, 5500, 6000])
    climb = segments[1]
    assert climb.mean_grade == pytest.approx(0.06)
    assert climb.max_grade == pytest.approx(0.06)
    assert climb.ascent == pytest.approx(90.0)
    assert segments[3].max_grade == pytest.approx(-0.05)
    assert segments[3].descent == pytest.approx(50.0)
    assert all(s.mean_heading == pytest.approx(90.0) for s in segments)


def test_split_by_grade_merges_pieces_shorter_than_the_minimum():
    rng = np.random.default_rng(2)
    distance = np.arange(0.0, 8000.0 + 1, 10.0)
    grade = rng.choice([-0.06, 0.0, 0.06], size=distance.size - 1)
    course = synthetic_course(distance, np.concatenate([[0.0], np.cumsum(grade * 10.0)]))
    bounds = split_by_grade(course, min_length=400.0)
    assert bounds[0] == 0 and bounds[-1] == distance.size - 1
    assert np.all(np.diff(course.distance[bounds]) >= 400.0)


def test_split_every_and_split_at():
    course = profile_course()
    bounds = split_every(course, 1000.0)
    np.testing.assert_allclose(course.distance[bounds], np.arange(0, 6001, 1000))
    bounds = split_every(course, 2500.0)
    np.testing.assert_allclose(course.distance[bounds], [0, 2500, 5000, 6000])
    bounds = split_at(course, [4004.0, 1000.0, 1000.0, 0.0, 6000.0])
    np.testing.assert_allclose(course.distance[bounds], [0, 1000, 4000, 6000])
    with pytest.raises(InputError, match="outside the course"):
        split_at(course, [7000.0])
    with pytest.raises(InputError, match="segment length"):
        split_every(course, 0.0)
    with pytest.raises(InputError, match="segment length"):
        split_every(course, 1.0)


def test_piece_segment_index_and_segment_sums():
    course = profile_course()
    bounds = split_every(course, 1500.0)
    index = piece_segment_index(bounds)
    assert index.shape == course.grade.shape
    assert index[0] == 0 and index[-1] == bounds.size - 2
    segments = describe_segments(course, bounds)
    assert sum(s.length for s in segments) == pytest.approx(course.total_distance)
    assert sum(s.ascent for s in segments) == pytest.approx(course.ascent)
    assert sum(s.descent for s in segments) == pytest.approx(course.descent)
    assert [s.index for s in segments] == list(range(len(segments)))
    with pytest.raises(InputError, match="bounds"):
        describe_segments(course, np.array([0, 5, 3, course.distance.size - 1]))


@settings(max_examples=60, deadline=None)
@given(marks=st.lists(st.floats(0.0, 6000.0), max_size=12),
       length=st.floats(10.0, 10_000.0))
def test_any_split_gives_valid_bounds(marks, length):
    course = profile_course()
    for bounds in (split_at(course, marks), split_every(course, length)):
        assert bounds[0] == 0 and bounds[-1] == course.distance.size - 1
        assert np.all(np.diff(bounds) > 0)
        segments = describe_segments(course, bounds)
        assert sum(s.length for s in segments) == pytest.approx(course.total_distance)


# ------------------------------------------------------------- turns and a longest segment

def out_and_back(leg=10_000.0, step=10.0):
    """Synthetic: `leg` m due east, then back due west, flat (10 m steps)."""
    distance = np.arange(0.0, 2 * leg + 1, step)
    heading = np.where(distance[:-1] < leg, 90.0, 270.0)
    return synthetic_course(distance, np.full(distance.size, 20.0), heading=heading)


def test_an_out_and_back_is_split_at_its_turnaround():
    # The wind is a headwind one way and a tailwind the other (common practice: the way out and
    # the way back are paced apart), so the two legs must not share a segment.
    course = out_and_back()
    turnaround = int(np.flatnonzero(course.distance == 10_000.0)[0])
    np.testing.assert_array_equal(turn_points(course), [turnaround])
    bounds = split_by_grade(course)
    assert turnaround in bounds
    for segment in describe_segments(course, bounds):
        assert segment.mean_heading == pytest.approx(90.0 if segment.end <= 10_000.0 else 270.0)
        assert segment.kind == "flat"


def test_a_turnaround_is_found_through_gps_jitter():
    # 5 km north and back along a meridian with 1.5 m position noise (sd), built from GPS-like
    # track points every 8 m: the cut is within 30 m of the true turnaround.
    rng = np.random.default_rng(4)
    along = np.arange(0.0, 10_000.0 + 1, 8.0)
    north = np.where(along <= 5000.0, along, 10_000.0 - along) + rng.normal(0, 1.5, along.size)
    east = np.where(along <= 5000.0, 0.0, 12.0) + rng.normal(0, 1.5, along.size)
    latitude = 45.0 + north / 111_132.0
    longitude = 7.0 + east / (111_320.0 * np.cos(np.radians(45.0)))
    course = build_course(latitude, longitude, np.full(along.size, 300.0))
    turns = turn_points(course)
    assert turns.size == 1
    assert abs(course.distance[turns[0]] - course.total_distance / 2) < 30.0


def test_ordinary_corners_and_zigzags_do_not_cut_the_course():
    # A right-angle corner (90 deg < TURN_ANGLE) and a zigzag of 100 m legs (the road keeps no
    # direction over TURN_SPAN) leave a flat course in one piece.
    distance = np.arange(0.0, 1600.0 + 1, 10.0)
    corner = synthetic_course(distance, np.zeros(distance.size),
                              heading=np.where(distance[:-1] < 800.0, 0.0, 90.0))
    assert turn_points(corner).size == 0
    zigzag = synthetic_course(distance, np.zeros(distance.size),
                              heading=np.where((distance[:-1] // 100) % 2 == 0, 10.0, 190.0))
    assert turn_points(zigzag).size == 0
    np.testing.assert_array_equal(split_by_grade(zigzag), [0, distance.size - 1])
    assert TURN_ANGLE == 120.0 and TURN_SPAN == 500.0


def test_a_long_climb_is_split_evenly_into_parts_of_at_most_the_longest_length():
    distance = np.arange(0.0, 10_000.0 + 1, 10.0)
    climb = synthetic_course(distance, 200.0 + 0.06 * distance, heading=90.0)
    assert MAX_SEGMENT_LENGTH == 2000.0
    np.testing.assert_allclose(climb.distance[split_by_grade(climb)], np.arange(0, 10_001, 2000))
    bounds = split_by_grade(climb, max_length=3000.0)
    np.testing.assert_allclose(climb.distance[bounds], [0, 2500, 5000, 7500, 10_000])
    assert all(s.kind == "climb" for s in describe_segments(climb, bounds))
    np.testing.assert_array_equal(split_by_grade(climb, max_length=math.inf, turn_angle=None),
                                  [0, distance.size - 1])
    # The minimum length wins: 1 km with both limits at 300 m makes three parts of 333 m.
    short = synthetic_course(distance[:101], 0.06 * distance[:101])
    bounds = split_by_grade(short, min_length=300.0, max_length=300.0)
    assert np.all(np.diff(short.distance[bounds]) >= 300.0 - 5.0) and bounds.size == 4


@pytest.mark.parametrize(("options", "message"), [
    ({"max_length": 100.0}, "maximum segment length"),
    ({"max_length": float("nan")}, "maximum segment length"),
    ({"turn_angle": 0.0}, "turn angle"),
    ({"turn_angle": 200.0}, "turn angle"),
])
def test_bad_split_options_are_refused(options, message):
    with pytest.raises(InputError, match=message):
        split_by_grade(profile_course(), **options)


@settings(max_examples=40, deadline=None)
@given(grades=st.lists(st.sampled_from([-0.08, -0.03, 0.0, 0.01, 0.04, 0.09]), min_size=2,
                       max_size=30),
       turns=st.lists(st.sampled_from([0.0, 30.0, 90.0, 180.0]), min_size=2, max_size=30),
       max_length=st.sampled_from([600.0, 2000.0, math.inf]))
def test_automatic_segments_respect_the_shortest_and_longest_length(grades, turns, max_length):
    # Legs of 400 m, each with its own grade and a turn at its start.
    step, leg = 10.0, 400.0
    count = min(len(grades), len(turns))
    distance = np.arange(0.0, count * leg + 1, step)
    which = np.minimum((distance[:-1] // leg).astype(int), count - 1)
    grade = np.array(grades[:count])[which]
    heading = np.cumsum(turns[:count])[which] % 360.0
    course = synthetic_course(distance, np.concatenate([[0.0], np.cumsum(grade * step)]),
                              heading=heading)
    bounds = split_by_grade(course, min_length=300.0, max_length=max_length)
    assert bounds[0] == 0 and bounds[-1] == distance.size - 1 and np.all(np.diff(bounds) > 0)
    lengths = np.diff(course.distance[bounds])
    assert np.all(lengths >= 300.0 - step / 2)
    assert np.all(lengths <= max_length + step / 2)


def test_the_mean_heading_is_a_circular_mean():
    # Pieces heading 350 deg and 10 deg average to north (0 deg), not south (the arithmetic
    # mean, 180 deg); a length-weighted mean of unit vectors (common practice).
    distance = np.arange(0.0, 1000.0 + 1, 10.0)
    course = synthetic_course(distance, np.zeros(distance.size),
                              heading=np.where(np.arange(100) % 2 == 0, 350.0, 10.0))
    (segment,) = describe_segments(course, np.array([0, 100]))
    assert abs((segment.mean_heading + 180.0) % 360.0 - 180.0) < 1e-9


def test_the_demo_courses_get_segments_that_show_what_pacing_is_worth():
    # The windy out-and-back is cut at its turnaround (near half way), the 10 km climb is no
    # longer one segment, and no demo segment is longer than MAX_SEGMENT_LENGTH.
    courses = {stem: load_course(path) for stem, path in demo_route_paths().items()}
    for stem, course in courses.items():
        bounds = split_by_grade(course)
        lengths = np.diff(course.distance[bounds])
        assert np.all(lengths <= MAX_SEGMENT_LENGTH + DEFAULT_STEP), stem
        if "out_and_back" in stem:
            middle = np.abs(course.distance[bounds] - course.total_distance / 2).min()
            assert middle < 100.0
            headings = [s.mean_heading for s in describe_segments(course, bounds)]
            assert abs((headings[0] - headings[-1]) % 360.0 - 180.0) < 45.0
        if "climb" in stem:
            assert bounds.size - 1 >= 5
