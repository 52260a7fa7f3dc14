"""Drafting by position (pacing.team.drafting): the published sets against their papers."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.team.drafting import (
    DEFAULT_DRAFTING_SET,
    DRAFTING_SETS,
    checked_reductions,
    reduction_by_position,
)


def _independent_power(speed, drag_area, mass, rolling, density=1.2):
    """Martin et al. (1998)'s power balance at steady speed on the flat, written out here
    (wheel drag area 0.0044 m², bearings 0.091 + 0.0087·v N, η 0.976; J Appl Biomech
    14(3):276-291) - independent of pacing.physics.cycling."""
    aero = 0.5 * density * (drag_area + 0.0044) * speed**2
    return speed * (aero + rolling * mass * 9.80665 + 0.091 + 0.0087 * speed) / 0.976


def test_broker_set_gives_back_the_field_power_ratios_of_a_team_pursuit_line():
    # Broker, Kyle & Burke (1999), Med Sci Sports Exerc 31(11):1677-1685, abstract: at
    # 60 km/h the line rode at 607 W in front and 70.8 %, 64.1 %, 64.0 % of it in places 2-4.
    # A team-pursuit rider of the time (CdA 0.20 m², 80 kg with bike, track Crr 0.0025;
    # from memory) in our independent balance needs about 600 W alone at 60 km/h.
    speed, area, mass, rolling = 60 / 3.6, 0.20, 80.0, 0.0025
    reductions = DRAFTING_SETS["broker-1999"].reductions
    lead = _independent_power(speed, area * (1 - reductions[0]), mass, rolling)
    assert lead == pytest.approx(607.0, rel=0.05)
    ratios = [_independent_power(speed, area * (1 - d), mass, rolling) / lead
              for d in reductions[1:]]
    assert ratios == pytest.approx([0.708, 0.641, 0.640], abs=0.01)


def test_fitton_set_is_the_velodrome_drag_area_reductions_of_the_paper():
    # Fitton, Symons & Caddy (2018), Proc IMechE P, doi:10.1177/1754337117692280, abstract:
    # mean drag reductions in positions 1-4 of a team pursuit of 4 %, 42 %, 48 % and 47 %.
    assert DRAFTING_SETS["fitton-2018"].reductions == (0.04, 0.42, 0.48, 0.47)


@pytest.mark.parametrize(("key", "leader", "trailing"), [
    ("blocken-2013-time-trial", 0.026, 0.138),  # Blocken et al. (2013), abstract, TTP
    ("blocken-2013-dropped", 0.017, 0.231),     # the same, DP, d = 0.01 m
])
def test_blocken_sets_are_the_two_rider_cfd_values_of_the_paper(key, leader, trailing):
    # Blocken et al. (2013), Comput Fluids 71:435-445, abstract.
    assert DRAFTING_SETS[key].reductions == (leader, trailing)


@pytest.mark.parametrize("key", sorted(DRAFTING_SETS))
def test_every_set_shelters_followers_far_more_than_the_leader(key):
    values = DRAFTING_SETS[key].reductions
    assert all(values[0] < 0.05 and 0.1 < d < 0.6 for d in values[1:])
    assert DRAFTING_SETS[key].source and DRAFTING_SETS[key].conditions


def test_the_default_set_is_a_published_one():
    assert DEFAULT_DRAFTING_SET in DRAFTING_SETS


def test_places_beyond_a_set_keep_its_last_value_and_a_lone_rider_has_none():
    assert reduction_by_position((0.0, 0.3, 0.38), 6).tolist() == [0.0, 0.3, 0.38, 0.38,
                                                                   0.38, 0.38]
    assert reduction_by_position((0.04, 0.42), 1).tolist() == [0.0]
    assert reduction_by_position((0.04,), 3).tolist() == [0.04, 0.04, 0.04]


@pytest.mark.parametrize("values", [[], [0.1] * 9, [0.0, -0.1], [0.0, 0.9], [0.0, np.nan]])
def test_bad_reductions_are_refused_in_one_line(values):
    with pytest.raises(InputError) as error:
        checked_reductions(values)
    assert "\n" not in str(error.value)
