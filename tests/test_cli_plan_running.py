"""``pacing plan ROUTE.gpx --sport running``: JSON, table and one-line errors."""

from __future__ import annotations

import json

import numpy as np
import pytest

from pacing.cli import main
from pacing.course import synthetic_course
from pacing.io.gpx import load_course, write_gpx
from pacing.running import runner_drag_area
from pacing.units import format_duration


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
def test_bad_input_gives_one_line_and_exit_code_2(capsys, flat_route, argv, message):
    assert main(["plan", str(flat_route), "--sport", "running", *argv]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert message in err


def test_missing_file_is_a_one_line_error(capsys, tmp_path):
    assert main(["plan", str(tmp_path / "nowhere.gpx"), "--sport", "running",
                 "--flat-pace", "5:00"]) == 2
    assert capsys.readouterr().err.count("\n") == 1
