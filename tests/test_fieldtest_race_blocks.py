"""Specification of pacing.fieldtest.race_blocks: the race's pieces as the drag fit sees them
(what is left out, the headings of pieces, the rows of the blocks). Expected values are worked
by hand from the definitions in the module (common practice); the fit itself:
tests/test_fieldtest_race_fit.py."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.fieldtest.race_blocks import (
    block_rows,
    checked_race_arrays,
    ends_heading,
    left_out_pieces,
)


def test_a_piece_heads_the_circular_mean_of_its_ends():
    # 350° and 10° meet at north, not at 180°; 10° and 90° at 50°
    heading = ends_heading(np.array([350.0, 10.0, 90.0]))
    assert abs((heading[0] + 180.0) % 360.0 - 180.0) < 1e-9
    assert heading[1] == pytest.approx(50.0)


def test_stops_and_gaps_are_left_out_and_the_rest_ridden():
    # 1 s samples at 10 m/s and 250 W; a standstill at sample 5 and a 10 s gap after sample 8
    time = np.array([0, 1, 2, 3, 4, 5, 6, 7, 8, 18, 19, 20], dtype=float)
    speed = np.full(time.size, 10.0)
    speed[5] = 0.0
    power = np.full(time.size, 250.0)
    stops, braking, coasting = left_out_pieces(time, speed, power)
    assert np.flatnonzero(stops).tolist() == [4, 5, 8]
    assert not braking.any() and not coasting.any()


def test_a_block_gives_every_fifth_used_piece_and_its_last():
    time = np.arange(13.0)
    used = np.ones(12, dtype=bool)
    points, bases, labels = block_rows(time, used, np.array([0]), 12.0)
    assert points.tolist() == [2, 7, 12]  # thinned from the end: 12, 7, 2
    assert bases.tolist() == [0, 0, 0] and labels.tolist() == [0, 0, 0]


def test_headings_per_sample_become_headings_per_piece():
    arrays = checked_race_arrays(np.arange(4.0), np.full(4, 8.0), np.full(4, 200.0),
                                 [90.0, 90.0, 90.0, 90.0], np.zeros(4), 1.2)
    assert arrays["heading"].tolist() == pytest.approx([90.0, 90.0, 90.0])
    assert arrays["density"].tolist() == pytest.approx([1.2, 1.2, 1.2])


def test_a_negative_power_is_refused_in_one_line():
    with pytest.raises(InputError, match="power must not be negative"):
        checked_race_arrays(np.arange(4.0), np.full(4, 8.0), [200.0, -1.0, 200.0, 200.0],
                            np.zeros(4), np.zeros(4), 1.2)
