"""Specification of pacing.fieldtest.estimate_result: a field test's result makes the measured
position a Setup, by label or by index, rounded as a coach writes it (common practice:
CdA to 0.0001 m², Crr to 0.00001); an unknown label is refused in one line. The numbers are
made up; estimating them: tests/test_fieldtest_estimate.py."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.athlete import Setup
from pacing.errors import InputError
from pacing.fieldtest.estimate_result import FieldTestResult, PositionEstimate


def result() -> FieldTestResult:
    positions = tuple(PositionEstimate(label, area, None, 3, np.full(3, area), ())
                      for label, area in (("hoods", 0.312345), ("aero", 0.271234)))
    return FieldTestResult(method="loop", positions=positions, rolling_coefficient=0.0041234,
                           rolling_coefficient_ci95=None, rolling_fixed=False,
                           estimate_correlation=0.5, differences=(), warnings=(),
                           bootstrap_drag_area=np.empty((0, 2)))


def test_a_position_becomes_a_setup_by_label_or_index():
    by_label = result().setup("aero", bike_mass=8.5)
    assert isinstance(by_label, Setup) and by_label.name == "aero"
    assert by_label.drag_area == 0.2712 and by_label.rolling_coefficient == 0.00412
    assert result().setup(0, name="road bike").drag_area == 0.3123


def test_an_unknown_position_is_refused_in_one_line():
    with pytest.raises(InputError, match="no position named 'tt'"):
        result().setup("tt")
