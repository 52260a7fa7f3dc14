"""The race-day panel's pure parts (ui/race_day_data.py) and its render (streamlit's AppTest)."""

from __future__ import annotations

import math
from datetime import date, datetime

import numpy as np
import pytest

from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_every
from pacing.io.weather_file import race_day_from_inputs
from pacing.physics.cycling import Rider
from pacing.plan.best_start import best_start
from pacing.plan.race import RaceRequest, plan_race
from pacing.plan.request import PlanRequest
from pacing.weather.conditions import Conditions
from ui.race_day_data import (
    COLUMN_NAMES,
    WEATHER_COLUMNS,
    best_start_clock,
    best_start_points,
    check_rows,
    clean_rows,
    environment_lines,
    race_day_inputs,
    rows_from_csv,
    starter_rows,
)

ROWS = [
    {"time": "2026-07-14T08:00+02:00", "temperature_c": 18, "relative_humidity_pct": 70,
     "wind_speed_mps": 3, "wind_from_deg": 350},
    {"time": "2026-07-14T12:00+02:00", "temperature_c": 31, "relative_humidity_pct": 35,
     "wind_speed_mps": 6, "wind_from_deg": 180},
]


def request(inputs):
    distance = np.arange(0.0, 10000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance), heading=0.0)
    return RaceRequest(course=course, bounds=split_every(course, 2500.0),
                       conditions=Conditions(), rider=Rider(),
                       cycling=PlanRequest(mean_power=220.0),
                       race_day=race_day_from_inputs(inputs))


def test_the_table_has_the_csv_columns_with_units_in_the_headers():
    from pacing.io.weather_file import OPTIONAL_COLUMNS, REQUIRED_COLUMNS

    assert set(COLUMN_NAMES) == {*REQUIRED_COLUMNS, *OPTIONAL_COLUMNS}
    assert all("[" in label or name == "time" for name, label, _ in WEATHER_COLUMNS)


def test_empty_cells_and_empty_rows_are_dropped():
    edited = [{**ROWS[0], "latitude": math.nan, "extra": 1},
              {name: None for name in COLUMN_NAMES}, {"time": "  "}]
    assert clean_rows(edited) == [{**{n: None for n in COLUMN_NAMES}, **ROWS[0]}]


def test_rows_that_do_not_read_give_one_line_naming_the_row():
    bad = [ROWS[0], {**ROWS[1], "relative_humidity_pct": 140}]
    problem = check_rows(clean_rows(bad), "2026-07-14T09:00")
    assert problem is not None and "\n" not in problem and "row 2" in problem
    backwards = [ROWS[1], ROWS[0]]
    assert "row" in check_rows(clean_rows(backwards), None)
    assert check_rows(clean_rows(ROWS), "2026-07-14T09:00") is None
    assert check_rows([], None) is None


def test_an_uploaded_csv_becomes_rows_of_the_table():
    text = ("time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg\n"
            "2026-07-14T08:00+02:00,18,70,3,350\n2026-07-14T12:00+02:00,31,35,6,180\n")
    rows = rows_from_csv(text.encode())
    assert [row["temperature_c"] for row in rows] == [18.0, 31.0]
    assert check_rows(clean_rows(rows), None) is None


def test_the_inputs_make_the_request_race_day_and_a_plan_through_the_weather():
    inputs = race_day_inputs(clean_rows(ROWS), "2026-07-14T09:00", heat_acclimatised=True,
                             limits={"limits_temperature_c": 25.0, "limits_humidity_pct": None,
                                     "limits_elevation_m": 0.0},
                             spread={"wind_speed_mps": 1.0, "wind_from_deg": 0.0,
                                     "temperature_c": 0.0, "samples": 20, "seed": 2})
    day = race_day_from_inputs(inputs)
    assert day.heat_acclimatised and day.limits_temperature == 25.0
    assert day.limits_relative_humidity is None and day.spread.samples == 20
    result = plan_race(request(inputs))
    assert result.race_day.band is not None
    lines = environment_lines(result.race_day, "metric")
    assert lines[0].startswith("Heat: WBGT up to") and any("Forecast band" in s for s in lines)
    assert any("limits measured at 25 °C" in s for s in lines)
    # no spread at all: no band asked
    assert race_day_inputs([], None, spread={"wind_speed_mps": 0.0})["spread"] is None


