"""Benchmark of the command line's start-up: the whole process of
`python -m pacing plan <demo> --power 250 --json`, beside `python -c "import numpy"`, the floor
every command pays, measured in the same run.

Runs are interleaved (plan, floor, plan, floor, …) so that load from other work on the machine
falls on both alike; min and median of each are printed, and their ratios, with the processes'
CPU time (user + system), which load from other work changes less than the wall time. Prints;
never asserts, unless --limit is given: then the exit code is 1 when the command's min is above
it.

Bytecode is cached as in an installed package (in a temporary PYTHONPYCACHEPREFIX, even when
PYTHONDONTWRITEBYTECODE is set); --from-source measures with no bytecode written, so that
pacing's own modules are compiled on every run (the libraries' installed bytecode is read).

    .venv/bin/python bench/bench_startup.py [--runs 7] [--all] [--limit 0.5] [--from-source]
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = "demo_routes/01_corravey_hill_loop_40k.gpx"
RUNNING_DEMO = "demo_routes/04_larchwick_half_marathon.gpx"

FLOOR = ("import numpy", [sys.executable, "-c", "import numpy"])
"""What every command pays: the interpreter and numpy."""

PLAN = ("plan --power 250 --json",
        [sys.executable, "-m", "pacing", "plan", DEMO, "--power", "250", "--json"])
"""The command the start-up target is set for (issue 15: at most 0.5 s)."""

OTHERS = [
    ("course --json", [sys.executable, "-m", "pacing", "course", DEMO, "--json"]),
    ("plan --sport running --json",
     [sys.executable, "-m", "pacing", "plan", RUNNING_DEMO, "--sport", "running",
      "--flat-pace", "5:00", "--json"]),
    ("--help", [sys.executable, "-m", "pacing", "--help"]),
]
"""Further commands measured with --all."""


def child_cpu() -> float:
    """CPU time of the finished child processes so far, user + system [s]."""
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def whole_process(command: list[str], environment: dict[str, str]) -> tuple[float, float]:
    """Wall and CPU time of one run of `command` from the repository's root [s]; fails loudly
    when the command does."""
    cpu = child_cpu()
    start = time.perf_counter()
    subprocess.run(command, cwd=ROOT, check=True, stdout=subprocess.DEVNULL,
                   stderr=subprocess.DEVNULL, env=environment)
    return time.perf_counter() - start, child_cpu() - cpu


def measure(commands: list[tuple[str, list[str]]], runs: int, environment: dict[str, str]
            ) -> dict[str, list[tuple[float, float]]]:
    """Interleaved runs: each round runs every command once; (wall, CPU) per run [s]."""
    for _, command in commands:  # warm the file cache and the bytecode cache, not timed
        whole_process(command, environment)
    times: dict[str, list[tuple[float, float]]] = {name: [] for name, _ in commands}
    for _ in range(runs):
        for name, command in commands:
            times[name].append(whole_process(command, environment))
    return times


def bytecode_environment(cache: str | None) -> dict[str, str]:
    """The environment of the runs: bytecode cached in `cache`, or none written (None: the
    installed libraries' own bytecode is read, pacing's modules are compiled each time)."""
    environment = dict(os.environ)
    if cache is None:
        environment["PYTHONDONTWRITEBYTECODE"] = "1"
        environment.pop("PYTHONPYCACHEPREFIX", None)
    else:
        environment.pop("PYTHONDONTWRITEBYTECODE", None)
        environment["PYTHONPYCACHEPREFIX"] = cache
    return environment


def report(times: dict[str, list[tuple[float, float]]], floor_name: str) -> None:
    """Print min / median of wall and CPU time per command, and the ratios to the floor."""
    floor_wall = [wall for wall, _ in times[floor_name]]
    floor_cpu = [cpu for _, cpu in times[floor_name]]
    print(f"{'':32} {'wall min / median':>19}  {'CPU min / median':>17}  × floor (wall, CPU)")
    for name, sample in times.items():
        wall = [w for w, _ in sample]
        cpu = [c for _, c in sample]
        line = (f"  {name:<30} {min(wall):7.3f} / {statistics.median(wall):6.3f} s  "
                f"{min(cpu):6.3f} / {statistics.median(cpu):6.3f} s")
        if name != floor_name:
            line += (f"  {min(wall) / min(floor_wall):4.1f} / {min(cpu) / min(floor_cpu):4.1f}")
        print(line)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7, help="interleaved rounds (default 7)")
    parser.add_argument("--all", action="store_true", help="also course, running and --help")
    parser.add_argument("--limit", type=float, default=None,
                        help="exit with 1 when the plan command's min is above this [s]")
    parser.add_argument("--from-source", action="store_true",
                        help="no bytecode written: pacing compiled on each run")
    args = parser.parse_args()
    commands = [PLAN, FLOOR, *(OTHERS if args.all else [])]
    with tempfile.TemporaryDirectory(prefix="pacing-pycache-") as cache:
        times = measure(commands, args.runs,
                        bytecode_environment(None if args.from_source else cache))
    print(f"whole-process time, {args.runs} interleaved runs, "
          f"{'compiled from source' if args.from_source else 'bytecode cached'}; "
          f"{os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f}:")
    report(times, FLOOR[0])
    plan_min = min(wall for wall, _ in times[PLAN[0]])
    if args.limit is not None and plan_min > args.limit:
        print(f"FAIL: {PLAN[0]} takes {plan_min:.3f} s at best, above {args.limit:g} s")
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
