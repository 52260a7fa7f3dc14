"""``pacing plan ROUTE.gpx --sport running``: JSON, table and one-line errors."""

from __future__ import annotations

import json

import numpy as np
import pytest

from pacing.cli import main
from pacing.course.geometry import synthetic_course
from pacing.display.units import format_duration
from pacing.io.gpx import load_course, write_gpx
from pacing.physics.running import runner_drag_area


@pytest.fixture
def flat_route(tmp_path):
    distance = np.arange(0.0, 5000.1, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance), heading=90.0)
    path = tmp_path / "flat.gpx"
    path.write_text(write_gpx(course))
    return path


@pytest.fixture
def hilly_route(tmp_path):
    distance = np.arange(0.0, 6000.1, 10.0)
    elevation = 40.0 * np.sin(2 * np.pi * distance / 3000.0)
    heading = np.where(distance[:-1] < 3000.0, 0.0, 180.0)
    course = synthetic_course(distance, elevation, heading=heading)
    path = tmp_path / "hilly.gpx"
    path.write_text(write_gpx(course))
    return path


def run_json(capsys, *argv):
    assert main(["plan", *map(str, argv), "--sport", "running", "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def test_flat_course_in_still_air_takes_distance_times_pace(capsys, flat_route):
    # definition of the flat pace (issue 5)
    result = run_json(capsys, flat_route, "--flat-pace", "4:30")
    assert result["strategy"] == "equal-effort"
    # defaults of pacing.athlete.Athlete: 72 kg, 1.78 m → CdA from Du Bois BSA
    assert result["body_mass_kg"] == 72.0
    assert result["drag_area_m2"] == pytest.approx(runner_drag_area(72.0, 1.78))
    assert result["distance_m"] == pytest.approx(load_course(flat_route).total_distance)
    assert result["finish_time_s"] == pytest.approx(result["distance_m"] * 0.270, rel=1e-9)
    assert result["average_speed_mps"] == pytest.approx(1000.0 / 270.0, rel=1e-9)
    for segment in result["segments"]:
        assert {"start_m", "end_m", "grade", "speed_mps", "time_s", "pace_s_per_km",
                "cumulative_time_s", "headwind_mps"} <= segment.keys()
        assert segment["pace_s_per_km"] == pytest.approx(270.0, rel=1e-9)
    assert result["segments"][-1]["cumulative_time_s"] == pytest.approx(result["finish_time_s"])


def test_headwind_flags_slow_the_runner(capsys, flat_route):
    # the course runs due east; wind from the east is a headwind (wind FROM, DEVELOPERS.md)
    still = run_json(capsys, flat_route, "--flat-pace", "4:30")
    windy = run_json(capsys, flat_route, "--flat-pace", "4:30", "--wind-speed", "6",
                     "--wind-from", "90")
    assert windy["finish_time_s"] > still["finish_time_s"]
    assert windy["segments"][0]["headwind_mps"] > 0


def test_strategies_on_a_hilly_course(capsys, hilly_route):
    equal = run_json(capsys, hilly_route, "--flat-pace", "5:00")
    even = run_json(capsys, hilly_route, "--flat-pace", "5:00", "--strategy", "even-pace",
                    "--segment-length", "1000")
    fastest = run_json(capsys, hilly_route, "--strategy", "fastest", "--critical-speed", "4.94",
                       "--d-prime", "123", "--height", "1.80", "--body-mass", "68")
    assert even["strategy"] == "even-pace" and fastest["strategy"] == "fastest"
    assert len({round(s["pace_s_per_km"], 6) for s in even["segments"]}) == 1
    assert len(even["segments"]) == 6
    paces = [s["pace_s_per_km"] for s in equal["segments"]]
    grades = [s["grade"] for s in equal["segments"]]
    assert paces[int(np.argmax(grades))] > paces[int(np.argmin(grades))]
    # Kordi et al. 2019 typical CS/D′ beat a 5:00/km effort; the hills cost time against the
    # flat-course closed form t = (d − D′)/CS (Poole et al. 2016)
    flat_best = (fastest["distance_m"] - 123.0) / 4.94
    assert flat_best < fastest["finish_time_s"] < equal["finish_time_s"]


def test_critical_speed_alone_sets_the_effort(capsys, flat_route):
    # without --flat-pace the flat pace spends D′ exactly over the distance: t = (d − D′)/CS
    result = run_json(capsys, flat_route, "--critical-speed", "4.94", "--d-prime", "123")
    assert result["finish_time_s"] == pytest.approx((result["distance_m"] - 123.0) / 4.94,
                                                    rel=1e-9)


def test_table_shows_min_per_km_and_min_per_mile(capsys, flat_route):
    assert main(["plan", str(flat_route), "--sport", "running", "--flat-pace", "5:00"]) == 0
    out = capsys.readouterr().out
    assert "min/km" in out and "min/mi" in out
    # 5:00/km = 8:03 per mile (1 mi = 1609.344 m exactly, NIST SP 811)
    assert " 5:00 " in out and " 8:03 " in out
    finish = format_duration(load_course(flat_route).total_distance * 0.300)
    assert f"finish {finish}" in out


@pytest.mark.parametrize(
    "argv, message",
    [
        ([], "--flat-pace"),
        (["--flat-pace", "five"], "--flat-pace"),
        (["--flat-pace", "5:00", "--strategy", "constant"], "--strategy"),
        (["--strategy", "fastest", "--flat-pace", "5:00"], "--critical-speed"),
        (["--flat-pace", "5:00", "--height", "1.8", "--cda", "0.4"], "--cda"),
        (["--flat-pace", "5:00", "--body-mass", "400"], "body mass"),
        (["--flat-pace", "0:20"], "flat pace"),
        (["--strategy", "fastest", "--critical-speed", "4.9", "--d-prime", "9000"], "D′"),
        (["--flat-pace", "5:00", "--humidity", "150"], "humidity"),
    ],
)
def test_bad_input_gives_one_line_and_exit_code_2(capsys, hilly_route, argv, message):
    # (a course with heights: a flat file of all-equal heights is warned about on its own line)
    assert main(["plan", str(hilly_route), "--sport", "running", *argv]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert message in err


def test_missing_file_is_a_one_line_error(capsys, tmp_path):
    assert main(["plan", str(tmp_path / "nowhere.gpx"), "--sport", "running",
                 "--flat-pace", "5:00"]) == 2
    assert capsys.readouterr().err.count("\n") == 1


@pytest.fixture
def descent_route(tmp_path):
    distance = np.arange(0.0, 3000.1, 10.0)
    course = synthetic_course(distance, 400.0 - 0.08 * distance, heading=90.0)
    path = tmp_path / "descent.gpx"
    path.write_text(write_gpx(course))
    return path


def test_json_has_the_cycling_keys_and_the_d_prime_balance(capsys, hilly_route):
    # issue 5: "JSON keys as in cycling plus per segment pace_s_per_km"; the cycling plan
    # has max_speed_mps, time_saved_s, a lowest balance, and per segment max_speed_mps and
    # the balance (pacing.cli.plan_cycling.plan_as_dict)
    fastest = run_json(capsys, hilly_route, "--strategy", "fastest", "--critical-speed", "4.94",
                       "--d-prime", "123")
    for key in ("max_speed_mps", "time_saved_s", "time_saved_against", "min_d_prime_balance_m",
                "min_d_prime_distance_m", "peak_effort_ratio", "even_pace_time_s",
                "limited_even_pace_time_s"):
        assert fastest[key] is not None, key
    assert "same time-weighted mean" in fastest["time_saved_against"]
    assert fastest["time_saved_s"] == pytest.approx(
        fastest["even_pace_time_s"] - fastest["finish_time_s"])
    assert fastest["max_speed_mps"] == max(s["max_speed_mps"] for s in fastest["segments"])
    assert fastest["min_d_prime_balance_m"] == pytest.approx(0.0, abs=0.05)
    assert fastest["limited_even_pace_time_s"] > fastest["finish_time_s"]
    balances = [s["d_prime_balance_m"] for s in fastest["segments"]]
    assert min(balances) == pytest.approx(fastest["min_d_prime_balance_m"], abs=1.0)
    equal = run_json(capsys, hilly_route, "--flat-pace", "5:00")
    assert equal["min_d_prime_balance_m"] is None
    assert all(s["d_prime_balance_m"] is None for s in equal["segments"])
    assert all(s["max_speed_mps"] >= s["speed_mps"] for s in equal["segments"])
    with_limits = run_json(capsys, hilly_route, "--flat-pace", "5:00", "--strategy", "even-pace",
                           "--critical-speed", "4.94", "--d-prime", "123")
    assert with_limits["min_d_prime_balance_m"] is not None
    assert with_limits["time_saved_s"] == 0.0
    assert with_limits["peak_effort_ratio"] > 1.0


def test_equal_effort_is_at_least_as_fast_as_even_pace_on_a_flat_out_and_back_in_wind(
        capsys, tmp_path):
    # issue 5's property, through the command line (the hilly case is the model's physics:
    # see pacing.plan.running' docstring)
    distance = np.arange(0.0, 6000.1, 10.0)
    heading = np.where(distance[:-1] < 3000.0, 0.0, 180.0)
    path = tmp_path / "outback.gpx"
    path.write_text(write_gpx(synthetic_course(distance, np.zeros_like(distance),
                                               heading=heading)))
    wind = ("--wind-speed", "6", "--wind-from", "0", "--segment-length", "1000")
    equal = run_json(capsys, path, "--flat-pace", "4:30", *wind)
    even = run_json(capsys, path, "--flat-pace", "4:30", "--strategy", "even-pace", *wind)
    assert equal["finish_time_s"] <= even["finish_time_s"]
    assert equal["time_saved_s"] == pytest.approx(even["finish_time_s"] - equal["finish_time_s"],
                                                  abs=1e-6)


def test_downhill_cap_flag(capsys, descent_route):
    # issue 5: a settable cap on downhill speed (ratio to the flat speed)
    flat_speed = 1000.0 / 300.0
    default = run_json(capsys, descent_route, "--flat-pace", "5:00")
    assert default["max_speed_mps"] == pytest.approx(1.2 * flat_speed)
    looser = run_json(capsys, descent_route, "--flat-pace", "5:00", "--downhill-cap", "1.4")
    assert looser["max_speed_mps"] == pytest.approx(1.4 * flat_speed)
    free = run_json(capsys, descent_route, "--flat-pace", "5:00", "--downhill-cap", "none")
    assert free["max_speed_mps"] > 1.4 * flat_speed
    for bad in ("0.9", "fast", "nan"):
        assert main(["plan", str(descent_route), "--sport", "running", "--flat-pace", "5:00",
                     "--downhill-cap", bad]) == 2
        err = capsys.readouterr().err
        assert err.count("\n") == 1 and "--downhill-cap" in err


def test_cycling_flags_are_ignored_with_a_one_line_warning(capsys, hilly_route):
    assert main(["plan", str(hilly_route), "--sport", "running", "--flat-pace", "4:30",
                 "--mass", "90", "--power", "250", "--json"]) == 0
    captured = capsys.readouterr()
    assert json.loads(captured.out)["body_mass_kg"] == 72.0
    warning = [line for line in captured.err.splitlines()
               if "warning" in line and "WBGT" not in line]  # the heat caution: issue 16
    assert len(warning) == 1
    assert "--mass" in warning[0] and "--power" in warning[0] and "--body-mass" in warning[0]
    # --cda and --drafting belong to running too: no warning
    assert main(["plan", str(hilly_route), "--sport", "running", "--flat-pace", "4:30",
                 "--cda", "0.4", "--drafting", "50", "--json"]) == 0
    assert [line for line in capsys.readouterr().err.splitlines()
            if "warning" in line and "WBGT" not in line] == []


def test_running_flags_are_named_for_cycling():
    import argparse

    from pacing.cli.plan_running import flags_of_other_sport

    args = argparse.Namespace(flat_pace="4:30", body_mass=None, height=None, mass=80.0,
                              critical_speed=None, d_prime=None, downhill_cap=None)
    assert flags_of_other_sport(args, "cycling") == ["--flat-pace"]


def test_out_of_range_flat_pace_is_reported_as_typed(capsys, flat_route):
    assert main(["plan", str(flat_route), "--sport", "running", "--flat-pace", "0:30"]) == 2
    err = capsys.readouterr().err
    assert "got 0:30" in err and "m/s" not in err.split("got")[-1]


def test_json_says_where_d_prime_runs_out(capsys, flat_route):
    # Issue 14: every plan says where D′ runs out. On the flat in still air the equal-effort
    # pace is the flat pace v; above CS the critical speed model spends D′ at v − CS
    # (Poole et al. 2016, Med Sci Sports Exerc 48(11):2320-2334), so it is gone after
    # D′/(v − CS) seconds, v·D′/(v − CS) metres from the start.
    result = run_json(capsys, flat_route, "--flat-pace", "3:40", "--critical-speed", "4.2",
                      "--d-prime", "200")
    speed = 1000.0 / 220.0
    assert result["d_prime_exhausted_at_m"] == pytest.approx(
        speed * 200.0 / (speed - 4.2), abs=10.0)  # within one 10 m piece
    said = [w for w in result["warnings"] if "D′ runs out" in w]
    assert len(said) == 1
    within = run_json(capsys, flat_route, "--flat-pace", "5:00", "--critical-speed", "4.2",
                      "--d-prime", "200")
    assert within["d_prime_exhausted_at_m"] is None
    assert not any("D′ runs out" in w for w in within["warnings"])
    without = run_json(capsys, flat_route, "--flat-pace", "3:40")
    assert without["d_prime_exhausted_at_m"] is None


@pytest.mark.parametrize("wind", ["40", "60"])
def test_a_gale_is_refused_in_one_line(capsys, hilly_route, wind):
    # issue 14: 40-60 m/s gave efforts of −221 % and a pace of 1:00/km, with no warning
    assert main(["plan", str(hilly_route), "--sport", "running", "--flat-pace", "4:30",
                 "--wind-speed", wind, "--wind-from", "250"]) == 2
    captured = capsys.readouterr()
    assert captured.out == "" and captured.err.count("\n") == 1
    assert "cannot be run in" in captured.err


# ------------------------------------------------- issue 13: a joined gap in the recording

@pytest.fixture
def merged_recording(tmp_path):
    """Two 7.5 km tracks, the second 12.7 km east of the first's end (geographiclib forward
    model, tests/recording_samples.py): one gap, joined by a straight line by default."""
    from recording_samples import two_tracks_with_a_jump

    path = tmp_path / "merged.gpx"
    path.write_text(two_tracks_with_a_jump(jump=12_700.0), encoding="utf-8")
    return path


def test_json_and_table_tell_the_one_segment_holding_the_joined_gap(capsys, merged_recording):
    result = run_json(capsys, merged_recording, "--flat-pace", "5:00", "--segment-length",
                      "5000")
    holding = [s for s in result["segments"] if s["gap_m"] > 0]
    assert len(holding) == 1
    assert holding[0]["gap_m"] == pytest.approx(12_700.0, rel=0.01)  # the forward model's jump
    assert holding[0]["start_m"] <= 7_500.0 < holding[0]["end_m"]  # where the first track ends
    assert main(["plan", str(merged_recording), "--sport", "running", "--flat-pace", "5:00",
                 "--segment-length", "5000"]) == 0
    rows = [line for line in capsys.readouterr().out.splitlines() if "joined gap" in line]
    assert len(rows) == 1 and rows[0].endswith("<- joined gap 12.7 km")


def test_json_of_a_course_without_gaps_has_zero_gap_everywhere(capsys, flat_route):
    result = run_json(capsys, flat_route, "--flat-pace", "5:00")
    assert all(s["gap_m"] == 0.0 for s in result["segments"])
