"""Specification of ``pacing course ROUTE.gpx``: readable summary, --json, options, errors."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from recording_samples import two_tracks_with_a_jump

from pacing.cli import main
from pacing.io.gpx import DEFAULT_DEMO_ROUTE, load_course, read_track

DATA = Path(__file__).parent / "data"


def run(capsys, *argv):
    code = main(["course", *map(str, argv)])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def test_readable_summary_of_the_demo_loop(capsys):
    code, out, err = run(capsys, DEFAULT_DEMO_ROUTE)
    assert code == 0 and err == ""
    course = load_course(DEFAULT_DEMO_ROUTE)
    assert "Corravey hill loop" in out
    assert f"{course.total_distance / 1000:.2f} km" in out
    assert f"{course.ascent:.0f} m" in out and f"{course.raw_ascent:.0f} m" in out
    for word in ("descent", "highest point", "lowest point", "Segments (by terrain and turns)",
                 "climb"):
        assert word in out


def test_json_has_the_documented_keys_and_matches_the_library(capsys):
    code, out, _ = run(capsys, DEFAULT_DEMO_ROUTE, "--json")
    assert code == 0
    summary = json.loads(out)
    course = load_course(DEFAULT_DEMO_ROUTE)
    assert summary["distance_m"] == pytest.approx(course.total_distance, abs=0.1)
    assert summary["ascent_m"] == pytest.approx(course.ascent, abs=0.1)
    assert summary["descent_m"] == pytest.approx(course.descent, abs=0.1)
    assert summary["raw_ascent_m"] == pytest.approx(course.raw_ascent, abs=0.1)
    segments = summary["segments"]
    assert segments[0]["start_m"] == 0.0
    assert segments[-1]["end_m"] == pytest.approx(summary["distance_m"], abs=0.1)
    for first, second in zip(segments[:-1], segments[1:], strict=True):
        assert first["end_m"] == second["start_m"]
    for segment in segments:
        assert {"start_m", "end_m", "grade", "ascent_m"} <= set(segment)
    assert sum(s["ascent_m"] for s in segments) == pytest.approx(summary["ascent_m"], abs=1.0)


def test_fixed_length_segments_and_step(capsys):
    code, out, _ = run(capsys, DEFAULT_DEMO_ROUTE, "--json", "--segment-length", "5000",
                       "--step", "20")
    assert code == 0
    summary = json.loads(out)
    assert summary["step_m"] == 20.0
    assert [s["start_m"] for s in summary["segments"]][:3] == [0.0, 5000.0, 10000.0]
    assert len(summary["segments"]) == 9  # 8 x 5 km and the last 0.1 km


def test_flat_option_reads_a_route_without_elevation(capsys):
    code, _, err = run(capsys, DATA / "route_gpx11.gpx")
    assert code == 2 and err == ("pacing course: error: GPX file has no elevation data (no "
                                 "heights at any point); plan it as flat ground if the course "
                                 "is flat; add --flat to do so\n")
    code, out, err = run(capsys, DATA / "route_gpx11.gpx", "--flat", "--json")
    assert code == 0 and json.loads(out)["ascent_m"] == 0.0
    assert err == "pacing course: warning: GPX file has no elevation data: the course is " \
        "treated as flat\n"


@pytest.mark.parametrize(("argv", "message"), [
    (["missing.gpx"], "not found"),
    ([DATA / "two_tracks_gpx10.gpx", "--step", "0"], "step"),
    ([DATA / "two_tracks_gpx10.gpx", "--segment-length", "-1"], "segment length"),
])
def test_bad_input_gives_one_line_and_exit_code_2(capsys, argv, message):
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and message in err and err.startswith("pacing course: error:")


def test_a_broken_file_through_the_real_command_line(tmp_path):
    broken = tmp_path / "broken.gpx"
    broken.write_text("<gpx><trk>")
    result = subprocess.run([sys.executable, "-m", "pacing", "course", str(broken)],
                            capture_output=True, text=True, timeout=60)
    assert result.returncode == 2
    assert "Traceback" not in result.stderr and result.stderr.count("\n") == 1


def test_the_out_and_back_demo_is_split_at_its_turnaround(capsys):
    # Review finding: the windy out-and-back used to be one "flat" segment with a meaningless
    # mean heading; now the way out and the way back are separate segments of at most 2 km.
    route = DEFAULT_DEMO_ROUTE.parent / "02_skelmarsh_dyke_out_and_back_20k.gpx"
    code, out, _ = run(capsys, route, "--json")
    assert code == 0
    segments = json.loads(out)["segments"]
    assert len(segments) >= 10
    assert max(s["end_m"] - s["start_m"] for s in segments) <= 2000.0 + 10.0


def gpx_points(rows: str) -> str:
    return ('<?xml version="1.0"?><gpx version="1.1" xmlns="http://www.topografix.com/GPX/1/1">'
            f"<trk><trkseg>{rows}</trkseg></trk></gpx>")


@pytest.mark.parametrize(("rows", "message"), [
    ('<trkpt lat="45" lon="7"><ele>1</ele></trkpt><trkpt lat="abc" lon="7"><ele>1</ele></trkpt>',
     "not a valid GPX file: track point 2 has latitude 'abc', not a number"),
    ('<trkpt lat="45" lon="7"><ele>1</ele></trkpt>'
     '<trkpt lat="45.000007" lon="7"><ele>1</ele></trkpt>',
     "the course is only 0.8 m long; a course must be at least 100 m"),
])
def test_bad_points_and_tiny_courses_give_one_line(capsys, tmp_path, rows, message):
    path = tmp_path / "bad.gpx"
    path.write_text(gpx_points(rows))
    code, out, err = run(capsys, path)
    assert code == 2 and out == ""
    assert err == f"pacing course: error: {message}\n"


def test_points_without_elevation_are_interpolated_with_a_one_line_warning(capsys, tmp_path):
    path = tmp_path / "gap.gpx"
    path.write_text(gpx_points('<trkpt lat="45" lon="7"><ele>100</ele></trkpt>'
                               '<trkpt lat="45.001" lon="7"><ele>nan</ele></trkpt>'
                               '<trkpt lat="45.002" lon="7"></trkpt>'
                               '<trkpt lat="45.003" lon="7"><ele>103</ele></trkpt>'))
    code, out, err = run(capsys, path, "--json")
    assert code == 0 and json.loads(out)["raw_ascent_m"] == pytest.approx(3.0)
    assert err == ("pacing course: warning: 2 of 4 track points had no elevation; their "
                   "heights were interpolated from the neighbouring points\n")


# ------------------------------------------------------- what the file holds: tracks, gaps

def test_json_of_a_demo_course_has_no_gaps_one_track_and_no_warnings(capsys):
    code, out, err = run(capsys, DEFAULT_DEMO_ROUTE, "--json")
    summary = json.loads(out)
    assert code == 0 and err == ""
    assert summary["gaps"] == [] and summary["warnings"] == []
    assert [t["points"] for t in summary["tracks"]] == [len(read_track(DEFAULT_DEMO_ROUTE)
                                                            .latitude)]
    assert {n["code"] for n in summary["notices"]} == {"elevation-cleaned"}


@pytest.fixture
def merged_recording(tmp_path):
    path = tmp_path / "merged.gpx"
    path.write_text(two_tracks_with_a_jump())
    return path


def test_json_lists_tracks_gaps_and_warnings_of_a_merged_recording(capsys, merged_recording):
    code, out, err = run(capsys, merged_recording, "--json")
    assert code == 0
    summary = json.loads(out)
    assert summary["distance_m"] == pytest.approx(27_700.0, abs=5.0)
    assert [(t["name"], t["points"]) for t in summary["tracks"]] == [
        ("Morning part", 751), ("After the restart", 751)]
    assert all(t["distance_m"] == pytest.approx(7_500.0, abs=0.1) for t in summary["tracks"])
    assert [(round(g["at_m"]), round(g["length_m"])) for g in summary["gaps"]] == [
        (7500, 12700)]
    assert len(summary["warnings"]) == 1 and "12.7 km with no points" in summary["warnings"][0]
    assert "course-gap-joined" in [n["code"] for n in summary["notices"]]
    assert err == f"pacing course: warning: {summary['warnings'][0]}\n"


def test_gaps_drop_and_refuse_and_the_track_choice(capsys, merged_recording):
    code, out, _ = run(capsys, merged_recording, "--json", "--gaps", "drop")
    assert code == 0 and json.loads(out)["distance_m"] == pytest.approx(15_000.0, abs=1.0)
    code, out, err = run(capsys, merged_recording, "--gaps", "refuse")
    assert code == 2 and out == "" and err.count("\n") == 1 and "1 gap" in err
    code, out, err = run(capsys, merged_recording, "--json", "--track", "2")
    summary = json.loads(out)
    assert code == 0 and err == "" and summary["gaps"] == []
    assert summary["distance_m"] == pytest.approx(7_500.0, abs=1.0)
    assert [t["used"] for t in summary["tracks"]] == [False, True]
    code, _, err = run(capsys, merged_recording, "--track", "3")
    assert code == 2 and "there is no track 3" in err
    code, _, err = run(capsys, merged_recording, "--track", "x")
    assert code == 2 and err.count("\n") == 1


def test_the_readable_summary_lists_tracks_and_gaps(capsys, merged_recording):
    code, out, _ = run(capsys, merged_recording)
    assert code == 0
    assert "tracks                 2" in out
    assert "Morning part: 7.50 km, 751 points, 1 segment(s), 0.26 h" in out
    assert "gap             at km 7.50: 12.70 km without points (joined)" in out
    assert "note: climbing" in out


def test_plan_takes_the_course_flags_and_warns_of_gaps(capsys, merged_recording):
    argv = ["plan", str(merged_recording), "--power", "250", "--json"]
    assert main(argv + ["--track", "1"]) == 0
    one = json.loads(capsys.readouterr().out)
    assert one["distance_m"] == pytest.approx(7_500.0, abs=1.0)
    assert main(argv) == 0
    captured = capsys.readouterr()
    assert json.loads(captured.out)["distance_m"] == pytest.approx(27_700.0, abs=5.0)
    assert "warning: gap in the recording at 7.5 km" in captured.err
