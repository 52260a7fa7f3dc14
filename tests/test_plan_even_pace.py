"""Even paces and the D′ balance of running plans (pacing.plan.even_pace).

Each check names its source. The forward models here are written out in the test, not taken
from the code under test: the cost of running on a grade is Minetti et al. (2002)'s polynomial,
Cr(i) = 155.4i⁵ − 30.4i⁴ − 43.3i³ + 46.3i² + 19.5i + 3.6 J/(kg·m) (J Appl Physiol
93(3):1039-1046), the air term ½·ρ·CdA·V·v_a·v/(η·m) with η = 0.361 (Lloyd & Zacks 1972,
J Physiol 223:355-363; the form of pacing.physics.running's module docstring), and the D′
balance Skiba's differential form (Skiba et al. 2015, Eur J Appl Physiol 115(4):703-713)
integrated by small Euler steps. Check values: docs/references.md, "Running" and "Critical
power and W′ balance". The courses and runners are those of tests/test_physics_running.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from test_physics_running import NO_AIR, average_runner, straight_course

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.plan.even_pace import (
    check_limits,
    even_pace_for_mean_power,
    even_pace_reference,
    even_pace_speed,
    even_pace_within_limits,
    highest_feasible_speed,
    lowest_even_pace_balance,
    piece_air,
    piece_metabolic_power,
    plan_d_prime_balance,
)

MINETTI_2002 = (155.4, -30.4, -43.3, 46.3, 19.5, 3.6)
"""Cr(i) coefficients, highest power first [J/(kg·m)] (Minetti et al. 2002, running)."""

LLOYD_ZACKS_1972 = 0.361
"""Efficiency of running against a horizontal impeding force [-] (Lloyd & Zacks 1972)."""

CS, D_PRIME = 4.94, 123.0
"""Trained men's mean critical speed [m/s] and D′ [m] (Kordi et al. 2019, IJSPP 14:685)."""


def cost(grade):
    """Minetti et al. (2002) energy cost of running on a grade [J/(kg·m)], written out."""
    i = np.asarray(grade, dtype=float)
    return sum(c * i ** (5 - k) for k, c in enumerate(MINETTI_2002))


def metabolic(speed, grade, density, runner, headwind=0.0, crosswind=0.0):
    """Metabolic power [W/kg]: Cr(i)·v + ½·ρ·CdA·(1 − d)·V·v_a·v/(η·m), written out."""
    v = np.asarray(speed, dtype=float)
    along = v + headwind
    apparent = np.sqrt(along**2 + np.asarray(crosswind) ** 2)
    air = 0.5 * density * runner.drag_area * (1.0 - runner.drafting_reduction) * apparent \
        * along * v / (LLOYD_ZACKS_1972 * runner.body_mass)
    return cost(grade) * v + air


def flat_speed_of(power, density, runner):
    """The flat, still-air speed of a metabolic power [m/s], by brentq on `metabolic`."""
    return brentq(lambda v: metabolic(v, 0.0, density, runner) - power, 0.0, 50.0, xtol=1e-14)


def euler_balance(equivalent, time, critical_speed, d_prime, step=0.005):
    """D′ balance at the end of each piece by Skiba's differential form, Euler steps [m].

    dD/dt = −(u − CS) above CS; dD/dt = (CS − u)·(D′ − D)/D′ below (Skiba et al. 2015,
    speed for power), integrated with `step` [s] (the last step of a piece shortened). First
    order: with 5 ms steps it agrees with the exact solution per piece to about 1 mm.
    """
    balance, ends = d_prime, []
    for u, duration in zip(equivalent, time, strict=True):
        left = duration
        while left > 1e-12:
            dt = min(step, left)
            if u > critical_speed:
                balance -= (u - critical_speed) * dt
            else:
                balance += (critical_speed - u) * (d_prime - balance) / d_prime * dt
            left -= dt
        ends.append(balance)
    return np.array(ends)


def hill_course(amplitude=40.0, wavelength=2000.0, length=6000.0, step=20.0):
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, amplitude * np.sin(2 * np.pi * distance / wavelength))


# ------------------------------------------------------------------------------- piece_air


