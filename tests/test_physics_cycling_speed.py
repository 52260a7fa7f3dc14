"""Specification of the steady speed at a power (pacing.physics.cycling_speed, with the kernel
of pacing.physics.cycling_kernels).

Check values: the force balance of Martin et al. (1998) written out in the test with the
apparent wind (J Appl Biomech 14(3):276-291, doi:10.1123/jab.14.3.276; constants as in
docs/references.md, "Cycling power balance (Martin et al. 1998)" [mem]) and solved by scipy's
brentq (a reference root finder); the compiled kernel against the vectorised solver bit for
bit (the same steps).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from pacing.constants import STANDARD_GRAVITY
from pacing.physics.cycling import MARTIN_1998, Rider, speed_for_power
from pacing.physics.cycling_kernels import steady_balance


@pytest.fixture(params=["compiled", "python"])
def kernel_policy(request, monkeypatch):
    """Run the test with the compiled kernel and with the vectorised solver (pacing.kernels)."""
    monkeypatch.setenv("PACING_KERNELS", request.param)
    return request.param


def written_out_speed(power, grade, density, rider, head, cross):
    """brentq on η·P/v = ½ρ(CdA(1−d) + F_w)·√(v_a² + w_c²)·v_a + Crr·m·g·cos θ + m·g·sin θ
    + a + b·v, v_a = v + w_h (Martin et al. 1998 with the apparent wind); None when the
    balance has no root above 0.05 m/s (the rider stalls)."""
    m = MARTIN_1998
    k = 0.5 * density * (rider.drag_area * (1.0 - rider.drafting_reduction)
                         + m["wheel_drag_area"])
    angle = math.atan(grade)
    constant = (rider.rolling_coefficient * rider.mass * STANDARD_GRAVITY * math.cos(angle)
                + rider.mass * STANDARD_GRAVITY * math.sin(angle) + m["bearing_force_constant"])

    def g(v):
        along = v + head
        return (k * math.sqrt(along**2 + cross**2) * along + constant
                + m["bearing_force_per_speed"] * v - m["drivetrain_efficiency"] * power / v)

    if g(0.05) >= 0:
        return None
    return brentq(g, 0.05, 200.0, xtol=1e-13, rtol=1e-15)


@pytest.mark.parametrize(("power", "grade", "head", "cross"), [
    (250.0, 0.0, 0.0, 0.0),       # flat, still air
    (250.0, 0.06, 3.0, 2.0),      # climbing into a quartering headwind
    (0.0, -0.08, -2.0, 1.0),      # coasting down with a tailwind: the terminal speed
    (400.0, -0.02, -12.0, 0.0),   # a tailwind faster than the rider at first
    (30.0, 0.15, 0.0, 0.0),       # too little power for the climb: stalled
])
def test_speed_is_the_root_of_the_written_out_balance(power, grade, head, cross,
                                                      kernel_policy):
    rider = Rider(mass=78.0, drag_area=0.27, drafting_reduction=0.1)
    expected = written_out_speed(power, grade, 1.18, rider, head, cross)
    speeds = speed_for_power(np.full(3, power), np.full(3, grade), 1.18, rider, head, cross)
    if expected is None:
        np.testing.assert_array_equal(speeds, 0.05)
    else:
        np.testing.assert_allclose(speeds, expected, rtol=1e-11)


def random_case(seed, n=4000):
    """Powers from 0 to 1500 W, grades ±30 %, winds ±25 m/s (some exactly 0), per-piece CdA
    and Crr: stalls, tailwinds faster than the rider and zero apparent wind included."""
    rng = np.random.default_rng(seed)
    power = rng.choice([0.0, 1.0, 60.0, 250.0, 1000.0], n) * rng.uniform(0.0, 1.5, n)
    grade = rng.uniform(-0.3, 0.3, n)
    head, cross = rng.uniform(-25.0, 25.0, n), rng.uniform(-15.0, 15.0, n)
    head[::7], cross[::5] = 0.0, 0.0
    rider = Rider(mass=75.0, drag_area=rng.uniform(0.15, 0.5, n),
                  rolling_coefficient=rng.uniform(0.0, 0.01, n))
    return power, grade, head, cross, rider


@pytest.mark.parametrize("seed", [1, 2])
def test_compiled_kernel_gives_the_vectorised_speeds_bit_for_bit(seed, monkeypatch):
    power, grade, head, cross, rider = random_case(seed)
    found = {}
    for policy in ("python", "compiled"):
        monkeypatch.setenv("PACING_KERNELS", policy)
        found[policy] = speed_for_power(power, grade, 1.2, rider, head, cross)
    assert np.count_nonzero(found["python"] == 0.05) > 100  # stalls are covered
    np.testing.assert_array_equal(found["compiled"], found["python"])


def test_options_reach_the_kernel_as_the_vectorised_solver(monkeypatch):
    power, grade, head, cross, rider = random_case(3, n=500)
    found = {}
    for policy in ("python", "compiled"):
        monkeypatch.setenv("PACING_KERNELS", policy)
        found[policy] = speed_for_power(power, grade, 1.2, rider, head, cross,
                                        minimum_speed=0.5, tolerance=1e-6, max_iterations=2)
    np.testing.assert_array_equal(found["compiled"], found["python"])


def test_the_shape_of_the_inputs_is_kept(kernel_policy):
    speeds = speed_for_power(np.full((2, 3), 250.0), 0.0, 1.2, Rider())
    assert speeds.shape == (2, 3)
    assert np.ndim(speed_for_power(250.0, 0.0, 1.2, Rider())) == 0


def test_balance_slope_is_its_derivative():
    # central difference of g (common practice), at a speed with crosswind and headwind
    args = (300.0 * 0.976, 5.0, 0.2, 2.0, 3.0, 0.0087)
    value, slope = steady_balance(9.0, *args)
    h = 1e-5
    numeric = (steady_balance(9.0 + h, *args)[0] - steady_balance(9.0 - h, *args)[0]) / (2 * h)
    assert slope == pytest.approx(numeric, rel=1e-8)
    assert value == pytest.approx(0.2 * math.hypot(11.0, 3.0) * 11.0 + 5.0 + 0.0087 * 9.0
                                  - 300.0 * 0.976 / 9.0, rel=1e-15)


def test_a_busy_parallel_kernel_is_not_waited_for(monkeypatch):
    # another thread's parallel kernel holds the lock: the vectorised steps answer at once
    from pacing import kernels

    power, grade, head, cross, rider = random_case(4, n=300)
    monkeypatch.setenv("PACING_KERNELS", "python")
    expected = speed_for_power(power, grade, 1.2, rider, head, cross)
    monkeypatch.setenv("PACING_KERNELS", "compiled")
    with kernels.PARALLEL_LOCK:
        busy = speed_for_power(power, grade, 1.2, rider, head, cross)
    np.testing.assert_array_equal(busy, expected)
