"""The golden cases: command lines whose JSON output must not change while code moves.

Each case is a list of arguments to ``pacing.cli.main``; ``record.py`` runs them and writes
``golden.json``; ``tests/test_golden.py`` runs them again and compares every number to 1e-9.
A test ride for the field test is simulated by the independent forward model of
tests/test_fieldtest_estimate.py (never by the code under test).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import scipy

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_routes"
LOOP = str(DEMO / "01_corravey_hill_loop_40k.gpx")
DYKE = str(DEMO / "02_skelmarsh_dyke_out_and_back_20k.gpx")
PASS = str(DEMO / "03_tarnwhistle_pass_climb_10k.gpx")
HALF = str(DEMO / "04_larchwick_half_marathon.gpx")
WIND = ["--wind-speed", "4", "--wind-from", "250"]


def cases(ride: str) -> dict[str, list[str]]:
    """Name → CLI arguments (with --json). `ride` is the path of a simulated test ride CSV."""
    return {
        "course_loop": ["course", LOOP, "--json"],
        "course_dyke_2k": ["course", DYKE, "--segment-length", "2000", "--json"],
        "course_pass": ["course", PASS, "--json"],
        "course_half": ["course", HALF, "--json"],
        "plan_constant_loop": ["plan", LOOP, "--power", "250", *WIND, "--json"],
        "plan_constant_pass_limits": ["plan", PASS, "--power", "220", "--max-descent-speed",
                                      "15", "--coasting-speed", "16", "--json"],
        "plan_strategy_constant_limits": ["plan", LOOP, "--strategy", "constant", "--power",
                                          "300", "--cp", "260", "--w-prime", "20000", "--json"],
        "plan_fastest_loop": ["plan", LOOP, "--strategy", "fastest", "--power", "250",
                              "--cp", "280", "--w-prime", "20000", *WIND, "--json"],
        "plan_fastest_dyke": ["plan", DYKE, "--strategy", "fastest", "--power", "240",
                              "--max-power-ratio", "1.3", "--wind-speed", "6", "--wind-from",
                              "90", "--json"],
        "plan_target_time_loop": ["plan", LOOP, "--strategy", "target-time", "--target-time",
                                  "1:08:00", "--cp", "280", "--w-prime", "20000", "--json"],
        "plan_walk_pass": ["plan", PASS, "--power", "60", "--json"],
        "run_equal_effort": ["plan", HALF, "--sport", "running", "--flat-pace", "4:30",
                             "--body-mass", "64", "--height", "1.75", *WIND, "--json"],
        "run_even_pace": ["plan", HALF, "--sport", "running", "--flat-pace", "4:30",
                          "--body-mass", "64", "--strategy", "even-pace", "--json"],
        "run_fastest": ["plan", HALF, "--sport", "running", "--body-mass", "64",
                        "--critical-speed", "4.2", "--d-prime", "200", "--strategy", "fastest",
                        "--json"],
        "compare_loop": ["compare", LOOP, "--power", "250", "--setup", "hoods:cda=0.32,power=1.0",
                         "--setup", "aero:cda=0.25,power=0.95", *WIND, "--json"],
        "compare_fastest_samples": ["compare", DYKE, "--power", "250", "--strategy", "fastest",
                                    "--cp", "270", "--w-prime", "18000", "--setup",
                                    "hoods:cda=0.32", "--setup", "aero:cda=0.26,power=0.96",
                                    "--samples", "20", "--json"],
        "fieldtest_loop": ["fieldtest", ride, "--mass", "80", "--bootstrap", "200", "--json"],
        "fieldtest_profile": ["fieldtest", ride, "--mass", "80", "--method", "profile",
                              "--bootstrap", "200", "--json"],
        "fieldtest_regression": ["fieldtest", ride, "--mass", "80", "--method", "regression",
                                 "--bootstrap", "200", "--json"],
    }


def write_ride(path: Path) -> str:
    """A simulated loop ride (tests/test_fieldtest_estimate.py's forward model, seed 1) as a CSV."""
    import numpy as np
    from test_fieldtest_estimate import POWER_CV, simulate_loop_ride

    data = simulate_loop_ride(air_density=1.19931)
    rng = np.random.default_rng(1)
    power = data["power"] * (1 + POWER_CV * rng.standard_normal(data["time"].size))
    columns = {"time_s": data["time"], "speed_mps": data["speed"], "power_w": power,
               "elevation_m": data["elevation"], "latitude": data["latitude"],
               "longitude": data["longitude"]}
    lines = [",".join(columns)]
    lines += [",".join(repr(float(v)) for v in row) for row in zip(*columns.values(),
                                                                    strict=True)]
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def run_case(args: list[str]):
    """Run one command line in this process: (exit code, parsed JSON of stdout)."""
    import contextlib
    import io
    import warnings

    from pacing.cli import main

    out = io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(io.StringIO()), \
            warnings.catch_warnings():
        warnings.simplefilter("ignore")
        code = main(args)
    return code, json.loads(out.getvalue())


APP_ATHLETE = {"body_mass": 72.0, "bike_mass": 8.0, "critical_power": 280.0, "w_prime": 20000.0,
               "drag_area": 0.30, "rolling_coefficient": 0.004, "drivetrain_efficiency": 0.976}
APP_RUNNER = {"body_mass": 64.0, "height": 1.75, "flat_pace": 270.0, "critical_speed": 4.2,
              "d_prime": 200.0}
APP_WEATHER = {"wind_speed": 3.0, "wind_from": 270.0, "temperature": 24.0}


def app_cases() -> dict[str, tuple]:
    """Name → (sport, course path, athlete, weather, approach) as the page passes them (SI)."""
    return {
        "app_constant": ("cycling", LOOP, APP_ATHLETE, APP_WEATHER,
                         {"strategy": "constant", "mean_power": 240.0}),
        "app_fastest": ("cycling", LOOP, APP_ATHLETE, APP_WEATHER,
                        {"strategy": "fastest", "mean_power": 260.0, "w_prime_reserve": 1000.0}),
        "app_target_time": ("cycling", PASS, APP_ATHLETE, APP_WEATHER,
                            {"strategy": "target-time", "target_time": 2400.0}),
        "app_constant_over_cp": ("cycling", LOOP, APP_ATHLETE, APP_WEATHER,
                                 {"strategy": "constant", "mean_power": 320.0}),
        "app_run_equal": ("running", HALF, APP_RUNNER, APP_WEATHER, {"strategy": "equal-effort"}),
        "app_run_fastest": ("running", HALF, APP_RUNNER, APP_WEATHER, {"strategy": "fastest"}),
    }


def _plain(value):
    """Numbers, strings and lists of them from an outcome field (arrays → lists)."""
    import dataclasses

    import numpy as np

    if value is None or isinstance(value, str | bool | int | float):
        return value
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, np.ndarray):
        return value.tolist()
    if dataclasses.is_dataclass(value):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    return str(value)


