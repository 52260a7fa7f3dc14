"""Specification of ``pacing team``: a team pursuit on a velodrome and a team time trial on a
GPX course, end to end: table, --json, --csv, --xlsx, errors in one line."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from pacing.cli import main
from pacing.course.geometry import synthetic_course
from pacing.io.gpx import load_course, write_gpx

RIDERS = ["--rider", "Ann:mass=72,cda=0.19,cp=380,w_prime=22000",
          "--rider", "Bea:mass=70,cda=0.18,cp=360,w_prime=20000",
          "--rider", "Cat:mass=68,cda=0.18,cp=350,w_prime=21000",
          "--rider", "Dee:mass=74,cda=0.20,cp=340,w_prime=19000"]
TRACK = ["--track-distance", "4000", "--lap-length", "250"]


def run(capsys, *argv):
    code = main(["team", *map(str, argv)])
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def test_team_pursuit_json_has_the_documented_keys(capsys):
    code, out, err = run(capsys, *TRACK, *RIDERS, "--json")
    assert code == 0, err
    result = json.loads(out)
    assert {"finish_time_s", "riders", "turns", "equal_turns_time_s", "warnings"} <= set(result)
    assert sorted(r["name"] for r in result["riders"]) == ["Ann", "Bea", "Cat", "Dee"]
    assert result["turns"][0]["leader"] == result["riders"][0]["name"]  # starting order
    assert set(result["riders"][0]) == {"name", "min_w_prime_balance_j", "lead_time_s",
                                        "mean_power_w", "dropped_at_m"}
    assert set(result["turns"][0]) == {"leader", "start_m", "end_m", "duration_s", "power_w",
                                       "speed_mps"}
    assert result["turns"][0]["start_m"] == 0.0 and result["turns"][-1]["end_m"] == 4000.0
    assert result["finish_time_s"] <= result["equal_turns_time_s"]
    assert result["finish_time_s"] <= result["equal_power_time_s"]  # the second reference
    assert result["equal_power_gain_s"] == pytest.approx(
        result["equal_power_time_s"] - result["finish_time_s"])
    assert 180.0 < result["finish_time_s"] < 330.0  # women's team pursuit times, from memory
    assert sum(r["dropped_at_m"] is not None for r in result["riders"]) <= 1  # 3rd counts
    assert all(r["min_w_prime_balance_j"] >= -1e-6 for r in result["riders"])


def test_team_pursuit_table_shows_laps_lap_times_and_the_caution(capsys):
    code, out, _ = run(capsys, *TRACK, *RIDERS, "--w-prime-reserve", "1000")
    assert code == 0
    assert "Lap time [s]" in out and "Laps" in out and "gain" in out
    assert "equal turns at constant speed" in out and "equal turns, every leader at" in out
    assert "Caution" in out
    assert "nan" not in out.lower() and "inf" not in out.lower()


def test_csv_and_xlsx_schedules_are_written(capsys, tmp_path):
    csv_path, xlsx_path = tmp_path / "turns.csv", tmp_path / "turns.xlsx"
    code, _, err = run(capsys, *TRACK, *RIDERS, "--json", "--csv", csv_path,
                       "--xlsx", xlsx_path)
    assert code == 0, err
    table = pd.read_csv(csv_path, comment="#")
    assert set(table["Leader"]) <= {"Ann", "Bea", "Cat", "Dee"}
    assert set(pd.ExcelFile(xlsx_path).sheet_names) == {"turns", "riders", "W′ balance",
                                                        "notes"}


def test_the_printable_card_is_written_as_png_and_pdf(capsys, tmp_path):
    from PIL import Image

    from pacing.io.exports import CARD_DPI
    from pacing.io.team_file import TEAM_CARD

    png, pdf = tmp_path / "card.png", tmp_path / "card.pdf"
    code, out, err = run(capsys, *TRACK, *RIDERS, "--json", "--card-png", png, "--card-pdf", pdf)
    assert code == 0, err
    result = json.loads(out)
    assert pdf.read_bytes().startswith(b"%PDF")
    # one line per turn and one per notice (warnings and drop-out notes) above the caution
    width, height = TEAM_CARD.size(len(result["turns"]), len(result["notices"]))
    assert Image.open(png).size == pytest.approx((width * CARD_DPI, height * CARD_DPI), abs=1)


def test_a_team_time_trial_on_a_gpx_course_with_wind(capsys, tmp_path):
    distance = np.arange(0.0, 8001.0, 10.0)
    course = synthetic_course(distance, 10.0 * np.sin(distance / 1000.0), heading=30.0)
    route = tmp_path / "ttt.gpx"
    route.write_text(write_gpx(course), encoding="utf-8")
    code, out, err = run(capsys, route, *RIDERS, "--counts-rider", "4",
                         "--drafting-by-position", "0,0.30,0.38,0.40",
                         "--wind-speed", "5", "--wind-from", "200", "--json")
    assert code == 0, err
    result = json.loads(out)
    assert result["turns"][-1]["end_m"] == pytest.approx(load_course(route).distance[-1])
    assert all(r["dropped_at_m"] is None for r in result["riders"])  # all four count


@pytest.mark.parametrize(("argv", "words"), [
    ([*TRACK, "--rider", "Ann:mass=72,cda=0.19,cp=380,w_prime=22000"], "at least two"),
    ([*TRACK, "--rider", "Ann:mass=72,cda=0.19,cp=380", "--rider", "B:mass=1"], "give"),
    ([*TRACK, "--rider", "Ann:mass=x,cda=0.19,cp=380,w_prime=1", *RIDERS[2:]], "mass"),
    ([*TRACK, *RIDERS, "--drafting-by-position", "0,0.95"], "drafting"),
    ([*TRACK, *RIDERS, "--counts-rider", "7"], "counts-rider"),
    (["--track-distance", "4000", *RIDERS], "lap-length"),
    ([*RIDERS], "GPX course"),
    ([*TRACK, *RIDERS, "--wind-speed", "3", "--wind-from", "10"], "no wind"),
    ([*TRACK, *RIDERS, "--w-prime-reserve", "19000"], "reserve"),
    ([*TRACK, *RIDERS, "--counts-rider", "0"], "counts-rider"),
    ([*TRACK, *RIDERS, "--power-parts", "0"], "power-parts"),
    ([*TRACK, *RIDERS, "--power-parts", "9"], "power-parts"),
])
def test_bad_input_is_refused_in_one_line_with_exit_code_2(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert words in err and len(err.strip().splitlines()) == 1 and out == ""


def test_one_power_per_rider_is_never_faster_than_a_power_per_part(capsys):
    _, one, _ = run(capsys, *TRACK, *RIDERS, "--power-parts", "1", "--json")
    _, four, _ = run(capsys, *TRACK, *RIDERS, "--power-parts", "4", "--json")
    one, four = json.loads(one), json.loads(four)
    assert four["finish_time_s"] <= one["finish_time_s"] + 1e-9
    for result in (one, four):
        assert all(r["min_w_prime_balance_j"] >= -1e-6 for r in result["riders"])
