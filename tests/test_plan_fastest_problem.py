"""Specification of the fastest plan's problem (pacing.plan.fastest_problem): whether a plan
keeps the W′ reserve and the effort cap, its steady finish time, and the evaluation count.

Check values by hand: the differential W′ balance (Skiba et al. 2015, Eur J Appl Physiol
115(4):703-713, doi:10.1007/s00421-014-3050-3; docs/references.md, "Critical power and W′
balance") falls by (P − CP)·t above CP and stays full at or below it; the 4th-power mean of a
constant power is that power.
"""

from __future__ import annotations

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.physics.cycling import Rider
from pacing.plan.fastest_problem import FastestProblem, SolverLimits, SolverReport
from pacing.plan.request import PlanRequest, power_limits
from pacing.plan.steady_model import segment_model, steady_segment_times
from pacing.weather.conditions import still_air

CP, W_PRIME = 280.0, 20000.0


def flat_problem():
    """4 km flat in four 1 km segments, CP 280 W, W′ 20 kJ (differential balance)."""
    distance = np.arange(0.0, 4000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance))
    model = segment_model(course, np.arange(0, distance.size, 100),
                          Rider(mass=80.0, drag_area=0.30), still_air(course, 1.2))
    request = PlanRequest(strategy="fastest", mean_power=300.0, critical_power=CP,
                          w_prime=W_PRIME, w_prime_model="differential")
    return FastestProblem(model, request, *power_limits(model, request))


def test_a_plan_above_cp_keeps_a_reserve_down_to_what_it_leaves():
    # constant 300 W for T s: W′ left = 20 000 − (300 − 280)·T (by hand, differential form)
    problem = flat_problem()
    power = np.full(4, 300.0)
    finish = float(steady_segment_times(problem.model, power)[0].sum())
    left = W_PRIME - 20.0 * finish
    assert problem.finish(power) == pytest.approx(finish, rel=1e-12)
    assert problem.keeps(power, SolverLimits(reserve=left - 1.0))
    assert not problem.keeps(power, SolverLimits(reserve=left + 1.0))
    # slack relative to W′: 1e-4·W′ = 2 J of shortfall allowed
    assert problem.keeps(power, SolverLimits(reserve=left + 1.0), slack=1e-4)


def test_a_plan_at_or_below_cp_keeps_any_reserve_below_w_prime():
    problem = flat_problem()
    assert problem.keeps(np.full(4, CP), SolverLimits(reserve=W_PRIME - 1e-6))


def test_the_effort_cap_is_the_fourth_power_mean():
    # constant 300 W: 4th-power mean 300 W (by hand)
    problem = flat_problem()
    power = np.full(4, 300.0)
    assert problem.keeps(power, SolverLimits(cap=300.0 * (1 + 1e-9)))
    assert not problem.keeps(power, SolverLimits(cap=299.0))
    assert problem.keeps(power, SolverLimits(cap=299.0), slack=0.01)
    assert problem.keeps(power, SolverLimits())  # nothing to keep


def test_every_check_is_counted_and_the_finish_time_is_not():
    problem = flat_problem()
    power = np.full(4, 300.0)
    problem.keeps(power, SolverLimits(cap=400.0))
    problem.keeps(power, SolverLimits(reserve=0.0))
    problem.finish(power)
    assert problem.counter == [2]


def test_a_report_names_its_method_and_defaults_to_nothing_else():
    report = SolverReport("constant")
    assert (report.multiplier, report.iterations, report.evaluations, report.active) == (
        None, 0, 0, ())