def test_piece_air_spreads_numbers_over_the_pieces():
    course = straight_course(1000.0, step=100.0)
    air = piece_air(course, 1.2, 3.0, -1.0)
    assert air.density.shape == air.headwind.shape == air.crosswind.shape == (10,)
    assert np.all(air.density == 1.2) and np.all(air.headwind == 3.0)
    assert np.all(air.crosswind == -1.0)
    per_piece = np.linspace(1.0, 1.3, 10)
    assert np.array_equal(piece_air(course, per_piece, 0.0, 0.0).density, per_piece)
    # the ends of the density range: above 0.3, at most 1.6 kg/m³
    assert piece_air(course, 1.6, 0.0, 0.0).density[0] == 1.6


@pytest.mark.parametrize("density, headwind, crosswind", [
    (0.3, 0.0, 0.0),  # at or below 0.3 kg/m³ (above the summit of Everest's ≈ 0.47)
    (1.61, 0.0, 0.0),  # above 1.6 kg/m³ (denser than air at −50 °C at sea level, ≈ 1.58)
    (-1.2, 0.0, 0.0),
    (np.nan, 0.0, 0.0),
    (1.2, np.inf, 0.0),
    (1.2, 0.0, np.nan),
    (np.full(9, 1.2), 0.0, 0.0),  # one value per piece, but 9 for 10 pieces
    (1.2, np.zeros((2, 10)), 0.0),  # not one number or one row
])
def test_piece_air_refuses_what_is_not_air(density, headwind, crosswind):
    with pytest.raises(InputError):
        piece_air(straight_course(1000.0, step=100.0), density, headwind, crosswind)


def test_piece_metabolic_power_is_minetti_cost_plus_the_air_term():
    course = hill_course(60.0)
    runner = average_runner()
    headwind = np.where(np.arange(course.grade.size) % 2, 3.0, -2.0)
    air = piece_air(course, 1.15, headwind, 1.5)
    expected = metabolic(3.5, course.grade, 1.15, runner, headwind, 1.5)
    assert piece_metabolic_power(course, runner, air, 3.5) == pytest.approx(expected, rel=1e-12)


# ------------------------------------------------------------------------ even pace speed


def mean_power_of(speed, course, runner, density=1.2, headwind=0.0, crosswind=0.0):
    """Time-weighted mean metabolic power of one speed [W/kg]: at a constant speed the time
    on piece j is L_j/v, so the mean is Σ P_j·L_j / Σ L_j."""
    power = metabolic(speed, course.grade, density, runner, headwind, crosswind)
    return float(np.sum(power * course.piece_length) / course.piece_length.sum())


