"""Specification of the cycling power balance (pacing.physics.cycling).

Sources beside each check. The equation and constants of Martin et al. (1998) are from memory
(docs/references.md, "Cycling power balance (Martin et al. 1998)" marks them [mem]); the
worked values were computed there from that equation with plain floats and scipy's brentq
([calc]), so they pin the implementation to the equation as written there.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from pacing.errors import InputError
from pacing.physics.cycling import (
    MARTIN_1998,
    WALKING_SPEED,
    Rider,
    aerodynamic_force,
    air_speed_components,
    power_for_speed,
    speed_for_power,
    yaw_multiplier,
)

MARTIN_RIDER = Rider(mass=80.0, drag_area=0.269)
"""The worked-value rider of docs/references.md, "Cycling power balance (Martin et al. 1998)":
m = 80 kg, CdA = 0.269 m², Martin et al. constants."""


# ---------------------------------------------------------------- Martin et al. (1998)

@pytest.mark.parametrize(
    ("speed", "grade", "power"),
    [
        (10.0, 0.0, 195.6),   # [calc]: 10 m/s flat → 195.6 W
        (12.0, 0.0, 323.7),   # [calc]: 12 m/s flat → 323.7 W
        (5.0, 0.06, 275.3),   # [calc]: 5 m/s on 6 % → 275.3 W
    ],
)
def test_power_for_speed_matches_martin_1998_worked_values(speed, grade, power):
    # Martin et al. 1998 equation (from memory, [mem]); values printed to 0.1 W
    assert power_for_speed(speed, grade, 1.2, MARTIN_RIDER) == pytest.approx(power, abs=0.05)


def test_speed_for_power_matches_martin_1998_worked_value():
    # docs/references.md, "Cycling power balance (Martin et al. 1998)" [calc]: 289 W on
    # flat → 11.522 m/s (printed to 1 mm/s)
    assert speed_for_power(289.0, 0.0, 1.2, MARTIN_RIDER) == pytest.approx(11.522, abs=5e-4)


def test_default_constants_are_martin_1998():
    # Martin et al. 1998 constants (from memory; docs/references.md, "Cycling power balance
    # (Martin et al. 1998)" [mem])
    rider = Rider()
    assert rider.drivetrain_efficiency == 0.976
    assert rider.wheel_drag_area == 0.0044
    assert rider.wheel_inertia == 0.14 and rider.wheel_radius == 0.311
    assert rider.rolling_coefficient == 0.0032
    # bearing loss P = v·(91 + 8.7·v)·1e-3 W
    assert power_for_speed(10.0, 0.0, 1e-12, Rider(rolling_coefficient=0.0,
                                                   drivetrain_efficiency=1.0)) == \
        pytest.approx(10.0 * (91 + 87) * 1e-3, rel=1e-9)
    assert MARTIN_1998["bearing_force_constant"] == 0.091


def test_kinetic_energy_term_uses_wheel_inertia():
    # Martin et al. 1998: (m + I/r²)·v·dv/dt (from memory); I/r² = 0.14/0.311² = 1.4475 kg
    rider = Rider()
    extra = (power_for_speed(10.0, 0.0, 1.2, rider, acceleration=0.5)
             - power_for_speed(10.0, 0.0, 1.2, rider)) * rider.drivetrain_efficiency
    assert extra == pytest.approx((80.0 + 0.14 / 0.311**2) * 10.0 * 0.5, rel=1e-12)
    assert rider.effective_mass == pytest.approx(81.4475, abs=1e-4)


# ---------------------------------------------------------------- facts of the trade

def test_quadratic_drag_quadruples_when_speed_doubles():
    # common practice: quadratic drag ∝ v²
    ratio = aerodynamic_force(20.0, 1.2, Rider()) / aerodynamic_force(10.0, 1.2, Rider())
    assert ratio == pytest.approx(4.0, rel=1e-12)


def test_drag_at_36_is_1_44_times_drag_at_30():
    # common practice: (36/30)² = 1.44
    ratio = aerodynamic_force(36.0, 1.2, Rider()) / aerodynamic_force(30.0, 1.2, Rider())
    assert ratio == pytest.approx(1.44, rel=1e-12)


def test_apparent_wind_worked_value():
    # docs/references.md, "Wind" [calc]: v = 10, W = 5 from 90° → v_A = 11.180 m/s, yaw 26.57°
    along, apparent, yaw = air_speed_components(10.0, 0.0, 5.0)
    assert apparent == pytest.approx(11.180, abs=5e-4)
    assert yaw == pytest.approx(26.57, abs=5e-3)


def test_crosswind_raises_drag_along_the_track():
    # docs/references.md, "Wind"; Phys Rev Fluids 6:124601 (2021): crosswind drag is not just the
    # along-track part; here F = ½ρCdA·V·v_a > ½ρCdA·v_a²
    assert aerodynamic_force(10.0, 1.2, Rider(), 0.0, 4.0) > aerodynamic_force(10.0, 1.2, Rider())


def test_yaw_table_is_symmetric_and_interpolated():
    table = ((0.0, 1.0), (10.0, 0.9), (20.0, 0.95))
    assert yaw_multiplier(np.array([-5.0, 5.0, 15.0, 40.0]), table).tolist() == \
        pytest.approx([0.95, 0.95, 0.925, 0.95])
    assert yaw_multiplier(np.array([3.0]), None).tolist() == [1.0]


# ---------------------------------------------------------------- speed for power

def _brentq_speed(power, grade, density, rider, headwind, crosswind):
    """Reference root of power_for_speed(v) = P by scipy's brentq (independent of Newton)."""
    def excess(v):
        return float(power_for_speed(v, grade, density, rider, headwind, crosswind)) - power
    return brentq(excess, 1e-6, 200.0, xtol=1e-14, rtol=1e-15, maxiter=500)


