"""Specification of the changes of side in the sided polish (pacing.plan.sided_crossings).

Check values: the Lagrangian written out again here from the test's own power balance
(brentq on Martin et al. 1998, tests/test_plan_fastest.martin_speed) and the differential W′
balance of Skiba et al. 2015 solved on each segment of constant power
(tests/test_plan_fastest.skiba_differential); the block rule on a hand-made example.
"""

from __future__ import annotations

import numpy as np
import pytest
from test_plan_fastest import SmallClimb, skiba_differential

from pacing.plan.fastest_problem import FastestProblem
from pacing.plan.request import power_limits
from pacing.plan.sided_crossings import jump_changes, side_jumps, strongest_of_blocks
from pacing.plan.slsqp_polish import ScaledProblem, _lowest_rows

CP, W_PRIME = 280.0, 12000.0


def climb_and_plan():
    """Six segments of a rolling climb (50 m pieces), CP 280 W, W′ 12 kJ, reserve 1 kJ; a plan
    with two segments resting on CP, its sides (CP itself below) and W′ rows."""
    climb = SmallClimb([0.01, 0.05, 0.07, -0.02, 0.06, 0.03],
                       [800.0, 600.0, 700.0, 900.0, 500.0, 600.0], 270.0, CP, W_PRIME, 1000.0)
    power = np.array([260.0, CP, 330.0, 200.0, CP, 300.0])
    side = power > CP
    return climb, power, side, _lowest_rows(side, climb.request)


def lagrangian(climb, power, rows, multipliers, total0):
    """L = T/T₀ − λ·(Σ (P − P̄)·t)/(P̄·T₀) − Σ μ_j·(W′bal_j − reserve)/W′, written out from
    the test's own speeds and W′ balance (scaled as the polish scales its problem)."""
    times = climb.times(power)
    balance = skiba_differential(power, times, CP, W_PRIME)
    coupling = np.sum((power - climb.mean) * times) / (climb.mean * total0)
    rows_value = (balance[rows] - climb.reserve) / W_PRIME
    return times.sum() / total0 - multipliers[0] * coupling - multipliers[1:] @ rows_value


def test_a_jump_changes_the_lagrangian_as_written_out_independently():
    # Each resting segment is moved alone to each power tried on its other side; the change
    # of the Lagrangian the module predicts (exact steps on the deficit, later rows through
    # the later below-CP factors) equals the Lagrangian recomputed from scratch.
    climb, power, side, rows = climb_and_plan()
    lower, upper = power_limits(climb.model, climb.request)
    scaled = ScaledProblem(FastestProblem(climb.model, climb.request, lower, upper))
    scaled.side = side
    multipliers = np.r_[-0.3, np.linspace(0.01, 0.03, rows.size)]
    segments, trials, change = jump_changes(scaled, power, side, lower, upper, multipliers,
                                            rows, climb.reserve)
    assert segments.tolist() == [1, 4]
    total0 = climb.times(np.full(6, climb.mean)).sum()
    now = lagrangian(climb, power, rows, multipliers, total0)
    for column, segment in enumerate(segments):
        for level in range(trials.shape[0]):
            moved = power.copy()
            moved[segment] = trials[level, column]
            assert moved[segment] > CP  # resting below CP: tried above it
            balance = skiba_differential(moved, climb.times(moved), CP, W_PRIME)
            if balance[segment] < climb.reserve:
                assert change[level, column] == np.inf  # breaks the reserve at its own end
                continue
            expected = lagrangian(climb, moved, rows, multipliers, total0) - now
            assert change[level, column] == pytest.approx(expected, abs=1e-10)


def test_a_jump_moves_only_segments_whose_lagrangian_falls():
    # Priced high enough, no jump above CP pays; with the W′ rows free (μ = 0) and the
    # coupling priced, every resting segment gains by riding harder (fewer seconds for the
    # same price), so every one jumps, to its best power tried.
    climb, power, side, rows = climb_and_plan()
    lower, upper = power_limits(climb.model, climb.request)
    scaled = ScaledProblem(FastestProblem(climb.model, climb.request, lower, upper))
    scaled.side = side
    dear = np.r_[0.0, np.full(rows.size, 50.0)]
    assert side_jumps(scaled, power, side, lower, upper, dear, rows, climb.reserve) is None
    free = np.r_[-0.1, np.zeros(rows.size)]
    new_side, start = side_jumps(scaled, power, side, lower, upper, free, rows, None)
    assert new_side.tolist() == [False, True, True, False, True, True]
    assert start[1] > CP and start[4] > CP
    np.testing.assert_array_equal(np.delete(start, [1, 4]), np.delete(power, [1, 4]))


def test_only_the_strongest_of_each_block_of_crossings_is_kept():
    strength = np.array([0.0, 2.0, 3.0, 0.0, 1.0, 5.0, 4.0, 0.0, 0.5])
    assert np.flatnonzero(strongest_of_blocks(strength)).tolist() == [2, 5, 8]
    assert not strongest_of_blocks(np.zeros(4)).any()