@pytest.mark.parametrize("mean_power, headwind", [(12.0, 0.0), (16.5, 4.0), (6.0, -3.0)])
def test_even_pace_speed_meets_its_mean_power(mean_power, headwind):
    course = hill_course(50.0)
    runner = average_runner()
    head = np.where(np.arange(course.grade.size) < course.grade.size // 2, headwind, -headwind)
    air = piece_air(course, 1.1, head, 0.5)
    speed = even_pace_speed(course, runner, air, mean_power)
    expected = brentq(lambda v: mean_power_of(v, course, runner, 1.1, head, 0.5) - mean_power,
                      0.01, 20.0, xtol=1e-13)
    assert speed == pytest.approx(expected, rel=1e-9)
    assert even_pace_for_mean_power(course, runner, mean_power, 1.1, head, 0.5) == \
        pytest.approx(expected, rel=1e-9)


def test_even_pace_without_air_is_mean_power_over_mean_cost():
    # no air: P̄ = v · Σ Cr_j·L_j / Σ L_j (Minetti et al. 2002), so v = P̄ / mean cost
    course = hill_course(60.0)
    mean_cost = np.sum(cost(course.grade) * course.piece_length) / course.piece_length.sum()
    assert even_pace_for_mean_power(course, NO_AIR, 12.0) == pytest.approx(12.0 / mean_cost,
                                                                           rel=1e-10)


@pytest.mark.parametrize("mean_power", [0.0, -5.0, np.nan, np.inf])
def test_even_pace_refuses_a_mean_power_that_is_not_positive(mean_power):
    with pytest.raises(InputError):
        even_pace_for_mean_power(straight_course(1000.0), NO_AIR, mean_power)


def test_even_pace_refuses_a_mean_power_no_speed_reaches():
    # 1e7 W/kg needs more than 1000 m/s even on a treadmill (3.6 J/(kg·m) × 1000 m/s)
    course = straight_course(1000.0)
    with pytest.raises(InputError):
        even_pace_speed(course, NO_AIR, piece_air(course, 1.2, 0.0, 0.0), 1e7)


def test_even_pace_reference_is_the_even_pace_of_the_plans_mean_power():
    course = hill_course(40.0)
    runner = average_runner()
    air = piece_air(course, 1.2, 0.0, 0.0)
    speed = np.where(course.grade > 0, 3.0, 3.8)  # some plan
    time = course.piece_length / speed
    power = metabolic(speed, course.grade, 1.2, runner)
    mean = np.sum(power * time) / time.sum()
    expected = brentq(lambda v: mean_power_of(v, course, runner) - mean, 0.01, 20.0,
                      xtol=1e-13)
    reference = even_pace_reference(course, runner, air, power, time, effort=12.0)
    assert reference.speed == pytest.approx(expected, rel=1e-9)
    assert reference.time == pytest.approx(course.total_distance / expected, rel=1e-9)
    peak = metabolic(expected, course.grade, 1.2, runner).max() / 12.0
    assert reference.peak_effort_ratio == pytest.approx(peak, rel=1e-8)


# ---------------------------------------------------------------------- D′ balance of a plan


def test_d_prime_balance_matches_an_euler_integration_of_skibas_form():
    # treadmill runner: the flat speed of a metabolic power P is P / Cr(0) = P / 3.6
    power = np.array([20.0, 21.5, 15.0, 12.0, 19.0, -3.0, 18.5])  # W/kg; −3: a fast descent
    time = np.array([40.0, 25.0, 60.0, 90.0, 30.0, 45.0, 20.0])
    balance = plan_d_prime_balance(power, time, NO_AIR, 1.2, CS, D_PRIME)
    equivalent = np.maximum(power, 0.0) / 3.6  # not positive: standing still
    expected = euler_balance(equivalent, time, CS, D_PRIME)
    assert np.all(np.diff(expected)[[0, 3, 5]] < 0) and np.all(np.diff(expected)[[1, 2, 4]] > 0)
    assert balance == pytest.approx(expected, abs=2e-3)


def test_d_prime_balance_counts_each_piece_at_its_flat_speed_with_air():
    runner = average_runner()
    power = np.array([19.0, 14.0, 20.5, 10.0])  # W/kg
    time = np.array([50.0, 80.0, 35.0, 120.0])
    equivalent = [flat_speed_of(p, 1.1, runner) for p in power]
    expected = euler_balance(equivalent, time, CS, D_PRIME)
    balance = plan_d_prime_balance(power, time, runner, 1.1, CS, D_PRIME)
    assert balance == pytest.approx(expected, abs=2e-3)


def test_d_prime_balance_above_critical_speed_falls_at_the_excess_speed():
    # t = D′/(u − CS) (Poole et al. 2016): 123 m at 1 m/s above CS last 123 s
    power = np.full(4, 3.6 * (CS + 1.0))
    balance = plan_d_prime_balance(power, np.full(4, 123.0 / 4), NO_AIR, 1.2, CS, D_PRIME)
    assert balance == pytest.approx([92.25, 61.5, 30.75, 0.0], abs=1e-6)


@pytest.mark.parametrize("critical_speed, d_prime", [(0.4, 123.0), (4.94, 0.0), (4.94, 2500.0),
                                                     (np.nan, 123.0)])
def test_d_prime_balance_refuses_limits_out_of_range(critical_speed, d_prime):
    with pytest.raises(InputError):
        plan_d_prime_balance(np.array([15.0]), np.array([10.0]), NO_AIR, 1.2, critical_speed,
                             d_prime)


def test_lowest_even_pace_balance_is_the_lowest_of_an_euler_integration():
    course = hill_course(40.0, wavelength=3000.0)
    air = piece_air(course, 1.2, 0.0, 0.0)
    speed = 4.6
    time = course.piece_length / speed
    equivalent = cost(course.grade) * speed / 3.6  # treadmill: u = Cr(i)·v / Cr(0)
    expected = euler_balance(equivalent, time, CS, D_PRIME).min()
    assert lowest_even_pace_balance(course, NO_AIR, air, speed, CS, D_PRIME) == \
        pytest.approx(expected, abs=5e-3)


# --------------------------------------------------------------------- highest feasible speed


@pytest.mark.parametrize("low, high", [(1.0, 2.0), (1.0, 5.0), (3.69, 3.71)])
def test_highest_feasible_speed_finds_a_known_threshold(low, high):
    calls = []

    def feasible(speed):
        calls.append(speed)
        return speed <= 3.7

    found = highest_feasible_speed(feasible, low, high, 1e-9)
    assert 3.7 - 1e-9 <= found <= 3.7
    assert len(calls) < 60  # bisection: about log2(width / tolerance) steps


def test_highest_feasible_speed_refuses_limits_that_allow_any_speed():
    with pytest.raises(InputError):
        highest_feasible_speed(lambda speed: True, 1.0, 2.0, 1e-6)


# ------------------------------------------------------------- fastest even pace within D′


def test_fastest_even_pace_on_a_flat_course_is_the_closed_form():
    # flat, no air: t = (d − D′)/CS (Poole et al. 2016, Med Sci Sports Exerc 48(11):2320)
    course = straight_course(5000.0)
    speed = even_pace_within_limits(course, NO_AIR, CS, D_PRIME)
    assert 5000.0 / speed == pytest.approx((5000.0 - 123.0) / 4.94, abs=0.01)  # 987.247 s
    # with a reserve only D′ − reserve is spent
    kept = even_pace_within_limits(course, NO_AIR, CS, D_PRIME, d_prime_reserve=23.0)
    assert 5000.0 / kept == pytest.approx((5000.0 - 100.0) / 4.94, abs=0.01)


def test_fastest_even_pace_on_hills_spends_d_prime_to_the_reserve():
    course = hill_course(40.0, wavelength=3000.0)
    speed = even_pace_within_limits(course, NO_AIR, CS, D_PRIME, tolerance=1e-7)
    time = course.piece_length / speed
    lowest = euler_balance(cost(course.grade) * speed / 3.6, time, CS, D_PRIME).min()
    assert lowest == pytest.approx(0.0, abs=0.05)
    faster = euler_balance(cost(course.grade) * (speed + 0.01) / 3.6,
                           course.piece_length / (speed + 0.01), CS, D_PRIME).min()
    assert faster < 0.0


def test_fastest_even_pace_refuses_a_course_that_overdraws_d_prime_at_any_pace():
    # 1 km at +45 %: even 0.5 m/s costs Cr(0.45) ≈ 19.4 J/(kg·m) × 0.5 m/s, the flat speed
    # 2.7 m/s, 2.2 m/s above a CS of 0.5 m/s for 2000 s: far more than 10 m of D′
    course = straight_course(1000.0, grade=0.45)
    with pytest.raises(InputError):
        even_pace_within_limits(course, NO_AIR, 0.5, 10.0)


# ----------------------------------------------------------------------------- check_limits


def test_check_limits_wants_both_or_neither():
    assert check_limits(CS, D_PRIME) is True
    assert check_limits(None, None) is False
    with pytest.raises(InputError):
        check_limits(CS, None)
    with pytest.raises(InputError):
        check_limits(None, D_PRIME)
    with pytest.raises(InputError):
        check_limits(11.0, D_PRIME)  # above 10 m/s


def test_minetti_cost_written_here_matches_the_published_values():
    # guards the forward model above: Minetti et al. 2002 values [calc] to 3 decimals,
    # docs/references.md, "Running"
    assert [round(float(cost(i)), 3) for i in (-0.2, -0.1, 0.0, 0.1, 0.2)] == \
        [1.800, 2.152, 3.600, 5.968, 9.007]
    assert math.isclose(float(cost(0.0)), 3.6)