def test_the_best_start_curve_and_its_best_point():
    inputs = race_day_inputs(clean_rows(ROWS), "2026-07-14T08:00")
    race = request(inputs)
    best = best_start(race, race.race_day.start, race.race_day.start + 7200.0)
    starts, finishes = best_start_points(best)
    assert starts[0] == "08:00" and len(starts) == len(finishes) == len(best.grid)
    assert best_start_clock(best) in starts and min(finishes) == best.finish_time


def test_a_starter_table_reads():
    rows = starter_rows(datetime(2026, 7, 14, 9, 0))
    assert check_rows(clean_rows(rows), "2026-07-14T09:00") is None


PANEL_SCRIPT = """
import streamlit as st
from ui.race_day_panel import render
st.session_state["race_day_result"] = render(None, "metric")
"""


def test_the_panel_renders_and_returns_the_inputs():
    testing = pytest.importorskip("streamlit.testing.v1")
    app = testing.AppTest.from_string(PANEL_SCRIPT, default_timeout=30).run()
    assert not app.exception
    result = app.session_state["race_day_result"]
    assert result["rows"] == [] and result["spread"] is None
    app.toggle(key="race_day_table").set_value(True).run()
    assert not app.exception
    result = app.session_state["race_day_result"]
    assert len(result["rows"]) >= 2 and result["start"].endswith("09:00")


SUMMARY_SCRIPT = """
import numpy as np
import streamlit as st
from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_every
from pacing.physics.cycling import Rider
from pacing.plan.race import RaceRequest, plan_race
from pacing.plan.request import PlanRequest
from pacing.weather.conditions import Conditions
from ui.race_day_panel import show_environment

distance = np.arange(0.0, 5005.0, 10.0)
course = synthetic_course(distance, np.zeros_like(distance), heading=0.0)
result = plan_race(RaceRequest(course=course, bounds=split_every(course, 1000.0),
                               conditions=Conditions(temperature=33.0), rider=Rider(),
                               cycling=PlanRequest(mean_power=200.0)))
show_environment(result.race_day, result.notices, "metric")
"""


def test_the_summary_shows_the_heat_caution_and_the_cost():
    testing = pytest.importorskip("streamlit.testing.v1")
    app = testing.AppTest.from_string(SUMMARY_SCRIPT, default_timeout=60).run()
    assert not app.exception
    assert any("extreme" in w.value for w in app.warning)
    heat = next(m.value for m in app.markdown if "Heat: WBGT" in m.value)
    # the cost of the heat is said with what it means for a plan at a set power
    assert "would take about" in heat and "Quickest within my limits" in heat
    # the assumed test conditions are said once, by their note, not again in the summary
    assert not any("limits measured at" in m.value for m in app.markdown)


def test_the_best_start_figure_marks_the_best():
    from ui.race_day_panel import best_start_figure

    inputs = race_day_inputs(clean_rows(ROWS), "2026-07-14T08:00")
    race = request(inputs)
    best = best_start(race, race.race_day.start, race.race_day.start + 3600.0)
    figure = best_start_figure(best)
    # a time axis (the closer starts near the best sit where they belong), seconds behind
    # the best start, the best marked at 0
    assert figure.data[1].x[0].strftime("%H:%M") == best_start_clock(best)
    assert figure.data[1].y[0] == 0.0 and min(figure.data[0].y) == pytest.approx(0.0)
    assert list(figure.data[0].x) == sorted(set(figure.data[0].x))  # in time order


# ------------------------------------------------ a saved race day shown in the panel again

