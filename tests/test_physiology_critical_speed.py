"""Specification of pacing.physiology.critical_speed: the critical speed model of running and
the balance of D′.

Each check names its source; values marked [calc] or [mem] are in docs/references.md,
"Critical speed and D′".
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.errors import InputError
from pacing.physiology.critical_speed import (
    check_critical_speed,
    critical_speed_flat_race_time,
    critical_speed_time_limit,
    distance_capacity_balance,
)


def test_critical_speed_model_time_limit():
    # Poole et al. 2016 (MSSE 48:2320): t = D′/(v − CS) [read]; Kordi et al. 2019 (IJSPP
    # 14:685) trained men CS 4.94 m/s, D′ 123 m [read]: at 5.5 m/s, 123/0.56 = 219.64 s [calc]
    assert critical_speed_time_limit(5.5, 4.94, 123.0) == pytest.approx(219.642857, rel=1e-6)
    assert np.isinf(critical_speed_time_limit(4.9, 4.94, 123.0))
    # 5 km on the flat: t = (d − D′)/CS = 4877/4.94 = 987.247 s [calc]
    assert critical_speed_flat_race_time(5000.0, 4.94, 123.0) == pytest.approx(987.2470, abs=1e-3)
    with pytest.raises(InputError):
        critical_speed_flat_race_time(100.0, 4.94, 123.0)
    with pytest.raises(InputError):
        critical_speed_time_limit(5.0, -1.0, 123.0)


def test_time_limit_on_arrays_is_infinite_at_and_below_critical_speed():
    limit = critical_speed_time_limit(np.array([4.0, 4.94, 5.94]), 4.94, 123.0)
    assert np.isinf(limit[:2]).all()
    assert limit[2] == pytest.approx(123.0)  # 1 m/s above CS spends D′ in D′/1 s


def test_the_flat_race_time_holds_exactly_the_speed_the_time_limit_allows():
    # t = (d − D′)/CS and t_lim(d/t) = D′/(d/t − CS) meet at the race time (algebra)
    time = critical_speed_flat_race_time(10_000.0, 4.5, 200.0)
    assert critical_speed_time_limit(10_000.0 / time, 4.5, 200.0) == pytest.approx(time)


def test_distance_capacity_balance_falls_above_and_recovers_below_critical_speed():
    # Skiba differential form (docs/references.md, "Critical power and W′ balance", [mem]) in
    # speed units: 60 s at CS + 1 m/s spends 60 m; then 100 s at CS − 1 m/s recovers
    # D′ − 60·e^(−100/123)
    balance = distance_capacity_balance([5.94, 3.94], [60.0, 100.0], 4.94, 123.0)
    assert balance[0] == pytest.approx(63.0)
    assert balance[1] == pytest.approx(123.0 - 60.0 * np.exp(-100.0 / 123.0))


def test_distance_capacity_balance_refuses_mismatched_series():
    with pytest.raises(InputError, match="1-D arrays of equal length"):
        distance_capacity_balance([5.0, 4.0], [60.0], 4.94, 123.0)
    with pytest.raises(InputError, match="1-D arrays of equal length"):
        distance_capacity_balance([[5.0]], [[60.0]], 4.94, 123.0)


@pytest.mark.parametrize(("critical_speed", "d_prime", "message"), [
    (0.4, 123.0, "critical speed"), (11.0, 123.0, "critical speed"),
    (float("nan"), 123.0, "critical speed"), (4.0, 0.0, "D′"), (4.0, 2500.0, "D′"),
    (4.0, float("inf"), "D′"),
])
def test_implausible_critical_speed_or_d_prime_is_refused(critical_speed, d_prime, message):
    with pytest.raises(InputError, match=message):
        check_critical_speed(critical_speed, d_prime)


@settings(max_examples=60, deadline=None)
@given(speed=st.floats(3.0, 7.0), extra=st.floats(0.01, 2.0))
def test_faster_running_never_lasts_longer(speed, extra):
    slow, fast = critical_speed_time_limit(np.array([speed, speed + extra]), 4.5, 200.0)
    assert fast <= slow
