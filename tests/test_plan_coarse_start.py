"""Specification of the coarse start of the fastest plan (pacing.plan.coarse_start): the same
problem with one power per climb, flat or descent, so a finer split is never slower.

The groups are checked on courses of a few straight grades, worked out by hand from the rule
in `grade_groups`' docstring (climb from CLIMB_GRADE = 2 %, common practice); that a plan of
the grouped problem is a plan of the fine one is a mathematical fact, checked against the
steady model of the fine split. The whole solve is pacing.plan.fastest's, on a 40 km loop of
hills written out here.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np
import pytest
from test_plan_fastest import steady_total, time_weighted_mean

from pacing.course.geometry import synthetic_course
from pacing.course.segments import CLIMB_GRADE, split_every
from pacing.physics.cycling import Rider
from pacing.physiology.critical_power import w_prime_balance
from pacing.plan.coarse_start import (
    GROUP_MAX_COUNT,
    GROUP_MIN_LENGTH,
    chunked_groups,
    coarse_start_plan,
    grade_groups,
    grouped_model,
    grouped_plan,
    run_count,
)
from pacing.plan.fastest import fastest_steady_plan
from pacing.plan.fastest_problem import FastestProblem, SolverReport
from pacing.plan.request import PlanRequest, power_limits
from pacing.plan.steady_model import SegmentModel, segment_model, steady_segment_times
from pacing.weather.conditions import still_air

RIDER = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.0032)  # also on the hill loop


def model_of_grades(grades, lengths, step=10.0) -> SegmentModel:
    """Straight segments of the given grades [-] and horizontal lengths [m], 10 m pieces,
    still air at 1.2 kg/m³."""
    edges = np.cumsum([0.0, *lengths])
    distance = np.arange(0.0, edges[-1] + step / 2, step)
    grade = np.asarray(grades)[np.searchsorted(edges, distance[:-1] + step / 2) - 1]
    course = synthetic_course(distance, np.r_[0.0, np.cumsum(grade * step)])
    return segment_model(course, np.searchsorted(distance, edges), RIDER,
                         still_air(course, 1.2))


# --------------------------------------------------------------------------- groups


def test_runs_of_one_class_form_a_group():
    # by hand: 500 m each at +5, +6, 0, +1, −4, −5, +3 % → climb, climb, flat, flat, descent,
    # descent, climb; every group at least 300 m long and fewer than 60: nothing merges
    assert CLIMB_GRADE == 0.02
    model = model_of_grades([0.05, 0.06, 0.0, 0.01, -0.04, -0.05, 0.03], [500.0] * 7)
    assert grade_groups(model).tolist() == [0, 0, 1, 1, 2, 2, 3]


def test_a_short_group_merges_into_the_neighbour_of_nearer_grade_and_is_reclassed():
    # by hand: 1 km at +5 %, 100 m flat, 1 km at +4 %, 1 km at −5 %. The flat (100 m < 300 m)
    # merges into the +4 % climb (nearer to 0 % than +5 %): 1100 m rising 40 m, 3.6 %, a climb,
    # which then joins the +5 % climb before it: one climb of 2.1 km, then the descent
    model = model_of_grades([0.05, 0.0, 0.04, -0.05], [1000.0, 100.0, 1000.0, 1000.0])
    assert grade_groups(model).tolist() == [0, 0, 0, 1]


def test_a_short_first_group_joins_its_only_neighbour():
    # by hand: 100 m at +5 % then 1 km flat: one stretch of 1.1 km rising 5 m (0.45 %, flat)
    model = model_of_grades([0.05, 0.0], [100.0, 1000.0])
    assert grade_groups(model).tolist() == [0, 0]


def test_too_many_groups_are_merged_until_few_and_long_enough():
    # 80 alternating climbs and descents of 400 m (80 groups > 60): the shortest length is
    # doubled until at most GROUP_MAX_COUNT groups remain, each at least GROUP_MIN_LENGTH
    model = model_of_grades([0.03, -0.03] * 40, [400.0] * 80, step=20.0)
    group = grade_groups(model)
    assert group[0] == 0 and set(np.diff(group)) <= {0, 1}
    count = int(group[-1]) + 1
    assert count <= GROUP_MAX_COUNT
    lengths = np.bincount(group, np.full(80, 400.0))
    assert lengths.min() >= GROUP_MIN_LENGTH


def test_groups_are_cut_into_runs_that_never_span_two_groups():
    # by hand: 8 segments in groups of 5 and 3, runs of ⌈8/4⌉ = 2 from each group's start:
    # [0 0][0 0][0] | [1 1][1] → runs 0, 0, 1, 1, 2, 3, 3, 4
    group = np.array([0, 0, 0, 0, 0, 1, 1, 1])
    assert chunked_groups(group, 4).tolist() == [0, 0, 1, 1, 2, 3, 3, 4]
    assert chunked_groups(group, 1).tolist() == group.tolist()  # runs as long as the split


# --------------------------------------------------------------------------- the grouped model


def test_a_plan_of_the_grouped_model_is_a_plan_of_the_fine_split():
    # each fine segment at its group's power covers the same pieces at the same powers
    # (mathematical fact): the group's time is the sum of its segments' times, to the steady
    # solver's tolerance; the mean grade is the group's net rise over its run (by hand:
    # (25 + 30)/1000, (0 + 5)/1000, (−20 − 25)/1000, 15/500)
    model = model_of_grades([0.05, 0.06, 0.0, 0.01, -0.04, -0.05, 0.03], [500.0] * 7)
    group = np.array([0, 0, 1, 1, 2, 2, 3])
    coarse = grouped_model(model, group)
    assert coarse.count == 4
    np.testing.assert_allclose(coarse.mean_grade, [0.055, 0.005, -0.045, 0.03], rtol=1e-9)
    power = np.array([320.0, 240.0, 150.0, 300.0])
    fine_time = steady_segment_times(model, power[group])[0]
    coarse_time = steady_segment_times(coarse, power)[0]
    np.testing.assert_allclose(coarse_time, np.bincount(group, fine_time), rtol=1e-9)
    assert coarse.speed_guess is not model.speed_guess  # its own cache


def test_a_split_that_grouping_hardly_coarsens_gets_no_grouped_plan():
    # 7 segments in 4 groups (more than half as many): not worth a second solve
    model = model_of_grades([0.05, 0.06, 0.0, 0.01, -0.04, -0.05, 0.03], [500.0] * 7)
    request = PlanRequest(strategy="fastest", mean_power=250.0)
    problem = FastestProblem(model, request, *power_limits(model, request))
    assert grouped_plan(problem, None, None, fastest_steady_plan, 120) is None


class StubSolver:
    """A solver that answers the request's mean power on every group and records its calls."""

    def __init__(self):
        self.calls = []

    def __call__(self, model, request, lower, upper, reserve, cap, *, coarse_start):
        self.calls.append((model.count, reserve, cap, coarse_start))
        return (np.full(model.count, request.mean_power),
                SolverReport("lagrange", iterations=3, evaluations=5))