SAVED = race_day_inputs(
    clean_rows([{**ROWS[0], "sea_level_pressure_hpa": 1016.0},
                {**ROWS[1], "sea_level_pressure_hpa": 1012.5}]), "2026-07-14T09:35",
    heat_acclimatised=True, altitude_acclimatised=False,
    limits={"limits_temperature_c": 14.0, "limits_humidity_pct": None,
            "limits_elevation_m": 650.0},
    spread={"wind_speed_mps": 1.5, "wind_from_deg": 0.0, "temperature_c": 2.0,
            "samples": 200, "seed": 0})


def test_the_panel_state_of_a_saved_race_day_gives_the_same_race_day_back():
    # The state mapping inverts what the panel returns: the panel's values read back from
    # the state (as the panel reads its widgets) make the saved race-day dict again.
    from datetime import time

    from ui.race_day_data import PANEL_KEYS, ROWS_TO_SHOW, SPREAD_FIELDS, panel_state

    state = panel_state(SAVED)
    assert state[PANEL_KEYS["date"]] == date(2026, 7, 14)
    assert state[PANEL_KEYS["time"]] == time(9, 35)
    assert state[PANEL_KEYS["table"]] is True
    assert state[ROWS_TO_SHOW][0]["sea_level_pressure_hpa"] == 1016.0
    assert "latitude" not in state[ROWS_TO_SHOW][0]  # empty cells stay empty
    again = race_day_inputs(
        clean_rows(state[ROWS_TO_SHOW]),
        datetime.combine(state[PANEL_KEYS["date"]], state[PANEL_KEYS["time"]]).isoformat(
            timespec="minutes"),
        heat_acclimatised=state[PANEL_KEYS["heat"]],
        altitude_acclimatised=state[PANEL_KEYS["altitude"]],
        limits={name: state[PANEL_KEYS[name]] for name in (
            "limits_temperature_c", "limits_humidity_pct", "limits_elevation_m")},
        spread={**{name: state[PANEL_KEYS[f"spread_{name}"]] for name in SPREAD_FIELDS},
                "samples": 200, "seed": 0})
    assert again == SAVED


def test_a_plan_without_a_race_day_sets_the_panel_to_one_weather_all_day():
    from ui.race_day_data import PANEL_KEYS, ROWS_TO_SHOW, panel_state

    state = panel_state(None)
    assert state[PANEL_KEYS["table"]] is False and ROWS_TO_SHOW not in state
    assert not state[PANEL_KEYS["heat"]] and not state[PANEL_KEYS["altitude"]]
    assert state[PANEL_KEYS["limits_elevation_m"]] is None
    assert state[PANEL_KEYS["spread_wind_speed_mps"]] == 0.0
    assert PANEL_KEYS["date"] not in state  # the start is left as the page has it
    without_table = panel_state({**SAVED, "rows": []})
    assert without_table[PANEL_KEYS["table"]] is False and ROWS_TO_SHOW not in without_table


def test_the_panel_drawn_from_a_saved_state_returns_the_saved_race_day():
    # The real panel (AppTest): the state set before it is drawn, as the library does,
    # gives back the saved race day; a table the user had edited is replaced.
    testing = pytest.importorskip("streamlit.testing.v1")
    from ui.race_day_data import panel_state

    app = testing.AppTest.from_string(PANEL_SCRIPT, default_timeout=30)
    app.session_state["race_day_table"] = True
    app.session_state["race_day_rows"] = [dict(ROWS[1], time="2026-07-14T07:00+02:00"),
                                          dict(ROWS[1])]
    app.session_state["race_day_date"] = date(2026, 7, 14)  # a start within the table
    app.run()
    assert not app.exception
    assert app.session_state["race_day_result"]["rows"][0]["time"].startswith(
        "2026-07-14T07:00")
    for key, value in panel_state(SAVED).items():
        app.session_state[key] = value
    app.run()
    assert not app.exception
    assert app.session_state["race_day_result"] == SAVED
    app.run()  # the widgets hold it
    assert app.session_state["race_day_result"] == SAVED


# ------------------------------------------------ what a new coach met in the browser (issue 18)

