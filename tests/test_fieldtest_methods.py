"""The registry of field-test methods (pacing.fieldtest.methods): every method says what it
computes, where it was published, what the ride must carry and where it holds; the command
line's choices and the page's menu are its keys.

Sources named in the registry: Chung's virtual elevation (self-published notes), Martin et al.
(1998) J Appl Biomech 14(3):276-291 (the power balance), Lim et al. (2011) Med Sci Sports Exerc
43(5):853-860 (regression on steady runs in wind under 1.0 m/s, read in the abstract;
docs/references.md, "CdA from field tests").
"""

from __future__ import annotations

import argparse
import math

import numpy as np
import pytest
from test_fieldtest_estimate import fit, noisy_ride, simulate_loop_ride

from pacing.fieldtest.laps import LapTerms
from pacing.fieldtest.methods import (
    CALM_WIND,
    FIELD_TEST_METHODS,
    GRADE_LIMIT,
    STEADY_SPEED_LIMIT,
    FieldTestMethod,
)


@pytest.mark.parametrize("name", sorted(FIELD_TEST_METHODS))
def test_every_method_has_a_source_and_says_what_it_needs(name):
    method = FIELD_TEST_METHODS[name]
    assert isinstance(method, FieldTestMethod) and method.name == name
    assert method.label and method.computes
    assert method.references and all(method.references)
    assert any("Martin" in source for source in method.references)  # the power balance
    for need in ("needs_elevation", "needs_closed_laps", "needs_positions"):
        assert isinstance(getattr(method, need), bool)
    assert method.laps_to_separate in (1, 2)
    assert callable(method.columns) and callable(method.lap_drag_area)
    assert method.wind_limit > 0 and 0 < method.grade_limit < 0.2


def test_the_published_sources_are_the_ones_the_methods_come_from():
    for name in ("loop", "profile"):
        assert any("Chung" in s for s in FIELD_TEST_METHODS[name].references)
    assert any("Lim" in s and "2011" in s for s in FIELD_TEST_METHODS["regression"].references)


def test_what_each_method_needs():
    loop, profile, regression = (FIELD_TEST_METHODS[k] for k in ("loop", "profile",
                                                                  "regression"))
    # loop closure needs laps that close and no heights; a profile needs heights
    assert loop.needs_closed_laps and not loop.needs_elevation
    assert profile.needs_elevation and not profile.needs_closed_laps
    # laps may be marked by time: no method needs positions
    assert not any(m.needs_positions for m in FIELD_TEST_METHODS.values())
    # only the regression assumes steady runs
    assert regression.steady_speed_limit == STEADY_SPEED_LIMIT
    assert loop.steady_speed_limit is None and profile.steady_speed_limit is None
    # two laps at different speeds separate CdA from Crr on whole-lap sums; hills within one
    # lap can do it for the profile
    assert (loop.laps_to_separate, profile.laps_to_separate,
            regression.laps_to_separate) == (2, 1, 2)
    assert profile.offset_per_lap and not loop.offset_per_lap


def test_validity_limits_come_from_their_sources():
    # Lim et al. (2011): tests in calm wind, under 1.0 m/s
    assert CALM_WIND == 1.0
    assert all(m.wind_limit == CALM_WIND for m in FIELD_TEST_METHODS.values())
    # cos θ taken as 1 in the rolling term: at 6 % it is 1 − 1/√(1 + 0.06²) ≈ 0.18 % off
    assert 1 - math.cos(math.atan(GRADE_LIMIT)) < 0.002
    # steady runs: at a coefficient of variation c, ⟨v²⟩ = v̄²·(1 + c²), 1 % above v̄² at 10 %
    assert STEADY_SPEED_LIMIT**2 == pytest.approx(0.01)


def test_the_command_line_offers_the_registry_keys():
    from pacing.cli.fieldtest import add_parser

    parser = argparse.ArgumentParser()
    commands = parser.add_subparsers()
    add_parser(commands)
    (method,) = [a for a in commands.choices["fieldtest"]._actions if a.dest == "method"]
    assert tuple(method.choices) == tuple(FIELD_TEST_METHODS)
    assert method.default == "loop" and "loop" in FIELD_TEST_METHODS


def test_the_estimate_reports_the_method_it_used():
    ride = noisy_ride(simulate_loop_ride(), seed=1)
    for name in FIELD_TEST_METHODS:
        assert fit(ride, method=name, bootstrap=0).method == name


def test_lap_columns_are_chosen_by_the_registry():
    # each method's columns of the same lap: the lap totals (loop), the regression row
    # (regression), a grid along the lap (profile)
    fraction = np.linspace(0.0, 1.0, 5)
    lap = LapTerms(group=0, start=0, end=4, time=fraction, distance=fraction,
                   known=np.arange(5.0), drag=2 * np.arange(5.0), rolling=3 * np.arange(5.0),
                   measured=None, reference=None, start_elevation=0.0,
                   run=np.array([7.0, 8.0, 9.0]), fraction=fraction)
    y, a, b = FIELD_TEST_METHODS["loop"].columns([lap])
    assert (y[0, 0], a[0, 0], b[0, 0]) == (4.0, 8.0, 12.0)
    y, a, b = FIELD_TEST_METHODS["regression"].columns([lap])
    assert (y[0, 0], a[0, 0], b[0, 0]) == (7.0, 8.0, 9.0)
    y, _, _ = FIELD_TEST_METHODS["profile"].columns([lap])
    assert y.shape[1] > 1 and y[0, -1] == 4.0
