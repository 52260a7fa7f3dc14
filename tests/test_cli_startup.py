"""The command line starts light: each command imports what it needs and no more (issue 15).

Each case runs `pacing.cli.main` in a fresh interpreter and reads back the names in
`sys.modules`: the everyday commands (a constant cycling plan, a course summary, a running
plan) load no library that takes a noticeable time to import and that they do not use
(scipy.signal, scipy.stats, scipy.optimize, pandas, SQLAlchemy, numba, Streamlit, …), and a
command's parser does not import the other commands. No timing is asserted here (it is noisy on
shared machines): bench/bench_startup.py measures the whole process.

What replaced a heavy import must give the same numbers: the Gaussian and flat smoothing
windows and the convolution (pacing.course.elevation) against scipy.signal, the even pace of a
running course (pacing.plan.even_pace, bisection) against scipy.optimize.brentq on the same
equation — scipy is the outside reference — and the median of a recording's spacing
(pacing.course.recording) against numpy.median.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]
LOOP = "demo_routes/01_corravey_hill_loop_40k.gpx"
HALF = "demo_routes/04_larchwick_half_marathon.gpx"

HEAVY = ("scipy.signal", "scipy.stats", "scipy.optimize", "scipy.interpolate", "pandas",
         "sqlalchemy", "numba", "streamlit", "plotly", "openpyxl", "matplotlib")
"""Libraries the everyday commands must not load: each takes 0.1-1 s to import."""

COMMAND_MODULES = ("pacing.cli.course", "pacing.cli.plan", "pacing.cli.compare",
                   "pacing.cli.fieldtest", "pacing.cli.library")

_RUN_MAIN = """
import contextlib, io, json, sys
from pacing.cli import main
with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
    try:
        code = main(sys.argv[1:])
    except SystemExit as done:
        code = done.code