def climb_and_descent():
    """2 km up at 5 %, 2 km down at 5 %, in 500 m segments (two groups of four)."""
    return model_of_grades([0.05] * 4 + [-0.05] * 4, [500.0] * 8)


def test_the_coarse_start_hands_the_grouped_problem_to_the_solver():
    model = climb_and_descent()
    request = PlanRequest(strategy="fastest", mean_power=250.0)
    problem = FastestProblem(model, request, *power_limits(model, request))
    solver = StubSolver()
    start, iterations = coarse_start_plan(problem, None, None, solver, 120)
    assert solver.calls == [(2, None, None, False)]  # 8 segments: polished, no deeper start
    assert start is not None and start[0].tolist() == [250.0] * 8
    assert iterations == 3
    assert problem.counter[0] == 5 + 1  # the grouped solve's evaluations and the check


def test_a_grouped_plan_that_breaks_a_limit_is_no_start():
    # constant 250 W: its 4th-power mean is 250 W (by hand), above a 240 W cap
    model = climb_and_descent()
    request = PlanRequest(strategy="fastest", mean_power=250.0)
    problem = FastestProblem(model, request, *power_limits(model, request))
    start, iterations = coarse_start_plan(problem, None, 240.0, StubSolver(), 120)
    assert start is None and iterations == 3


