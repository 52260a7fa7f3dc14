"""Splitting a time difference by cause (pacing.review.attribution): Shapley values, speed
limits where the rider slowed, and parts that add up exactly."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.course.geometry import synthetic_course
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.review.attribution import CAUSES, Replay, attribute, shapley_values, with_slow_points
from pacing.weather.conditions import CourseAir


def test_the_glove_game():
    """Two left gloves and one right, a pair worth 1: Shapley values 1/6, 1/6, 2/3 (the
    textbook example, e.g. Osborne & Rubinstein 1994, A Course in Game Theory, ch. 14; from
    memory)."""
    def value(coalition):
        return 1.0 if "right" in coalition and coalition & {"left1", "left2"} else 0.0

    phi = shapley_values(value, ["left1", "left2", "right"])
    assert phi == pytest.approx({"left1": 1 / 6, "left2": 1 / 6, "right": 2 / 3})


def test_the_split_does_not_depend_on_the_order_of_the_causes():
    rng = np.random.default_rng(0)
    table = {frozenset(s): float(rng.normal()) for n in range(4)
             for s in itertools.combinations("abc", n)}
    first = shapley_values(table.__getitem__, list("abc"))
    for order in itertools.permutations("abc"):
        assert shapley_values(table.__getitem__, list(order)) == pytest.approx(first)
    assert math.fsum(first.values()) == pytest.approx(table[frozenset("abc")] - table[frozenset()])


def test_an_additive_game_gives_each_cause_its_own_effect():
    effect = {"a": 3.0, "b": -1.0, "c": 0.5}
    phi = shapley_values(lambda s: sum(effect[p] for p in s), list(effect))
    assert phi == pytest.approx(effect)


def flat_course():
    distance = np.arange(0.0, 2001.0, 10.0)
    return synthetic_course(distance, np.zeros(distance.size))


def test_a_slow_point_makes_the_simulation_slow_down_there():
    course = flat_course()
    options = SimulationOptions(start_speed=10.0)
    air = CourseAir(np.full(200, 1.2), np.zeros(200), np.zeros(200))
    slowed = with_slow_points(course, np.array([1000.0]), np.array([4.0]), options)
    ride = simulate(slowed, 250.0, Rider(), air, options)
    assert ride.speed[100] == pytest.approx(4.0, abs=1e-6)
    plain = simulate(course, 250.0, Rider(), air, options)
    assert ride.finish_time > plain.finish_time + 2.0
    assert np.sum(ride.braking) > 0.0


def test_parts_add_up_to_the_difference_and_a_single_cause_takes_it_all():
    course = flat_course()
    options = SimulationOptions(start_speed=10.0)
    calm = CourseAir(np.full(200, 1.2), np.zeros(200), np.zeros(200))
    rider = Rider(drag_area=0.30)
    replay = Replay(course=course, stops_course=course, options=options, rider=rider,
                    plan_power=np.full(200, 250.0), day_power=np.full(200, 250.0),
                    day_drag_area=0.33, day_rolling_coefficient=rider.rolling_coefficient,
                    plan_air=calm, day_air=calm, stopped_time=0.0)
    planned = simulate(course, 250.0, rider, calm, options).finish_time
    worse = simulate(course, 250.0, Rider(drag_area=0.33), calm, options).finish_time
    split = attribute(replay, planned, worse + 1.0)
    assert split.drag_s == pytest.approx(worse - planned, abs=1e-9)
    assert split.other_s == pytest.approx(1.0, abs=1e-9)
    assert math.fsum(split.parts().values()) == pytest.approx(worse + 1.0 - planned, abs=1e-12)
    for cause in CAUSES:
        if cause != "drag":
            assert getattr(split, f"{cause}_s") == pytest.approx(0.0, abs=1e-9)


@given(st.lists(st.floats(-100.0, 100.0), min_size=32, max_size=32))
@settings(max_examples=30, deadline=None)
def test_shapley_values_are_efficient_for_any_game_of_five(values):
    """Σ φ_i = v(all) − v(∅) for every game (Shapley 1953, the efficiency axiom)."""
    subsets = [frozenset(s) for n in range(6) for s in itertools.combinations(CAUSES, n)]
    table = dict(zip(subsets, values, strict=True))
    phi = shapley_values(table.__getitem__, CAUSES)
    assert math.fsum(phi.values()) == pytest.approx(
        table[frozenset(CAUSES)] - table[frozenset()], abs=1e-9)
