"""Specification of ``pacing plan ROUTE.gpx --power W`` for cycling (pacing.cli.plan_cycling).

The JSON keys are a contract other tools rely on (issue 3); bad input gives one line on stderr
and exit code 2.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from pacing.cli import main

pytest.importorskip("pacing.io.gpx")

JSON_KEYS = {"finish_time_s", "distance_m", "average_speed_mps", "average_power_w",
             "max_speed_mps", "work_kj", "segments"}
SEGMENT_KEYS = {"start_m", "end_m", "grade", "power_w", "speed_mps", "time_s", "max_speed_mps"}


@pytest.fixture(scope="module")
def route(tmp_path_factory):
    """A 6 km out-and-up course heading north: flat, a 5 % climb, a descent (GPX 1.1)."""
    metres_per_degree = 111_195.0
    distance = np.arange(0.0, 6001.0, 25.0)
    elevation = np.interp(distance, [0, 2000, 4000, 6000], [100, 100, 200, 120])
    points = "\n".join(
        f'<trkpt lat="{45.0 + d / metres_per_degree:.7f}" lon="6.0000000">'
        f"<ele>{e:.2f}</ele></trkpt>"
        for d, e in zip(distance, elevation, strict=True))
    text = ('<?xml version="1.0" encoding="UTF-8"?>\n'
            '<gpx version="1.1" creator="tests" xmlns="http://www.topografix.com/GPX/1/1">'
            f"<trk><name>test hill</name><trkseg>\n{points}\n</trkseg></trk></gpx>\n")
    path = tmp_path_factory.mktemp("routes") / "hill.gpx"
    path.write_text(text, encoding="utf-8")
    return str(path)


def run_json(capsys, *argv):
    code = main(["plan", *argv, "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def test_json_has_exactly_the_contract_keys(capsys, route):
    result = run_json(capsys, route, "--power", "250")
    assert set(result) == JSON_KEYS
    assert result["segments"] and all(set(s) == SEGMENT_KEYS for s in result["segments"])
    assert all(isinstance(v, float) and math.isfinite(v)
               for k, v in result.items() if k != "segments")


def test_json_numbers_are_consistent(capsys, route):
    result = run_json(capsys, route, "--power", "250")
    segments = result["segments"]
    assert result["distance_m"] == pytest.approx(segments[-1]["end_m"] - segments[0]["start_m"])
    assert result["distance_m"] == pytest.approx(6000.0, rel=0.01)
    assert sum(s["time_s"] for s in segments) == pytest.approx(result["finish_time_s"])
    assert result["average_speed_mps"] == pytest.approx(
        result["distance_m"] / result["finish_time_s"])
    assert result["work_kj"] * 1000 == pytest.approx(
        result["average_power_w"] * result["finish_time_s"])
    assert result["average_power_w"] <= 250.0 + 1e-6
    for s in segments:
        assert s["speed_mps"] == pytest.approx((s["end_m"] - s["start_m"]) / s["time_s"])
        assert s["max_speed_mps"] <= result["max_speed_mps"] + 1e-12
    climb = max(segments, key=lambda s: s["grade"])
    assert climb["grade"] == pytest.approx(0.05, abs=0.01)
    assert climb["speed_mps"] < min(s["speed_mps"] for s in segments if s is not climb)


def test_physics_flags_move_the_result_the_right_way(capsys, route):
    base = run_json(capsys, route, "--power", "250")["finish_time_s"]
    assert run_json(capsys, route, "--power", "300")["finish_time_s"] < base
    assert run_json(capsys, route, "--power", "250", "--mass", "95")["finish_time_s"] > base
    assert run_json(capsys, route, "--power", "250", "--cda", "0.25")["finish_time_s"] < base
    # the course runs due north, so a wind from the north is a headwind throughout
    assert run_json(capsys, route, "--power", "250", "--wind-speed", "5",
                    "--wind-from", "0")["finish_time_s"] > base
    assert run_json(capsys, route, "--power", "250", "--start-speed", "10")["finish_time_s"] < base
    assert run_json(capsys, route, "--power", "250", "--temperature", "35",
                    "--humidity", "90")["finish_time_s"] < base  # thinner air


def test_segment_length_flag_splits_evenly(capsys, route):
    result = run_json(capsys, route, "--power", "250", "--segment-length", "1000")
    assert len(result["segments"]) == 6
    assert [s["start_m"] for s in result["segments"]] == pytest.approx(
        [0, 1000, 2000, 3000, 4000, 5000], abs=30)


def test_table_has_units_on_every_column(capsys, route):
    assert main(["plan", route, "--power", "250"]) == 0
    out = capsys.readouterr().out
    header = out.splitlines()[0]
    for unit in ("km", "%", "W", "km/h"):
        assert unit in header
    assert "finish" in out and "(H:MM:SS)" in out


@pytest.mark.parametrize(
    ("flags", "words"),
    [
        (["--power", "250", "--mass", "-70"], "--mass"),
        (["--power", "250", "--cda", "0"], "--cda"),
        (["--power", "250", "--cda", "-0.2"], "--cda"),
        (["--power", "250", "--humidity", "120"], "--humidity"),
        (["--power", "250", "--humidity", "-1"], "--humidity"),
        (["--power", "250", "--crr", "-0.01"], "--crr"),
        (["--power", "250", "--efficiency", "1.5"], "--efficiency"),
        (["--power", "-10"], "--power"),
        (["--power", "nan"], "--power"),
        (["--power", "250", "--start-speed", "-1"], "--start-speed"),
        (["--power", "250", "--wind-speed", "-3"], "--wind-speed"),
        ([], "--power"),
        (["--power", "250", "--strategy", "sideways"], "--strategy"),
    ],
)
def test_bad_input_gives_one_line_and_exit_code_2(capsys, route, flags, words):
    assert main(["plan", route, *flags]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and words in lines[0] and "Traceback" not in captured.err


def test_missing_file_gives_one_line(capsys, tmp_path):
    assert main(["plan", str(tmp_path / "nowhere.gpx"), "--power", "250"]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1
