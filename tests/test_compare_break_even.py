"""Break-even figures (pacing.compare.break_even): the power, drag area or mass at which a
setup ties with the baseline, checked against a direct search on the simulation and a hand
calculation (shared courses and requests: tests/test_compare_setups.py)."""

from __future__ import annotations

import dataclasses

import pytest
from samples import six_km_hill as hill_course
from scipy import optimize
from test_compare_setups import HILL_BOUNDS, race_on

from pacing.compare.break_even import break_even
from pacing.compare.setups import RiderSetup, compare_setups
from pacing.physics.cycling import Rider
from pacing.plan.simulate import simulate
from pacing.weather.conditions import still_air


def test_break_even_power_agrees_with_a_direct_search_on_the_simulation():
    course = hill_course()
    air = still_air(course, 1.2)
    setups = [RiderSetup("hoods", Rider(mass=80, drag_area=0.32)),
              RiderSetup("aero", Rider(mass=80, drag_area=0.26), power_share=0.95)]
    comparison = compare_setups(race_on(course, HILL_BOUNDS), setups, air=air)
    hoods, aero = comparison.results
    result = break_even(comparison, aero)
    # direct search: bisection on the constant power of the aero setup until it ties
    aero_rider = setups[1].rider

    def gap(power):
        return simulate(course, power, aero_rider, air).finish_time - hoods.finish_time

    direct = optimize.bisect(gap, 150.0, 250.0, xtol=1e-6)
    # the figure is the verified (time-weighted) mean power of the tying ride; from a standing
    # start the traction cap trims the first metres, so it sits a little below the set power
    tie_ride = simulate(course, direct, aero_rider, air)
    assert result.power == pytest.approx(tie_ride.average_power, abs=0.01)
    assert result.power_margin == pytest.approx(aero.mean_power - tie_ride.average_power,
                                                abs=0.01)
    assert result.power_margin > 0  # the lower position may lose watts and still be faster


def test_a_heavier_setup_must_save_cda_to_pay_for_its_mass():
    course = hill_course()
    air = still_air(course, 1.2)
    setups = [RiderSetup("light", Rider(mass=78, drag_area=0.30)),
              RiderSetup("heavy", Rider(mass=80, drag_area=0.30))]
    comparison = compare_setups(race_on(course, HILL_BOUNDS), setups, air=air)
    light, heavy = comparison.results
    result = break_even(comparison, heavy)
    assert result.drag_area_margin < 0
    assert result.mass == pytest.approx(78.0, abs=0.01)
    tied = simulate(course, 250.0, dataclasses.replace(heavy.setup.rider,
                                                        drag_area=result.drag_area), air)
    assert tied.finish_time == pytest.approx(light.finish_time, abs=0.01)


