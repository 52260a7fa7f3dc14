"""Specification of the Monte Carlo draws (pacing.compare.sampled_uncertainty).

Check values: numpy's own generator drawn in the test (the draws are its standard normals
scaled by σ, row by row), the floors written out, and each draw ridden alone by the full
simulation (the Monte Carlo definition of JCGM 101:2008, GUM Supplement 1).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from pacing.compare.sampled_uncertainty import (
    UNCERTAIN_INPUTS,
    check_samples,
    draw_rows,
    normal_errors,
    sampled_times,
    uncertainty_errors,
)
from pacing.compare.sensitivity import DRAW_FLOORS, Uncertainty, day_wind
from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course


def hill():
    """3 km heading north-east: 1 km flat, 1 km at 5 %, 1 km down at 4 %, 50 m pieces."""
    distance = np.arange(0.0, 3000.0 + 25.0, 50.0)
    elevation = np.interp(distance, [0, 1000, 2000, 3000], [100, 100, 150, 110])
    return synthetic_course(distance, elevation, heading=45.0)


def test_errors_are_the_generator_s_normals_scaled_row_by_row():
    errors = normal_errors([0.5, 2.0], 3, np.random.default_rng(7), extra=1)
    expected = np.random.default_rng(7).standard_normal((3, 3)) * [0.5, 2.0, 1.0]
    np.testing.assert_array_equal(errors, expected)
    more = normal_errors([0.5, 2.0], 5, np.random.default_rng(7), extra=1)
    np.testing.assert_array_equal(more[:3], errors)  # the first draws do not depend on more


def test_uncertainty_errors_follow_the_order_of_the_inputs():
    uncertainty = Uncertainty(drag_area=0.01, rolling_coefficient=0.001, mass=2.0, wind=0.5)
    errors = uncertainty_errors(uncertainty, 4, seed=3)
    sigmas = [getattr(uncertainty, name) for name in UNCERTAIN_INPUTS]
    np.testing.assert_array_equal(
        errors, np.random.default_rng(3).standard_normal((4, 4)) * sigmas)


@pytest.mark.parametrize("samples", [1, 2.5, 100_001, "10"])
def test_a_bad_sample_count_is_refused_in_one_line(samples):
    with pytest.raises(InputError, match="samples") as error:
        check_samples(samples)
    assert "\n" not in str(error.value)


def test_rows_keep_mass_and_wind_at_their_floors():
    course, conditions = hill(), Conditions(wind_speed=2.0, wind_from=0.0)
    wind = day_wind(course, conditions)
    errors = (np.array([0.01, -0.5]), np.array([0.0, -0.1]), np.array([1.0, -500.0]),
              np.array([0.5, -10.0]))
    rows = draw_rows(Rider(mass=80.0), wind, errors, DRAW_FLOORS)
    np.testing.assert_array_equal(rows[:, 0], [81.0, DRAW_FLOORS["mass"]])
    np.testing.assert_array_equal(rows[:, 1:3], np.column_stack(errors[:2]))  # cut per piece
    assert rows[0, 3] == wind.at_rider(2.5)
    assert rows[1, 3] == wind.at_rider(DRAW_FLOORS["wind"])


def test_draws_ridden_together_are_each_draw_ridden_alone():
    course, options = hill(), SimulationOptions(start_speed=6.0)
    conditions = Conditions(wind_speed=3.0, wind_from=200.0)
    rider, power = Rider(mass=78.0, drag_area=0.28), np.full(60, 260.0)
    errors = (np.array([0.02, -0.3]), np.array([0.001, -0.01]), np.array([-3.0, 4.0]),
              np.array([1.0, -1.0]))
    times = sampled_times(course, power, rider, day_wind(course, conditions), options, errors,
                          DRAW_FLOORS)
    for s in range(2):
        alone = replace(rider, drag_area=max(0.28 + errors[0][s], DRAW_FLOORS["drag_area"]),
                        rolling_coefficient=max(rider.rolling_coefficient + errors[1][s], 0.0),
                        mass=78.0 + errors[2][s])
        air = air_along_course(course, replace(conditions, wind_speed=3.0 + errors[3][s]))
        assert times[s] == pytest.approx(simulate(course, power, alone, air, options).finish_time,
                                         rel=1e-12)
