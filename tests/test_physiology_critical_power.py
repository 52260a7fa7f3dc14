"""Critical power, W′ balance and effort-weighted power (pacing.physiology.critical_power)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate

from pacing.errors import InputError
from pacing.physiology.critical_power import (
    W_PRIME_BALANCE_MODELS,
    effort_weighted_power,
    power_for_duration,
    recovery_time_constant,
    resample_power,
    time_to_exhaustion,
    time_to_exhaustion_morton,
    w_prime_balance,
    w_prime_balance_differential,
    w_prime_balance_integral,
)

CP, W_PRIME = 250.0, 20000.0

# ---------------------------------------------------------------- critical power models


def test_critical_power_model_check_value():
    # docs/references.md, "Critical power and W′ balance" [calc]: CP 250 W, W′ 20 kJ, 400 W
    # → 133.3 s.
    # Equation P = W′/t + CP as printed in Skiba et al. 2012's abstract [read].
    assert time_to_exhaustion(400.0, CP, W_PRIME) == pytest.approx(133.333, abs=0.001)


def test_morton_three_parameter_check_value():
    # docs/references.md, "Critical power and W′ balance" [calc], Morton 1996 (equation from
    # memory): P_max 1000 W → 106.7 s.
    assert time_to_exhaustion_morton(400.0, CP, W_PRIME, 1000.0) == pytest.approx(
        106.667, abs=0.001)


def test_morton_is_zero_at_max_power_and_shorter_than_two_parameter():
    powers = np.array([300.0, 400.0, 800.0, 1000.0])
    morton = time_to_exhaustion_morton(powers, CP, W_PRIME, 1000.0)
    assert morton[-1] == pytest.approx(0.0, abs=1e-9)
    assert np.all(morton < time_to_exhaustion(powers, CP, W_PRIME))


def test_at_or_below_critical_power_lasts_forever():
    assert np.all(np.isinf(time_to_exhaustion(np.array([100.0, 250.0]), CP, W_PRIME)))
    assert np.isinf(time_to_exhaustion_morton(250.0, CP, W_PRIME, 1000.0))


def test_power_for_duration_inverts_time_to_exhaustion():
    durations = np.array([60.0, 300.0, 1200.0])
    power = power_for_duration(durations, CP, W_PRIME)
    np.testing.assert_allclose(time_to_exhaustion(power, CP, W_PRIME), durations, rtol=1e-12)


@pytest.mark.parametrize("call", [
    lambda: time_to_exhaustion(400.0, -1.0, W_PRIME),
    lambda: time_to_exhaustion(400.0, CP, 0.0),
    lambda: time_to_exhaustion_morton(400.0, CP, W_PRIME, 200.0),
    lambda: time_to_exhaustion_morton(1200.0, CP, W_PRIME, 1000.0),
    lambda: power_for_duration(0.0, CP, W_PRIME),
])
def test_bad_physiology_raises_input_error(call):
    with pytest.raises(InputError):
        call()


# ---------------------------------------------------------------- W′ balance, worked examples


def test_differential_form_worked_example():
    # docs/references.md, "Critical power and W′ balance" [calc] from Skiba et al. 2015's
    # differential form (equation from memory):
    # 60 s at 400 W then 60 s at 150 W → 13332.6 J.
    balance = w_prime_balance_differential([400.0, 150.0], [60.0, 60.0], CP, W_PRIME)
    assert balance[0] == pytest.approx(W_PRIME - 150.0 * 60.0)
    assert balance[-1] == pytest.approx(13332.6, abs=0.05)


def test_integral_form_worked_example():
    # docs/references.md, "Critical power and W′ balance" [calc] from Skiba et al. 2012's
    # integral form, continuous (equation and
    # τ = 546·e^(−0.01·D_CP) + 316 from memory): same series → 12434.0 J.
    balance = w_prime_balance_integral([400.0, 150.0], [60.0, 60.0], CP, W_PRIME)
    assert balance[-1] == pytest.approx(12434.0, abs=0.05)


def test_recovery_time_constant():
    # τ = 546·e^(−1) + 316 for D_CP = 100 W (Skiba et al. 2012, constants from memory).
    assert recovery_time_constant(100.0) == pytest.approx(546.0 / np.e + 316.0, rel=1e-12)
    assert recovery_time_constant(0.0) == pytest.approx(862.0)


@pytest.mark.parametrize("model", sorted(W_PRIME_BALANCE_MODELS))
def test_result_does_not_depend_on_sampling(model):
    one_second = np.r_[np.full(60, 400.0), np.full(60, 150.0)]
    fine = w_prime_balance(one_second, np.ones(120), CP, W_PRIME, model)
    coarse = w_prime_balance([400.0, 150.0], [60.0, 60.0], CP, W_PRIME, model)
    assert fine[59] == pytest.approx(coarse[0], rel=1e-12)
    assert fine[-1] == pytest.approx(coarse[-1], rel=1e-12)


def test_constant_power_above_cp_empties_w_prime_at_the_time_limit():
    # The differential form above CP is the CP model itself: W′ is gone at t_lim.
    limit = float(time_to_exhaustion(400.0, CP, W_PRIME))
    balance = w_prime_balance_differential([400.0], [limit], CP, W_PRIME)
    assert balance[-1] == pytest.approx(0.0, abs=1e-9)


def _random_series(seed: int, count: int = 40):
    rng = np.random.default_rng(seed)
    return rng.uniform(50.0, 500.0, count), rng.uniform(1.0, 90.0, count)


def test_differential_form_matches_scipy_ode_solver():
    # Reference: scipy.integrate.solve_ivp on dW/dt of Skiba et al. 2015.
    power, duration = _random_series(3)
    edges = np.concatenate([[0.0], np.cumsum(duration)])
    state = W_PRIME
    for p, (a, b) in zip(power, zip(edges[:-1], edges[1:], strict=True), strict=True):
        def rate(t, w, p=p):
            return [-(p - CP) if p > CP else (CP - p) * (W_PRIME - w[0]) / W_PRIME]
        state = integrate.solve_ivp(rate, (a, b), [state], rtol=1e-11, atol=1e-8).y[0, -1]
    ours = w_prime_balance_differential(power, duration, CP, W_PRIME)[-1]
    assert ours == pytest.approx(state, abs=1e-4)


def test_integral_form_matches_scipy_quadrature():
    # Reference: scipy.integrate.quad of W′ − ∫ (P − CP)⁺ e^{−(t−u)/τ} du (Skiba et al. 2012).
    power, duration = _random_series(5, 12)
    edges = np.concatenate([[0.0], np.cumsum(duration)])
    below = power < CP
    gap = CP - np.sum(power[below] * duration[below]) / np.sum(duration[below])
    tau = recovery_time_constant(gap)
    end = edges[-1]
    spent = sum(
        integrate.quad(lambda u, p=p: max(p - CP, 0.0) * np.exp(-(end - u) / tau), a, b)[0]
        for p, a, b in zip(power, edges[:-1], edges[1:], strict=True)
    )
    ours = w_prime_balance_integral(power, duration, CP, W_PRIME)[-1]
    assert ours == pytest.approx(W_PRIME - spent, abs=1e-6)


def test_long_recovery_stays_finite():
    # Many hours of easy riding after a hard start: the chunked scan must not overflow.
    power = np.r_[[600.0], np.full(20000, 100.0)]
    duration = np.r_[[30.0], np.full(20000, 5.0)]
    for model in W_PRIME_BALANCE_MODELS:
        balance = w_prime_balance(power, duration, CP, W_PRIME, model)
        assert np.all(np.isfinite(balance))
        assert balance[-1] == pytest.approx(W_PRIME, abs=1e-3)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(0.0, 800.0), st.floats(0.1, 120.0)), min_size=1,
                max_size=30),
       st.sampled_from(sorted(W_PRIME_BALANCE_MODELS)))
def test_balance_properties(samples, model):
    power, duration = (np.array(x) for x in zip(*samples, strict=True))
    balance = w_prime_balance(power, duration, CP, W_PRIME, model)
    assert np.all(balance <= W_PRIME + 1e-6)
    if model == "differential":
        # more power everywhere never leaves more W′ (the recovery rate depends only on the
        # instantaneous power); the integral form is not monotone: see the next test
        harder = w_prime_balance(power + 20.0, duration, CP, W_PRIME, model)
        assert np.all(harder <= balance + 1e-6)
    if np.all(power <= CP):
        np.testing.assert_allclose(balance, W_PRIME)


def test_integral_form_recovers_faster_when_the_easy_riding_is_easier():
    """In the integral form (Skiba et al. 2012) the recovery time constant
    τ = 546·e^(−0.01·D_CP) + 316 s depends on D_CP, CP minus the mean power of all the riding
    below CP. Raising every power by 20 W can move a sample from just below CP to CP, which
    leaves only the easier samples in that mean, raises D_CP, shortens τ, and so leaves MORE
    W′ afterwards: the form is not monotone in power. A counterexample found by hypothesis;
    the differential form has no such effect."""
    power = np.array([0.0, 361.0, 230.0])
    duration = np.array([1.0, 2.0, 120.0])
    easier = w_prime_balance(power, duration, CP, W_PRIME, "integral")
    harder = w_prime_balance(power + 20.0, duration, CP, W_PRIME, "integral")
    assert harder[-1] > easier[-1]
    differential_easier = w_prime_balance(power, duration, CP, W_PRIME, "differential")
    differential_harder = w_prime_balance(power + 20.0, duration, CP, W_PRIME, "differential")
    assert differential_harder[-1] <= differential_easier[-1]


def test_unknown_model_and_bad_series_raise():
    with pytest.raises(InputError):
        w_prime_balance([300.0], [10.0], CP, W_PRIME, "guess")
    with pytest.raises(InputError):
        w_prime_balance_differential([300.0], [-1.0], CP, W_PRIME)
    with pytest.raises(InputError):
        w_prime_balance_integral([np.nan], [1.0], CP, W_PRIME)


# ---------------------------------------------------------------- effort-weighted power


def test_resampling_keeps_the_work():
    power, duration = _random_series(7)
    duration = np.round(duration)  # whole seconds: nothing dropped at the end
    sampled = resample_power(power, duration, 1.0)
    assert sampled.sum() == pytest.approx(np.sum(power * duration), rel=1e-12)


def test_effort_weighted_power_of_steady_riding_is_the_power():
    assert effort_weighted_power(np.full(10, 250.0), np.full(10, 60.0)) == pytest.approx(250.0)


def test_effort_weighted_power_of_two_blocks_by_hand():
    # 60 s at 400 W then 60 s at 150 W, 30 s window on 1 s samples: 91 windows; the 29 that
    # straddle the change ramp linearly (common practice for this kind of average).
    rolling = np.r_[np.full(31, 400.0), 400.0 - 250.0 * np.arange(1, 30) / 30.0,
                    np.full(31, 150.0)]
    by_hand = np.mean(rolling**4) ** 0.25
    assert effort_weighted_power([400.0, 150.0], [60.0, 60.0]) == pytest.approx(by_hand,
                                                                                  rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.floats(0.0, 800.0), st.floats(0.5, 200.0)), min_size=1,
                max_size=20))
def test_effort_weighted_power_lies_between_lowest_and_peak(samples):
    power, duration = (np.array(x) for x in zip(*samples, strict=True))
    value = effort_weighted_power(power, duration)
    assert power.min() - 1e-6 <= value <= power.max() + 1e-6


def test_surges_weigh_more_than_steady_riding_at_the_same_mean():
    steady = effort_weighted_power([275.0], [600.0])
    surging = effort_weighted_power([400.0, 150.0] * 5, [60.0] * 10)
    assert surging > steady


def test_effort_weighted_power_rejects_negative_power():
    with pytest.raises(InputError):
        effort_weighted_power([-5.0], [60.0])