def _random_cases(seed, count):
    rng = np.random.default_rng(seed)
    return (rng.uniform(0.0, 800.0, count), rng.uniform(-0.15, 0.15, count),
            rng.uniform(0.9, 1.3, count), rng.uniform(-12.0, 12.0, count),
            rng.uniform(-10.0, 10.0, count))


def test_speed_for_power_agrees_with_brentq_on_random_cases():
    # scipy.optimize.brentq as the reference library; 1e-9 relative
    power, grade, density, head, cross = _random_cases(7, 300)
    rider = Rider(mass=75.0, drag_area=0.28)
    speed = speed_for_power(power, grade, density, rider, head, cross)
    for i in range(power.size):
        expected = _brentq_speed(power[i], grade[i], density[i], rider, head[i], cross[i])
        assert speed[i] == pytest.approx(expected, rel=1e-9), i


@pytest.mark.parametrize(
    ("power", "grade", "headwind", "crosswind", "what"),
    [
        (0.0, 0.0, -15.0, 0.0, "tailwind faster than the rider, no power"),
        (150.0, 0.0, -14.0, 2.0, "tailwind faster than the rider, with power and crosswind"),
        (0.0, -0.12, 0.0, 0.0, "steep descent at zero power: terminal speed"),
        (0.0, -0.08, 5.0, 3.0, "descent into a headwind at zero power"),
        (60.0, 0.20, 0.0, 0.0, "steep climb at low power"),
        (1500.0, 0.0, 0.0, 0.0, "sprint power"),
    ],
)
def test_speed_for_power_hard_cases_agree_with_brentq(power, grade, headwind, crosswind, what):
    # scipy.optimize.brentq reference; 1e-9 relative
    rider = Rider()
    speed = float(speed_for_power(power, grade, 1.2, rider, headwind, crosswind))
    assert speed == pytest.approx(
        _brentq_speed(power, grade, 1.2, rider, headwind, crosswind), rel=1e-9), what


def test_terminal_speed_on_a_descent_balances_the_forces():
    rider = Rider(bearing_force_constant=0.0, bearing_force_per_speed=0.0, wheel_drag_area=0.0)
    grade = -0.08
    speed = float(speed_for_power(0.0, grade, 1.2, rider))
    # textbook terminal speed v_t = √(F/k), F = m·g·(sin θ − Crr·cos θ) (Taylor 2005 §2.4)
    theta = math.atan(-grade)
    force = rider.mass * 9.80665 * (math.sin(theta) - rider.rolling_coefficient * math.cos(theta))
    assert speed == pytest.approx(math.sqrt(force / (0.5 * 1.2 * rider.drag_area)), rel=1e-10)


def test_steep_climb_at_low_power_is_slow_but_positive_and_flagged():
    speed = float(speed_for_power(60.0, 0.20, 1.2, Rider()))
    assert 0.05 < speed < WALKING_SPEED


def test_speed_is_never_nan_or_zero_over_a_wide_grid():
    power, grade, head, cross = np.meshgrid(
        [0.0, 1.0, 50.0, 300.0, 2000.0], [-0.3, -0.1, 0.0, 0.1, 0.3],
        [-25.0, -5.0, 0.0, 5.0, 25.0], [0.0, 8.0], indexing="ij")
    speed = speed_for_power(power, grade, 1.2, Rider(), head, cross)
    assert speed.shape == power.shape
    assert np.all(np.isfinite(speed)) and np.all(speed > 0)


def test_speed_for_power_accepts_scalars_and_arrays():
    assert np.ndim(speed_for_power(250.0, 0.0, 1.2, Rider())) == 0
    assert speed_for_power(np.full(4, 250.0), np.zeros(4), 1.2, Rider()).shape == (4,)


def test_speed_for_power_with_yaw_table_agrees_with_brentq():
    rider = Rider(yaw_drag_table=((0.0, 1.0), (15.0, 0.92), (30.0, 0.97)))
    for head, cross in [(0.0, 3.0), (-4.0, 6.0), (5.0, -5.0)]:
        speed = float(speed_for_power(250.0, 0.02, 1.2, rider, head, cross))
        assert speed == pytest.approx(_brentq_speed(250.0, 0.02, 1.2, rider, head, cross),
                                      rel=1e-9)