print(json.dumps({"code": code, "modules": sorted(sys.modules)}))
"""
"""Runs the command line in this interpreter, then prints its exit code and loaded modules."""


def loaded_modules(*arguments: str) -> set[str]:
    """The modules loaded by `python -m pacing ARGUMENTS…` (as pacing.cli.main), in a fresh
    interpreter with the default kernel policy; the command must succeed."""
    environment = {key: value for key, value in os.environ.items()
                   if key not in ("PACING_KERNELS", "NUMBA_DISABLE_JIT")}
    done = subprocess.run([sys.executable, "-c", _RUN_MAIN, *arguments], cwd=ROOT,
                          capture_output=True, text=True, env=environment, timeout=300,
                          check=True)
    report = json.loads(done.stdout.strip().splitlines()[-1])
    assert report["code"] == 0
    return set(report["modules"])


def heavy_among(modules: set[str], skip: tuple[str, ...] = ()) -> list[str]:
    """The HEAVY libraries (or their submodules) among `modules`, except those in `skip`."""
    return sorted(name for name in modules for heavy in HEAVY
                  if heavy not in skip and (name == heavy or name.startswith(heavy + ".")))


# ------------------------------------------------------------------------ what each loads

@pytest.fixture(scope="module")
def cycling_plan_modules() -> set[str]:
    return loaded_modules("plan", LOOP, "--power", "250", "--json")


def test_a_constant_cycling_plan_loads_no_heavy_library(cycling_plan_modules):
    assert heavy_among(cycling_plan_modules, skip=("scipy.optimize",)) == []


def test_a_constant_cycling_plan_loads_no_optimizer(cycling_plan_modules):
    assert heavy_among(cycling_plan_modules) == []


def test_a_cycling_plan_imports_no_other_command(cycling_plan_modules):
    assert cycling_plan_modules.isdisjoint(
        {"pacing.cli.course", "pacing.cli.compare", "pacing.cli.fieldtest",
         "pacing.cli.library", "pacing.compare.analysis", "pacing.fieldtest.estimate",
         "pacing.store.library", "pacing.io.exports"})


def test_a_course_summary_loads_no_heavy_library_and_no_planner():
    modules = loaded_modules("course", LOOP, "--json")
    assert heavy_among(modules) == []
    assert not any(name.startswith("pacing.plan.") for name in modules)
    assert "numpy.ma" not in modules  # numpy.median and numpy.unique import it (15 ms)


def test_a_running_plan_loads_no_heavy_library_nor_the_cycling_planner():
    modules = loaded_modules("plan", HALF, "--sport", "running", "--flat-pace", "4:30",
                             "--json")
    assert heavy_among(modules) == []
    assert {"pacing.plan.cycling", "pacing.plan.fastest"}.isdisjoint(modules)


def test_the_command_list_imports_no_command():
    modules = loaded_modules("--help")
    assert modules.isdisjoint(COMMAND_MODULES)
    assert "numpy" not in modules


def test_a_command_s_help_imports_that_command_only():
    modules = loaded_modules("course", "--help")
    assert "pacing.cli.course" in modules
    assert modules.isdisjoint(set(COMMAND_MODULES) - {"pacing.cli.course"})


# -------------------------------------------- the parser: one command built, same behaviour

def test_the_command_asked_is_the_first_argument_that_is_not_a_flag():
    from pacing.cli import command_asked

    assert command_asked(["plan", "route.gpx", "--power", "250"]) == "plan"
    assert command_asked(["--version"]) is None
    assert command_asked([]) is None
    assert command_asked(["-h", "course"]) == "course"
    assert command_asked(["--", "library", "list"]) == "library"
    assert command_asked(["nosuch", "plan"]) is None  # argparse refuses "nosuch" itself


def test_the_command_list_is_the_same_whether_one_command_or_all_are_built():
    from pacing.cli import COMMAND_MODULES as COMMANDS
    from pacing.cli import build_parser

    every = build_parser().format_help()
    assert build_parser(()).format_help() == every
    for command in COMMANDS:
        assert build_parser((command,)).format_help() == every


@pytest.mark.parametrize("command", ["course", "plan", "compare", "fieldtest", "library"])
def test_a_command_built_alone_has_the_help_of_the_full_parser(command, capsys):
    from pacing.cli import build_parser

    texts = []
    for parser in (build_parser(), build_parser((command,))):
        with pytest.raises(SystemExit):
            parser.parse_args([command, "--help"])
        texts.append(capsys.readouterr().out)
    assert texts[0] == texts[1]
    assert texts[0].startswith(f"usage: pacing {command}")


def test_an_unknown_command_is_refused_in_one_line(capsys):
    from pacing.cli import main

    with pytest.raises(SystemExit) as refused:
        main(["nosuch"])
    assert refused.value.code == 2
    assert capsys.readouterr().err.count("\n") == 1


# ------------------------------------------ what replaced scipy gives scipy's numbers (outside)

@pytest.mark.parametrize("length", [0, 1, 2, 3, 31, 601, 3001])
@pytest.mark.parametrize("deviation", [0.5, 5.0, 37.3, 250.0])
def test_the_gaussian_window_is_scipy_s(length, deviation):
    from scipy.signal import windows

    from pacing.course.elevation import gaussian_window

    np.testing.assert_allclose(gaussian_window(length, deviation),
                               windows.gaussian(length, deviation), rtol=1e-15, atol=0.0)


@pytest.mark.parametrize("window", [15.0, 50.0, 200.0, 1000.0, 5000.0])
def test_the_smoothing_kernels_are_scipy_s_windows(window):
    # ElevationSmoothing's kernels: Gaussian of sd window/4 cut at ±3 sd; flat over the window
    import math

    from scipy.signal import windows

    from pacing.course.elevation import SMOOTHING_METHODS

    step = 10.0
    deviation = window / 4.0 / step
    half = math.ceil(3.0 * deviation)
    gaussian = SMOOTHING_METHODS["gaussian"]
    flat = SMOOTHING_METHODS["moving-average"]
    assert gaussian is not None and flat is not None
    expected = np.ones(1) if deviation < 0.5 else windows.gaussian(2 * half + 1, deviation)
    np.testing.assert_allclose(gaussian(window, step), expected, rtol=1e-15, atol=0.0)
    np.testing.assert_array_equal(flat(window, step),
                                  windows.boxcar(2 * round(window / step / 2.0) + 1))


@pytest.mark.parametrize(("size", "width"), [(40, 31), (4000, 31), (1051, 751),
                                             (20_000, 601), (20_000, 3001)])
def test_the_convolution_is_scipy_s_direct_or_by_fft(size, width):
    # scipy.signal.convolve(method="auto") goes direct for the first three, by FFT for the
    # last two (its own choice, printed by scipy.signal.choose_conv_method)
    from scipy import signal

    from pacing.course.elevation import convolve_valid, gaussian_window

    rng = np.random.default_rng(size + width)
    profile = 500.0 + np.cumsum(rng.normal(0.0, 1.0, size))
    kernel = gaussian_window(width, width / 6.0)
    kernel /= kernel.sum()
    expected = signal.convolve(profile, kernel, mode="valid", method="auto")
    found = convolve_valid(profile, kernel)
    assert found.shape == expected.shape == (size - width + 1,)
    if signal.choose_conv_method(profile, kernel, mode="valid") == "direct":
        np.testing.assert_array_equal(found, expected)
    else:
        np.testing.assert_allclose(found, expected, rtol=0.0, atol=1e-12 * np.abs(expected).max())


def test_smoothing_a_rough_profile_gives_what_scipy_signal_gave():
    # the smoothing as it was written with scipy.signal: odd reflection, scipy's window, convolve
    from scipy import signal

    from pacing.course.elevation import ElevationSmoothing, smooth_elevation

    rng = np.random.default_rng(7)
    elevation = 300.0 + np.cumsum(rng.normal(0.0, 0.8, 3000))
    deviation = 200.0 / 4.0 / 10.0
    half = int(np.ceil(3.0 * deviation))
    kernel = signal.windows.gaussian(2 * half + 1, deviation)
    kernel /= kernel.sum()
    padded = np.pad(elevation, half, mode="reflect", reflect_type="odd")
    expected = signal.convolve(padded, kernel, mode="valid", method="auto")
    np.testing.assert_allclose(smooth_elevation(elevation, 10.0, ElevationSmoothing()),
                               expected, rtol=1e-15, atol=0.0)


def test_the_median_of_the_spacing_is_numpy_s():
    from pacing.course.recording import middle_value

    rng = np.random.default_rng(3)
    for count in (1, 2, 3, 4, 5, 10, 11, 1000, 1001):
        values = np.round(rng.lognormal(2.0, 0.5, count), 1)  # ties, as in recorded spacing
        assert middle_value(values) == float(np.median(values))


@pytest.mark.parametrize(("wind", "effort"), [(0.0, 12.0), (6.0, 9.5), (-8.0, 15.0)])
def test_the_even_pace_is_scipy_brentq_s_root(wind, effort):
    # the same equation, P̄(v) = Σ P_j(v)·L_j / Σ L_j = effort, solved by scipy's brentq
    from scipy.optimize import brentq

    from pacing.course.geometry import synthetic_course
    from pacing.physics.running import Runner, metabolic_power
    from pacing.plan.even_pace import even_pace_for_mean_power

    distance = np.linspace(0.0, 8000.0, 801)
    course = synthetic_course(distance, 40.0 * np.sin(distance / 900.0))
    runner = Runner.from_body(68.0, 1.78)
    length = course.piece_length

    def mean_power(speed: float) -> float:
        power = metabolic_power(speed, course.grade, 1.2, runner, wind, 0.0)
        return float(np.sum(power * length) / length.sum()) - effort

    expected = brentq(mean_power, 1e-3, 64.0, xtol=1e-14, rtol=1e-15)
    found = even_pace_for_mean_power(course, runner, effort, headwind=wind)
    assert found == pytest.approx(expected, rel=1e-13)
