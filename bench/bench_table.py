"""The speed table of issue 15, measured in one run, as ratios to a reference measured beside it.

Every row calls the library's public functions on the issue's cases (a 200 km course of
20,001 points every 10 m from bench_simulate.make_course, wind 4 m/s, 250 W; the 40 km demo
course demo_routes/01_corravey_hill_loop_40k.gpx; the command line and the app's pages in
fresh processes). For each row it prints its first call (compilation, caches), the min and
median of interleaved repeats, the issue's target and min/target (≤ 1: met), and a
machine-independent ratio: the row's min time divided by the min time of a fixed calibration
workload (a pure-Python loop and numpy passes, 30-60 ms) timed before every repeat of every row.

bench/baseline.json keeps the calibrated ratios, one set per kernel mode (PACING_KERNELS,
NUMBA_DISABLE_JIT and whether numba is there). A row whose ratio is worse than its baseline by
more than MARGIN (PROCESS_MARGIN for a fresh process) prints REGRESSED and the script exits
with 1, as it does when a row raises; a row over its target prints MISSED and does not fail
(the targets are being worked on). `--update-baseline` writes the ratios of this run.

Run: .venv/bin/python bench/bench_table.py [--only steady,simulate] [--update-baseline]
"""

from __future__ import annotations

import argparse
import gc
import importlib
import importlib.metadata
import json
import math
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
BASELINE = HERE / "baseline.json"
DEMO = ROOT / "demo_routes" / "01_corravey_hill_loop_40k.gpx"

BASELINE_FORMAT = 1
"""Version of baseline.json's layout; a file of another version is refused."""

CALIBRATION_VERSION = 1
"""Version of `calibration_workload`: bump it whenever that function changes, since every
stored ratio is relative to it (a baseline of another version is not compared)."""

MARGIN = 1.5
"""A calibrated ratio more than this many times its baseline is a regression [-], for the
rows timed inside this process. Measured: two runs of the same code (issue 15's starting point)
on the shared 2-core machine, other developers' jobs running (load average 2-3), gave ratios
within ±20 % of each other on every such row (the calibration, timed beside every repeat,
takes out a slower or faster machine, not a neighbour's burst during one row). 1.5x stays
clear of that and still catches any slowdown that matters here (the targets are 5-100x below
the old times)."""

PROCESS_MARGIN = 2.0
"""The same for the rows that time a fresh Python process (the command line, the app's
pages: imports from disk, 3 samples each): the two runs above differed by up to 1.75x on them
[-]."""

ROW_BUDGET = 6.0
"""Seconds of timed repeats per row, which sets its number of repeats [s]: with MIN_REPEATS
and the first calls the whole table took 110-150 s on the busy development machine."""

MIN_REPEATS = 3
"""Fewest timed repeats of a row (besides its first call) [-]."""

MAX_REPEATS = 21
"""Most timed repeats of a row [-]."""

POWER = 250.0
"""Mean crank power of every case [W]."""

WIND_SPEED = 4.0
"""Wind speed at 10 m of the 200 km cases and the setups [m/s]."""

UNCERTAINTY_SAMPLES = 1000
"""Monte Carlo draws of the uncertainty row [-]."""

UNCERTAINTY_BUDGET = 6.0
"""Longest one uncertainty repeat may take [s]: beyond it fewer draws are run and the time
is scaled to UNCERTAINTY_SAMPLES (and said so: the old code took 0.3-0.4 s a draw, 1000 would
take minutes a repeat). Twice the target, so every run near the target is a whole one."""


# ---------------------------------------------------------------------------------------------
# the machine


def _read_proc(path: str) -> str:
    try:
        return Path(path).read_text(encoding="utf-8", errors="replace")
    except OSError:
        return ""


def _version(package: str) -> str:
    try:
        return importlib.metadata.version(package)
    except importlib.metadata.PackageNotFoundError:
        return "not installed"


