"""The turns of a line (pacing.team.turns): rotation, last long turns, the counting rule."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.team.turns import TurnChoice, build_turns


def choice(lengths, drops=None):
    lengths = np.asarray(lengths, dtype=float)
    drops = np.full(lengths.size, np.inf) if drops is None else np.asarray(drops, dtype=float)
    return TurnChoice(lengths, np.full(lengths.size, 500.0), drops)


def test_the_leader_swings_off_and_rejoins_at_the_back():
    turns = build_turns(choice([100.0, 100.0, 100.0]), 600.0, 3)
    assert turns.leader.tolist() == [0, 1, 2, 0, 1, 2]
    assert turns.position[0].tolist() == [0, 1, 2]
    assert turns.position[1].tolist() == [2, 0, 1]
    assert turns.position[2].tolist() == [1, 2, 0]


def test_turns_cover_the_race_without_gaps_and_the_last_is_cut_at_the_finish():
    turns = build_turns(choice([300.0, 250.0]), 1000.0, 2)
    assert turns.start[0] == 0.0 and turns.end[-1] == 1000.0
    assert np.array_equal(turns.start[1:], turns.end[:-1])
    assert turns.end.tolist() == [300.0, 550.0, 850.0, 1000.0]


def test_a_rider_does_a_last_long_turn_to_his_drop_distance_then_leaves():
    turns = build_turns(choice([250.0] * 4, [np.inf, np.inf, np.inf, 3400.0]), 4000.0, 3)
    last = int(np.flatnonzero(turns.leader == 3)[-1])
    assert turns.end[last] == 3400.0
    assert turns.end[last] - turns.start[last] > 250.0  # stretched
    assert turns.dropped_at.tolist()[3] == 3400.0
    assert np.all(turns.position[last + 1:, 3] == -1)
    assert np.all(turns.line_size[last + 1:] == 3)


def test_the_line_never_gets_smaller_than_the_counting_rider():
    drops = [1000.0, 1500.0, 2000.0, np.inf]
    turns = build_turns(choice([200.0] * 4, drops), 4000.0, 3)
    assert turns.line_size.min() == 3
    assert np.isfinite(turns.dropped_at).sum() == 1


def test_far_too_short_turns_are_refused():
    with pytest.raises(InputError, match="turns too short"):
        build_turns(choice([0.01, 0.01]), 1000.0, 2)


def test_riding_on_to_the_finish_merges_the_last_turn_into_the_one_before():
    plain = build_turns(choice([300.0, 250.0]), 870.0, 2)
    assert plain.end[-1] - plain.start[-1] == pytest.approx(20.0)  # a 20 m scrap
    lengths = choice([300.0, 250.0])
    on = build_turns(TurnChoice(lengths.turn_length, lengths.turn_power, lengths.drop_distance,
                                ride_on_to_finish=True), 870.0, 2)
    assert on.leader.tolist() == plain.leader.tolist()[:-1]
    assert on.end.tolist() == [300.0, 550.0, 870.0]
    assert np.array_equal(on.position, plain.position[:-1])


def test_a_rider_who_rides_on_to_the_finish_does_not_drop_out():
    drops = [np.inf, np.inf, 980.0]  # his last long turn ends 20 m before the finish
    plain = build_turns(choice([300.0] * 3, drops), 1000.0, 2)
    assert plain.dropped_at[2] == 980.0 and plain.leader.tolist() == [0, 1, 2, 0]
    merged = choice([300.0] * 3, drops)
    on = build_turns(TurnChoice(merged.turn_length, merged.turn_power, merged.drop_distance,
                                ride_on_to_finish=True), 1000.0, 2)
    assert on.leader.tolist() == [0, 1, 2] and on.end[-1] == 1000.0
    assert np.all(np.isinf(on.dropped_at))
