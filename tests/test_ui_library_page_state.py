"""Showing a saved plan in the page (ui.library_page_state): the widget states give back the
plan's approach, numbers, smoothing, terrain and segment choice; a plan saved without its
segment choice reopens on the same bounds, in either unit system.
"""

from __future__ import annotations

import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # the app's ui/ package sits beside app.py
    sys.path.insert(0, str(ROOT))

from ui import library_page_state  # noqa: E402


def test_a_plan_saved_without_its_segment_choice_reopens_on_the_same_bounds():
    # Plans saved before the segment choice was kept carry only their bounds: the page gets
    # them back as "my own marks" at those points' distances, in the page's units.
    import numpy as np

    from pacing.course.geometry import synthetic_course
    from ui.pipeline import segment_bounds

    distance = np.linspace(0.0, 12340.0, 1235)
    course = synthetic_course(distance, 100 + 30 * np.sin(distance / 900.0))
    bounds = [0, 137, 640, 1001, 1234]
    for system in ("metric", "imperial"):
        state = library_page_state.plan_page_state({"bounds": bounds}, system, course)
        assert state["split_mode"] == "my own marks"
        from pacing.display.units import from_display
        from ui.pipeline import parse_marks

        marks = tuple(from_display(v, "distance", system)
                      for v in parse_marks(state["split_marks"]))
        assert segment_bounds(course, "my own marks", None, marks).tolist() == bounds


def test_plan_page_state_sets_the_approach_terrain_and_smoothing():
    inputs = {"athlete": {"sport": "cycling", "body_mass": 65.0, "drag_area": 0.25},
              "weather": {"wind_speed": 5.0, "roughness_length": 0.03},
              "approach": {"strategy": "target-time", "target_time": 3725.0,
                           "allow_zero_on_descents": True},
              "smoothing": {"window": 150.0, "max_grade": 0.2, "allow_flat": True},
              "split": {"mode": "fixed length", "length": 2000.0, "marks": []}}
    state = library_page_state.plan_page_state(inputs, "metric")
    assert state["approach"] == "Reach a finish time"
    assert state["target_time"] == "1:02:05"
    assert state["coast_descents"] is True
    assert state["si:body_mass"] == 65.0 and state["si:wind_speed"] == 5.0
    assert state["si:smooth_window"] == 150.0 and state["si:max_grade_pct"] == pytest.approx(20)
    assert state["allow_flat"] is True
    assert state["split_mode"] == "fixed length" and state["si:split_length"] == 2000.0
    assert state["cda_preset"] == "my own value"
    from pacing.physics.wind import ROUGHNESS_LENGTHS

    assert ROUGHNESS_LENGTHS[state["terrain"]] == 0.03


def test_plan_page_state_sets_the_race_day_panel():
    # The page keeps the race-day panel's dict in the weather (weather["race_day"]); a
    # reopened plan sets the panel from it (ui.race_day_data.panel_state), so the next run
    # plans the saved race day, not the panel's current one.
    from datetime import time

    from ui.race_day_data import PANEL_KEYS, ROWS_TO_SHOW

    rows = [{"time": "2026-07-14T08:00", "temperature_c": 18.0, "relative_humidity_pct": 70.0,
             "wind_speed_mps": 3.0, "wind_from_deg": 350.0, "latitude": None},
            {"time": "2026-07-14T12:00", "temperature_c": 31.0, "relative_humidity_pct": 35.0,
             "wind_speed_mps": 6.0, "wind_from_deg": 180.0, "latitude": None}]
    race_day = {"rows": rows, "start": "2026-07-14T09:05", "heat_acclimatised": False,
                "altitude_acclimatised": True, "limits_temperature_c": None,
                "limits_humidity_pct": 40.0, "limits_elevation_m": None,
                "spread": {"wind_speed_mps": 0.5, "wind_from_deg": 20.0, "temperature_c": 0.0,
                           "samples": 200, "seed": 0}}
    state = library_page_state.plan_page_state(
        {"weather": {"temperature": 25.0, "race_day": race_day}}, "metric")
    assert state["si:temperature"] == 25.0
    assert state[PANEL_KEYS["table"]] is True
    assert [row["time"] for row in state[ROWS_TO_SHOW]] == [row["time"] for row in rows]
    assert state[PANEL_KEYS["time"]] == time(9, 5)
    assert state[PANEL_KEYS["altitude"]] is True and state[PANEL_KEYS["heat"]] is False
    assert state[PANEL_KEYS["limits_humidity_pct"]] == 40.0
    assert state[PANEL_KEYS["limits_temperature_c"]] is None
    assert state[PANEL_KEYS["spread_wind_from_deg"]] == 20.0
    # a plan saved without a race day: one weather all day, nothing acclimatised
    plain = library_page_state.plan_page_state({"weather": {"temperature": 25.0}}, "metric")
    assert plain[PANEL_KEYS["table"]] is False and ROWS_TO_SHOW not in plain
