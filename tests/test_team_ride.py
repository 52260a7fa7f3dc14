"""A team's ride (pacing.team.ride): line speed, followers' power, start, W′ balance."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.physiology.critical_power import w_prime_balance_differential
from pacing.team.plan import ride_at_constant_speed, ride_choice
from pacing.team.race import race_on_track
from pacing.team.riders import Team, TeamRider
from pacing.team.turns import TurnChoice

DRAFTING = (0.02, 0.30, 0.38, 0.40)


def martin_power(speed, drag_area, mass, density=1.2, rolling=0.0032):
    """Steady flat power of Martin et al. (1998) written out here (F_w 0.0044 m², bearings
    0.091 + 0.0087·v N, η 0.976), independent of pacing.physics.cycling."""
    force = (0.5 * density * (drag_area + 0.0044) * speed**2 + rolling * mass * 9.80665
             + 0.091 + 0.0087 * speed)
    return speed * force / 0.976


def four(cp=400.0):
    return Team(tuple(TeamRider(name, 80.0, 0.20, cp, 20000.0) for name in "ABCD"))


def flying_track(**rules):
    return race_on_track(4000.0, 250.0, 1.2, counts_rider=4, standing_start=False,
                         drafting=DRAFTING, **rules)


def test_followers_ride_at_the_power_their_place_needs_at_the_lines_speed():
    ride = ride_at_constant_speed(four(), flying_track(), 250.0, 16.0)
    cell = 3  # first turn, past the changeover (no one swings off in turn 1)
    for rider, place in zip(range(4), range(4), strict=True):
        expected = martin_power(16.0, 0.20 * (1 - DRAFTING[place]), 80.0)
        assert ride.power[rider, cell] == pytest.approx(expected, rel=1e-9)


def test_the_line_rides_at_the_speed_its_leaders_power_holds():
    choice = TurnChoice(np.full(4, 250.0), np.full(4, 600.0), np.full(4, np.inf))
    ride = ride_choice(four(), flying_track(), choice)
    speed = ride.speed[0]
    assert martin_power(speed, 0.20 * (1 - DRAFTING[0]), 80.0) == pytest.approx(600.0,
                                                                                  rel=1e-9)


def test_time_is_distance_over_speed_with_a_flying_start():
    ride = ride_at_constant_speed(four(), flying_track(), 250.0, 16.0)
    assert ride.finish_time == pytest.approx(4000.0 / 16.0, rel=1e-12)
    assert ride.duration.sum() == pytest.approx(ride.finish_time)


def test_a_standing_start_costs_time_and_w_prime():
    flying = ride_at_constant_speed(four(), flying_track(), 250.0, 16.0)
    standing = ride_at_constant_speed(
        four(), race_on_track(4000.0, 250.0, 1.2, counts_rider=4, drafting=DRAFTING),
        250.0, 16.0)
    assert 3.0 < standing.finish_time - flying.finish_time < 15.0  # from memory: TP starts
    assert standing.lowest_balance[0] < flying.lowest_balance[0]


def test_the_rider_swinging_off_pays_for_the_changeover():
    ride = ride_at_constant_speed(four(), flying_track(), 250.0, 16.0)
    second_turn = np.flatnonzero(ride.cells.turn == 1)
    first_cell = second_turn[0]
    later = second_turn[-1]
    # rider A swings off at the start of turn 2, then sits last (place 4)
    assert ride.power[0, first_cell] > ride.power[0, later]
    assert ride.power[0, later] == pytest.approx(martin_power(16.0, 0.20 * 0.60, 80.0))


def test_w_prime_balance_is_skibas_over_the_riders_own_samples():
    ride = ride_at_constant_speed(four(420.0), flying_track(), 250.0, 16.0)
    expected = w_prime_balance_differential(ride.power[1], ride.duration, 420.0, 20000.0)
    assert np.allclose(ride.balance[1], expected)