def machine() -> dict[str, str]:
    """CPU model, cores, RAM (from /proc), Python, numpy, scipy and numba versions."""
    cpu = _read_proc("/proc/cpuinfo")
    models = [line.split(":", 1)[1].strip() for line in cpu.splitlines()
              if line.startswith("model name")]
    memory = _read_proc("/proc/meminfo")
    total = next((line.split()[1] for line in memory.splitlines()
                  if line.startswith("MemTotal:")), None)
    usable = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    return {
        "cpu": models[0] if models else platform.processor() or "unknown",
        "cores": f"{usable} usable of {os.cpu_count()}",
        "ram": f"{int(total) / 2**20:.1f} GiB" if total else "unknown",
        "python": platform.python_version(),
        "numpy": np.__version__,
        "scipy": _version("scipy"),
        "numba": _version("numba"),
        "os": platform.platform(terse=True),
    }


def kernel_mode() -> str:
    """Which numeric kernels the library runs here: "python" (no pacing.kernels, numba
    missing, NUMBA_DISABLE_JIT=1 or PACING_KERNELS=python), else PACING_KERNELS' policy
    ("auto" or "compiled"). Baselines are kept per mode."""
    try:
        kernels = importlib.import_module("pacing.kernels")
    except ImportError:
        return "python"
    chosen = str(kernels.policy())
    if chosen == "python" or not kernels.numba_importable():
        return "python"
    if os.environ.get("NUMBA_DISABLE_JIT", "0").strip() not in ("", "0"):
        return "python"
    return chosen


def warm_up_kernels() -> str:
    """Load (or compile) the compiled kernels once, as the app does at start: what it took."""
    try:
        kernels = importlib.import_module("pacing.kernels")
    except ImportError:
        return "no pacing.kernels"
    try:
        seconds = float(kernels.warm_up())
    except Exception as error:  # noqa: BLE001 - the table goes on without a warm-up
        return f"warm-up failed ({type(error).__name__}: {error})"
    return f"warm-up {seconds:.2f} s"


# ---------------------------------------------------------------------------------------------
# the calibration workload: never change it without bumping CALIBRATION_VERSION


def calibration_workload() -> float:
    """A fixed job of 30-60 ms on the development machine: a scalar recurrence in pure
    Python (like a simulation step: 60,000 steps) and numpy passes over 20,001 points (like
    the steady model; no BLAS call, so no threads), so it slows down and speeds up with the
    interpreter, the memory and the vector units alike. Returns a number so the work cannot be
    skipped."""
    speed, total = 5.0, 0.0
    for i in range(60_000):
        grade = 0.05 * math.sin(i * 1e-3)
        force = 0.5 * 1.2 * 0.3 * speed * speed + 80.0 * 9.81 * (0.004 + grade)
        speed = max(speed + (250.0 / speed - force) * 0.01 / 80.0, 1.0)
        total += 10.0 / speed
    x = np.linspace(-0.1, 0.1, 20_001)
    for _ in range(40):
        y = np.sqrt(1.0 + x * x) * np.cos(x)
        x = np.clip(np.cumsum(y) / y.sum() - 0.5, -0.1, 0.1) * 0.2
        total += float((x * y).sum())
    return total


def timed(action: Callable[[], object]) -> float:
    """Wall time of one call [s], after a garbage collection outside the clock."""
    return timed_value(action)[0]


def timed_value(action: Callable[[], object]) -> tuple[float, object]:
    """Wall time of one call [s] and what it returned, after a garbage collection outside the
    clock."""
    gc.collect()
    start = time.perf_counter()
    value = action()
    return time.perf_counter() - start, value


def calibration_seconds(runs: int = 5) -> float:
    """The min time of the calibration workload over `runs` runs [s]: the unit the other bench
    scripts divide their times by (run it between their measurements to interleave)."""
    return min(timed(calibration_workload) for _ in range(runs))


# ---------------------------------------------------------------------------------------------
# the rows


Action = Callable[[], object]


@dataclass(frozen=True)
class Cases:
    """The issue's cases, built once (untimed)."""

    course: Any
    air: Any
    conditions: Any
    rider: Any
    demo: Any