def test_a_split_too_fine_to_polish_is_grouped_in_runs():
    # polish limit 6 < 8 segments: about 2/3·6 = 4 runs, of ⌈8/4⌉ = 2 segments (by hand), the
    # runs' problem itself started from the climb and the descent
    assert run_count(6) == 4
    model = climb_and_descent()
    request = PlanRequest(strategy="fastest", mean_power=250.0)
    problem = FastestProblem(model, request, *power_limits(model, request))
    solver = StubSolver()
    start, iterations = coarse_start_plan(problem, None, None, solver, 6)
    assert solver.calls == [(4, None, None, True)]
    assert start is not None and start[0].tolist() == [250.0] * 8 and iterations == 3


def test_a_split_whose_runs_are_single_segments_gets_no_grouped_plan():
    # polish limit 4 < 5 segments of 500 m, each a group of its own (climb, flat, descent,
    # flat, climb, by hand): the runs are the segments, no coarser than the split
    model = model_of_grades([0.05, 0.0, -0.05, 0.0, 0.05], [500.0] * 5)
    assert grade_groups(model).tolist() == [0, 1, 2, 3, 4]
    request = PlanRequest(strategy="fastest", mean_power=250.0)
    problem = FastestProblem(model, request, *power_limits(model, request))
    solver = StubSolver()
    assert coarse_start_plan(problem, None, None, solver, 4) == (None, 0)
    assert solver.calls == []


# --------------------------------------------------------------------------- finer splits


@lru_cache
def hill_loop():
    """A 40 km loop of six Gaussian hills of 35-150 m, straight, still air, 10 m steps."""
    distance = np.arange(0.0, 40000.0 + 5.0, 10.0)
    hills = [(4_500, 55, 800), (11_000, 120, 1_400), (17_500, 40, 500), (24_000, 150, 1_900),
             (31_000, 70, 800), (36_500, 35, 450)]
    elevation = np.full_like(distance, 85.0)
    for centre, height, width in hills:
        elevation += height * np.exp(-0.5 * ((distance - centre) / width) ** 2)
    course = synthetic_course(distance, elevation)
    return course, still_air(course, 1.2)


HILL_LOOP_REQUEST = PlanRequest(strategy="fastest", mean_power=250.0, critical_power=270.0,
                                w_prime=20000.0)


def test_steady_fastest_plan_on_a_split_is_not_slower_than_on_a_coarser_split_inside_it():
    # Any plan on a coarser split is also a plan on a finer one whose ends include the coarse
    # ends (each fine segment at its coarse segment's power), so the fastest plan can only get
    # faster as the segments get finer (mathematical fact): every 1 km, 500 m, 100 m.
    course, air = hill_loop()
    times = []
    for length in (1000.0, 500.0, 100.0):
        model = segment_model(course, split_every(course, length), RIDER, air)
        power, report = fastest_steady_plan(model, HILL_LOOP_REQUEST)
        balance = w_prime_balance(power, steady_segment_times(model, power)[0], 270.0, 20000.0)
        assert balance.min() >= -1e-6 * 20000.0 * 5  # the solver's slack
        assert time_weighted_mean(model, power) == pytest.approx(250.0, rel=1e-6)
        assert report.method.startswith("grouped+")  # it started from the coarser problem
        times.append(steady_total(model, power))
    assert times[1] <= times[0] * 1.0005
    assert times[2] <= times[1] * 1.0005
