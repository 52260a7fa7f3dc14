"""A steady wind as the field test and the race fit see it (pacing.fieldtest.wind_fit).

This module also holds the independent forward model the wind tests ride with
(tests/test_fieldtest_wind_estimate.py, tests/test_fieldtest_race_fit.py): a rider on a course
given by its height and heading along the distance, integrated by classical RK4 from the power
balance of Martin et al. (1998) written out here (not pacing.physics.cycling):

    (m + I/r²)·dv/dt = η·P/v − ½ρ·(CdA + F_w)·V·v_a − Crr·m·g·cos θ − (a + b·v) − m·g·sin θ
    v_a = v + w·cos(from − ψ),  V = √(v_a² + (w·sin(from − ψ))²)

with Martin et al. (1998)'s published drivetrain, wheel and bearing values (η = 0.976,
F_w = 0.0044 m², I = 0.14 kg·m², r = 0.311 m, bearing loss v·(91 + 8.7·v)·10⁻³ W; from memory
of the paper's Table, the same numbers docs/references.md lists) and standard gravity
9.80665 m/s² (CGPM 1901). The wind w acts at rider height; the log profile
u(z)/u(10 m) = ln(z/z0)/ln(10/z0) (Stull 1988, ch. 9) links it to the 10 m wind.
"""

from __future__ import annotations

import functools
import math

import numpy as np
import pytest

from pacing.fieldtest.wind_fit import (
    WindEstimate,
    head_and_cross,
    heading_spread,
    loose_wind_values,
    speed_and_direction,
    speed_at_report_height,
    wind_basis,
    wind_vector,
)

GRAVITY = 9.80665  # standard gravity, CGPM 1901
EFFICIENCY, WHEEL_AREA, INERTIA, RADIUS = 0.976, 0.0044, 0.14, 0.311  # Martin et al. 1998
BEARING_A, BEARING_B = 0.091, 0.0087  # Martin et al. 1998: P = v·(91 + 8.7·v)·1e-3 W
EARTH = 6371008.8  # mean Earth radius (IUGG), for local positions


def profile_factor(height: float = 1.0, roughness: float = 0.03) -> float:
    """u(height)/u(10 m) by the neutral log profile (Stull 1988, ch. 9)."""
    return math.log(height / roughness) / math.log(10.0 / roughness)


def ride_on_course(height, heading, length, power_of, *, mass=80.0, drag_area=0.30,
                   rolling=0.004, density=1.2, wind=0.0, wind_from=0.0, dt=0.5, speed=8.0,
                   brake_of=None):
    """1 Hz samples of a rider on a course: time, distance, speed, power, heading, elevation.

    height(s) [m] and heading(s) [deg] describe the course along the distance s [m];
    power_of(t, s) [W] is the rider's power; wind [m/s] blows at rider height from
    wind_from [deg]; brake_of(t) [N] is an extra braking force (default none).
    """
    effective = mass + INERTIA / RADIUS**2

    def acceleration(s, v, p, t):
        h = 1e-2
        sin = (height(s + h) - height(s - h)) / (2 * h)
        angle = math.radians(wind_from - heading(s))
        along = v + wind * math.cos(angle)
        apparent = math.hypot(along, wind * math.sin(angle))
        force = (0.5 * density * (drag_area + WHEEL_AREA) * apparent * along
                 + rolling * mass * GRAVITY * math.sqrt(1 - sin * sin)
                 + BEARING_A + BEARING_B * v + mass * GRAVITY * sin
                 + (brake_of(t) if brake_of else 0.0))
        return (EFFICIENCY * p / max(v, 0.5) - force) / effective

    s, v, t = 0.0, speed, 0.0
    rows = []
    steps = int(round(1 / dt))
    while s < length:
        p = power_of(t, s)
        rows.append((t, s, v, p))
        for _ in range(steps):
            k1s, k1v = v, acceleration(s, v, p, t)
            k2s, k2v = v + dt / 2 * k1v, acceleration(s + dt / 2 * k1s, v + dt / 2 * k1v, p, t)
            k3s, k3v = v + dt / 2 * k2v, acceleration(s + dt / 2 * k2s, v + dt / 2 * k2v, p, t)
            k4s, k4v = v + dt * k3v, acceleration(s + dt * k3s, v + dt * k3v, p, t)
            s += dt / 6 * (k1s + 2 * k2s + 2 * k3s + k4s)
            v += dt / 6 * (k1v + 2 * k2v + 2 * k3v + k4v)
            t += dt
        t = round(t, 9)
    rows.append((t, s, v, p))
    time, distance, speed_, power = (np.array(c) for c in zip(*rows, strict=True))
    return {"time": time, "distance": distance, "speed": speed_, "power": power,
            "heading": np.array([heading(x) % 360.0 for x in distance]),
            "elevation": np.array([height(x) for x in distance])}