def run_app_case(sport, path, athlete, weather, approach) -> dict:
    """What the page shows for one case, as plain numbers (through the page's own calls)."""
    from pathlib import Path

    from ui import pipeline

    course = pipeline.load_course_from_bytes(Path(path).read_bytes(), Path(path).stem, 200.0,
                                             0.25)
    bounds = pipeline.segment_bounds(course, "by terrain")
    outcome = pipeline.race_outcome(course, bounds, dict(athlete, sport=sport), dict(weather),
                                    dict(approach))
    keep = ("finish_time", "average_speed", "max_speed", "average_power", "time_saved",
            "rows", "exhausted_at")
    result = {name: _plain(getattr(outcome, name)) for name in keep}
    # the results section's notices in words (the course's own are shown with the course)
    result["notes"] = pipeline.notes_in(
        pipeline.with_replaced(outcome, notices=tuple(
            n for n in outcome.notices if n not in course.notices)), "metric")
    for name in ("speed", "power", "headwind", "w_prime_balance"):
        result[name] = _fingerprint(getattr(outcome, name))
    return result


def _fingerprint(values) -> dict | None:
    """A small stand-in for an array along the course: size, sum, extremes, every 97th."""
    import numpy as np

    if values is None:
        return None
    array = np.asarray(values, dtype=float)
    return {"size": int(array.size), "sum": float(array.sum()), "min": float(array.min()),
            "max": float(array.max()), "sample": array[::97].tolist()}


def platform_fingerprint() -> dict[str, object]:
    """What decides the last bits of the numbers besides our code: the numpy and scipy
    versions and the CPU features numpy dispatches its vector math to (AVX-512 or not gives
    exp, log and power that differ in the last bit; solvers carry that to ~1e-8)."""
    features = np._core._multiarray_umath.__cpu_features__  # type: ignore[attr-defined]
    return {"numpy": np.__version__, "scipy": scipy.__version__,
            "numpy_cpu_features": sorted(name for name, on in features.items() if on)}
