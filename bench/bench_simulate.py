"""Benchmark of the cycling solvers on a 200 km course at 10 m (20,000 points).

Prints, never asserts:
- steady-state speeds for the whole course (pacing.physics.cycling.speed_for_power; target < 50 ms),
- the inertial simulation (pacing.plan.simulate.simulate; target < 1 s),
- scipy's solve_ivp on the same model at equal accuracy on finish time, and the ratio
  (target >= 20x),
- scaling with course length (50/100/200 km): time per point should stay flat.

Accuracy is measured against a tight reference: solve_ivp (DOP853, rtol 1e-9) over the whole
course. Timings are the best of a few runs (time.perf_counter). The whole script takes a few
minutes, most of it in solve_ivp.

Run: .venv/bin/python bench/bench_simulate.py
"""

from __future__ import annotations

import bisect
import math
import time

import numpy as np
from scipy.integrate import solve_ivp

from pacing.course.geometry import synthetic_course
from pacing.physics.cycling import Rider, speed_for_power
from pacing.plan.prediction import SimulationOptions, steady_prediction
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course

STEP = 10.0
POWER = 250.0
START_SPEED = 5.0


def make_course(length_km: float, seed: int = 1):
    """Varied grade (smooth random walk within ±10 %) and a winding heading."""
    rng = np.random.default_rng(seed)
    n = int(length_km * 1000 / STEP) + 1
    distance = np.arange(n) * STEP
    grade = np.zeros(n - 1)
    for i in range(1, n - 1):
        grade[i] = 0.995 * grade[i - 1] + rng.normal(0.0, 0.003)
    grade = np.clip(grade, -0.10, 0.10)
    elevation = 200.0 + np.concatenate([[0.0], np.cumsum(grade * STEP)])
    heading = np.cumsum(rng.normal(0.0, 3.0, n - 1)) % 360.0
    return synthetic_course(distance, elevation, heading)


def best_of(function, runs: int) -> tuple[float, object]:
    best, result = math.inf, None
    for _ in range(runs):
        start = time.perf_counter()
        result = function()
        best = min(best, time.perf_counter() - start)
    return best, result


def ivp_finish_time(course, rider: Rider, air, rtol: float, method: str = "RK45") -> float:
    """solve_ivp over the whole course on (½v², t) along the road, piecewise-constant pieces."""
    grade = np.asarray(course.grade)
    road = np.diff(course.distance) * np.sqrt(1.0 + grade**2)
    edges = np.concatenate([[0.0], np.cumsum(road)]).tolist()
    g = 9.80665
    constant = (rider.rolling_coefficient * rider.mass * g / np.sqrt(1 + grade**2)
                + rider.mass * g * grade / np.sqrt(1 + grade**2)
                + rider.bearing_force_constant).tolist()
    k = (0.5 * air.density * (rider.drag_area + rider.wheel_drag_area)).tolist()
    head, cross = air.headwind.tolist(), air.crosswind.tolist()
    b = rider.bearing_force_per_speed
    drive = rider.drivetrain_efficiency * POWER
    m_eff = rider.effective_mass
    last = len(road) - 1

    def rates(x, y):
        i = min(bisect.bisect_right(edges, x) - 1, last)
        v = math.sqrt(max(2.0 * y[0], 1e-30))
        along = v + head[i]
        force = k[i] * math.hypot(along, cross[i]) * along + constant[i] + b * v
        return [(drive / v - force) / m_eff, 1.0 / v]

    solution = solve_ivp(rates, (0.0, edges[-1]), [0.5 * START_SPEED**2, 0.0], method=method,
                         rtol=rtol, atol=1e-9 * rtol)
    return float(solution.y[1, -1])


def main() -> None:
    rider = Rider()
    conditions = Conditions(wind_speed=5.0, wind_from=250.0)
    options = SimulationOptions(start_speed=START_SPEED)
    course = make_course(200.0)
    air = air_along_course(course, conditions)
    n = course.distance.size
    print(f"course: {course.total_distance / 1000:.0f} km, {n} points, ascent "
          f"{course.ascent:.0f} m, wind {conditions.wind_speed} m/s from "
          f"{conditions.wind_from:.0f}°")

    steady_time, _ = best_of(lambda: speed_for_power(POWER, course.grade, air.density, rider,
                                                     air.headwind, air.crosswind), 7)
    prediction_time, steady = best_of(lambda: steady_prediction(course, POWER, rider, air), 5)
    print(f"steady-state speeds (speed_for_power): {1e3 * steady_time:7.1f} ms   (target < 50)")
    print(f"steady prediction (with energy terms): {1e3 * prediction_time:7.1f} ms")

    simulate_time, prediction = best_of(lambda: simulate(course, POWER, rider, air, options), 3)
    print(f"inertial simulation:                   {1e3 * simulate_time:7.1f} ms   (target < 1000)")
    print(f"  finish {prediction.finish_time:.1f} s (steady {steady.finish_time:.1f} s), "
          f"energy residual {prediction.energy_balance_residual:.1e}")

    start = time.perf_counter()
    reference = ivp_finish_time(course, rider, air, 1e-9, "DOP853")
    print(f"reference solve_ivp DOP853 rtol 1e-9:  {time.perf_counter() - start:7.1f} s, "
          f"finish {reference:.4f} s")
    our_error = abs(prediction.finish_time / reference - 1.0)
    print(f"simulate error on finish time: {our_error:.2e}")
    matched = None
    for rtol in (1e-3, 3e-4, 1e-4, 3e-5, 1e-5, 3e-6, 1e-6, 1e-7):
        start = time.perf_counter()
        finish = ivp_finish_time(course, rider, air, rtol)
        elapsed = time.perf_counter() - start
        error = abs(finish / reference - 1.0)
        print(f"  solve_ivp RK45 rtol {rtol:.0e}: {elapsed:6.2f} s, error {error:.2e}")
        if error <= our_error:
            matched = elapsed
            break
    if matched is None:
        print("  solve_ivp did not reach the same accuracy in the tolerances tried")
    else:
        print(f"ratio solve_ivp / simulate at equal accuracy: {matched / simulate_time:.0f}x "
              f"(target >= 20x)")

    print("scaling (time per point):")
    for length in (50.0, 100.0, 200.0):
        part = make_course(length)
        part_air = air_along_course(part, conditions)
        steady_t, _ = best_of(lambda p=part, a=part_air: speed_for_power(
            POWER, p.grade, a.density, rider, a.headwind, a.crosswind), 5)
        sim_t, _ = best_of(lambda p=part, a=part_air: simulate(p, POWER, rider, a, options), 3)
        points = part.distance.size
        print(f"  {length:5.0f} km, {points:6d} points: steady {1e6 * steady_t / points:6.2f} "
              f"µs/point, inertial {1e6 * sim_t / points:6.2f} µs/point")


if __name__ == "__main__":
    main()
