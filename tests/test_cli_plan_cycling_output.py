"""Specification of the cycling plan's output (pacing.cli.plan_cycling_output) through
``pacing plan ROUTE.gpx``: the JSON's keys and numbers, the table's units, the power band on
every plan, and the segment holding a joined gap of the recording (the command itself:
tests/test_cli_plan_cycling.py)."""

from __future__ import annotations

import math

import pytest
from samples import north_hill_gpx
from test_cli_plan_cycling import run_json

from pacing.cli import main

JSON_KEYS = {"finish_time_s", "distance_m", "average_speed_mps", "average_power_w",
             "max_speed_mps", "work_kj", "walking_distance_m", "segments", "notices",
             "min_w_prime_balance_j", "w_prime_exhausted_at_m", "w_prime_model", "warnings",
             "start", "fixed_point_iterations", "environment"}  # issue 16: always a race day
LIMIT_KEYS = {"min_w_prime_balance_j", "w_prime_exhausted_at_m", "w_prime_model", "warnings"}
"""Issue 14: every cycling plan says where W′ runs out, whatever its strategy (and, issue 18,
by which W′ balance model)."""
SEGMENT_KEYS = {"start_m", "end_m", "grade", "power_w", "power_low_w", "power_high_w",
                "speed_mps", "time_s", "max_speed_mps", "walking_distance_m", "gap_m",
                "clock_time", "temperature_c", "wind_speed_mps", "wind_from_deg"}
BAND = 0.03  # issue 4: "power targets per segment come with a band (e.g. ±3 %)"


@pytest.fixture(scope="module")
def route(tmp_path_factory):
    """A 6 km course heading north: flat, a 5 % climb, a descent (GPX 1.1)."""
    path = tmp_path_factory.mktemp("routes") / "hill.gpx"
    path.write_text(north_hill_gpx(), encoding="utf-8")
    return str(path)


def test_json_has_exactly_the_contract_keys(capsys, route):
    result = run_json(capsys, route, "--power", "250")
    assert set(result) == JSON_KEYS
    assert result["segments"] and all(set(s) == SEGMENT_KEYS for s in result["segments"])
    assert all(isinstance(v, float) and math.isfinite(v)
               for k, v in result.items()
               if k not in ("segments", "notices", "start", "fixed_point_iterations",
                            "environment", *LIMIT_KEYS))
    # 250 W on a 6 km hill: nothing to warn about (the course's notes, such as what elevation
    # cleaning removed, may be told)
    # (the day's heat caution, issue 16, is always told)
    assert [n for n in result["notices"]
            if n["level"] == "warning" and n["code"] != "heat-risk"] == []
    # without CP and W′ there is no balance to tell
    assert result["min_w_prime_balance_j"] is None and result["w_prime_exhausted_at_m"] is None
    assert [text for text in result["warnings"] if "WBGT" not in text] == []


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


def test_table_has_units_on_every_column(capsys, route):
    assert main(["plan", route, "--power", "250"]) == 0
    out = capsys.readouterr().out
    header = out.splitlines()[0]
    for unit in ("km", "%", "W", "km/h"):
        assert unit in header
    assert "finish" in out and "(H:MM:SS)" in out


@pytest.mark.parametrize(
    "flags",
    [
        ["--power", "250"],
        ["--strategy", "constant", "--power", "250"],
        ["--strategy", "fastest", "--power", "250", "--segment-length", "1000"],
        ["--strategy", "target-time", "--target-time", "0:12:00", "--cp", "300",
         "--w-prime", "20000"],
    ],
    ids=["plain", "constant", "fastest", "target-time"],
)
def test_every_cycling_plan_shows_the_power_band(capsys, route, flags):
    """Review finding 5: the ±3 % band around each segment's target power, in JSON and table."""
    result = run_json(capsys, route, *flags)
    for segment in result["segments"]:
        target = 250.0 if flags[0] == "--power" else segment["power_w"]
        assert segment["power_low_w"] == pytest.approx((1 - BAND) * target, rel=1e-12)
        assert segment["power_high_w"] == pytest.approx((1 + BAND) * target, rel=1e-12)
    assert main(["plan", route, *flags]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert "band W" in lines[0]
    first = result["segments"][0]
    assert f"{first['power_low_w']:.0f}-{first['power_high_w']:.0f}" in lines[1]
    assert any(line.startswith("band: ±3 %") for line in lines)


@pytest.fixture(scope="module")
def merged_recording(tmp_path_factory):
    """Two 7.5 km tracks, the second 12.7 km east of the first's end (geographiclib forward
    model, tests/recording_samples.py): one gap, joined by a straight line by default."""
    from recording_samples import two_tracks_with_a_jump

    path = tmp_path_factory.mktemp("recordings") / "merged.gpx"
    path.write_text(two_tracks_with_a_jump(jump=12_700.0), encoding="utf-8")
    return str(path)


@pytest.mark.parametrize("strategy", [(), ("--strategy", "constant")])
def test_json_tells_the_one_segment_holding_the_joined_gap(capsys, merged_recording, strategy):
    result = run_json(capsys, merged_recording, "--power", "200", "--segment-length", "5000",
                      *strategy)
    holding = [s for s in result["segments"] if s["gap_m"] > 0]
    assert len(holding) == 1
    assert holding[0]["gap_m"] == pytest.approx(12_700.0, rel=0.01)  # the forward model's jump
    assert holding[0]["start_m"] <= 7_500.0 < holding[0]["end_m"]  # where the first track ends


def test_json_of_a_course_without_gaps_has_zero_gap_everywhere(capsys, route):
    result = run_json(capsys, route, "--power", "250")
    assert all(s["gap_m"] == 0.0 for s in result["segments"])


def test_table_marks_the_row_holding_the_joined_gap(capsys, merged_recording):
    assert main(["plan", merged_recording, "--power", "200", "--segment-length", "5000"]) == 0
    rows = [line for line in capsys.readouterr().out.splitlines() if "joined gap" in line]
    assert len(rows) == 1 and rows[0].endswith("<- joined gap 12.7 km")
    assert rows[0].split()[1] == "5.00"  # the segment from km 5 to km 10
