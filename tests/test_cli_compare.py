"""Specification of ``pacing compare ROUTE.gpx --setup NAME:cda=…,power=… …`` (issue 7).

JSON: per setup finish_time_s and delta_s (setup − baseline, positive = slower), a
`sensitivity` object in seconds per step (positive = slower), `break_even` and `uncertainty`
objects, and the analysis's `notices`. Bad input: one line on stderr, exit code 2. The numbers
are those of the page's view for the same inputs (one analysis, pacing.compare.analysis).
"""

from __future__ import annotations

import json
import math

import pytest
from samples import north_hill_gpx

from pacing.cli import main

pytest.importorskip("pacing.io.gpx")

SENSITIVITY_KEYS = {"s_per_0_01_cda", "s_per_kg", "s_per_10_w", "s_per_0_001_crr",
                    "s_per_1_mps_wind", "wind_from_deg"}
SETUP_KEYS = {"name", "cda_m2", "power_share", "mass_kg", "crr", "mean_power_w",
              "finish_time_s", "delta_s", "finish_time_sd_s", "delta_sd_s", "segment_delta_s",
              "sensitivity"}
TOP_KEYS = {"strategy", "baseline", "distance_m", "setups", "segments", "sensitivity",
            "break_even", "uncertainty", "mixed", "notices",
            "start", "environment"}  # heat and altitude always count (issue 16)


@pytest.fixture(scope="module")
def route(tmp_path_factory):
    """A 6 km course heading north: flat, a 5 % climb, a descent (GPX 1.1)."""
    path = tmp_path_factory.mktemp("routes") / "hill.gpx"
    path.write_text(north_hill_gpx(), encoding="utf-8")
    return str(path)


FAST = ["--step", "50", "--start-speed", "8"]  # coarse course, rolling start: quick runs
TWO = ["--setup", "hoods:cda=0.32,power=1.0", "--setup", "aero:cda=0.25,power=0.95"]