@dataclass
class Row:
    """One line of the table: what it measures, the issue's figures and how to run it.

    `make(cases, row)` is called once, untimed, and returns the action to time (the set-up,
    e.g. a request's segments, stays out of the clock; it may fill `note`); `scale` multiplies
    each measured time (the uncertainty row, when it runs fewer draws than it stands for)."""

    key: str
    what: str
    target: float
    old: str
    calls: str
    make: Callable[[Cases, Row], Action] | None = None
    scale: float = 1.0
    note: str = ""
    first: float = math.nan
    times: list[float] = field(default_factory=list)
    error: str = ""
    reports_time: bool = False
    """The action returns its own measured time [s] (the app rows) instead of being timed."""
    repeats: int | None = None
    """Timed repeats; None to fill ROW_BUDGET."""
    margin: float = MARGIN
    """How many times its baseline ratio the row may take before it is a regression [-]."""
    describe: Callable[[object], str] | None = None
    """What to say of the action's last result beside the row (untimed), e.g. a plan's saving."""

    def run(self, action: Action) -> float:
        """One measured time of the action, scaled [s]."""
        if not self.reports_time:
            seconds, value = timed_value(action)
            if self.describe is not None:
                try:
                    self.note = self.describe(value)
                except Exception as error:  # noqa: BLE001 - a note never fails the row
                    self.note = f"no description ({type(error).__name__}: {error})"
            return seconds * self.scale
        reported = action()
        if not isinstance(reported, int | float):
            raise TypeError(f"{self.calls} returned {reported!r}, not seconds")
        return float(reported) * self.scale


def build_cases() -> Cases:
    """The 200 km course (bench_simulate.make_course) with its air at 4 m/s from 250°, the
    default rider (80 kg, CdA 0.30 m²) and the 40 km demo course."""
    if str(HERE) not in sys.path:
        sys.path.insert(0, str(HERE))
    from bench_simulate import make_course

    from pacing.io.gpx import load_course
    from pacing.physics.cycling import Rider
    from pacing.weather.conditions import Conditions, air_along_course

    course = make_course(200.0)
    conditions = Conditions(wind_speed=WIND_SPEED, wind_from=250.0)
    return Cases(course=course, air=air_along_course(course, conditions),
                 conditions=conditions, rider=Rider(), demo=load_course(DEMO))


def _steady(cases: Cases, row: Row) -> Action:
    from pacing.physics.cycling import speed_for_power

    air = cases.air
    return lambda: speed_for_power(POWER, cases.course.grade, air.density, cases.rider,
                                   air.headwind, air.crosswind)


def _simulate(cases: Cases, row: Row) -> Action:
    from pacing.plan.simulate import simulate

    return lambda: simulate(cases.course, POWER, cases.rider, cases.air)


def _fastest_request(course: Any, conditions: Any, rider: Any) -> Any:
    """The fastest plan within CP 270 W and W′ 20 kJ at 250 W mean, split by terrain."""
    from pacing.course.segments import split_by_grade
    from pacing.plan.race import RaceRequest
    from pacing.plan.request import PlanRequest

    return RaceRequest(course=course, bounds=split_by_grade(course), conditions=conditions,
                       strategy="fastest", rider=rider,
                       cycling=PlanRequest(strategy="fastest", mean_power=POWER,
                                           critical_power=270.0, w_prime=20000.0))


def describe_plan(result: Any) -> str:
    """Segments, time saved, lowest W′ balance and solver of a fastest plan's RaceResult."""
    plan = result.plan
    return (f"{result.request.bounds.size - 1} segments, saved {plan.time_saved:.0f} s, "
            f"lowest W′ {plan.min_w_prime_balance:.0f} J, {plan.solver.method}")


def _fastest_demo(cases: Cases, row: Row) -> Action:
    from pacing.plan.race import plan_race
    from pacing.weather.conditions import Conditions

    # still air, the command line's default (the 470 ms was measured so)
    request = _fastest_request(cases.demo, Conditions(), cases.rider)
    row.describe = describe_plan
    return lambda: plan_race(request)


def _fastest_200(cases: Cases, row: Row) -> Action:
    from pacing.plan.race import plan_race

    request = _fastest_request(cases.course, cases.conditions, cases.rider)
    row.describe = describe_plan
    return lambda: plan_race(request)


