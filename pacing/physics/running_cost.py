"""Energy cost of running on a grade: published models by name (Minetti et al. 2002).

Cr(i) is the metabolic energy per kilogram of body mass per metre travelled along the ground
[J/(kg·m)] on grade i [-], from treadmill running (no air resistance in it), independent of
speed. pacing.physics.running adds the work against the air and solves for speed. Check values:
docs/references.md, "Running".

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
doi:10.1152/japplphysiol.01177.2001
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError

MINETTI_2002_COEFFICIENTS = (155.4, -30.4, -43.3, 46.3, 19.5, 3.6)
"""Cr(i) = 155.4i⁵ − 30.4i⁴ − 43.3i³ + 46.3i² + 19.5i + 3.6 [J/(kg·m)], highest power first
(Minetti et al. 2002, running, fitted on −0.45 ≤ i ≤ +0.45)."""

MINETTI_2002_GRADE_RANGE = (-0.45, 0.45)
"""Grades the Minetti et al. (2002) running polynomial was fitted on [-]."""


def _polynomial_cost(
    grade: ArrayLike,
    coefficients: tuple[float, ...],
    grade_range: tuple[float, float],
    outside_range: str,
) -> np.ndarray:
    values = np.asarray(grade, dtype=float)
    if not np.all(np.isfinite(values)):
        raise InputError("grade must be a finite number")
    low, high = grade_range
    if outside_range == "raise":
        if np.any((values < low) | (values > high)):
            raise InputError(
                f"grade outside the running cost model's range {low:+.0%}..{high:+.0%}"
            )
    elif outside_range != "clip":
        raise InputError(f"outside_range must be 'clip' or 'raise', got {outside_range!r}")
    return np.polyval(np.asarray(coefficients), np.clip(values, low, high))


def running_cost_minetti(grade: ArrayLike, outside_range: str = "clip") -> np.ndarray:
    """Energy cost of running on a grade, Minetti et al. (2002) [J/(kg·m)].

    Cr(i) = 155.4·i⁵ − 30.4·i⁴ − 43.3·i³ + 46.3·i² + 19.5·i + 3.6

    Metabolic energy per kilogram of body mass per metre travelled (along the ground), from
    treadmill running (no air resistance), independent of speed. The fit covers
    −0.45 ≤ i ≤ +0.45; its cost is lowest near i = −0.18 (1.78 J/(kg·m)).

    Parameters
    ----------
    grade : float or array_like
        i, rise over run [-] (0.05 = 5 %).
    outside_range : {"clip", "raise"}, optional
        "clip" (default) evaluates grades beyond ±0.45 at the nearest end of the range;
        "raise" raises InputError instead [-].

    Returns
    -------
    numpy.ndarray
        Cr [J/(kg·m)], the shape of `grade`.

    References
    ----------
    Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking
    and running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
    doi:10.1152/japplphysiol.01177.2001
    docs/references.md, "Running".

    Examples
    --------
    The polynomial's constant term on the flat, and 155.4·0.2⁵ − 30.4·0.2⁴ − 43.3·0.2³ +
    46.3·0.2² + 19.5·0.2 + 3.6 = 9.007 at +20 % (the paper measured 3.40 ± 0.24 J/(kg·m) on
    the level):

    >>> running_cost_minetti([0.0, 0.2]).round(3).tolist()
    [3.6, 9.007]
    """
    return _polynomial_cost(grade, MINETTI_2002_COEFFICIENTS, MINETTI_2002_GRADE_RANGE,
                            outside_range)


@dataclass(frozen=True)
class GradeCostModel:
    """One published model of the energy cost of running on a grade.

    Attributes
    ----------
    name : str
        Registry key [-].
    cost : callable
        Function grade [-] → Cr [J/(kg·m)], with an ``outside_range`` keyword.
    grade_range : tuple of float
        (lowest, highest) grade it is used on [-].
    label : str
        Short description for menus [-].
    reference : str
        The source [-].
    """

    name: str
    cost: Callable[..., np.ndarray]
    grade_range: tuple[float, float]
    label: str
    reference: str


RUNNING_COST_MODELS: dict[str, GradeCostModel] = {
    "minetti-2002": GradeCostModel(
        "minetti-2002", running_cost_minetti, MINETTI_2002_GRADE_RANGE,
        "Minetti et al. 2002 (treadmill metabolic cost)",
        "Minetti et al. (2002), J Appl Physiol 93:1039",
    ),
}
"""Grade-cost models by name; "minetti-2002" is the default. A gentler shallow-grade model from
race data would belong here too; none is included until its coefficients can be checked
against the published paper itself."""
