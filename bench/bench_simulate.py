"""Benchmark of the cycling solvers: speed targets and a work-precision comparison.

Prints, never asserts (the machines are shared and noisy; times are min and median of a few
runs, time.perf_counter):

1. On a 200 km course of 20,001 points (10 m pieces, `make_course`), 250 W, wind 4 m/s:
   - loading the compiled kernels (pacing.kernels.warm_up; from numba's cache after the first
     run),
   - steady speeds on every piece (pacing.physics.cycling.speed_for_power; target <= 3 ms),
   - the inertial simulation compiled and as plain Python (pacing.plan.simulate.simulate;
     target <= 5 ms compiled, i.e. >= 21x the plain Python time measured in the same run),
   - 1000 Monte Carlo finish times (pacing.compare.sensitivity.sampled_finish_time; target
     <= 3 s),
   - time per point at 50/100/200 km (should stay flat).
2. Work-precision on a 20 km course of 2,001 points (the same generator; shorter so that the
   tightest solve_ivp runs stay within the script's ~3 minutes): finish-time error against
   wall time of our simulation (compiled and plain Python, one accuracy each: its step control
   is fixed) and of scipy's solve_ivp with RK45, DOP853 and LSODA at rtol 1e-2 ... 1e-10.
   solve_ivp integrates the same model (Martin et al. 1998 with the kinetic-energy term, state
   (½v², t) along the road) piece by piece, restarting at every piece boundary where the grade
   and the wind jump, so its error is the integrator's and not a kink's. The reference finish
   time is solve_ivp DOP853 at rtol 1e-13, atol 1e-14 on the same pieces (an 8th-order method
   far below every tolerance compared). Speed caps are lifted (lateral acceleration 1e6 m/s²)
   and the start is flying (5 m/s) so that both sides ride the same equation. solve_ivp is run
   two ways: piece by piece (each 10 m piece its own call: one or two steps per piece are
   accurate, and the per-call overhead dominates) and over the whole course in one call
   (the step control meets a jump of grade and wind every 10 m).

Run: .venv/bin/python bench/bench_simulate.py
"""

from __future__ import annotations

import bisect
import math
import os
import statistics
import time
from collections.abc import Callable

import numpy as np
from scipy.integrate import solve_ivp

from pacing import kernels
from pacing.compare.sensitivity import Uncertainty, sampled_finish_time
from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.physics.cycling import Rider, speed_for_power
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course

STEP = 10.0
POWER = 250.0
START_SPEED = 5.0
CONDITIONS = Conditions(wind_speed=4.0, wind_from=250.0)
NO_CAPS = SimulationOptions(start_speed=START_SPEED, lateral_acceleration=1e6)
RTOLS = (1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9, 1e-10)
METHODS = ("RK45", "DOP853", "LSODA")
SAMPLES = 1000
WHOLE_COURSE_BUDGET = 15.0
"""Seconds after which a solve_ivp sweep stops tightening its tolerance [s]."""


def make_course(length_km: float, seed: int = 1):
    """Varied grade (smooth random walk within ±10 %) and a winding heading; starts at 200 m,
    lifted where the walk would go below sea level (the 200 km course reached −500 m, below
    any road and below what the race-day air accepts)."""
    rng = np.random.default_rng(seed)
    n = int(length_km * 1000 / STEP) + 1
    distance = np.arange(n) * STEP
    grade = np.zeros(n - 1)
    for i in range(1, n - 1):
        grade[i] = 0.995 * grade[i - 1] + rng.normal(0.0, 0.003)
    grade = np.clip(grade, -0.10, 0.10)
    elevation = 200.0 + np.concatenate([[0.0], np.cumsum(grade * STEP)])
    elevation -= min(0.0, float(elevation.min()))
    heading = np.cumsum(rng.normal(0.0, 3.0, n - 1)) % 360.0
    return synthetic_course(distance, elevation, heading)


def timed(function: Callable[[], object], runs: int) -> tuple[float, float, object]:
    """(min, median) wall time of `runs` calls [s], and the last result."""
    times, result = [], None
    for _ in range(runs):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
    return min(times), statistics.median(times), result