def setups_race(cases: Cases) -> tuple[Any, list[Any]]:
    """The demo course at 250 W, wind 4 m/s from 270°, and three setups: hoods (CdA 0.32 m²),
    aero (0.25 m² at 95 % of the power), light (78 kg, 0.33 m²)."""
    from pacing.compare.setups import RiderSetup
    from pacing.course.segments import split_by_grade
    from pacing.physics.cycling import Rider
    from pacing.plan.race import RaceRequest
    from pacing.plan.request import PlanRequest
    from pacing.weather.conditions import Conditions

    rider = Rider(mass=80.0, drag_area=0.32)
    setups = [RiderSetup("hoods", rider),
              RiderSetup("aero", Rider(mass=80.0, drag_area=0.25), 0.95),
              RiderSetup("light", Rider(mass=78.0, drag_area=0.33))]
    race = RaceRequest(course=cases.demo, bounds=split_by_grade(cases.demo),
                       conditions=Conditions(wind_speed=WIND_SPEED, wind_from=270.0),
                       rider=rider, cycling=PlanRequest(mean_power=POWER))
    return race, setups


def _setups(cases: Cases, row: Row) -> Action:
    from pacing.compare.analysis import analyse_setups

    race, setups = setups_race(cases)
    return lambda: analyse_setups(race, setups, break_even_figures=True)


def uncertainty_draws(one_draw: float, samples: int = UNCERTAINTY_SAMPLES,
                      budget: float = UNCERTAINTY_BUDGET) -> int:
    """How many draws one timed repeat runs: all `samples` when they fit in `budget` at
    `one_draw` seconds a draw, else as many as fit (at least 10) [-]."""
    if one_draw <= 0 or samples * one_draw <= budget:
        return samples
    return max(10, min(samples, int(budget / one_draw)))


def _uncertainty(cases: Cases, row: Row) -> Action:
    from pacing.compare.analysis import DEFAULT_UNCERTAINTY
    from pacing.compare.sensitivity import sampled_finish_time

    power = np.full(cases.course.grade.size, POWER)

    def draws(count: int) -> Action:
        return lambda: sampled_finish_time(cases.course, power, cases.rider, cases.conditions,
                                           DEFAULT_UNCERTAINTY, samples=count)

    probe = 10
    draws(2)()  # warm-up (kernels, caches)
    count = uncertainty_draws(timed(draws(probe)) / probe)
    row.scale = UNCERTAINTY_SAMPLES / count
    if count < UNCERTAINTY_SAMPLES:
        row.note = f"≈: {count} draws timed, scaled ×{row.scale:.1f}"
    return draws(count)


def _cli(cases: Cases, row: Row) -> Action:
    command = [sys.executable, "-m", "pacing", "plan", str(DEMO), "--power", f"{POWER:.0f}",
               "--json"]

    def run() -> None:
        done = subprocess.run(command, cwd=ROOT, stdout=subprocess.DEVNULL,
                              stderr=subprocess.PIPE, text=True)
        if done.returncode != 0:
            last = (done.stderr.strip().splitlines() or [""])[-1]
            raise RuntimeError(f"the command exited with {done.returncode}: {last}")

    return run


APP_ROWS = {"app-first": "FIRST_PAGE", "app-rerun": "FASTEST", "app-setups": "SETUPS"}
"""Row key → the name in bench/bench_app.py of its row in one sample of the page."""


class AppSamples:
    """The app rows from bench/bench_app.py: `in_child` runs one sample of the page in a fresh
    Python process (imports paid, caches empty) against a scratch library and returns the
    server time of each of its rows; "app-first" takes a new sample, the other two app rows
    read theirs from it (they follow it in every round)."""

    def __init__(self, bench_app: Any) -> None:
        self.bench_app = bench_app
        self.folder = tempfile.TemporaryDirectory()
        self.environment = dict(os.environ, PACING_DATABASE_URL=str(
            Path(self.folder.name) / "bench.db"))
        self.latest: dict[str, float] = {}

    def new(self) -> float:
        """A new sample; its first page's server time [s]."""
        sample = self.bench_app.in_child(self.bench_app.APP, False, self.environment)
        if sample.get("failures"):
            raise RuntimeError(f"the page raised: {', '.join(sample['failures'])}")
        self.latest = dict(sample["rows"])
        return self.read("app-first")

    def read(self, key: str) -> float:
        """The latest sample's server time of an app row [s]."""
        return float(self.latest[getattr(self.bench_app, APP_ROWS[key])])


