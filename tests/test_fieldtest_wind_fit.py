"""The wind fitted with CdA and Crr by variable projection (pacing.fieldtest.wind_fit): on a
linear problem whose columns follow a known wind (written out below, not the code under test),
the fit finds that wind; its linear step agrees with numpy.linalg.lstsq.

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

from pacing.fieldtest.wind_fit import fit_wind, joint_correlation, linear_fit, refit_wind

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
# Variable projection on a problem written out here
# ---------------------------------------------------------------------------------------------

TRUE_WIND = np.array([2.0, -1.5])  # blowing TO east-south-east at rider height [m/s]


def air_problem(headings, wind=TRUE_WIND, drag=0.3, rolling=4.0):
    """Columns (V·v_a per CdA, 1 per Crr-like term) at a wind vector, and the target made with
    `wind`: the headwind −(u_e·sin ψ + u_n·cos ψ), crosswind u_n·sin ψ − u_e·cos ψ (DEVELOPERS.md
    conventions); ground speeds from 6 to 14 m/s (at one speed a loop lets the wind trade
    against the constant term)."""
    psi = np.radians(headings)
    speed = 10.0 + 4.0 * np.sin(np.arange(psi.size) * 0.37)

    def columns(vector):
        head = -(vector[0] * np.sin(psi) + vector[1] * np.cos(psi))
        cross = vector[1] * np.sin(psi) - vector[0] * np.cos(psi)
        air = speed + head
        return np.column_stack((np.hypot(air, cross) * air, np.ones(psi.size)))

    target = columns(wind) @ np.array([drag, rolling])
    return lambda vector: (columns(vector), target)


def test_the_linear_step_is_least_squares():
    rng = np.random.default_rng(2)
    design, target = rng.normal(size=(40, 2)) * [100.0, 0.01], rng.normal(size=40)
    beta, residual = linear_fit(design, target)
    reference, *_ = np.linalg.lstsq(design, target, rcond=None)  # numpy, a reference library
    assert beta == pytest.approx(reference, rel=1e-9)
    assert residual == pytest.approx(target - design @ reference, abs=1e-9)


def test_a_loop_gives_back_the_wind_and_the_linear_unknowns():
    problem = air_problem(np.linspace(0.0, 360.0, 73)[:-1])
    vector, beta = fit_wind(problem, np.eye(2))
    assert vector == pytest.approx(TRUE_WIND, abs=1e-4)
    assert beta == pytest.approx([0.3, 4.0], rel=1e-5)
    assert refit_wind(problem, np.eye(2), vector + [0.3, -0.2]) == pytest.approx(TRUE_WIND,
                                                                                abs=1e-3)
    assert joint_correlation(problem, np.eye(2), vector, beta) < 0.98


def test_an_out_and_back_gives_back_the_wind_along_its_road():
    along = np.array([np.sin(np.radians(30.0)), np.cos(np.radians(30.0))])
    wind = -2.5 * along  # blowing down the road, against the outward leg
    problem = air_problem(np.array([30.0, 210.0] * 40), wind=wind)
    vector, beta = fit_wind(problem, along[:, None])
    assert vector == pytest.approx(wind, abs=1e-4)
    assert beta == pytest.approx([0.3, 4.0], rel=1e-5)
