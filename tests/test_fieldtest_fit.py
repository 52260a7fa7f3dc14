"""Least squares of CdA and Crr over laps (pacing.fieldtest.fit), checked against numpy's own least
squares (numpy.linalg.lstsq, a reference library) on columns made up for the purpose, and the
columns each method makes of a lap. The fit on simulated test rides is in
tests/test_fieldtest_estimate.py."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.fieldtest.fit import (
    GRID_POINTS,
    bootstrap_fits,
    closure_columns,
    drag_area_per_rolling,
    estimate_correlation,
    normal_equations,
    profile_columns,
    regression_columns,
    regression_lap_drag_area,
    solve_normal_equations,
    virtual_elevation_lap_drag_area,
)
from pacing.fieldtest.laps import LapTerms


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
    solution = solve_normal_equations(*normal_equations(groups, False, fixed_rolling))
    assert solution == pytest.approx(stacked_lstsq(groups, fixed_rolling), rel=1e-9)


def test_exact_columns_give_back_cda_and_crr():
    groups = [columns(3), columns(4, area=0.25)]
    solution = solve_normal_equations(*normal_equations(groups, False, None))
    assert solution == pytest.approx([0.3, 0.25, 0.005], rel=1e-9)


def test_columns_in_proportion_cannot_be_separated():
    y, a, _ = columns(5)
    equations = normal_equations([(y, a, 3.0 * a)], False, None)
    assert solve_normal_equations(*equations) is None
    assert estimate_correlation(equations[0], fixed=False) == pytest.approx(1.0)
    assert estimate_correlation(equations[0], fixed=True) == 0.0


def test_cda_moves_with_the_held_crr_by_the_reported_slope():
    groups = [columns(6, noise=2.0)]
    (slope,) = drag_area_per_rolling(groups, False)
    low = solve_normal_equations(*normal_equations(groups, False, 0.003))[0]
    high = solve_normal_equations(*normal_equations(groups, False, 0.006))[0]
    assert (high - low) / 0.003 == pytest.approx(slope, rel=1e-9)


def test_bootstrap_is_reproducible_and_centred_on_the_fit():
    groups = [columns(7, laps=8, noise=5.0)]
    first = bootstrap_fits(groups, False, None, 200, seed=3)
    assert first.shape[1] == 2 and first.shape[0] > 150
    assert np.array_equal(first, bootstrap_fits(groups, False, None, 200, seed=3))
    fit = solve_normal_equations(*normal_equations(groups, False, None))
    assert np.median(first[:, 0]) == pytest.approx(fit[0], rel=0.05)
    assert bootstrap_fits(groups, False, None, 0, seed=3).shape == (0, 2)


def test_a_lap_offset_is_removed_when_each_lap_keeps_its_own():
    # method "profile": a constant added to one lap's y (its own height offset) changes
    # nothing once the columns are centred per lap, but biases the uncentred fit
    y, a, b = columns(8, points=5)
    shifted = y.copy()
    shifted[2] += 40.0
    centred = solve_normal_equations(*normal_equations([(y, a, b)], True, None))
    moved = solve_normal_equations(*normal_equations([(shifted, a, b)], True, None))
    assert moved == pytest.approx(centred, rel=1e-9)
    uncentred = solve_normal_equations(*normal_equations([(shifted, a, b)], False, None))
    assert uncentred != pytest.approx(centred, rel=1e-3)
    # and centring agrees with numpy's least squares on the centred stack
    flat = [v - v.mean(axis=1, keepdims=True) for v in (shifted, a, b)]
    assert moved == pytest.approx(stacked_lstsq([tuple(flat)]), rel=1e-9)


# ---------------------------------------------------------------------------------------------
# What each lap contributes
# ---------------------------------------------------------------------------------------------


def made_up_lap(points: int = 11, area: float = 0.3, rolling: float = 0.005,
                reference: np.ndarray | None = None) -> LapTerms:
    """A lap whose virtual elevation with (area, rolling) follows `reference` (0 by default):
    known = area·drag + rolling·rolling_column + reference, with columns growing along it."""
    fraction = np.linspace(0.0, 1.0, points)
    drag = 800.0 * fraction + 50.0 * np.sin(3 * fraction)
    rolling_column = 6000.0 * fraction
    height = np.zeros(points) if reference is None else reference
    known = area * drag + rolling * rolling_column + height
    run = np.array([area * 120.0 + rolling * 784.0, 120.0, 784.0])
    return LapTerms(group=0, start=0, end=points - 1, time=fraction * 300.0,
                    distance=fraction * 2000.0, known=known, drag=drag, rolling=rolling_column,
                    measured=None, reference=reference, start_elevation=0.0, run=run,
                    fraction=fraction)


def test_each_method_gives_its_columns_their_shape():
    laps = [made_up_lap(), made_up_lap(points=21)]
    for make, width in ((closure_columns, 1), (regression_columns, 1),
                        (profile_columns, GRID_POINTS)):
        y, a, b = make(laps)
        assert y.shape == a.shape == b.shape == (2, width)


def test_closure_columns_are_the_lap_totals():
    lap = made_up_lap()
    y, a, b = closure_columns([lap])
    assert (y[0, 0], a[0, 0], b[0, 0]) == (lap.known[-1], lap.drag[-1], lap.rolling[-1])


def test_each_lap_alone_gives_back_the_cda_it_was_made_with():
    climbing = 3.0 * np.linspace(0.0, 1.0, 11) + 0.5 * np.sin(np.linspace(0.0, 6.0, 11))
    for lap in (made_up_lap(), made_up_lap(reference=climbing)):
        assert virtual_elevation_lap_drag_area(lap, 0.005) == pytest.approx(0.3, rel=1e-12)
    assert regression_lap_drag_area(made_up_lap(), 0.005) == pytest.approx(0.3, rel=1e-12)