_SAMPLER: list[AppSamples] = []


def app_samples() -> AppSamples:
    """bench_app's sampler, loaded on first need (it imports streamlit).

    Raises
    ------
    RuntimeError
        When bench/bench_app.py has no `in_child`, `APP` or row names (the rows then say
        ERROR: the table and bench_app must agree)."""
    if not _SAMPLER:
        if str(HERE) not in sys.path:
            sys.path.insert(0, str(HERE))
        bench_app = importlib.import_module("bench_app")
        missing = [name for name in ("in_child", "APP", *APP_ROWS.values())
                   if not hasattr(bench_app, name)]
        if missing:
            raise RuntimeError(f"bench/bench_app.py has no {', '.join(missing)}")
        _SAMPLER.append(AppSamples(bench_app))
    return _SAMPLER[0]


def _app_first(cases: Cases, row: Row) -> Action:
    return app_samples().new


def _app_read(key: str) -> Callable[[Cases, Row], Action]:
    def make(cases: Cases, row: Row) -> Action:
        sampler = app_samples()
        return lambda: sampler.read(key)
    return make


def _app_rows() -> list[Row]:
    """The three app rows (MIN_REPEATS fresh processes after a first): bench_app's in_child."""
    calls = "bench_app.in_child: the page (AppTest) in a fresh process, server time"
    return [
        Row("app-first", "app: first page, server time", 1.0, "1.6-2.2 s", calls, _app_first,
            reports_time=True, repeats=MIN_REPEATS, margin=PROCESS_MARGIN),
        Row("app-rerun", "app: rerun after one input, fastest plan", 0.2, "390-470 ms", calls,
            _app_read("app-rerun"), reports_time=True, repeats=MIN_REPEATS, margin=PROCESS_MARGIN),
        Row("app-setups", "app: setups panel on", 1.0, "3-6.5 s", calls,
            _app_read("app-setups"), reports_time=True, repeats=MIN_REPEATS, margin=PROCESS_MARGIN),
    ]


def table_rows() -> list[Row]:
    """The issue's table, each row with the call it times."""
    table = [
        Row("steady", "steady speeds, 200 km", 0.003, "4.0 ms",
            "pacing.physics.cycling.speed_for_power on 20,000 pieces", _steady),
        Row("simulate", "inertial simulation, 200 km", 0.005, "105 ms",
            "pacing.plan.simulate.simulate, 250 W", _simulate),
        Row("fastest-demo", "fastest plan within CP/W′, 40 km demo", 0.1, "470 ms",
            "pacing.plan.race.plan_race, strategy fastest, CP 270 W, W′ 20 kJ, still air",
            _fastest_demo),
        Row("fastest-200", "fastest plan within CP/W′, 200 km with wind", 0.5, "3.4 s",
            "pacing.plan.race.plan_race, strategy fastest, CP 270 W, W′ 20 kJ", _fastest_200),
        Row("setups", "setups: 3 with break-even and sensitivities, 40 km", 0.3, "2.1 s",
            "pacing.compare.analysis.analyse_setups, 3 setups, constant power", _setups),
        Row("uncertainty", "finish-time uncertainty, 1000 samples, 200 km", 3.0,
            "47 s (100 samples)", "pacing.compare.sensitivity.sampled_finish_time",
            _uncertainty),
        Row("cli", "`python -m pacing plan <demo> --power 250 --json`, whole process", 0.5,
            "1.2-1.7 s", "the command line in a subprocess", _cli, margin=PROCESS_MARGIN),
    ]
    return [*table, *_app_rows()]


# ---------------------------------------------------------------------------------------------
# measuring


def repeats_for(one: float, budget: float = ROW_BUDGET, low: int = MIN_REPEATS,
                high: int = MAX_REPEATS) -> int:
    """Repeats of a row whose one run takes `one` seconds, to fill `budget` [-]."""
    if not math.isfinite(one) or one <= 0:
        return high
    return max(low, min(high, int(budget / one)))


