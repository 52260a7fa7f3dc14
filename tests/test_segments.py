"""Specification of pacing.segments: splitting a course by grade, every so many metres or at
given distances, and describing the segments."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import pacing.course
import pacing.segments
from pacing.course import synthetic_course
from pacing.errors import InputError
from pacing.segments import (
    describe_segments,
    piece_segment_index,
    split_at,
    split_by_grade,
    split_every,
)


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


def test_the_segment_names_stay_importable_from_pacing_course():
    for name in ("CLIMB_GRADE", "Segment", "grade_kind", "split_by_grade", "split_every",
                 "split_at", "piece_segment_index", "describe_segments"):
        assert getattr(pacing.course, name) is getattr(pacing.segments, name)
