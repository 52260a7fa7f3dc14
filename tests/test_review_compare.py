"""Planned against ridden, segment by segment (pacing.review.compare)."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.review.along import Along
from pacing.review.compare import compare_segments, ridden_w_prime_balance


def test_w_prime_falls_by_the_work_above_cp():
    """Above CP the balance falls by (P − CP)·t (the definition of W′, Skiba et al. 2012)."""
    time = np.arange(0.0, 61.0)
    balance = ridden_w_prime_balance(time, np.full(61, 350.0), 300.0, 20000.0)
    assert balance[0] == 20000.0
    assert balance[-1] == pytest.approx(20000.0 - 50.0 * 60.0)


def test_segments_from_the_sums_along_the_course():
    distance = np.array([0.0, 500.0, 1000.0, 1500.0])
    planned_time = np.array([0.0, 50.0, 100.0, 150.0])
    along = Along(time=np.array([0.0, 50.0, 130.0, 180.0]),
                  moving_time=np.array([0.0, 50.0, 100.0, 150.0]),
                  work=np.array([0.0, 12500.0, 22500.0, 35000.0]),
                  stopped_time=np.array([0.0, 0.0, 30.0, 30.0]))
    rows = compare_segments(distance, np.array([0, 2, 3]), planned_time,
                            np.array([250.0, 250.0]), along)
    assert [r.delta for r in rows] == [30.0, 0.0]
    assert rows[0].actual_power == pytest.approx(225.0)
    assert rows[0].stopped_time == 30.0
    assert rows[0].actual_speed == pytest.approx(1000.0 / 130.0)
    assert rows[1].planned_min_w_prime is None