def run_json(capsys, *argv):
    code = main(["compare", *argv, "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


@pytest.fixture(scope="module")
def two_setups(route):
    import contextlib
    import io

    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        code = main(["compare", route, *TWO, "--power", "250", "--wind-speed", "3",
                     "--wind-from", "0", *FAST, "--json"])
    assert code == 0
    return json.loads(out.getvalue())


def test_json_has_the_contract_keys(two_setups):
    assert set(two_setups) == TOP_KEYS
    assert [s["name"] for s in two_setups["setups"]] == ["hoods", "aero"]
    for setup in two_setups["setups"]:
        assert set(setup) == SETUP_KEYS
        assert set(setup["sensitivity"]) == SENSITIVITY_KEYS
    assert set(two_setups["sensitivity"]) == SENSITIVITY_KEYS
    assert set(two_setups["break_even"]) == {"aero"}
    assert {"finish_time_sd_s", "delta_sd_s", "sd_cda_m2"} <= set(two_setups["uncertainty"])


def test_json_numbers_follow_the_sign_convention(two_setups):
    hoods, aero = two_setups["setups"]
    assert two_setups["baseline"] == "hoods" and hoods["delta_s"] == 0.0
    assert aero["delta_s"] == pytest.approx(aero["finish_time_s"] - hoods["finish_time_s"])
    assert aero["delta_s"] < 0  # lower CdA at 95 % of the power: faster on this course
    assert sum(aero["segment_delta_s"]) == pytest.approx(aero["delta_s"], abs=1e-6)
    sens = two_setups["sensitivity"]
    assert sens["s_per_0_01_cda"] > 0 and sens["s_per_kg"] > 0 and sens["s_per_0_001_crr"] > 0
    assert sens["s_per_10_w"] < 0
    assert sens["s_per_1_mps_wind"] > 0  # heading north, wind from the north
    assert two_setups["break_even"]["aero"]["power_margin_w"] > 0
    assert aero["power_share"] == 0.95 and aero["mean_power_w"] == pytest.approx(237.5, rel=1e-3)


def test_json_is_finite_numbers_everywhere(two_setups):
    def walk(value):
        if isinstance(value, dict):
            for item in value.values():
                walk(item)
        elif isinstance(value, list):
            for item in value:
                walk(item)
        elif isinstance(value, float):
            assert math.isfinite(value)

    walk(two_setups)


def test_baseline_by_name_samples_and_no_break_even(capsys, route):
    result = run_json(capsys, route, *TWO, "--setup", "heavy:mass=84,crr=0.004",
                      "--setup", "deep:cda=0.25,power=0.95,yaw=0/1+15/0.9", "--power",
                      "250", "--baseline", "aero", "--samples", "4", "--seed", "2",
                      "--no-break-even", "--wind-speed", "4", "--wind-from", "90", *FAST)
    deltas = {s["name"]: s["delta_s"] for s in result["setups"]}
    assert result["baseline"] == "aero" and deltas["aero"] == 0.0 and deltas["hoods"] > 0
    assert deltas["heavy"] > 0
    assert deltas["deep"] < 0  # aero plus less drag at yaw: the crosswind gives it yaw
    assert result["break_even"] == {}
    assert result["uncertainty"]["samples"] == 4
    assert set(result["uncertainty"]["sampled_delta_sd_s"]) == {"hoods", "heavy", "deep"}


def test_table_is_readable(capsys, route):
    code = main(["compare", route, *TWO, "--power", "250", "--no-break-even", *FAST])
    out = capsys.readouterr().out
    assert code == 0
    assert "hoods *" in out and "aero" in out
    assert "what each change is worth" in out and "+0.01 m² CdA" in out


@pytest.mark.parametrize("setup", [
    "nocolon", ":cda=0.3", "a:cda=abc", "a:foo=1", "a:cda", "a:cda=0.3,cda=0.2",
    "a:cda=nan", "a:yaw=5", "a:cda=5", "a:power=3", "a:mass=5",
])
def test_malformed_setup_gives_one_line_and_exit_2(capsys, route, setup):
    code = main(["compare", route, "--setup", setup, "--power", "250", *FAST])
    err = capsys.readouterr().err
    assert code == 2
    assert err.count("\n") == 1 and err.startswith("pacing compare: error:")


@pytest.mark.parametrize("argv, message", [
    (["--power", "250"], "at least one --setup"),
    (TWO, "--power"),
    ([*TWO, "--power", "250", "--baseline", "tt"], "not one of"),
    (["--setup", "a:cda=0.3", "--setup", "a:cda=0.2", "--power", "250"], "repeated"),
    ([*TWO, "--power", "250", "--sd-cda", "-1"], "uncertainty"),
])
def test_other_bad_input_gives_one_line_and_exit_2(capsys, route, argv, message):
    code = main(["compare", route, *argv, *FAST])
    err = capsys.readouterr().err
    assert code == 2 and message in err and err.count("\n") == 1


def test_a_setup_that_overdraws_w_prime_is_told_in_json_and_on_stderr(capsys, route):
    code = main(["compare", route, "--setup", "hoods:cda=0.32", "--setup",
                 "aero:cda=0.25,power=0.95", "--power", "320", "--cp", "250", "--w-prime",
                 "8000", "--no-break-even", *FAST, "--json"])
    captured = capsys.readouterr()
    assert code == 0
    # the course's own notes come first (what elevation cleaning removed), then the setups'
    notices = [n for n in json.loads(captured.out)["notices"] if n["code"].startswith("setup-")]
    assert [(n["code"], n["level"], n["values"]["label"]) for n in notices] == [
        ("setup-w-prime-exhausted", "warning", "hoods"),
        ("setup-w-prime-exhausted", "warning", "aero")]
    assert notices[0]["text"].startswith("setup hoods: W′ runs out at")
    warned = [line for line in captured.err.splitlines()
              if line.startswith("pacing: warning:") and "WBGT" not in line]
    assert len(warned) == 2 and "setup aero" in warned[1]


def test_notes_are_printed_under_the_table(capsys, route):
    code = main(["compare", route, *TWO, "--power", "250", "--samples", "2",
                 "--no-break-even", *FAST])
    out = capsys.readouterr().out
    assert code == 0
    # calm forecast, wind ± 1 m/s: half the draws would blow from behind, so they are cut
    assert "note: about 50% of the 2 Monte Carlo draws of the wind speed" in out


def test_the_command_line_and_the_page_give_the_same_numbers(capsys, route):
    """The same course, athlete, weather, plan and setups, once through the command line and
    once as the page builds them (ui.comparison), give the same numbers to the last bit."""
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # the app's ui/ package
    from pacing.compare.analysis import analyse_setups
    from pacing.course.segments import split_by_grade
    from pacing.io.gpx import load_course
    from ui import comparison

    data = run_json(capsys, route, "--step", "100", "--mass", "80", "--cda", "0.30",
                    "--crr", "0.004", "--cp", "280", "--w-prime", "20000", "--power", "220",
                    "--strategy", "fastest", "--max-power-ratio", "1.15",
                    "--w-prime-reserve", "2000", "--wind-speed", "3", "--wind-from", "270",
                    "--setup", "as entered:cda=0.3",
                    "--setup", "lower position:cda=0.264,power=0.95",
                    "--setup", "lighter bike:cda=0.3,mass=78.5",  # the page: same CdA
                    "--no-break-even")
    course = load_course(route, step=100.0)
    athlete = {"sport": "cycling", "body_mass": 72.0, "bike_mass": 8.0,
               "critical_power": 280.0, "w_prime": 20000.0, "drag_area": 0.30,
               "rolling_coefficient": 0.004, "drivetrain_efficiency": 0.976}
    approach = {"strategy": "constant", "mean_power": 220.0, "max_power_ratio": 1.15,
                "w_prime_reserve": 2000.0}
    race = comparison.page_race(course, split_by_grade(course), athlete,
                                {"wind_speed": 3.0, "wind_from": 270.0}, approach)
    rows = comparison.default_setup_rows(race.rider, 72.0, "metric")
    setups = comparison.setups_from_rows(rows, race.rider, 72.0, "metric")
    page = analyse_setups(comparison.comparison_race(race, "fastest", 220.0), setups,
                          break_even_figures=False)
    assert [s["name"] for s in data["setups"]] == [r.name for r in page.comparison.results]
    for shown, result in zip(data["setups"], page.comparison.results, strict=True):
        assert shown["finish_time_s"] == result.finish_time
        assert shown["delta_s"] == result.delta
        assert shown["segment_delta_s"] == list(result.segment_delta)
        assert shown["finish_time_sd_s"] == page.finish_time_spreads[result.name].standard_deviation
        assert shown["sensitivity"]["s_per_0_01_cda"] == page.sensitivities[result.name].drag_area
    assert (data["mixed"] is None) == (page.mixed is None)
    if page.mixed is not None:
        assert data["mixed"]["finish_time_s"] == page.mixed.finish_time


# ------------------------------------------------------------------ issue 14: fuzzing the flags

COMPARE_FLAGS = ("--power", "--mass", "--crr", "--cp", "--w-prime", "--sd-cda", "--sd-crr",
                 "--sd-mass", "--sd-wind", "--temperature", "--wind-speed")


@pytest.fixture(scope="module")
def small_course(tmp_path_factory):
    """A 3 km road with one 30 m hill (tests/samples.py)."""
    from samples import hill_road_gpx

    path = tmp_path_factory.mktemp("fuzz") / "hill.gpx"
    path.write_bytes(hill_road_gpx(3.0, 30.0))
    return str(path)


def _fuzz_compare():
    from hypothesis import HealthCheck, given, settings
    from hypothesis import strategies as st
    from test_cli_plan import FUZZ_VALUES, check_the_outcome, run_quietly

    @settings(max_examples=25, deadline=None,
              suppress_health_check=[HealthCheck.function_scoped_fixture])
    @given(flags=st.dictionaries(st.sampled_from(COMPARE_FLAGS), FUZZ_VALUES, max_size=3),
           cda=FUZZ_VALUES, samples=st.sampled_from(["0", "2", "20", "-3", "1e9", "x"]),
           strategy=st.sampled_from([[], ["--strategy", "fastest", "--cp", "280",
                                          "--w-prime", "20000"]]))
    def check(small_course, flags, cda, samples, strategy):
        argv = ["compare", small_course, "--json", "--wind-from", "250", "--setup",
                "hoods:cda=0.32", "--setup", f"aero:cda={cda}", "--samples", samples,
                *strategy]
        argv += ["--power", "250"] if "--power" not in flags else []
        for flag, value in flags.items():
            argv += [f"{flag}={value}"]
        check_the_outcome(*run_quietly(argv))

    return check


def test_any_numbers_give_exit_0_or_2_one_line_or_strict_json(small_course):
    # issue 14: `--sd-cda 1e308` printed "± inf" and cut JSON; exit 0 or 2, one line on error,
    # strictly valid JSON (RFC 8259: no NaN or Infinity) on success
    _fuzz_compare()(small_course)
