"""Placing a race on its course (pacing.review.align): GNSS noise, two passes of one road, a
detour, a missed stretch, and no positions at all.

Recordings are made here: positions on the course's own flat map (pacing.course.geometry's
synthetic courses lie near 0° N 0° E, 111 195 m per degree, the mean Earth radius of IUGG,
common practice) plus Gaussian noise; consumer GNSS errors of a few metres are common practice.
"""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.review.align import align_by_distance, align_by_position, align_to_course
from pacing.review.along import along_course
from pacing.review.recording import make_race_recording

METRES_PER_DEGREE = 111_195.0


def straight_north(length=5000.0):
    distance = np.arange(0.0, length + 1.0, 10.0)
    return synthetic_course(distance, np.zeros(distance.size), heading=0.0)


def out_and_back(half=2000.0):
    distance = np.arange(0.0, 2 * half + 1.0, 10.0)
    heading = np.where(distance[:-1] < half, 90.0, 270.0)
    return synthetic_course(distance, np.zeros(distance.size), heading=heading)


def recording(time, north, east, speed, noise=0.0, seed=3, distance=None):
    rng = np.random.default_rng(seed)
    north = north + rng.normal(0.0, noise, north.size) if noise else north
    east = east + rng.normal(0.0, noise, east.size) if noise else east
    return make_race_recording(time, np.full(time.size, 250.0), speed=speed,
                               distance=distance, latitude=north / METRES_PER_DEGREE,
                               longitude=east / METRES_PER_DEGREE)


def test_gnss_noise_leaves_a_monotonic_course_distance_close_to_the_truth():
    course = straight_north()
    time = np.arange(0.0, 451.0)
    truth = 10.0 * time + 5.0 * np.sin(time / 30.0)  # speed varies between 9.8 and 10.2 m/s
    speed = np.gradient(truth, time)
    aligned = align_by_position(recording(time, truth, np.zeros(time.size), speed, noise=5.0),
                                course)
    error = aligned.course_distance - truth
    assert np.all(np.diff(aligned.course_distance) >= 0)
    assert np.sqrt(np.mean(error**2)) < 2.0  # 1.1 m measured; raw projections: about 5 m
    assert np.max(np.abs(error[5:-5])) < 6.0
    assert not aligned.off_course.any() and not aligned.notices


def test_the_way_back_on_the_same_road_is_the_second_half_of_the_course():
    course = out_and_back()
    time = np.arange(0.0, 401.0)
    truth = 10.0 * time
    east = np.where(truth < 2000.0, truth, 4000.0 - truth)
    aligned = align_by_position(recording(time, np.zeros(time.size), east,
                                          np.full(time.size, 10.0), noise=3.0), course)
    assert np.max(np.abs(aligned.course_distance - truth)) < 12.0
    assert aligned.course_distance[300] > 2900.0  # back towards the start, at 3 km


def test_a_detour_is_flagged_and_its_time_counted_where_the_rider_left():
    course = straight_north()
    time = np.arange(0.0, 461.0)
    along = 10.0 * np.minimum(time, 100.0) + 10.0 * np.maximum(time - 160.0, 0.0)
    east = np.where((time > 100.0) & (time < 160.0), 300.0, 0.0)  # 60 s on another road
    aligned = align_by_position(recording(time, along, east, np.full(time.size, 10.0),
                                          noise=3.0), course)
    codes = [n.code for n in aligned.notices]
    assert codes == ["review-detour"]
    detour = aligned.notices[0].values
    assert detour["duration_s"] == pytest.approx(60.0, abs=1.0)
    assert detour["distance_m"] == pytest.approx(1000.0, abs=10.0)
    assert aligned.off_course.sum() == 59
    assert np.all(np.diff(aligned.course_distance) >= 0)
    sums = along_course(recording(time, along, east, np.full(time.size, 10.0)), aligned,
                        course)
    # the minute off the course is counted at the point where the rider left it
    at = np.searchsorted(course.distance, [990.0, 1020.0])
    assert sums.time[at[1]] - sums.time[at[0]] == pytest.approx(63.0, abs=1.5)
    assert sums.time[-1] == pytest.approx(460.0, abs=1.0)