def test_invalid_rider_is_refused():
    with pytest.raises(ValueError):
        Rider(mass=-1.0)
    with pytest.raises(ValueError):
        Rider(drag_area=0.0)


# ---------------------------------------------------------------- per-piece drag area and Crr

def test_per_piece_drag_area_and_crr_give_each_piece_its_own_steady_speed():
    # reference: scipy brentq on the Martin et al. balance, one scalar rider per piece
    areas = np.array([0.22, 0.30, 0.36, 0.25])
    rolling = np.array([0.003, 0.004, 0.0025, 0.006])
    grade = np.array([0.0, 0.06, -0.03, 0.01])
    head, cross = np.array([2.0, -1.0, 0.0, 4.0]), np.array([1.0, 0.0, 3.0, -2.0])
    table = ((0.0, 1.0), (15.0, 0.92))
    for yaw_table in (None, table):
        rider = Rider(drag_area=areas, rolling_coefficient=rolling, yaw_drag_table=yaw_table)
        speed = speed_for_power(250.0, grade, 1.2, rider, head, cross)
        for i in range(areas.size):
            own = Rider(drag_area=float(areas[i]), rolling_coefficient=float(rolling[i]),
                        yaw_drag_table=yaw_table)
            assert speed[i] == pytest.approx(
                _brentq_speed(250.0, grade[i], 1.2, own, head[i], cross[i]), rel=1e-9)
        # and back: the power for those speeds is the power asked for, piece by piece
        assert power_for_speed(speed, grade, 1.2, rider, head, cross) == pytest.approx(250.0)


def test_per_piece_drag_area_broadcasts_against_a_single_grade():
    rider = Rider(drag_area=[0.25, 0.30])
    speed = speed_for_power(250.0, 0.0, 1.2, rider)
    assert speed.shape == (2,) and speed[0] > speed[1]


def test_per_piece_values_are_kept_as_a_read_only_copy():
    areas = np.array([0.25, 0.30])
    rider = Rider(drag_area=areas)
    areas[0] = 5.0  # the caller's array changes later; the rider does not
    assert rider.drag_area.tolist() == [0.25, 0.30]
    with pytest.raises(ValueError):
        rider.drag_area[0] = 0.1
    assert isinstance(Rider(drag_area=0.3).drag_area, float)  # a number stays a number


@pytest.mark.parametrize(("changes", "message"), [
    ({"drag_area": [0.3, 0.0, 0.25]}, "invalid drag_area: 0 on piece 1 of 3"),
    ({"drag_area": [0.3, math.nan]}, "invalid drag_area: nan on piece 1 of 2"),
    ({"drag_area": math.inf}, "invalid drag_area: inf"),
    ({"rolling_coefficient": [0.004, -0.001]}, "invalid rolling_coefficient: -0.001 on piece 1"),
    ({"drag_area": [[0.3, 0.3]]}, "one value per piece"),
])
def test_invalid_per_piece_values_are_refused_in_one_line(changes, message):
    with pytest.raises(InputError) as error:
        Rider(**changes)
    assert message in str(error.value) and "\n" not in str(error.value)


# ---------------------------------------------------------------- properties

powers = st.floats(0.0, 1000.0)
grades = st.floats(-0.15, 0.15)
winds = st.floats(-10.0, 10.0)


@settings(max_examples=200, deadline=None)
@given(powers, st.floats(0.1, 200.0), grades, winds, winds)
def test_more_power_is_never_slower(power, extra, grade, headwind, crosswind):
    rider = Rider()
    slow = speed_for_power(power, grade, 1.2, rider, headwind, crosswind)
    fast = speed_for_power(power + extra, grade, 1.2, rider, headwind, crosswind)
    assert fast >= slow


@settings(max_examples=200, deadline=None)
@given(powers, grades, winds, st.floats(0.1, 10.0))
def test_more_headwind_is_never_faster(power, grade, headwind, extra):
    rider = Rider()
    calm = speed_for_power(power, grade, 1.2, rider, headwind)
    windy = speed_for_power(power, grade, 1.2, rider, headwind + extra)
    assert windy <= calm


@settings(max_examples=200, deadline=None)
@given(powers, st.floats(0.0, 0.15), st.floats(50.0, 120.0), st.floats(0.5, 30.0))
def test_more_mass_is_never_faster_uphill(power, grade, mass, extra):
    light = speed_for_power(power, grade, 1.2, Rider(mass=mass))
    heavy = speed_for_power(power, grade, 1.2, Rider(mass=mass + extra))
    assert heavy <= light


@settings(max_examples=200, deadline=None)
@given(st.floats(0.5, 25.0), grades, winds, winds)
def test_speed_for_power_inverts_power_for_speed(speed, grade, headwind, crosswind):
    rider = Rider()
    power = float(power_for_speed(speed, grade, 1.2, rider, headwind, crosswind))
    if power > 0:
        assert speed_for_power(power, grade, 1.2, rider, headwind, crosswind) == \
            pytest.approx(speed, rel=1e-9)
