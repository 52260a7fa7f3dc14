"""Specification of the inertial simulation's kernels (pacing.plan.simulate_kernels), run here
as plain Python (tests/test_plan_simulate.py runs them compiled too, through `simulate`).

Check values: uniform deceleration under a constant force, ½m(v1² − v0²) = −F·h (common
practice: the work-energy theorem), and the drive work of the trapezoidal step, η·P·Δt with
Δt = 2h/(v0 + v1) (exact for a uniform acceleration).
"""

from __future__ import annotations

import math

import pytest

from pacing.plan.simulate_kernels import ride_piece, step_drive_work, step_speed

NO_AIR = (100.0, 1.2, 0.0, 0.0, 5.0, 0.3, 0.0)
"""A piece of 100 m with no air drag (k = 0) and 5 N of speed-independent resistance."""

RIDER = (0.0, 0.0, 1.0, 0.0, 80.0, 470.0, 1.0)
"""No bearing loss, effective mass 80 kg, drive force cap 470 N, walking speed 1 m/s."""


def test_a_coasting_step_against_a_constant_force_follows_the_work_energy_theorem():
    v0, h, force = 10.0, 50.0, 5.0
    v1, work = step_speed(NO_AIR, RIDER, (), (), v0, force, h, 0.0, 0.0, 0.0)
    assert v1 == pytest.approx(math.sqrt(v0**2 - 2.0 * force * h / 80.0), rel=1e-12)
    assert work == 0.0


def test_a_driven_step_does_the_drive_work_of_its_time():
    v0, h, drive = 8.0, 20.0, 200.0
    v1, work = step_speed(NO_AIR, RIDER, (), (), v0, 5.0, h, drive, 0.0, 0.0)
    assert work == pytest.approx(drive * 2.0 * h / (v0 + v1), rel=1e-12)
    # and the energy closes: ½m(v1² − v0²) = W − F·h
    assert 0.5 * 80.0 * (v1**2 - v0**2) == pytest.approx(work - 5.0 * h, rel=1e-9)


def test_drive_work_is_capped_by_traction_and_nothing_without_drive():
    assert step_drive_work(400.0, 1000.0, 2.0) == 200.0
    assert step_drive_work(4000.0, 1000.0, 2.0) == 1000.0  # F_max·h
    assert step_drive_work(4000.0, 1000.0, 0.0) == 1000.0  # from rest: the cap
    assert step_drive_work(0.0, 1000.0, 0.0) == 0.0


def test_a_piece_too_steep_for_the_power_is_walked():
    steep = (100.0, 1.2, 0.0, 0.0, 200.0, 0.3, 0.0)  # 200 N against 50 W at walking pace
    end, time, drive, _, _, walked, walking_work = ride_piece(steep, RIDER, (), (), 1.0, 50.0)
    assert walked and end == 1.0 and drive == 0.0
    assert time == pytest.approx(100.0, rel=1e-12)  # 100 m at 1 m/s
    assert walking_work == pytest.approx(200.0 * 100.0, rel=1e-12)  # F·d at constant speed
