"""What the rider did along the course (pacing.review.along): times, moving time and work read
at the course points, stops, and where the rider braked."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.review.align import align_by_distance
from pacing.review.along import along_course, slow_points
from pacing.review.recording import make_race_recording


def flat_km():
    distance = np.arange(0.0, 1001.0, 10.0)
    return synthetic_course(distance, np.zeros(distance.size))


def stopped_ride():
    """10 m/s to 400 m, braking 2.5 m/s² to a stop, 30 s still, off again at 10 m/s."""
    time = np.arange(0.0, 200.0)
    speed = np.full(time.size, 10.0)
    speed[40:44] = [7.5, 5.0, 2.5, 0.0]
    speed[44:74] = 0.0
    power = np.where(speed >= 9.9, 250.0, 0.0)
    return make_race_recording(time, power, speed=speed)


def test_times_are_first_passages_and_a_stop_counts_on_the_piece_after_it():
    course = flat_km()
    time = np.arange(0.0, 101.0)
    race = make_race_recording(time, np.full(101, 250.0), speed=np.full(101, 10.0))
    sums = along_course(race, align_by_distance(race, course), course)
    assert sums.time == pytest.approx(course.distance / 10.0)
    assert sums.piece_power() == pytest.approx(np.full(100, 250.0))
    assert sums.finish_time == pytest.approx(100.0)


def test_stopped_time_moving_time_and_work():
    course = flat_km()
    race = stopped_ride()
    aligned = align_by_distance(race, course)
    sums = along_course(race, aligned, course)
    assert sums.stopped_time[-1] == pytest.approx(30.0)  # steps with a mean below 1 m/s
    assert sums.time[-1] == pytest.approx(sums.moving_time[-1] + sums.stopped_time[-1])
    moving_power = sums.work[-1] / sums.moving_time[-1]
    assert 200.0 < moving_power < 250.0  # braking and starting steps carry less power


def test_the_stop_and_no_braking_beyond_it_are_slow_points():
    race = stopped_ride()
    slow = slow_points(race, align_by_distance(race, flat_km()))
    assert slow.stops == 1
    assert slow.speed.tolist() == [0.0]


def test_braking_without_stopping_is_a_slow_point_at_its_lowest_speed():
    time = np.arange(0.0, 100.0)
    speed = np.full(time.size, 10.0)
    speed[30:36] = [8.0, 6.0, 5.0, 6.0, 8.0, 9.5]
    power = np.where(np.arange(time.size) < 33, np.where(speed < 9.9, 0.0, 250.0), 250.0)
    race = make_race_recording(time, power, speed=speed)
    slow = slow_points(race, align_by_distance(race, flat_km()))
    assert slow.stops == 0
    assert slow.speed.tolist() == [5.0]
    assert slow.distance[0] == pytest.approx(race.distance[32] * 1000.0 / race.distance[-1])