def with_policy(policy: str, function: Callable[[], object]) -> Callable[[], object]:
    """`function` run under PACING_KERNELS=policy."""
    def run() -> object:
        before = os.environ.get(kernels.POLICY_VARIABLE)
        os.environ[kernels.POLICY_VARIABLE] = policy
        try:
            return function()
        finally:
            if before is None:
                del os.environ[kernels.POLICY_VARIABLE]
            else:
                os.environ[kernels.POLICY_VARIABLE] = before
    return run


def reference_terms(course, rider: Rider, air) -> tuple:
    """The independent reference model's terms per piece, written here (not the library's):
    road length [m], speed-independent force [N], drag factor k [kg/m], headwind and
    crosswind [m/s] as lists; bearing force per speed [N·s/m], wheel drive power [W] and
    effective mass [kg]."""
    grade = np.asarray(course.grade)
    root = np.sqrt(1.0 + grade**2)
    road = (np.diff(course.distance) * root).tolist()
    constant = (rider.rolling_coefficient * rider.mass * STANDARD_GRAVITY / root
                + rider.mass * STANDARD_GRAVITY * grade / root
                + rider.bearing_force_constant).tolist()
    k = (0.5 * air.density * (rider.drag_area + rider.wheel_drag_area)).tolist()
    return (road, constant, k, air.headwind.tolist(), air.crosswind.tolist(),
            rider.bearing_force_per_speed, rider.drivetrain_efficiency * POWER,
            rider.effective_mass)


def ivp_finish_time(course, rider: Rider, air, rtol: float, method: str,
                    atol: float | None = None) -> float:
    """solve_ivp piece by piece on d(½v²)/dx = (η·P/v − F(v))/m_eff, dt/dx = 1/v [s]."""
    road, constant, k, head, cross, b, drive, m_eff = reference_terms(course, rider, air)
    energy, total = 0.5 * START_SPEED**2, 0.0
    for i, length in enumerate(road):
        def rates(_x, y, i=i):
            v = math.sqrt(max(2.0 * y[0], 1e-30))
            along = v + head[i]
            force = k[i] * math.hypot(along, cross[i]) * along + constant[i] + b * v
            return [(drive / v - force) / m_eff, 1.0 / v]

        solution = solve_ivp(rates, (0.0, length), [energy, 0.0], method=method, rtol=rtol,
                             atol=rtol * 1e-3 if atol is None else atol)
        energy, total = solution.y[0, -1], total + solution.y[1, -1]
    return float(total)


def ivp_whole_course(course, rider: Rider, air, rtol: float, method: str) -> float:
    """solve_ivp over the whole course in one call (grade and wind jump at piece boundaries,
    left to the step control) [s]."""
    road, constant, k, head, cross, b, drive, m_eff = reference_terms(course, rider, air)
    edges = np.concatenate([[0.0], np.cumsum(road)])
    last = len(road) - 1
    edge_list = edges.tolist()

    def rates(x, y):
        i = min(bisect.bisect_right(edge_list, x) - 1, last)
        v = math.sqrt(max(2.0 * y[0], 1e-30))
        along = v + head[i]
        force = k[i] * math.hypot(along, cross[i]) * along + constant[i] + b * v
        return [(drive / v - force) / m_eff, 1.0 / v]

    solution = solve_ivp(rates, (0.0, edge_list[-1]), [0.5 * START_SPEED**2, 0.0],
                         method=method, rtol=rtol, atol=rtol * 1e-3)
    return float(solution.y[1, -1])