def _prepare(table: Sequence[Row], cases_of: Callable[[], Cases]
             ) -> tuple[dict[str, Action], dict[str, int]]:
    """Each row's action (set-up untimed) and its first call (shown: compilation, caches), and
    from it the row's number of repeats."""
    actions: dict[str, Action] = {}
    wanted: dict[str, int] = {}
    cases: Cases | None = None
    for row in table:
        if row.make is None:
            continue
        try:
            cases = cases or cases_of()
            actions[row.key] = row.make(cases, row)
            row.first = row.run(actions[row.key])
        except Exception as error:  # noqa: BLE001 - reported as ERROR, fails the run
            row.error = f"{type(error).__name__}: {error}"
            continue
        wanted[row.key] = row.repeats or repeats_for(row.first / row.scale)
        print(f"  {row.key:13s} first call {_seconds(row.first):>9s}, "
              f"{wanted[row.key]} repeats", flush=True)
    return actions, wanted


def measure(table: Sequence[Row], cases_of: Callable[[], Cases],
            calibration: list[float]) -> None:
    """Warm each row up (its first call, shown), then time the rows in interleaved rounds, the
    calibration workload timed before every repeat (appended to `calibration`)."""
    actions, wanted = _prepare(table, cases_of)
    for round_number in range(max(wanted.values(), default=0)):
        for row in table:
            if row.key not in actions or row.error or round_number >= wanted[row.key]:
                continue
            calibration.append(timed(calibration_workload))
            try:
                row.times.append(row.run(actions[row.key]))
            except Exception as error:  # noqa: BLE001 - reported as ERROR, fails the run
                row.error = f"{type(error).__name__}: {error}"


# ---------------------------------------------------------------------------------------------
# the baseline and the decisions (pure: tests/test_bench_table.py)


def regression_status(ratio: float, baseline: float | None, margin: float = MARGIN) -> str:
    """"REGRESSED" when `ratio` is above `baseline` × `margin`, "improved" when below
    `baseline` / `margin`, "ok" between, "new" without a baseline."""
    if baseline is None:
        return "new"
    if not (math.isfinite(ratio) and math.isfinite(baseline) and baseline > 0):
        raise ValueError(f"ratios must be finite and the baseline positive, got {ratio}, "
                         f"{baseline}")
    if ratio > baseline * margin:
        return "REGRESSED"
    if ratio < baseline / margin:
        return "improved"
    return "ok"


def target_status(seconds: float, target: float) -> str:
    """"met" when `seconds` is at most `target`, else "MISSED" (which does not fail)."""
    return "met" if seconds <= target else "MISSED"


def check_baseline(document: Mapping[str, Any]) -> None:
    """ValueError unless `document` is a baseline file of this format: {"format": 1,
    "calibration": version, "modes": {mode: {"machine": {...}, "measured": date,
    "rows": {key: {"ratio": positive number, ...}}}}}."""
    if document.get("format") != BASELINE_FORMAT:
        raise ValueError(f"baseline format {document.get('format')!r}, expected "
                         f"{BASELINE_FORMAT}")
    if not isinstance(document.get("calibration"), int):
        raise ValueError("baseline without an integer calibration version")
    modes = document.get("modes")
    if not isinstance(modes, dict):
        raise ValueError("baseline without modes")
    for mode, entry in modes.items():
        found = entry.get("rows") if isinstance(entry, dict) else None
        if not isinstance(found, dict):
            raise ValueError(f"baseline mode {mode!r} without rows")
        for key, values in found.items():
            ratio = values.get("ratio") if isinstance(values, dict) else None
            if not (isinstance(ratio, int | float) and math.isfinite(ratio) and ratio > 0):
                raise ValueError(f"baseline {mode}/{key}: ratio must be a positive number")


def load_baseline(path: Path = BASELINE) -> dict[str, Any]:
    """The baseline file, checked; an empty one of this format when there is none."""
    if not path.exists():
        return {"format": BASELINE_FORMAT, "calibration": CALIBRATION_VERSION, "modes": {}}
    document = json.loads(path.read_text(encoding="utf-8"))
    check_baseline(document)
    return dict(document)


