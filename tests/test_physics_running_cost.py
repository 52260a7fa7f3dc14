"""Specification of pacing.physics.running_cost: the energy cost of running on a grade
(Minetti et al. 2002) and the registry of grade-cost models (air resistance and the speed
solve: tests/test_physics_running.py).

Each check names its source; values marked [calc] or [mem] are in docs/references.md,
"Running".
"""

from __future__ import annotations

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.physics.running_cost import RUNNING_COST_MODELS, running_cost_minetti

# --------------------------------------------------------------------------- cost on grades


@pytest.mark.parametrize(
    "grade, cost",
    # Minetti et al. 2002 (J Appl Physiol 93:1039) polynomial [read]; values [calc] in
    # docs/references.md, "Running", printed to 3 decimals.
    [(-0.2, 1.800), (-0.1, 2.152), (0.0, 3.600), (0.1, 5.968), (0.2, 9.007)],
)
def test_minetti_polynomial_matches_the_published_values(grade, cost):
    assert running_cost_minetti(grade) == pytest.approx(cost, abs=5e-4)


def test_minetti_cost_on_arrays_and_its_measured_level_value():
    grades = np.array([-0.2, 0.0, 0.2])
    assert running_cost_minetti(grades).shape == (3,)
    # Minetti et al. 2002: measured level cost 3.40 ± 0.24 J/(kg·m) [read]; the polynomial's
    # 3.6 lies within one SD.
    assert abs(running_cost_minetti(0.0) - 3.40) < 0.24


def test_minetti_range_is_clipped_or_refused():
    # Minetti et al. 2002 fitted −0.45..+0.45 [read]
    assert running_cost_minetti(0.6) == pytest.approx(running_cost_minetti(0.45))
    assert running_cost_minetti(-0.9) == pytest.approx(running_cost_minetti(-0.45))
    with pytest.raises(InputError):
        running_cost_minetti(0.5, outside_range="raise")
    with pytest.raises(InputError):
        running_cost_minetti(0.1, outside_range="extrapolate")
    with pytest.raises(InputError):
        running_cost_minetti(np.nan)


def test_every_registered_cost_model_costs_3_6_on_level_ground():
    for model in RUNNING_COST_MODELS.values():
        assert model.cost(0.0) == pytest.approx(3.6)
        low, high = model.grade_range
        assert low < 0 < high
        assert np.all(model.cost(np.linspace(low, high, 91)) > 0)