def positions(heading, distance, origin=(46.0, 7.0)):
    """Latitude and longitude [deg] along a course of that heading, by integrating the
    direction of travel on a fine grid (local flat map)."""
    grid = np.linspace(0.0, float(distance[-1]) + 1.0, 200_001)
    radians = np.radians([heading(x) for x in grid])
    step = np.diff(grid)
    east = np.concatenate(([0.0], np.cumsum(step * 0.5 * (np.sin(radians[1:])
                                                          + np.sin(radians[:-1])))))
    north = np.concatenate(([0.0], np.cumsum(step * 0.5 * (np.cos(radians[1:])
                                                           + np.cos(radians[:-1])))))
    east, north = np.interp(distance, grid, east), np.interp(distance, grid, north)
    latitude = origin[0] + np.degrees(north / EARTH)
    longitude = origin[1] + np.degrees(east / (EARTH * math.cos(math.radians(origin[0]))))
    return latitude, longitude


@functools.cache
def _stadium(straight: float, radius: float):
    """A closed stadium-shaped loop: north along a straight, a half circle, south, a half
    circle. Returns (heading(s) [deg], lap length [m])."""
    bend = math.pi * radius
    lap = 2 * straight + 2 * bend

    def heading(s):
        s = s % lap
        if s < straight:
            return 0.0
        if s < straight + bend:
            return 180.0 * (s - straight) / bend
        if s < 2 * straight + bend:
            return 180.0
        return 180.0 + 180.0 * (s - 2 * straight - bend) / bend

    return heading, lap


# ---------------------------------------------------------------------------------------------
# The wind as a vector, and heights
# ---------------------------------------------------------------------------------------------


def test_a_wind_from_the_west_blows_east():
    # meteorological convention (WMO-No. 8): the direction is where the wind comes FROM
    east, north = wind_vector(3.0, 270.0)
    assert east == pytest.approx(3.0) and north == pytest.approx(0.0, abs=1e-12)
    assert speed_and_direction([east, north]) == pytest.approx((3.0, 270.0))
    assert speed_and_direction([0.0, 0.0]) == (0.0, 0.0)


@pytest.mark.parametrize("speed, wind_from", [(2.0, 0.0), (4.5, 135.0), (1.0, 359.0)])
def test_speed_and_direction_round_trip(speed, wind_from):
    assert speed_and_direction(wind_vector(speed, wind_from)) == pytest.approx(
        (speed, wind_from))


def test_head_and_cross_follow_the_convention_of_the_project():
    # riding north into a wind from the north: all headwind (DEVELOPERS.md conventions)
    head, cross = head_and_cross(0.0, wind_vector(2.0, 0.0))
    assert float(head) == pytest.approx(2.0) and float(cross) == pytest.approx(0.0, abs=1e-12)
    # riding north, wind from the east (from the right): all crosswind, positive
    head, cross = head_and_cross(0.0, wind_vector(2.0, 90.0))
    assert float(head) == pytest.approx(0.0, abs=1e-12) and float(cross) == pytest.approx(2.0)
    # riding south with a wind from the north: a tailwind
    head, _ = head_and_cross(180.0, wind_vector(2.0, 0.0))
    assert float(head) == pytest.approx(-2.0)


@pytest.mark.parametrize("roughness", [0.0002, 0.03, 0.25])
def test_the_10_m_wind_is_the_log_profile_inverted(roughness):
    # Stull (1988) ch. 9: u(1 m) = u(10 m)·ln(1/z0)/ln(10/z0)
    assert speed_at_report_height(1.0, 1.0, roughness) == pytest.approx(
        1.0 / profile_factor(1.0, roughness), rel=1e-12)


# ---------------------------------------------------------------------------------------------
# Headings: when a wind can be told from drag
# ---------------------------------------------------------------------------------------------


def test_a_circle_spreads_every_way_and_fits_both_components():
    headings = np.linspace(0.0, 360.0, 721)[:-1]
    spread = heading_spread(headings, np.ones_like(headings))
    assert spread.resultant == pytest.approx(0.0, abs=1e-9)
    assert spread.across == pytest.approx(0.5, abs=1e-9)  # mean of sin² over a circle
    assert wind_basis(spread).shape == (2, 2)


def test_an_out_and_back_fits_the_wind_along_the_road_only():
    headings = np.array([30.0] * 50 + [210.0] * 50)
    spread = heading_spread(headings, np.ones_like(headings))
    assert spread.resultant == pytest.approx(0.0, abs=1e-9)
    assert spread.across == pytest.approx(0.0, abs=1e-9)
    assert spread.axis == pytest.approx(30.0)
    basis = wind_basis(spread)
    assert basis.shape == (2, 1)
    # the basis points along the road (30° from north): (sin 30°, cos 30°)
    assert abs(basis[:, 0] @ [math.sin(math.radians(30)), math.cos(math.radians(30))]) == \
        pytest.approx(1.0)


def test_one_heading_cannot_tell_wind_from_drag():
    headings = np.full(100, 75.0) + np.linspace(-10, 10, 100)
    spread = heading_spread(headings, np.ones(100))
    assert spread.resultant > 0.9
    assert wind_basis(spread) is None
    assert wind_basis(None) is None


def test_a_wide_wind_interval_means_the_wind_is_not_pinned_down():
    loose = WindEstimate(True, 3.0, 5.0, 90.0, (1.0, 9.0))
    assert loose_wind_values(loose)["reason"] == "interval"
    tight = WindEstimate(True, 3.0, 5.0, 90.0, (4.6, 5.4))
    assert loose_wind_values(tight) == {}