def baseline_ratios(document: Mapping[str, Any], mode: str) -> dict[str, float]:
    """Row key → stored ratio for `mode`; {} when the calibration version differs."""
    if document.get("calibration") != CALIBRATION_VERSION:
        return {}
    entry = document.get("modes", {}).get(mode, {})
    return {key: float(values["ratio"]) for key, values in entry.get("rows", {}).items()}


def updated_baseline(document: Mapping[str, Any], mode: str, measured: Mapping[str, Any],
                     machine_info: Mapping[str, str], when: str) -> dict[str, Any]:
    """The baseline with this run's rows of `mode` written over the stored ones (rows not
    measured now are kept; a calibration version change starts afresh)."""
    fresh = document.get("calibration") != CALIBRATION_VERSION
    modes = {} if fresh else {name: dict(entry) for name, entry in
                              document.get("modes", {}).items()}
    entry = modes.get(mode, {})
    rows_now = dict(entry.get("rows", {}))
    rows_now.update({key: dict(values) for key, values in measured.items()})
    modes[mode] = {"measured": when, "machine": dict(machine_info), "rows": rows_now}
    result = {"format": BASELINE_FORMAT, "calibration": CALIBRATION_VERSION, "modes": modes}
    check_baseline(result)
    return result


def baseline_text(document: Mapping[str, Any]) -> str:
    """The baseline file's text: indented JSON with each row's figures on one line."""
    rows: dict[str, str] = {}
    compact: dict[str, Any] = {**document, "modes": {}}
    for mode, entry in document["modes"].items():
        marked = {}
        for key, values in entry["rows"].items():
            mark = f"@row {len(rows)}@"
            rows[json.dumps(mark)] = json.dumps(values, ensure_ascii=False)
            marked[key] = mark
        compact["modes"][mode] = {**entry, "rows": marked}
    text = json.dumps(compact, indent=2, ensure_ascii=False)
    for mark, values in rows.items():
        text = text.replace(mark, values)
    return text + "\n"


# ---------------------------------------------------------------------------------------------
# printing


def _seconds(value: float) -> str:
    if not math.isfinite(value):
        return "-"
    if value < 1.0:
        return f"{value * 1000:.1f} ms" if value < 0.1 else f"{value * 1000:.0f} ms"
    return f"{value:.2f} s"


@dataclass(frozen=True)
class Line:
    """A measured row's figures and verdicts."""

    row: Row
    best: float
    median: float
    ratio: float
    baseline: float | None
    target: str
    regression: str


def judge(row: Row, calibration: float, stored: Mapping[str, float]) -> Line | None:
    """A row's figures against its target and its baseline; None when it was not timed."""
    if not row.times:
        return None
    best = min(row.times)
    ratio = best / calibration
    baseline = stored.get(row.key)
    return Line(row=row, best=best, median=statistics.median(row.times), ratio=ratio,
                baseline=baseline, target=target_status(best, row.target),
                regression=regression_status(ratio, baseline, row.margin))


