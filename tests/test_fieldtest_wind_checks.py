"""Specification of pacing.fieldtest.wind_checks: when an estimated wind is not pinned down,
when it differs clearly from the one given, and the bootstrap's percentile interval (Efron &
Tibshirani 1993; checked against numpy.percentile, a reference library)."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.fieldtest.steady_wind import WindEstimate
from pacing.fieldtest.wind_checks import (
    loose_wind_values,
    percentile_interval,
    undeclared_wind_notices,
)
from pacing.weather.conditions import Conditions


def test_a_wide_wind_interval_means_the_wind_is_not_pinned_down():
    loose = WindEstimate(True, 3.0, 5.0, 90.0, (1.0, 9.0))
    assert loose_wind_values(loose)["reason"] == "interval"
    tight = WindEstimate(True, 3.0, 5.0, 90.0, (4.6, 5.4))
    assert loose_wind_values(tight) == {}


def test_a_search_at_its_bound_is_not_a_wind():
    at_bound = WindEstimate(True, 14.9, 24.0, 90.0)  # 0.95 × 15 m/s at rider height
    assert loose_wind_values(at_bound)["reason"] == "bound"


def test_the_interval_is_numpy_s_percentiles_and_needs_twenty_values():
    values = np.random.default_rng(4).normal(0.3, 0.02, 500)
    assert percentile_interval(values) == pytest.approx(tuple(np.percentile(values, [2.5, 97.5])))
    assert percentile_interval(np.r_[values[:19], np.nan, np.inf]) is None


def test_a_wind_found_far_from_the_given_one_is_warned_of():
    given = Conditions(wind_speed=0.0)  # told calm
    found = WindEstimate(True, 3.0, 5.0, 270.0, (4.0, 6.0))
    (notice,) = undeclared_wind_notices(found, given)
    assert notice.code == "fieldtest-wind-undeclared" and notice.values["speed_mps"] == 5.0
    near = WindEstimate(True, 0.3, 0.5, 270.0)  # within 0.5 m/s of calm at rider height
    assert undeclared_wind_notices(near, given) == []
