"""Team plans (pacing.team): a 4-rider team pursuit (target < 2 s) and an 8-rider team time
trial on the 40 km demo course with wind (target < 10 s), wall time of plan_team, best of
`--repeat` runs, with the gain over equal turns and over one leader power per rider (the plan
with PlanOptions(power_parts=1), timed once). Prints; never asserts.

Run: .venv/bin/python bench/bench_team.py [--repeat 3]
"""

from __future__ import annotations

import argparse
import os
import time

from pacing.io.gpx import demo_route_paths, load_course
from pacing.team.plan import PlanOptions, plan_team
from pacing.team.race import race_on_road, race_on_track
from pacing.team.riders import Team, TeamRider
from pacing.weather.conditions import Conditions, air_along_course


def pursuit_case() -> tuple[Team, object]:
    team = Team((TeamRider("A", 85.0, 0.21, 460.0, 26000.0),
                 TeamRider("B", 83.0, 0.20, 445.0, 24000.0),
                 TeamRider("C", 80.0, 0.20, 440.0, 25000.0),
                 TeamRider("D", 82.0, 0.21, 425.0, 23000.0)))
    return team, race_on_track(4000.0, 250.0, 1.18, counts_rider=3)


def road_case() -> tuple[Team, object]:
    course = load_course(demo_route_paths()["01_corravey_hill_loop_40k"])
    air = air_along_course(course, Conditions(wind_speed=5.0, wind_from=250.0))
    team = Team(tuple(TeamRider(f"R{i + 1}", 72.0 + 2 * i, 0.23 + 0.005 * (i % 3),
                                390.0 + 8 * i, 20000.0 + 1000 * (i % 4)) for i in range(8)))
    return team, race_on_road(course, air, counts_rider=5)


def best_of(case, repeat: int, options: PlanOptions | None = None) -> tuple[float, object]:
    team, race = case
    best, plan = float("inf"), None
    for _ in range(repeat):
        start = time.perf_counter()
        plan = plan_team(team, race, options)
        best = min(best, time.perf_counter() - start)
    return best, plan


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    print(f"cores {os.cpu_count()}, load {os.getloadavg()[0]:.2f}")
    for name, case, target in (("4-rider team pursuit 4 km", pursuit_case(), 2.0),
                               ("8-rider team time trial 40 km", road_case(), 10.0)):
        seconds, plan = best_of(case, args.repeat)
        verdict = "ok" if seconds < target else "MISSED"
        print(f"{name}: {seconds:.2f} s (target < {target:g} s, {verdict}); finish "
              f"{plan.ride.finish_time:.1f} s, equal turns {plan.equal_turns.finish_time:.1f} s, "
              f"gain {plan.gain:.1f} s, turns {plan.ride.turns.leader.size}")
        print(f"  equal turns at one power ({plan.equal_power_w:.0f} W): "
              f"{plan.equal_power.finish_time:.1f} s, the plan gains "
              f"{plan.equal_power.finish_time - plan.ride.finish_time:.1f} s on it")
        one_seconds, one = best_of(case, 1, PlanOptions(power_parts=1))
        print(f"  one power per rider: {one_seconds:.2f} s; finish {one.ride.finish_time:.1f} s "
              f"(the power per part gains {one.ride.finish_time - plan.ride.finish_time:.1f} s)")


if __name__ == "__main__":
    main()
