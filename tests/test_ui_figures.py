"""The page's figures (ui.figures): thinned lines that keep their peaks, and figures written as
plotly's plain data that plotly itself would write the same.

The page caches its figures as plain data (st.cache_data) and draws them without validating
them again; these tests check the data against plotly's own validation and layout
(the reference library), so nothing is lost by skipping it.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import numpy as np
import plotly.graph_objects as go
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st_
from plotly.subplots import make_subplots

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # the app's ui/ package sits beside app.py, not in pacing/
    sys.path.insert(0, str(ROOT))

from ui import figures  # noqa: E402
from ui.figures import MAX_LINE_POINTS, drawable, extremes  # noqa: E402


def same(first: dict, second: dict) -> bool:
    """Two plotly figure dicts hold the same data (arrays compared as plotly encodes them)."""
    return json.dumps(first, sort_keys=True) == json.dumps(second, sort_keys=True)


# ------------------------------------------------------------------------- thinning lines

@settings(deadline=None, max_examples=60)
@given(count=st_.integers(1, 30_000), limit=st_.integers(4, 3000), seed=st_.integers(0, 99))
def test_a_thinned_line_keeps_its_ends_and_extremes_within_the_limit(count, limit, seed):
    values = np.random.default_rng(seed).normal(size=count).cumsum()
    kept = extremes(values, limit)
    assert kept.size <= limit
    if count <= limit:
        assert np.array_equal(kept, np.arange(count))
    assert np.all(np.diff(kept) > 0)  # in order along the line, no point twice
    assert kept[0] == 0 and kept[-1] == count - 1
    assert np.argmax(values) in kept and np.argmin(values) in kept


def test_a_short_line_is_drawn_whole():
    values = np.arange(MAX_LINE_POINTS, dtype=float)
    assert np.array_equal(extremes(values), np.arange(MAX_LINE_POINTS))


def test_a_braking_dip_of_three_points_in_twenty_thousand_stays_visible():
    # the reason for min-max thinning (common practice): evenly spaced samples would step over
    # a short dip, such as braking before a corner
    speed = np.full(20_001, 12.0)
    speed[7_001:7_004] = [8.0, 5.5, 8.0]
    kept = extremes(speed)
    assert kept.size <= MAX_LINE_POINTS
    assert speed[kept].min() == 5.5
    evenly = np.unique(np.linspace(0, speed.size - 1, MAX_LINE_POINTS).round().astype(int))
    assert speed[evenly].min() == 12.0  # what thinning by even steps would have drawn


def test_missing_values_do_not_stop_the_thinning():
    values = np.linspace(0.0, 1.0, 10_000)
    values[100:5000] = np.nan
    kept = extremes(values)
    assert kept.size <= MAX_LINE_POINTS and kept[-1] == values.size - 1
    assert values.size - 1 in kept and np.nanmax(values[kept]) == 1.0


# ------------------------------------------------------------- figures as plain plotly data

def _course(points: int = 6001):
    from pacing.course.geometry import synthetic_course

    distance = np.linspace(0.0, 30_000.0, points)
    elevation = 200.0 + 80.0 * np.sin(distance / 3000.0) + 5.0 * np.sin(distance / 170.0)
    return synthetic_course(distance, elevation)


def _along_inputs(points: int, reserve: str):
    rng = np.random.default_rng(7)
    distance = np.linspace(0.0, 30_000.0, points)
    speed = rng.uniform(4.0, 18.0, points)
    power = rng.uniform(0.0, 450.0, points - 1)
    headwind = rng.normal(0.0, 2.0, points - 1)
    balance = np.linspace(20_000.0, -3_000.0, points)
    if reserve == "D′":
        return distance, speed[:-1], None, headwind, balance[:-1] / 100.0
    return distance, speed, power, headwind, balance


@pytest.mark.parametrize("points, reserve, given_panels", [
    (6001, "W′", 4), (1500, "W′", 4), (6001, "D′", 3), (900, "W′", 1), (900, "W′", 2)])
def test_the_along_course_data_is_what_plotly_makes_of_it(points, reserve, given_panels):
    distance, speed, power, headwind, balance = _along_inputs(points, reserve)
    if given_panels < 4 and reserve == "W′":
        power, headwind, balance = (power if given_panels >= 2 else None), None, None
    spec = figures.along_course_spec(distance, speed, power, headwind, balance, "imperial",
                                     reserve=reserve)
    # plotly's validation (the reference) finds nothing to add, change or refuse
    assert same(go.Figure(spec).to_dict(), drawable(spec).to_dict())
    assert all(len(trace["x"]) <= MAX_LINE_POINTS for trace in spec["data"])


@pytest.mark.parametrize("panels", [1, 2, 3, 4])
def test_the_along_course_panels_are_laid_out_as_plotly_stacks_subplots(panels):
    distance, speed, power, headwind, balance = _along_inputs(300, "W′")
    given = [power, headwind, balance][:panels - 1] + [None] * (4 - panels)
    spec = figures.along_course_spec(distance, speed, *given)
    reference = make_subplots(rows=panels, cols=1, shared_xaxes=True, vertical_spacing=0.04)
    layout = reference.to_dict()["layout"]
    for name, axis in layout.items():
        if name.startswith(("xaxis", "yaxis")):
            for key, value in axis.items():
                assert spec["layout"][name][key] == value, (name, key)


@pytest.mark.parametrize("system", ["metric", "imperial"])
def test_the_profile_and_the_map_are_what_plotly_makes_of_them(system):
    course = _course()
    bounds = np.array([0, 1200, 3000, 6000])
    for spec in (figures.profile_spec(course, system, bounds),
                 figures.profile_spec(course, system),
                 figures.route_map_spec(course, system, 5.0, 200.0),
                 figures.route_map_spec(course, system)):
        assert same(go.Figure(spec).to_dict(), drawable(spec).to_dict())
        lines = [t for t in spec["data"] if t["type"] == "scatter" and len(t["x"]) > 2]
        assert all(len(trace["x"]) <= MAX_LINE_POINTS for trace in lines)


def test_the_profile_keeps_the_highest_point():
    course = _course(20_001)
    spec = figures.profile_spec(course, "metric")
    cleaned = next(t for t in spec["data"] if t.get("name") == "heights cleaned")
    assert max(cleaned["y"]) == pytest.approx(float(np.max(course.elevation)), abs=1e-9)


def test_a_figure_round_trips_through_its_plain_data():
    figure = figures.along_course_figure(*_along_inputs(500, "W′"))
    again = drawable(figures.figure_spec(figure))
    assert same(again.to_dict(), figure.to_dict())


def test_the_profile_has_a_legend_for_its_lines_and_colour_strings_for_its_bars():
    # issue 18: no legend on the profile; its bars' numeric colours made the browser log
    # "Invalid color specifier" once per bar
    course = _course(2_001)
    spec = figures.profile_spec(course, "metric", bounds=[0, 700, 2000])
    assert spec["layout"]["showlegend"] is True
    shown = {t["name"] for t in spec["data"] if t.get("showlegend")}
    assert shown == {"heights as recorded", "heights cleaned", "segment boundaries"}
    bars = spec["data"][0]
    assert all(isinstance(c, str) and c.startswith("rgb(") for c in bars["marker"]["color"])


def test_the_power_panel_starts_at_zero_and_marks_where_the_rider_eases_off():
    from pacing.plan.energy import EasingEvent

    distance, speed, power, headwind, balance = _along_inputs(500, "W′")
    event = EasingEvent(start=1000.0, end=1030.0, kind="braking", lowest_speed=9.0,
                        braking_work=800.0, work_not_given=300.0, tightest_radius=30.0)
    spec = figures.along_course_spec(distance, speed, power, headwind, balance, "metric",
                                     events=[event])
    power_axis = next(v for k, v in spec["layout"].items()
                      if k.startswith("yaxis") and v["title"]["text"] == "power [W]")
    assert power_axis["range"][0] == 0.0
    marks = [t for t in spec["data"] if t.get("name") == "eases off"]
    assert len(marks) == 1 and marks[0]["x"] == [pytest.approx(1.015)]
    assert "brakes" in marks[0]["text"][0]
