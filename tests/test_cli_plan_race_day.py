"""``pacing plan`` and ``pacing compare`` with a race day: a weather CSV through the race, a
start time, a best start, heat and altitude — end to end through the command line."""

from __future__ import annotations

import json

import pytest
from samples import north_hill_gpx

from pacing.cli import main

WEATHER = """\
time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg,sea_level_pressure_hpa
2026-07-14T08:00+02:00,18,70,4,350,1015
2026-07-14T10:00+02:00,24,50,5,10,1014
2026-07-14T12:00+02:00,31,35,6,180,1012
2026-07-14T14:00+02:00,34,30,6,200,1010
"""

SEGMENT_KEYS = {"clock_time", "temperature_c", "wind_speed_mps", "wind_from_deg"}
ENVIRONMENT_KEYS = {"heat_power_factor", "altitude_power_factor", "wbgt_max_c", "heat_category"}


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("race_day")
    (folder / "hill.gpx").write_text(north_hill_gpx(), encoding="utf-8")
    (folder / "weather.csv").write_text(WEATHER, encoding="utf-8")
    return str(folder / "hill.gpx"), str(folder / "weather.csv")


def run_json(capsys, *argv):
    code = main([*argv, "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def test_a_cycling_plan_through_the_weather_of_a_csv(capsys, files):
    route, weather = files
    output = run_json(capsys, "plan", route, "--power", "250", "--cp", "280", "--w-prime",
                      "20000", "--weather", weather, "--start", "2026-07-14T09:00")
    first = output["segments"][0]
    assert SEGMENT_KEYS <= set(first)
    assert first["clock_time"] == "2026-07-14T09:00:00+02:00"
    assert first["temperature_c"] == pytest.approx(21.0, abs=0.2)  # 18 → 24 °C, an hour in
    assert ENVIRONMENT_KEYS <= set(output["environment"])
    assert output["start"] == "2026-07-14T09:00:00+02:00"
    clocks = [s["clock_time"] for s in output["segments"]]
    assert clocks == sorted(clocks)


def test_a_running_plan_through_the_weather_of_a_csv(capsys, files):
    route, weather = files
    output = run_json(capsys, "plan", route, "--sport", "running", "--flat-pace", "4:30",
                      "--weather", weather, "--start", "2026-07-14T12:30",
                      "--heat-acclimatised")
    assert SEGMENT_KEYS <= set(output["segments"][0])
    assert output["segments"][0]["temperature_c"] > 30.0
    assert ENVIRONMENT_KEYS <= set(output["environment"])


def test_the_best_start_of_a_window(capsys, files):
    route, weather = files
    output = run_json(capsys, "plan", route, "--power", "250", "--weather", weather,
                      "--best-start-between", "08:00,10:00")
    best = output["best_start"]
    finishes = [row["finish_time_s"] for row in best["grid"]]
    assert best["finish_time_s"] == min(finishes)
    assert output["start"] == best["start"]
    assert best["grid"][0]["start"] == "2026-07-14T08:00:00+02:00"
    assert output["finish_time_s"] == pytest.approx(best["finish_time_s"])


def test_the_table_shows_clock_and_weather(capsys, files):
    route, weather = files
    assert main(["plan", route, "--power", "250", "--weather", weather,
                 "--start", "2026-07-14T09:00"]) == 0
    out = capsys.readouterr().out
    assert "clock" in out and "°C" in out and "09:00" in out
    assert "start 2026-07-14T09:00:00+02:00" in out


def test_without_race_day_flags_heat_and_altitude_still_count(capsys, files):
    """Issue 16: 33 °C with no other flag gave no heat caution and no loss."""
    route, _ = files
    output = run_json(capsys, "plan", route, "--power", "250", "--cp", "260", "--w-prime",
                      "20000", "--temperature", "33")
    environment = output["environment"]
    assert ENVIRONMENT_KEYS <= set(environment)
    assert environment["heat_power_factor"] < 0.9
    assert environment["heat_category"] == "extreme"
    assert environment["limits_measured_assumed"] is True
    assert (environment["limits_measured_temperature_c"],
            environment["limits_measured_relative_humidity_pct"],
            environment["limits_measured_elevation_m"]) == (20.0, 50.0, 0.0)
    codes = [n["code"] for n in output["notices"]]
    assert {"heat-risk", "limits-test-conditions-assumed",
            "weather-power-above-reduced-cp"} <= set(codes)
    assert SEGMENT_KEYS <= set(output["segments"][0])
    assert output["fixed_point_iterations"] == 1  # one weather all day: one pass


def test_a_race_in_the_tests_own_conditions_costs_nothing(capsys, files):
    route, _ = files  # the course lies at 100-200 m
    output = run_json(capsys, "plan", route, "--power", "250", "--temperature", "26",
                      "--humidity", "60", "--limits-measured-temperature", "26",
                      "--limits-measured-humidity", "60", "--limits-measured-elevation", "200")
    environment = output["environment"]
    assert environment["heat_power_factor"] == 1.0
    assert environment["altitude_power_factor"] == 1.0
    assert environment["limits_measured_assumed"] is False
    assert "limits-test-conditions-assumed" not in [n["code"] for n in output["notices"]]


def test_a_forecast_spread_gives_a_finish_time_band(capsys, files):
    route, weather = files
    output = run_json(capsys, "plan", route, "--power", "250", "--weather", weather,
                      "--start", "2026-07-14T09:00", "--weather-spread",
                      "wind=1.5,direction=20,temperature=2", "--spread-samples", "30",
                      "--spread-seed", "7")
    band = output["finish_time_band"]
    assert (band["samples"], band["seed"]) == (30, 7)
    assert band["p5_s"] < band["p50_s"] < band["p95_s"]
    assert main(["plan", route, "--power", "250", "--weather-spread", "wind=1",
                 "--spread-samples", "20"]) == 0
    assert "forecast band:" in capsys.readouterr().out


@pytest.mark.parametrize(("flags", "words"), [
    (["--weather-spread", "gust=3"], "--weather-spread parts are"),
    (["--weather-spread", "wind=fast"], "--weather-spread wind must be a number"),
    (["--weather-spread", "wind=-1"], "must be a number ≥ 0"),
    (["--spread-samples", "50"], "--spread-samples needs --weather-spread"),
    (["--limits-measured-humidity", "120"], "--limits-measured-humidity must be 0-100"),
])
def test_bad_spread_and_test_flags_give_one_line_and_exit_code_2(capsys, files, flags, words):
    route, _ = files
    assert main(["plan", route, "--power", "250", *flags]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and words in err[0]


@pytest.mark.parametrize(("flags", "words"), [
    (["--start", "2026-07-14T06:00"], "before the weather table's first row"),
    (["--start", "noon"], "--start must be an ISO 8601"),
    (["--best-start-between", "8:00-10:00"], "--best-start-between must be HH:MM,HH:MM"),
    (["--best-start-between", "10:00,08:00"], "must end after it begins"),
])
def test_bad_race_day_flags_give_one_line_and_exit_code_2(capsys, files, flags, words):
    route, weather = files
    assert main(["plan", route, "--power", "250", "--weather", weather, *flags]) == 2
    err = capsys.readouterr().err
    assert words in err
    assert "Traceback" not in err


def test_a_bad_weather_file_names_the_row(capsys, files, tmp_path):
    route, _ = files
    bad = tmp_path / "bad.csv"
    bad.write_text(WEATHER.replace("24,50,5,10", "24,150,5,10"), encoding="utf-8")
    assert main(["plan", route, "--power", "250", "--weather", str(bad)]) == 2
    assert "weather row 2: relative humidity" in capsys.readouterr().err


def test_a_best_start_needs_a_weather_table(capsys, files):
    route, _ = files
    assert main(["plan", route, "--power", "250", "--best-start-between", "08:00,10:00"]) == 2
    assert "--best-start-between needs --weather" in capsys.readouterr().err


def test_compare_shares_the_race_day_among_its_setups(capsys, files):
    route, weather = files
    output = run_json(capsys, "compare", route, "--power", "250", "--setup", "a:cda=0.30",
                      "--setup", "b:cda=0.27", "--weather", weather, "--start",
                      "2026-07-14T09:00", "--no-break-even")
    assert output["start"] == "2026-07-14T09:00:00+02:00"
    assert ENVIRONMENT_KEYS <= set(output["environment"])


def test_the_kind_of_the_single_pressure_is_a_flag(capsys, files):
    route, _ = files
    qnh = run_json(capsys, "plan", route, "--power", "250", "--sea-level-pressure", "99000")
    station = run_json(capsys, "plan", route, "--power", "250", "--sea-level-pressure",
                       "99000", "--pressure-kind", "station")
    # the course starts at 100 m: 990 hPa measured there is more air than 990 hPa at sea
    # level carried up 100 m, so the same power is slower
    assert station["finish_time_s"] > qnh["finish_time_s"]


def test_heat_and_altitude_with_the_single_weather(capsys, files):
    route, _ = files
    hot = run_json(capsys, "plan", route, "--power", "250", "--cp", "280", "--w-prime",
                   "20000", "--temperature", "33", "--humidity", "40", "--heat-and-altitude")
    assert hot["environment"]["heat_power_factor"] < 1.0
    assert hot["environment"]["heat_cost_s"] > 0.0
    assert hot["segments"][0]["clock_time"] is None  # no start: no clock
    assert hot["segments"][0]["temperature_c"] == 33.0
    assert any(n["code"].startswith("heat-") for n in hot["notices"])


def test_compare_gives_the_band_of_the_flags_rider(capsys, files):
    route, _ = files
    output = run_json(capsys, "compare", route, "--power", "250", "--setup", "a:cda=0.3",
                      "--setup", "b:cda=0.28", "--no-break-even", "--weather-spread",
                      "wind=1,direction=30", "--spread-samples", "12")
    band = output["finish_time_band"]
    assert band["samples"] == 12 and band["p5_s"] <= band["p50_s"] <= band["p95_s"]
    assert output["environment"]["limits_measured_assumed"] is True
