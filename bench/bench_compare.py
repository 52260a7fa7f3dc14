"""Cost of a comparison on the 40 km demo course, in units of one inertial simulation and of
bench_table's calibration workload (machine-independent): setups side by side, sensitivities,
break-even search, the mixed plan, and the linearized against the sampled spread. Prints; never
asserts (the speed table, bench_table.py, holds the baseline).

Run: .venv/bin/python bench/bench_compare.py
"""

from __future__ import annotations

import time

import numpy as np
from bench_table import calibration_seconds

from pacing.compare.break_even import break_even
from pacing.compare.mixed import mixed_plan
from pacing.compare.sensitivity import (
    Uncertainty,
    finish_time_spread,
    sampled_finish_time,
    sensitivity,
)
from pacing.compare.setups import RiderSetup, compare_setups
from pacing.course.segments import split_by_grade
from pacing.io.gpx import demo_route_paths, load_course
from pacing.physics.cycling import Rider
from pacing.plan.race import RaceRequest
from pacing.plan.request import PlanRequest
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course


def timed(action):
    start = time.perf_counter()
    value = action()
    return value, time.perf_counter() - start


def main() -> None:
    course = load_course(next(iter(demo_route_paths().values())))
    bounds = split_by_grade(course)
    conditions = Conditions(wind_speed=4.0, wind_from=270.0)
    air = air_along_course(course, conditions)
    rider = Rider(mass=80.0, drag_area=0.32)
    simulate(course, 250.0, rider, air)  # warm-up (kernels, caches)
    _, one = timed(lambda: simulate(course, 250.0, rider, air))
    unit = calibration_seconds()
    print(f"one simulation ({course.distance.size - 1} pieces): {one * 1000:.0f} ms = "
          f"{one / unit:.2f} calibrations (calibration {unit * 1000:.1f} ms)")
    setups = [RiderSetup("hoods", rider),
              RiderSetup("aero", Rider(mass=80.0, drag_area=0.25), 0.95),
              RiderSetup("light", Rider(mass=78.0, drag_area=0.33))]
    for strategy in ("constant", "fastest"):
        race = RaceRequest(course=course, bounds=bounds, conditions=conditions,
                           strategy=strategy, rider=rider,
                           cycling=PlanRequest(strategy=strategy, mean_power=250.0))
        comparison, took = timed(lambda r=race: compare_setups(r, setups, air=air))
        print(f"{strategy:>8}: 3 setups {took:5.2f} s = {took / one:5.0f} simulations = "
              f"{took / unit:5.0f} calibrations; "
              + ", ".join(f"{r.name} {r.delta:+.1f} s" for r in comparison.results))
        for result in comparison.results[1:]:
            figures, took = timed(lambda r=result, c=comparison: break_even(c, r))
            print(f"          break-even {result.name}: {took:5.2f} s = {took / one:4.0f} "
                  f"simulations = {took / unit:4.0f} calibrations; margin "
                  f"{figures.power_margin:+.1f} W, "
                  f"{figures.drag_area_margin:+.4f} m², {figures.mass_margin:+.2f} kg")
        mixed, took = timed(lambda c=comparison: mixed_plan(c))
        if mixed is not None:
            print(f"          mixed plan: {took:5.2f} s; gain {mixed.gain:+.1f} s over "
                  f"{mixed.best_single}")
    sens, took = timed(lambda: sensitivity(course, np.full(bounds[-1], 250.0), rider,
                                           conditions))
    print(f"sensitivity: {took:5.2f} s = {took / one:4.0f} simulations = {took / unit:4.0f} "
          f"calibrations; {sens.per_step()}")
    uncertainty = Uncertainty(drag_area=0.005, rolling_coefficient=0.0003, mass=0.5, wind=1.0)
    linear = finish_time_spread(sens, uncertainty).standard_deviation
    samples, took = timed(lambda: sampled_finish_time(course, np.full(bounds[-1], 250.0), rider,
                                                      conditions, uncertainty, samples=100))
    print(f"spread: linearized {linear:.1f} s, 100 draws {np.std(samples, ddof=1):.1f} s "
          f"({took:.1f} s = {took / unit:.0f} calibrations)")


if __name__ == "__main__":
    main()
