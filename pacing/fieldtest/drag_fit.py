"""The least squares of a field test (pacing.fieldtest.estimate.estimate_drag): CdA per position
and a common Crr fitted jointly, or, when the laps cannot separate them, CdA alone with Crr held
at a typical value; with the bootstrap over laps and its percentile intervals (Efron &
Tibshirani 1993). The normal equations and the bootstrap are in pacing.fieldtest.fit.

References
----------
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from pacing.errors import InputError
from pacing.fieldtest.checks import PLAUSIBLE_ROLLING
from pacing.fieldtest.fit import (
    Columns,
    Refit,
    bootstrap_fits,
    estimate_correlation,
    normal_equations,
    solve_normal_equations,
)
from pacing.fieldtest.methods import FieldTestMethod

SEPARATION_LIMIT = 0.99
"""|correlation| of the CdA and Crr estimates above which they are reported as inseparable
when there is no bootstrap interval of Crr to judge by (see `estimate_drag`)."""


@dataclass(frozen=True, eq=False)
class DragFit:
    """The solved least squares.

    solution : CdA per position [m²] (then Crr [-] when fitted); correlation : of the joint
    estimates [-]; draws : bootstrap estimates; valid : enough draws for an interval;
    held_value : Crr held [-] (given or fallback) or None; held : held at the fallback;
    problem : values of the separation notice, or None.
    """

    solution: np.ndarray
    correlation: float
    draws: np.ndarray
    valid: bool
    held_value: float | None
    held: bool
    problem: dict[str, Any] | None


def separation_problem(solution: np.ndarray | None, correlation: float,
                       rolling_draws: np.ndarray | None) -> dict[str, Any] | None:
    """Why the laps cannot separate CdA from Crr (notice values), or None when they can.

    With bootstrap draws of Crr: when their 95 % interval is wider than the spread of road
    tyres (PLAUSIBLE_ROLLING), the laps say less about Crr than a typical value does. Without
    them: when |correlation| of the two estimates exceeds SEPARATION_LIMIT.

    Parameters
    ----------
    solution : numpy.ndarray or None
        The joint fit (None when singular).
    correlation : float
        |correlation| of the CdA and Crr estimates [-].
    rolling_draws : numpy.ndarray or None
        Bootstrap draws of Crr [-], or None when there is no usable interval.

    Returns
    -------
    dict or None
        ``reason`` ("singular", "crr-interval" or "correlation") with ``correlation`` [-] and,
        for "crr-interval", ``rolling_ci95_low``, ``rolling_ci95_high`` and
        ``rolling_spread`` [-].
    """
    if solution is None:
        return {"reason": "singular"}
    if rolling_draws is not None:
        low, high = np.percentile(rolling_draws, [2.5, 97.5])
        span = PLAUSIBLE_ROLLING[1] - PLAUSIBLE_ROLLING[0]
        if high - low > span:
            return {"reason": "crr-interval", "correlation": correlation,
                    "rolling_ci95_low": float(low), "rolling_ci95_high": float(high),
                    "rolling_spread": span}
        return None
    if correlation > SEPARATION_LIMIT:
        return {"reason": "correlation", "correlation": correlation}
    return None


def solve_once(groups: Sequence[Columns], method: FieldTestMethod, rolling: float | None,
               bootstrap: int, seed: int, bootstrap_when_singular: bool,
               refit: Refit | None = None) -> tuple[np.ndarray | None, float, np.ndarray, bool]:
    """(solution or None, correlation, bootstrap draws, enough draws) of one least squares."""
    equations = normal_equations(groups, method.offset_per_lap, rolling)
    solution = None if equations is None else solve_normal_equations(*equations)
    correlation = 1.0
    if equations is not None and solution is not None:
        correlation = estimate_correlation(equations[0], rolling is not None)
    draws = bootstrap_fits(groups, method.offset_per_lap, rolling,
                           bootstrap if solution is not None or bootstrap_when_singular else 0,
                           seed, refit)
    valid = draws.shape[0] >= max(20, bootstrap // 2) if bootstrap else False
    return solution, correlation, draws, valid


def fit_drag(groups: Sequence[Columns], method: FieldTestMethod,
             rolling_coefficient: float | None, fallback_rolling_coefficient: float | None,
             bootstrap: int, seed: int,
             few: Sequence[str], refit: Refit | None = None) -> DragFit:
    """Fit CdA per position and Crr; hold Crr at the fallback when the laps cannot separate
    them. Raises InputError when no CdA can be fitted."""
    fixed = rolling_coefficient is not None
    solution, correlation, draws, valid = solve_once(groups, method, rolling_coefficient, bootstrap,
                                                 seed, bootstrap_when_singular=False,
                                                 refit=refit)
    problem = None if fixed else separation_problem(
        solution, correlation, draws[:, -1] if valid and not few else None)
    held_value = rolling_coefficient
    held = problem is not None and fallback_rolling_coefficient is not None
    if problem is not None and fallback_rolling_coefficient is not None:
        # CdA and Crr trade off freely: hold Crr at the typical value, fit CdA alone
        held_value = float(fallback_rolling_coefficient)
        solution, _, draws, valid = solve_once(groups, method, held_value, bootstrap, seed,
                                           bootstrap_when_singular=True, refit=refit)
    if solution is None:
        raise InputError("CdA and Crr cannot be separated from these laps: ride laps at "
                         "clearly different speeds, or give Crr")
    return DragFit(solution, correlation, draws, valid, held_value, held, problem)


def bootstrap_interval(values: np.ndarray, usable: bool) -> tuple[float, float] | None:
    """Percentile 95 % interval of bootstrap values, or None when not usable."""
    if not usable:
        return None
    low, high = np.percentile(values, [2.5, 97.5])
    return float(low), float(high)
