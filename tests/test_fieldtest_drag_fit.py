"""Specification of pacing.fieldtest.drag_fit: when the laps cannot separate CdA from Crr
(singular, a Crr interval wider than the spread of road tyres, or, without one, a correlation
above SEPARATION_LIMIT), and the percentile interval (Efron & Tibshirani 1993; checked against
numpy.percentile, a reference library). Fits on rides: tests/test_fieldtest_estimate.py."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.fieldtest.checks import PLAUSIBLE_ROLLING
from pacing.fieldtest.drag_fit import SEPARATION_LIMIT, bootstrap_interval, separation_problem

SOLVED = np.array([0.30, 0.004])


def test_a_singular_fit_cannot_separate():
    assert separation_problem(None, 1.0, None) == {"reason": "singular"}


def test_a_crr_interval_wider_than_road_tyres_cannot_separate():
    wide = np.linspace(0.0, 0.01, 101)  # 95 % interval 0.00025-0.00975, wider than 0.0035
    problem = separation_problem(SOLVED, 0.2, wide)
    assert problem["reason"] == "crr-interval"
    assert problem["rolling_spread"] == pytest.approx(PLAUSIBLE_ROLLING[1] - PLAUSIBLE_ROLLING[0])
    narrow = np.linspace(0.0039, 0.0041, 101)
    assert separation_problem(SOLVED, 0.999, narrow) is None  # the interval rules, not r


def test_without_an_interval_the_correlation_decides():
    assert separation_problem(SOLVED, SEPARATION_LIMIT + 0.005, None)["reason"] == "correlation"
    assert separation_problem(SOLVED, SEPARATION_LIMIT - 0.1, None) is None


def test_the_interval_is_numpy_s_percentiles_when_usable():
    values = np.random.default_rng(3).normal(0.3, 0.01, 400)
    assert bootstrap_interval(values, True) == pytest.approx(
        tuple(np.percentile(values, [2.5, 97.5])))
    assert bootstrap_interval(values, False) is None
