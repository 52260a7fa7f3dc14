"""Least squares of CdA and Crr over laps (pacing.fieldtest.fit), checked against numpy's own least
squares (numpy.linalg.lstsq, a reference library) on columns made up for the purpose. The fit
on simulated test rides is in tests/test_fieldtest_estimate.py."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.fieldtest.fit import (
    bootstrap_fits,
    drag_area_per_rolling,
    estimate_correlation,
    normal_equations,
    solve_normal_equations,
)


def columns(seed: int, laps: int = 6, points: int = 1, area: float = 0.3,
            rolling: float = 0.005, noise: float = 0.0):
    """y = CdA·a + Crr·b (+ noise) with drag and rolling columns of varied size."""
    rng = np.random.default_rng(seed)
    a = rng.uniform(500.0, 2000.0, (laps, points))
    b = rng.uniform(5000.0, 8000.0, (laps, points))
    y = area * a + rolling * b + noise * rng.standard_normal((laps, points))
    return y, a, b


def stacked_lstsq(groups, fixed_rolling=None):
    """Reference: numpy.linalg.lstsq on the stacked design matrix (one CdA column per group)."""
    rows, right = [], []
    for p, (y, a, b) in enumerate(groups):
        for lap in range(y.shape[0]):
            for g in range(y.shape[1]):
                row = np.zeros(len(groups) + (fixed_rolling is None))
                row[p] = a[lap, g]
                if fixed_rolling is None:
                    row[-1] = b[lap, g]
                rows.append(row)
                held = 0.0 if fixed_rolling is None else fixed_rolling * b[lap, g]
                right.append(y[lap, g] - held)
    return np.linalg.lstsq(np.array(rows), np.array(right), rcond=None)[0]


@pytest.mark.parametrize("fixed_rolling", [None, 0.004])
def test_normal_equations_agree_with_numpy_lstsq(fixed_rolling):
    groups = [columns(1, noise=2.0), columns(2, area=0.27, noise=2.0)]
    solution = solve_normal_equations(*normal_equations(groups, "loop", fixed_rolling))
    assert solution == pytest.approx(stacked_lstsq(groups, fixed_rolling), rel=1e-9)


def test_exact_columns_give_back_cda_and_crr():
    groups = [columns(3), columns(4, area=0.25)]
    solution = solve_normal_equations(*normal_equations(groups, "loop", None))
    assert solution == pytest.approx([0.3, 0.25, 0.005], rel=1e-9)


def test_columns_in_proportion_cannot_be_separated():
    y, a, _ = columns(5)
    equations = normal_equations([(y, a, 3.0 * a)], "loop", None)
    assert solve_normal_equations(*equations) is None
    assert estimate_correlation(equations[0], fixed=False) == pytest.approx(1.0)
    assert estimate_correlation(equations[0], fixed=True) == 0.0


def test_cda_moves_with_the_held_crr_by_the_reported_slope():
    groups = [columns(6, noise=2.0)]
    (slope,) = drag_area_per_rolling(groups, "loop")
    low = solve_normal_equations(*normal_equations(groups, "loop", 0.003))[0]
    high = solve_normal_equations(*normal_equations(groups, "loop", 0.006))[0]
    assert (high - low) / 0.003 == pytest.approx(slope, rel=1e-9)


def test_bootstrap_is_reproducible_and_centred_on_the_fit():
    groups = [columns(7, laps=8, noise=5.0)]
    first = bootstrap_fits(groups, "loop", None, 200, seed=3)
    assert first.shape[1] == 2 and first.shape[0] > 150
    assert np.array_equal(first, bootstrap_fits(groups, "loop", None, 200, seed=3))
    fit = solve_normal_equations(*normal_equations(groups, "loop", None))
    assert np.median(first[:, 0]) == pytest.approx(fit[0], rel=0.05)
    assert bootstrap_fits(groups, "loop", None, 0, seed=3).shape == (0, 2)