def speed_targets(rider: Rider) -> None:
    """Part 1: the targets on 200 km."""
    course = make_course(200.0)
    air = air_along_course(course, CONDITIONS)
    print(f"course: {course.total_distance / 1000:.0f} km, {course.distance.size} points, "
          f"ascent {course.ascent:.0f} m, wind {CONDITIONS.wind_speed:g} m/s from "
          f"{CONDITIONS.wind_from:.0f}°, {POWER:.0f} W (min / median)")
    print(f"  loading the compiled kernels (warm_up):   {kernels.warm_up():7.2f} s")
    low, middle, _ = timed(lambda: speed_for_power(POWER, course.grade, air.density, rider,
                                                   air.headwind, air.crosswind), 15)
    print(f"  steady speeds (speed_for_power):        {1e3 * low:6.2f} / {1e3 * middle:6.2f} ms"
          "   (target <= 3)")
    options = SimulationOptions(start_speed=START_SPEED)
    ride = {}
    for policy, runs in (("compiled", 21), ("python", 3)):
        low, middle, result = timed(with_policy(policy, lambda: simulate(
            course, POWER, rider, air, options)), runs)
        ride[policy] = (low, result)
        print(f"  inertial simulation, {policy:8s}:        {1e3 * low:6.1f} / {1e3 * middle:6.1f}"
              f" ms" + ("   (target <= 5)" if policy == "compiled" else ""))
    same = ride["compiled"][1].finish_time == ride["python"][1].finish_time
    print(f"  plain Python / compiled: {ride['python'][0] / ride['compiled'][0]:5.1f}x "
          f"(target >= 21x: 105 ms -> 5 ms); finish {ride['compiled'][1].finish_time:.3f} s, "
          f"{'the same bit for bit' if same else 'DIFFERENT'} both ways")
    uncertainty = Uncertainty(drag_area=0.01, rolling_coefficient=0.0005, mass=1.0, wind=1.0)
    low, middle, _ = timed(lambda: sampled_finish_time(course, POWER, rider, CONDITIONS,
                                                       uncertainty, samples=SAMPLES, seed=1,
                                                       options=options), 2)
    print(f"  {SAMPLES} Monte Carlo finish times:          {low:6.2f} / {middle:6.2f} s"
          "    (target <= 3)")
    print("  scaling (time per point, compiled simulation / steady speeds):")
    for length in (50.0, 100.0, 200.0):
        part = make_course(length)
        part_air = air_along_course(part, CONDITIONS)
        sim, _, _ = timed(lambda p=part, a=part_air: simulate(p, POWER, rider, a, options), 5)
        steady, _, _ = timed(lambda p=part, a=part_air: speed_for_power(
            POWER, p.grade, a.density, rider, a.headwind, a.crosswind), 5)
        points = part.distance.size
        print(f"    {length:5.0f} km, {points:6d} points: {1e6 * sim / points:6.3f} / "
              f"{1e6 * steady / points:6.3f} µs per point")


def work_precision(rider: Rider) -> None:
    """Part 2: finish-time error against wall time."""
    course = make_course(20.0)
    air = air_along_course(course, CONDITIONS)
    start = time.perf_counter()
    reference = ivp_finish_time(course, rider, air, 1e-13, "DOP853", atol=1e-14)
    print(f"\nwork-precision on {course.total_distance / 1000:.0f} km, "
          f"{course.distance.size} points (reference: solve_ivp DOP853 rtol 1e-13, "
          f"{time.perf_counter() - start:.1f} s): finish {reference:.6f} s")
    print(f"  {'method':22s} {'rtol':>7s} {'wall [s]':>10s} {'|error| [s]':>12s} "
          f"{'relative':>9s}")
    for policy, runs in (("compiled", 11), ("python", 3)):
        low, _, prediction = timed(with_policy(policy, lambda: simulate(
            course, POWER, rider, air, NO_CAPS)), runs)
        error = abs(prediction.finish_time - reference)
        print(f"  {'simulate, ' + policy:22s} {'-':>7s} {low:10.4f} {error:12.2e} "
              f"{error / reference:9.1e}")
    for label, solve in (("piece by piece", ivp_finish_time),
                         ("whole course", ivp_whole_course)):
        for method in METHODS:
            for rtol in RTOLS:
                began = time.perf_counter()
                finish = solve(course, rider, air, rtol, method)
                elapsed = time.perf_counter() - began
                error = abs(finish - reference)
                print(f"  {method + ', ' + label:22s} {rtol:7.0e} {elapsed:10.4f} "
                      f"{error:12.2e} {error / reference:9.1e}")
                if elapsed > WHOLE_COURSE_BUDGET:  # tighter tolerances only take longer
                    print(f"  {method + ', ' + label:22s} tighter tolerances skipped "
                          f"(> {WHOLE_COURSE_BUDGET:g} s)")
                    break


def main() -> None:
    rider = Rider()
    speed_targets(rider)
    work_precision(rider)


if __name__ == "__main__":
    main()
