"""Weather tables read from CSV (pacing.io.weather_file): the columns of the issue, SI inside,
one-line refusals naming the row (counted from 1 under the header)."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.io.weather_file import read_weather_table, weather_table_csv
from pacing.weather.timeline import clock_text

GOOD = """\
time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg,sea_level_pressure_hpa
2026-07-14T08:00+02:00,18,70,3,350,1015
2026-07-14T10:00+02:00,24,50,5,10,1014.5
2026-07-14T12:00+02:00,30,35,6,180,1012
"""


def test_a_weather_file_reads_into_si():
    table, start = read_weather_table(GOOD.encode())
    np.testing.assert_allclose(table.relative_humidity, [0.70, 0.50, 0.35])
    np.testing.assert_allclose(table.pressure, [101500.0, 101450.0, 101200.0])
    assert table.pressure_kind == "sea-level"
    assert table.utc_offset == 7200.0
    assert clock_text(table.time[1], table.utc_offset) == "2026-07-14T10:00:00+02:00"
    assert start is None


def test_station_pressure_and_places_are_read_when_given(tmp_path):
    path = tmp_path / "weather.csv"
    path.write_text("\ufefftime,temperature_c,relative_humidity_pct,wind_speed_mps,"
                    "wind_from_deg,station_pressure_hpa,latitude,longitude\n"
                    "2026-07-14T08:00,18,70,3,350,850,45.1,6.2\n"
                    "2026-07-14T12:00,28,40,4,20,848,45.1,6.2\n", encoding="utf-8")
    table, _ = read_weather_table(path)
    assert table.pressure_kind == "station"
    np.testing.assert_allclose(table.pressure, [85000.0, 84800.0])
    np.testing.assert_allclose(table.latitude, [45.1, 45.1])
    assert table.utc_offset is None


def test_a_table_written_reads_back_the_same():
    table, _ = read_weather_table(GOOD.encode())
    again, _ = read_weather_table(weather_table_csv(table).encode())
    for name in ("time", "temperature", "relative_humidity", "wind_speed", "wind_from",
                 "pressure"):
        np.testing.assert_allclose(getattr(again, name), getattr(table, name))
    assert again.utc_offset == table.utc_offset


HEADER = "time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg\n"


@pytest.mark.parametrize(("text", "message"), [
    ("time,temperature_c,wind_speed_mps,wind_from_deg\n", "lacks the column.*relative_humidity"),
    (HEADER.replace("\n", ",gusts\n"), "unknown column.*gusts"),
    (HEADER + "2026-07-14T08:00,18,70,3,350\n2026-07-14T07:00,18,70,3,350\n",
     "weather row 2: time comes before row 1"),
    (HEADER + "2026-07-14T08:00,18,70,3,350\n2026-07-14T08:00,18,70,3,350\n",
     "weather row 2: time repeats"),
    (HEADER + "2026-07-14T08:00,18,70,3,350\n2026-07-14T09:00,18,170,3,350\n",
     "weather row 2: relative humidity must be 0-100 %, got 170"),
    (HEADER + "2026-07-14T08:00,18,70,3,350\nnoon,18,70,3,350\n",
     "weather row 2: time must be an ISO 8601"),
    (HEADER + "2026-07-14T08:00,18,70,3,350\n2026-07-14T09:00,,70,3,350\n",
     "weather row 2: temperature_c is empty"),
    (HEADER + "2026-07-14T08:00,18,70,3,350\n2026-07-14T09:00,warm,70,3,350\n",
     "weather row 2: temperature_c must be a number"),
    (HEADER + "2026-07-14T08:00,18,70,3\n", "weather row 1: 4 cells for 5 columns"),
    (HEADER.replace("\n", ",sea_level_pressure_hpa,station_pressure_hpa\n"), "not both"),
    (HEADER, "no rows"),
    ("", "empty"),
])
def test_a_bad_weather_file_is_refused_in_one_line(text, message):
    with pytest.raises(InputError, match=message) as error:
        read_weather_table(text.encode())
    assert "\n" not in str(error.value)


def test_a_weather_file_that_is_not_there_is_refused(tmp_path):
    with pytest.raises(InputError, match="weather file not found"):
        read_weather_table(tmp_path / "missing.csv")


def test_rows_typed_in_a_table_are_read_and_checked_as_a_file():
    from datetime import datetime

    from pacing.io.weather_file import weather_table_from_records

    rows = [{"time": datetime(2026, 7, 14, 8), "temperature_c": 18.0,
             "relative_humidity_pct": 70.0, "wind_speed_mps": 3.0, "wind_from_deg": 350.0,
             "station_pressure_hpa": None},
            {"time": "2026-07-14T12:00", "temperature_c": 28.0, "relative_humidity_pct": 40,
             "wind_speed_mps": 4.0, "wind_from_deg": 20.0, "station_pressure_hpa": None}]
    table, start = weather_table_from_records(rows, datetime(2026, 7, 14, 9))
    assert table.pressure is None and table.utc_offset is None
    assert start - table.time[0] == 3600.0
    rows[1]["wind_from_deg"] = 400.0
    with pytest.raises(InputError, match="weather row 2: wind direction"):
        weather_table_from_records(rows)


def test_a_race_day_from_json_inputs_as_a_page_or_a_saved_plan_holds_them():
    from pacing.io.weather_file import race_day_from_inputs

    assert race_day_from_inputs(None) is None
    rows = [{"time": "2026-07-14T08:00+02:00", "temperature_c": 18, "relative_humidity_pct": 70,
             "wind_speed_mps": 3, "wind_from_deg": 350},
            {"time": "2026-07-14T12:00+02:00", "temperature_c": 28, "relative_humidity_pct": 40,
             "wind_speed_mps": 4, "wind_from_deg": 20}]
    day = race_day_from_inputs({"rows": rows, "start": "2026-07-14T09:00",
                                "heat_acclimatised": True})
    assert day.heat_acclimatised and not day.altitude_acclimatised
    assert day.start - day.weather.time[0] == 3600.0 and day.offset == 7200.0
    single = race_day_from_inputs({"start": "2026-07-14T09:00+01:00"})
    assert single.weather is None and single.utc_offset == 3600.0


def test_saved_inputs_keep_the_tests_conditions_and_the_forecast_spread():
    from pacing.io.weather_file import race_day_from_inputs

    day = race_day_from_inputs({"start": "2026-07-14T09:00", "limits_temperature_c": 30,
                                "limits_humidity_pct": 40, "limits_elevation_m": "",
                                "spread": {"wind_speed_mps": 1.5, "samples": 50, "seed": 9}})
    assert (day.limits_temperature, day.limits_relative_humidity, day.limits_elevation) == (
        30.0, 0.4, None)
    assert day.limits_measured == (30.0, 0.4, 0.0) and not day.limits_assumed
    assert (day.spread.wind_speed, day.spread.wind_from, day.spread.samples,
            day.spread.seed) == (1.5, 0.0, 50, 9)
    assert race_day_from_inputs({"start": None, "spread": {"wind_speed_mps": 0}}).spread is None


@pytest.mark.parametrize(("inputs", "words"), [
    ({"limits_humidity_pct": 140}, "the test's relative humidity"),
    ({"limits_temperature_c": "warm"}, "the test's temperature [°C] must be a number"),
    ({"spread": {"wind_speed_mps": -2}}, "the forecast's spread of wind speed"),
])
def test_bad_saved_race_day_inputs_give_one_line(inputs, words):
    from pacing.io.weather_file import race_day_from_inputs

    with pytest.raises(InputError) as caught:
        race_day_from_inputs({"start": None, **inputs})
    assert words in str(caught.value) and "\n" not in str(caught.value)
