"""The one planning chain (pacing.plan.race): a RaceRequest in, a RaceResult out, for both
sports, with the warnings the user must see as data.

The finish times themselves are checked against independent integrators and published models
in the tests of the plans (tests/test_plan_cycling.py, tests/test_plan_simulate.py,
tests/test_plan_running.py); here the chain is checked for what it adds: the same numbers as
the plan functions called directly, the notices, and clear refusals.
"""

from __future__ import annotations

import numpy as np
import pytest
from samples import north_hill_gpx

from pacing.course.segments import split_by_grade
from pacing.errors import InputError
from pacing.io.gpx import load_course
from pacing.physics.cycling import Rider
from pacing.physics.running import Runner
from pacing.plan.cycling import make_plan
from pacing.plan.prediction import SimulationOptions
from pacing.plan.race import RaceRequest, RunningRequest, plan_race
from pacing.plan.request import PlanRequest
from pacing.plan.running import plan_equal_effort
from pacing.weather.conditions import Conditions, air_along_course

RIDER = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.004)
DAY = Conditions(temperature=18.0, wind_speed=3.0, wind_from=200.0)


@pytest.fixture(scope="module")
def course():
    return load_course(north_hill_gpx().encode())


def cycling(course, strategy="constant", **asked):
    return RaceRequest(course=course, bounds=split_by_grade(course), conditions=DAY,
                       sport="cycling", strategy=strategy, rider=RIDER,
                       cycling=PlanRequest(**asked))


def codes(result):
    return [n.code for n in result.notices]


def test_a_cycling_plan_is_the_verified_plan_of_the_same_inputs(course):
    result = plan_race(cycling(course, mean_power=250.0))
    direct = make_plan(course, split_by_grade(course), RIDER, air_along_course(course, DAY),
                       PlanRequest(strategy="constant", mean_power=250.0), SimulationOptions())
    assert result.finish_time == direct.finish_time
    assert len(result.targets) == len(split_by_grade(course)) - 1
    # the course's notes (what elevation cleaning removed) come first; the plan adds nothing
    # but the race day's heat and altitude (always counted, issue 16)
    from pacing.plan.race_day import race_day_notices

    assert result.notices == (*course.notices, *race_day_notices(result))


def test_a_running_plan_is_the_plan_of_the_same_inputs(course):
    runner = Runner.from_body(64.0, height=1.75)
    request = RaceRequest(course=course, bounds=split_by_grade(course), conditions=DAY,
                          sport="running", strategy="equal-effort", runner=runner,
                          running=RunningRequest(flat_speed=4.0))
    result = plan_race(request)
    air = air_along_course(course, DAY)
    direct = plan_equal_effort(course, runner, 4.0, air.density, air.headwind, air.crosswind,
                               bounds=split_by_grade(course))
    assert result.finish_time == direct.finish_time
    assert [t.target_pace for t in result.targets] == [s.pace for s in direct.segments]


def test_spending_more_than_w_prime_is_a_warning_with_where_and_how_deep(course):
    # 400 W against CP 250 W: W′ (10 kJ) is gone within about 10 kJ / 150 W ≈ 67 s
    result = plan_race(cycling(course, mean_power=400.0, critical_power=250.0, w_prime=10000.0))
    exhausted = [n for n in result.notices if n.code == "w-prime-exhausted"]
    assert len(exhausted) == 1 and exhausted[0].level == "warning"
    assert exhausted[0].values["distance_m"] == result.exhausted_at
    assert exhausted[0].values["lowest_balance_j"] < -10000.0
    balance = np.asarray(result.plan.w_prime_balance)
    first = int(np.argmax(balance < 0))
    assert balance[first - 1] >= 0 > balance[first]


def test_a_plan_within_w_prime_says_nothing_of_it(course):
    result = plan_race(cycling(course, mean_power=200.0, critical_power=250.0, w_prime=20000.0))
    assert result.exhausted_at is None and "w-prime-exhausted" not in codes(result)


def test_too_little_power_to_ride_is_a_walking_notice(course):
    result = plan_race(cycling(course, mean_power=40.0))
    walking = next(n for n in result.notices if n.code == "walking")
    assert 0 < walking.values["walking_distance_m"] < walking.values["distance_m"]


def test_a_target_time_without_limits_says_the_power_is_unchecked(course):
    result = plan_race(cycling(course, strategy="target-time", target_time=900.0))
    unchecked = next(n for n in result.notices if n.code == "target-time-unchecked")
    assert unchecked.values["power_w"] == pytest.approx(float(np.max(result.plan.segment_power)))


def test_the_fastest_plan_names_the_limits_it_reaches(course):
    result = plan_race(cycling(course, strategy="fastest", mean_power=250.0,
                               critical_power=300.0, w_prime=20000.0))
    limits = next(n for n in result.notices if n.code == "limits-reached")
    assert "mean-power" in limits.values["limits"]


@pytest.mark.parametrize("change, message", [
    (dict(sport="swimming"), "unknown sport"),
    (dict(strategy="sprint"), "unknown cycling plan 'sprint'"),
    (dict(rider=None), "needs the rider"),
])
def test_bad_requests_are_refused_in_one_line(course, change, message):
    fields = dict(course=course, bounds=split_by_grade(course), conditions=DAY,
                  sport="cycling", strategy="constant", rider=RIDER,
                  cycling=PlanRequest(mean_power=200.0))
    with pytest.raises(InputError, match=message):
        RaceRequest(**{**fields, **change})


def test_a_running_request_needs_its_pace(course):
    request = RaceRequest(course=course, bounds=split_by_grade(course), conditions=DAY,
                          sport="running", strategy="even-pace", runner=Runner())
    with pytest.raises(InputError, match="flat-ground pace"):
        plan_race(request)
