"""``pacing review ROUTE.gpx RIDE.csv …`` end to end (pacing.cli.review)."""

from __future__ import annotations

import json
import math

import pytest
from test_review_synthetic import Day, race_csv, race_gpx, ride, route_gpx

from pacing.cli import main

PLAN = ["--power", "250", "--crr", "0.004", "--start-speed", "10"]


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("review")
    route = folder / "loop.gpx"
    route.write_bytes(route_gpx())
    samples = ride(Day(power=lambda x: 200.0 if 500.0 <= x < 1500.0 else 250.0,
                       stops=((3000.0, 30.0),)))
    race = folder / "race.csv"
    race.write_bytes(race_csv(samples))
    flat = folder / "race_no_positions.csv"
    flat.write_bytes(race_csv(samples, positions=False))
    (folder / "race.gpx").write_bytes(race_gpx(samples))
    return route, race, flat


def run_json(capsys, *args):
    code = main(["review", *map(str, args), "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def test_json_has_the_keys_of_the_issue(capsys, files):
    route, race, _ = files
    result = run_json(capsys, route, race, *PLAN, "--bootstrap", "30")
    assert {"planned_time_s", "actual_time_s", "segments", "attribution", "fitted",
            "warnings"} <= set(result)
    assert set(result["segments"][0]) >= {"start_m", "end_m", "planned_time_s",
                                          "actual_time_s", "delta_s", "planned_power_w",
                                          "actual_power_w"}
    assert set(result["attribution"]) == {"power_s", "drag_s", "rolling_s", "wind_s",
                                          "stops_s", "other_s"}
    assert set(result["fitted"]) == {"cda_m2", "cda_ci95", "crr", "crr_ci95",
                                     "wind_speed_mps", "wind_from_deg"}
    assert math.fsum(result["attribution"].values()) == pytest.approx(
        result["actual_time_s"] - result["planned_time_s"], abs=1e-9)
    assert result["attribution"]["power_s"] > 25.0
    assert result["attribution"]["stops_s"] > 30.0
    assert all({"code", "level", "values", "text"} <= set(w) for w in result["warnings"])
    assert "review-stops" in {w["code"] for w in result["warnings"]}


def test_without_positions_the_ride_is_aligned_by_distance(capsys, files):
    route, _, flat = files
    result = run_json(capsys, route, flat, *PLAN, "--no-fit")
    assert result["fitted"] is None
    assert result["alignment"]["method"] == "distance"
    assert result["attribution"]["drag_s"] == 0.0


def test_a_gpx_race_file_gives_the_same_review(capsys, files):
    route, race, _ = files
    from_csv = run_json(capsys, route, race, *PLAN, "--no-fit")
    from_gpx = run_json(capsys, route, race.with_suffix(".gpx"), *PLAN, "--no-fit")
    assert from_gpx["actual_time_s"] == pytest.approx(from_csv["actual_time_s"], abs=0.05)
    assert from_gpx["attribution"] == pytest.approx(from_csv["attribution"], abs=0.1)


def test_the_table_and_the_csv_export(capsys, files, tmp_path):
    route, race, _ = files
    target = tmp_path / "review.csv"
    assert main(["review", str(route), str(race), *PLAN, "--no-fit", "--csv",
                 str(target)]) == 0
    out = capsys.readouterr().out
    assert "where the time went" in out and "Caution" in out
    assert target.read_text(encoding="utf-8").count("\n") > 5
    workbook = tmp_path / "review.xlsx"
    assert main(["review", str(route), str(race), *PLAN, "--no-fit", "--xlsx",
                 str(workbook)]) == 0
    from openpyxl import load_workbook

    assert load_workbook(workbook).sheetnames[0] == "race review"


def test_a_known_day_wind_is_used(capsys, files):
    route, race, _ = files
    result = run_json(capsys, route, race, *PLAN, "--no-fit", "--day-wind-speed", "3",
                      "--day-wind-from", "90")
    assert result["day_conditions"]["wind_speed_mps"] == 3.0
    assert result["attribution"]["wind_s"] != 0.0


@pytest.mark.parametrize(("flags", "message"), [
    (["--day-wind-speed", "3"], "--day-wind-from"),
    (["--bootstrap", "-1"], "--bootstrap"),
    (["--sport", "running", "--flat-pace", "4:00"], "cycling"),
])
def test_bad_flags_exit_with_code_2_and_one_line(capsys, files, flags, message):
    route, race, _ = files
    code = main(["review", str(route), str(race), *PLAN, *flags])
    err = capsys.readouterr().err
    assert code == 2
    assert message in err and len(err.strip().splitlines()) == 1


def test_a_missing_ride_file_is_one_line(capsys, files, tmp_path):
    route, _, _ = files
    assert main(["review", str(route), str(tmp_path / "none.csv"), *PLAN]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1


def test_the_review_is_kept_with_a_saved_plan_of_the_library(capsys, files, tmp_path):
    import hashlib

    from pacing.store.library import open_library

    route, race, _ = files
    database = tmp_path / "library.sqlite3"
    planned = run_json(capsys, route, race, *PLAN, "--no-fit")["planned_time_s"]
    with open_library(database) as library:
        plan = library.save_plan("Loop TT", {"sport": "cycling"},
                                 {"strategy": {}, "weather": {}, "targets": [],
                                  "time_saved": None, "finish_time": planned + 0.4})
    result = run_json(capsys, route, race, *PLAN, "--no-fit", "--save-to-plan", plan.id,
                      "--database", database)
    with open_library(database) as library:
        (kept,) = library.plan_reviews(plan.id)
    assert kept.review == json.loads(json.dumps(result))
    assert kept.ride_name == "race.csv"
    assert kept.ride_sha256 == hashlib.sha256(race.read_bytes()).hexdigest()  # FIPS 180-4


def test_a_review_is_not_kept_with_a_saved_plan_of_other_flags(capsys, files, tmp_path):
    from pacing.store.library import open_library

    route, race, _ = files
    database = tmp_path / "library.sqlite3"
    planned = run_json(capsys, route, race, *PLAN, "--no-fit")["planned_time_s"]
    with open_library(database) as library:
        plan = library.save_plan("Loop TT at 230 W", {"sport": "cycling"},
                                 {"targets": [], "finish_time": planned + 30.0})
    code = main(["review", str(route), str(race), *PLAN, "--no-fit", "--save-to-plan",
                 str(plan.id), "--database", str(database)])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert "'Loop TT at 230 W') finishes in" in err and "give the flags" in err
    with open_library(database) as library:
        assert library.plan_reviews(plan.id) == ()


def test_keeping_with_a_plan_that_is_not_there_exits_with_code_2(capsys, files, tmp_path):
    route, race, _ = files
    code = main(["review", str(route), str(race), *PLAN, "--no-fit", "--save-to-plan", "7",
                 "--database", str(tmp_path / "library.sqlite3")])
    err = capsys.readouterr().err
    assert code == 2 and "no plan with id 7" in err and "Traceback" not in err


def test_the_day_cda_is_kept_on_a_setup_with_its_interval(capsys, files, tmp_path):
    from pacing.athlete import Athlete, Setup
    from pacing.store.library import open_library

    route, race, _ = files
    database = tmp_path / "library.sqlite3"
    with open_library(database) as library:
        ann = library.add_athlete(Athlete(name="Ann", body_mass=72.0))
        tt = library.add_setup(ann.id, Setup(name="TT bike", drag_area=0.25))
    result = run_json(capsys, route, race, *PLAN, "--bootstrap", "30",
                      "--keep-cda-on-setup", tt.id, "--database", database)
    with open_library(database) as library:
        stored = library.setup(tt.id)
    fitted = result["fitted"]
    assert stored.setup.drag_area == round(fitted["cda_m2"], 4)
    origin = stored.drag_area_origin
    assert origin.low_m2 <= fitted["cda_ci95"][0] and origin.high_m2 >= fitted["cda_ci95"][1]
    assert origin.source.startswith("race review of race.csv, ")


def test_keeping_the_cda_needs_the_fit(capsys, files):
    route, race, _ = files
    code = main(["review", str(route), str(race), *PLAN, "--no-fit", "--keep-cda-on-setup", "1"])
    assert code == 2 and "drop --no-fit" in capsys.readouterr().err
