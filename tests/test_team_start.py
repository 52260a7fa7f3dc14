"""The standing start (pacing.team.start) against scipy's solve_ivp on the same equation."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from pacing.physics.cycling import Rider
from pacing.team.start import START_ACCELERATION_LIMIT, START_SPEED, standing_start


def reference_start(power, target, mass=80.0, area=0.20, density=1.2, rolling=0.0032):
    """dv/dt = min((η·P/v − F(v)) / (m + I/r²), a_max) with Martin et al.'s constants written
    out here, integrated by scipy's RK45 (rtol 1e-10) until 99 % of the target speed."""
    effective = mass + 0.14 / 0.311**2

    def slope(_t, state):
        speed = state[0]
        force = (0.5 * density * (area + 0.0044) * speed**2 + rolling * mass * 9.80665
                 + 0.091 + 0.0087 * speed)
        accel = min((0.976 * power / speed - force) / effective, START_ACCELERATION_LIMIT)
        return [accel, speed]

    def reached(_t, state):
        return state[0] - 0.99 * target

    reached.terminal = True
    result = solve_ivp(slope, (0.0, 300.0), [START_SPEED, 0.0], rtol=1e-10, atol=1e-10,
                       events=reached, max_step=0.05)
    return result.t_events[0][0], result.y_events[0][0][1]


def test_the_start_matches_an_rk45_integration_of_the_same_balance():
    run = standing_start(Rider(mass=80.0, drag_area=0.20), 900.0, 16.0, 0.0, 1.2, 0.0, 0.0)
    time, distance = reference_start(900.0, 16.0)
    assert run.duration == pytest.approx(time, rel=0.02)  # explicit 0.2 s steps
    assert run.distance == pytest.approx(distance, rel=0.03)
    assert run.step_duration.sum() == pytest.approx(run.duration)
    assert np.all(run.acceleration <= START_ACCELERATION_LIMIT)


def test_more_power_starts_faster():
    rider = Rider(mass=80.0, drag_area=0.20)
    slow = standing_start(rider, 700.0, 15.0, 0.0, 1.2, 0.0, 0.0)
    fast = standing_start(rider, 1100.0, 15.0, 0.0, 1.2, 0.0, 0.0)
    assert fast.duration < slow.duration