def print_table(table: Sequence[Row], lines: Mapping[str, Line]) -> None:
    print("| what | old | first call | min | median | target | min/target | ratio | "
          "baseline | verdict |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    for row in table:
        line = lines.get(row.key)
        if line is None:
            state = f"ERROR {row.error}" if row.error else row.calls
            print(f"| {row.what} | {row.old} | | | | {_seconds(row.target)} | | | | {state} |")
            continue
        base = f"{line.baseline:.3g}" if line.baseline is not None else "-"
        note = " (≈, scaled from fewer draws)" if row.scale != 1 else ""
        print(f"| {row.what}{note} | {row.old} | {_seconds(row.first)} | {_seconds(line.best)}"
              f" | {_seconds(line.median)} | {_seconds(row.target)} | "
              f"{line.best / row.target:.2f} | {line.ratio:.3g} | {base} | "
              f"{line.target}, {line.regression} |")


def print_calls(table: Sequence[Row]) -> None:
    print("\nwhat each row calls:")
    for row in table:
        print(f"  {row.key:13s} {row.calls}" + (f" [{row.note}]" if row.note else ""))


def report(table: Sequence[Row], lines: Mapping[str, Line]) -> int:
    """Loud lines for regressions, missed targets and errors; the exit code (1 on a regression
    or an error, 0 otherwise: a missed target alone does not fail)."""
    failed = False
    for row in table:
        line = lines.get(row.key)
        if row.error:
            print(f"ERROR {row.key}: {row.error}")
            failed = True
        if line is None:
            continue
        if line.regression == "REGRESSED":
            print(f"REGRESSED {row.key}: ratio {line.ratio:.3g} > baseline {line.baseline:.3g}"
                  f" × {row.margin} ({_seconds(line.best)})")
            failed = True
        if line.target == "MISSED":
            print(f"MISSED {row.key}: {_seconds(line.best)} > target {_seconds(row.target)} "
                  f"({line.best / row.target:.1f}×)")
    return 1 if failed else 0


# ---------------------------------------------------------------------------------------------


def _commit() -> str:
    """The checked-out commit (short), with "+" for the working tree on top; "unknown"
    without git. Read-only: `git rev-parse` only."""
    try:
        done = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT, text=True,
                              capture_output=True, timeout=10)
    except (OSError, subprocess.SubprocessError):
        return "unknown"
    return f"{done.stdout.strip()}+" if done.returncode == 0 else "unknown"


def parse(argv: Sequence[str] | None) -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--only", default="",
                        help="comma-separated row keys to run (default: every row)")
    parser.add_argument("--update-baseline", action="store_true",
                        help="write this run's ratios to bench/baseline.json")
    parser.add_argument("--baseline", type=Path, default=BASELINE, help=argparse.SUPPRESS)
    return parser.parse_args(argv)


def main(argv: Sequence[str] | None = None) -> int:
    args = parse(argv)
    started = time.perf_counter()
    info = machine()
    mode = kernel_mode()
    print("machine: " + ", ".join(f"{name} {value}" for name, value in info.items()))
    print(f"kernels: {mode} (PACING_KERNELS={os.environ.get('PACING_KERNELS', 'unset')}); "
          f"{warm_up_kernels() if mode != 'python' else 'not loaded'}; "
          f"load average {os.getloadavg()[0]:.2f}")
    table = table_rows()
    keys = [key for key in args.only.split(",") if key]
    if keys:
        unknown = set(keys) - {row.key for row in table}
        if unknown:
            print(f"unknown rows: {', '.join(sorted(unknown))}")
            return 2
        table = [row for row in table if row.key in keys]
    calibration: list[float] = [timed(calibration_workload) for _ in range(3)]
    measure(table, build_cases, calibration)
    unit = min(calibration)
    document = load_baseline(args.baseline)
    stored = baseline_ratios(document, mode)
    lines = {row.key: line for row in table
             if (line := judge(row, unit, stored)) is not None}
    print(f"\ncalibration: min {_seconds(unit)}, median {_seconds(statistics.median(calibration))}"
          f" over {len(calibration)} runs; ratio = min time / min calibration; verdicts: "
          f"target on the min, REGRESSED above baseline × {MARGIN} ({PROCESS_MARGIN} for a "
          f"fresh process) (mode {mode})\n")
    print_table(table, lines)
    print_calls(table)
    print(f"\nwhole table: {time.perf_counter() - started:.0f} s")
    code = report(table, lines)
    if args.update_baseline:
        when = datetime.now(UTC).strftime("%Y-%m-%d")
        commit = _commit()
        measured = {key: {"ratio": round(line.ratio, 6), "min_s": round(line.best, 6),
                          "median_s": round(line.median, 6), "repeats": len(line.row.times),
                          "measured": when, "commit": commit}
                    for key, line in lines.items()}
        new = updated_baseline(document, mode, measured, info, when)
        args.baseline.write_text(baseline_text(new), encoding="utf-8")
        print(f"baseline written: {args.baseline} (mode {mode}, {len(measured)} rows)")
        return 1 if any(row.error for row in table) else 0
    return code


if __name__ == "__main__":
    sys.exit(main())