def test_times_read_as_a_coach_writes_them_and_read_back():
    from ui.race_day_data import clock_cell

    rows = rows_from_csv(b"time,temperature_c,relative_humidity_pct,wind_speed_mps,"
                         b"wind_from_deg\n2026-07-14T08:00,24,55,2,200\n"
                         b"2026-07-14T10:00:30+02:00,29,45,3,220\n")
    assert [row["time"] for row in rows] == ["2026-07-14 08:00", "2026-07-14 10:00:30+02:00"]
    assert clock_cell(datetime(2026, 7, 14, 9, 5)) == "2026-07-14 09:05"


def test_a_table_turned_on_starts_from_the_pages_weather():
    rows = starter_rows(datetime(2026, 7, 14, 9, 0), weather={
        "temperature": 31.0, "relative_humidity": 0.35, "wind_speed": 4.0, "wind_from": 250.0})
    assert {row["temperature_c"] for row in rows} == {31.0}
    assert {row["relative_humidity_pct"] for row in rows} == {35.0}
    assert {(row["wind_speed_mps"], row["wind_from_deg"]) for row in rows} == {(4.0, 250.0)}
    assert rows[0]["time"] == "2026-07-14 07:00"


def test_an_upload_on_another_day_moves_the_start_into_the_table():
    from ui.race_day_data import start_within_table

    rows = [{"time": "2026-07-14 08:00"}, {"time": "2026-07-14 16:00"}]
    # the date input still showed today: the table's day, the same clock
    moved, said = start_within_table(rows, datetime(2026, 12, 5, 9, 0))
    assert moved == datetime(2026, 7, 14, 9, 0) and "2026-07-14 09:00" in said
    # the right day but a clock outside the table: its first row
    assert start_within_table(rows, datetime(2026, 7, 14, 6, 0))[0] == datetime(2026, 7, 14, 8)
    # a start within the table is kept, without a word
    assert start_within_table(rows, datetime(2026, 7, 14, 13, 0)) == (
        datetime(2026, 7, 14, 13, 0), None)


def test_a_start_outside_the_table_is_said_in_one_line_naming_both():
    # the prediction said "predicted to finish at <the start>" for a start after the table
    rows = clean_rows([{**ROWS[0], "time": "2026-07-14T08:00"},
                       {**ROWS[1], "time": "2026-07-14T16:00"}])
    problem = check_rows(rows, "2026-12-05T09:00")
    assert problem is not None and "\n" not in problem
    assert "2026-12-05 09:00" in problem and "2026-07-14 08:00 to 2026-07-14 16:00" in problem
    assert check_rows(rows, "2026-07-14T09:00") is None


def test_a_check_reads_as_a_line_of_the_weather_table():
    from ui.race_day_panel import table_problem

    assert table_problem("weather row 3: time comes before row 2") == (
        "Weather table, row 3: time comes before row 2")
    assert table_problem("the start is outside").startswith("Weather table: the start")


def test_the_heat_and_altitude_models_are_named_by_their_authors_not_their_keys():
    from pacing.display.weather_words import WORDS

    text = WORDS["heat-model-outside-validity"](
        {"wbgt_c": 31.5, "low_c": 8.0, "high_c": 28.0, "model": "racinais-2015"}, "metric")
    assert "Racinais et al. 2015" in text and "racinais-2015" not in text
    text = WORDS["altitude-model-outside-validity"](
        {"elevation_m": 3500.0, "high_m": 2800.0, "model": "wehrlin-hallen-2006"}, "metric")
    assert "Wehrlin & Hallén 2006" in text and "wehrlin-hallen" not in text


def test_a_best_start_stays_found_only_for_the_same_race_and_window():
    from dataclasses import replace

    from ui.race_day_data import request_digest

    race = request(race_day_inputs(clean_rows(ROWS), "2026-07-14T08:00"))
    same = request(race_day_inputs(clean_rows(ROWS), "2026-07-14T08:00"))
    assert request_digest(race, "08:00", "12:00") == request_digest(same, "08:00", "12:00")
    assert request_digest(race, "08:00", "12:00") != request_digest(race, "08:00", "11:00")
    stronger = replace(race, cycling=PlanRequest(mean_power=230.0))
    assert request_digest(stronger, "08:00", "12:00") != request_digest(race, "08:00", "12:00")
