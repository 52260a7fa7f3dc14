"""The race (pacing.team.race) and the riders (pacing.team.riders): pieces, rules, checks."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.team.race import merged_pieces, race_on_road, race_on_track
from pacing.team.riders import Team, TeamRider
from pacing.weather.conditions import Conditions, air_along_course


def test_a_velodrome_has_eight_pieces_a_lap_and_the_race_distance():
    race = race_on_track(4000.0, 250.0, 1.2, counts_rider=3)
    assert race.piece_length.size == 128 and race.distance == pytest.approx(4000.0)
    assert np.all(race.grade == 0) and np.all(race.headwind == 0)
    assert race.swing_extra_distance == 3.0 and race.lap_length == 250.0


def test_road_pieces_keep_rise_over_run_and_the_distance():
    distance = np.arange(0.0, 1001.0, 10.0)
    course = synthetic_course(distance, 0.05 * distance)
    race = race_on_road(course, air_along_course(course, Conditions()), counts_rider=2)
    assert race.distance == pytest.approx(1000.0)
    assert race.grade == pytest.approx(np.full(10, 0.05))
    assert merged_pieces(np.full(10, 10.0), 30.0).tolist() == [0, 3, 6, 9, 10]


@pytest.mark.parametrize(("call", "words"), [
    (lambda: race_on_track(50.0, 250.0, 1.2, counts_rider=3), "track distance"),
    (lambda: race_on_track(4000.0, 50.0, 1.2, counts_rider=3), "lap length"),
    (lambda: race_on_track(4000.0, 250.0, 1.2, counts_rider=3, w_prime_reserve=-1.0),
     "reserve"),
    (lambda: race_on_track(4000.0, 250.0, 1.2, counts_rider=3, drafting=(0.0, 0.9)),
     "drafting"),
    (lambda: TeamRider("A", 80.0, 0.2, 20.0, 20000.0), "critical power"),
    (lambda: TeamRider("A", 80.0, 0.2, 400.0, 20000.0, max_power=300.0), "max power"),
    (lambda: TeamRider(" ", 80.0, 0.2, 400.0, 20000.0), "name"),
    (lambda: Team((TeamRider("A", 80.0, 0.2, 400.0, 20000.0),)), "2 to 8"),
    (lambda: Team((TeamRider("A", 80.0, 0.2, 400.0, 20000.0),) * 2), "twice"),
])
def test_bad_races_and_riders_are_refused_in_one_line(call, words):
    with pytest.raises(InputError, match=words) as error:
        call()
    assert "\n" not in str(error.value)