def test_a_missed_stretch_is_flagged_and_interpolated_in_time():
    course = straight_north()
    time = np.concatenate((np.arange(0.0, 101.0), np.arange(161.0, 451.0)))
    truth = 10.0 * time
    rec = recording(time, truth, np.zeros(time.size), np.full(time.size, 10.0), noise=3.0)
    aligned = align_by_position(rec, course)
    assert aligned.dropout.sum() == 1
    assert [n.code for n in aligned.notices] == ["review-dropout"]
    gap = aligned.notices[0].values
    assert gap["duration_s"] == 61.0
    assert gap["start_m"] == pytest.approx(1000.0, abs=10.0)
    assert gap["end_m"] == pytest.approx(1610.0, abs=10.0)
    sums = along_course(rec, aligned, course)
    middle = int(np.searchsorted(course.distance, 1300.0))
    assert sums.time[middle] == pytest.approx(130.0, abs=1.5)


def test_without_positions_the_recorded_distance_is_scaled_to_the_course():
    course = straight_north()
    time = np.arange(0.0, 501.0)
    ridden = 10.2 * time  # the wheel reads 2 % long
    rec = make_race_recording(time, np.full(time.size, 250.0), speed=np.full(time.size, 10.2),
                              distance=ridden)
    aligned = align_to_course(rec, course)
    assert aligned.method == "distance"
    assert aligned.course_distance[-1] == pytest.approx(5000.0)
    assert aligned.notices[0].code == "review-distance-scaled"
    assert aligned.notices[0].level == "note"
    assert aligned.notices[0].values["scale"] == pytest.approx(1 / 1.02)


def test_a_distance_far_from_the_course_length_is_warned_of():
    course = straight_north()
    time = np.arange(0.0, 501.0)
    rec = make_race_recording(time, np.full(time.size, 250.0), speed=np.full(time.size, 12.0))
    assert align_by_distance(rec, course).notices[0].level == "warning"


def test_a_ride_elsewhere_is_refused():
    course = straight_north()
    time = np.arange(0.0, 100.0)
    far = recording(time, 10.0 * time, np.full(time.size, 5000.0), np.full(time.size, 10.0))
    with pytest.raises(InputError, match="right course"):
        align_by_position(far, course)


def test_riding_on_after_the_finish_is_not_a_detour():
    course = straight_north(2000.0)
    time = np.arange(0.0, 261.0)
    along = 10.0 * time
    east = np.where(along > 2000.0, along - 2000.0, 0.0)  # turns right after the line
    north = np.minimum(along, 2000.0)
    rec = recording(time, north, east, np.full(time.size, 10.0))
    aligned = align_by_position(rec, course)
    assert not aligned.notices
    assert along_course(rec, aligned, course).finish_time == pytest.approx(200.0, abs=0.5)


def test_riding_to_the_start_is_neither_a_detour_nor_counted():
    course = straight_north(2000.0)
    time = np.arange(0.0, 301.0)
    along = 10.0 * time - 1000.0  # a kilometre to the start line from the south-west
    north = np.maximum(along, -300.0)
    east = np.where(along < -300.0, along + 300.0, 0.0)
    rec = recording(time, north, east, np.full(time.size, 10.0))
    aligned = align_by_position(rec, course)
    assert not aligned.notices
    assert aligned.course_distance[0] < -900.0
    assert along_course(rec, aligned, course).finish_time == pytest.approx(200.0, abs=0.5)


def test_samples_without_a_position_are_placed_by_the_distance_ridden():
    course = straight_north()
    time = np.arange(0.0, 401.0)
    truth = 10.0 * time
    rec = make_race_recording(time, np.full(time.size, 250.0), speed=np.full(time.size, 10.0),
                              latitude=np.where((time > 100) & (time < 160), np.nan,
                                                truth / METRES_PER_DEGREE),
                              longitude=np.zeros(time.size))
    assert rec.notes[0].code == "review-ride-positions-missing"
    assert rec.notes[0].values["count"] == 59
    aligned = align_by_position(rec, course)
    assert not aligned.notices
    assert np.max(np.abs(aligned.course_distance - truth)) < 1.0
