"""The web app, headless, through Streamlit's AppTest (streamlit.testing.v1).

What a coach does: open the page (demo course, no setup), upload a GPX, change the power,
switch to imperial units, make mistakes. Nothing may raise; every refusal is a message.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest
from samples import hill_road_gpx
from streamlit.testing.v1 import AppTest

ROOT = Path(__file__).resolve().parents[1]
APP = str(ROOT / "app.py")
if str(ROOT) not in sys.path:  # the app's ui/ package sits beside app.py, not in pacing/
    sys.path.insert(0, str(ROOT))
# no background warm-up of the numeric kernels beside the test session (app.py
# WARM_UP_VARIABLE); the test of its caption switches it on
os.environ.setdefault("PACING_APP_WARM_UP", "0")



def plan_downloads(app):
    """The plan's download buttons (the library's own backup button is not one of them)."""
    return [b for b in app.get("download_button") if "library" not in b.proto.label]

def open_library(app: AppTest) -> None:
    """Switch the coach's library panel on (it is folded away until asked for)."""
    app.toggle(key="show_library").set_value(True).run()


def started() -> AppTest:
    app = AppTest.from_file(APP, default_timeout=120)
    app.run()
    return app


def metric(app: AppTest, label: str) -> str:
    for element in app.metric:
        if element.label == label:
            return element.value
    raise AssertionError(f"no metric {label!r}; have {[m.label for m in app.metric]}")


def targets(app: AppTest):
    """The segment target table shown in the page (a pandas DataFrame)."""
    for frame in app.dataframe:
        if "Split [h:mm:ss]" in frame.value.columns:
            return frame.value
    raise AssertionError("no segment target table in the page")


def no_failure(app: AppTest) -> None:
    assert not app.exception, [e.value for e in app.exception]
    for element in app.markdown:
        assert "nan" not in element.value.lower().split(), element.value
    for element in app.metric:
        assert "nan" not in element.value.lower(), element.value
    for frame in app.dataframe:
        assert not frame.value.isna().any().any(), frame.value


@pytest.fixture(scope="module")
def app() -> AppTest:
    return started()


def test_starts_on_the_demo_course_with_a_plan(app):
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    assert metric(app, "Distance").endswith(" km")
    finish = metric(app, "Finish time")
    assert finish.count(":") == 2
    table = targets(app)
    assert len(table) >= 2
    assert "Target power [W]" in table.columns
    assert any("estimates, not safe limits" in w.value for w in app.warning)
    assert len(plan_downloads(app)) == 5


def test_changing_power_changes_the_finish_time():
    app = started()
    before = metric(app, "Finish time")
    app.number_input(key="mean_power:metric").set_value(320.0).run()
    no_failure(app)
    after = metric(app, "Finish time")
    assert after != before
    assert after < before  # more power, sooner home (same H:MM:SS width)


def test_uploading_a_gpx_updates_the_table():
    app = started()
    before = targets(app)
    app.file_uploader(key="upload_gpx").set_value(
        ("hill road.gpx", hill_road_gpx(6.0), "application/gpx+xml")).run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    after = targets(app)
    assert after["To [km]"].iloc[-1] == pytest.approx(6.0, abs=0.1)
    assert after["To [km]"].iloc[-1] != before["To [km]"].iloc[-1]
    assert metric(app, "Distance").startswith("6.0")


@pytest.mark.parametrize("content", [b"", b"this is not a GPX file", b"<gpx><trk></trk></gpx>",
                                     b'<?xml version="1.0"?><!DOCTYPE x [<!ENTITY a "b">]><gpx/>'])
def test_a_broken_gpx_shows_a_message_not_an_exception(content):
    app = started()
    app.file_uploader(key="upload_gpx").set_value(("broken.gpx", content, "application/gpx+xml"))
    app.run()
    no_failure(app)
    assert app.error, "expected an error message in the page"
    assert all("Traceback" not in e.value for e in app.error)
    assert not plan_downloads(app)


def test_imperial_switch_changes_units():
    app = started()
    app.radio(key="units").set_value("imperial").run()
    no_failure(app)
    assert metric(app, "Distance").endswith(" mi")
    assert metric(app, "Average speed").endswith(" mph")
    columns = targets(app).columns
    assert "To [mi]" in columns and "Speed [mph]" in columns
    labels = [n.label for n in app.number_input]
    assert "Athlete mass [lb]" in labels and "Air temperature [°F]" in labels


def test_imperial_switch_keeps_the_physical_values():
    app = started()
    finish = metric(app, "Finish time")
    app.radio(key="units").set_value("imperial").run()
    assert metric(app, "Finish time") == finish
    # 72 kg shows as 158.7 lb (1 lb = 0.45359237 kg exactly, NIST SP 811)
    assert app.number_input(key="body_mass:imperial").value == pytest.approx(158.7, abs=0.05)


def test_bad_split_marks_show_a_message():
    app = started()
    app.radio(key="split_mode").set_value("my own marks").run()
    app.text_input(key="split_marks").set_value("5, ten, 20").run()
    no_failure(app)
    assert any("split marks" in e.value for e in app.error)
    app.text_input(key="split_marks").set_value("5, 500").run()
    no_failure(app)
    assert any("outside the course" in e.value for e in app.error)


def test_unreachable_target_time_is_a_message():
    app = started()
    app.radio(key="approach").set_value("Reach a finish time").run()
    app.text_input(key="target_time").set_value("0:30:00").run()
    no_failure(app)
    # said as the coach typed it, not in seconds ("target time 1800 s")
    assert any("finish time 0:30:00 is not reachable" in e.value for e in app.error), \
        [e.value for e in app.error]
    app.text_input(key="target_time").set_value("half past").run()
    no_failure(app)
    assert any("H:MM:SS" in e.value for e in app.error)


def test_running_shows_pace_targets():
    app = started()
    app.radio(key="sport").set_value("running").run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    columns = targets(app).columns
    assert "Target pace [min/km]" in columns
    app.text_input(key="flat_pace:metric").set_value("4:00").run()
    no_failure(app)
    fast = metric(app, "Finish time")
    app.text_input(key="flat_pace:metric").set_value("5:00").run()
    assert metric(app, "Finish time") > fast


def test_a_plan_beyond_the_athlete_warns_that_w_prime_runs_out():
    app = started()
    app.number_input(key="mean_power:metric").set_value(420.0).run()
    no_failure(app)
    assert any("W′ runs out at" in w.value for w in app.warning)


def test_quickest_plan_reports_time_gained():
    app = started()
    app.radio(key="split_mode").set_value("fixed length").run()
    app.radio(key="approach").set_value("Quickest within my limits").run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    gained = metric(app, "Gained on even power")
    assert gained.endswith(" s") and float(gained.split()[0]) >= 0


def test_running_in_imperial_shows_minutes_per_mile():
    app = started()
    app.radio(key="units").set_value("imperial").run()
    app.radio(key="sport").set_value("running").run()
    no_failure(app)
    assert "Target pace [min/mi]" in targets(app).columns
    # 4:10 per km (the default, the pace of the default critical speed 4.0 m/s) shows as
    # 6:42 per mile (1 mi = 1.609344 km: 250 s × 1.609344 = 402.3 s)
    assert app.text_input(key="flat_pace:imperial").value == "6:42"


# ------------------------------------------------------------------ the pieces the page uses

class TestPipeline:
    """The functions the widgets call, tested directly."""

    def test_upload_path_reads_gpx_bytes(self):
        from ui.pipeline import load_course_from_bytes

        course = load_course_from_bytes(hill_road_gpx(6.0), "hill road", 100.0, 0.25)
        assert course.total_distance == pytest.approx(6000.0, rel=0.01)
        assert course.ascent == pytest.approx(60.0, abs=5.0)

    def test_empty_upload_is_an_input_error(self):
        from pacing.errors import InputError
        from ui.pipeline import load_course_from_bytes

        with pytest.raises(InputError):
            load_course_from_bytes(b"", "x", 100.0, 0.25)

    @pytest.mark.parametrize("text,values", [("5, 12.5; 30", (5.0, 12.5, 30.0)), ("", ()),
                                             ("7", (7.0,))])
    def test_split_marks(self, text, values):
        from ui.pipeline import parse_marks

        assert parse_marks(text) == values

    def test_bad_split_marks(self):
        from pacing.errors import InputError
        from ui.pipeline import parse_marks

        with pytest.raises(InputError):
            parse_marks("5, x")

    def test_demo_routes_start_with_the_default(self):
        from pacing.io.gpx import DEFAULT_DEMO_ROUTE
        from ui.pipeline import demo_routes

        routes = demo_routes()
        assert routes, "no demo courses found"
        assert Path(next(iter(routes.values()))).name == Path(DEFAULT_DEMO_ROUTE).name


class TestFigures:
    def course(self):
        import numpy as np

        from pacing.course.geometry import synthetic_course

        distance = np.linspace(0.0, 10000.0, 1001)
        return synthetic_course(distance, 200 + 40 * np.sin(distance / 1500.0),
                                heading=np.linspace(0.0, 180.0, 1000))

    def test_profile_is_shaded_by_grade_on_a_diverging_map_centred_on_zero(self):
        from ui.figures import profile_figure

        figure = profile_figure(self.course(), "metric", bounds=[0, 400, 1000])
        bars, scale = figure.data[0], figure.data[1]
        assert scale.marker.cmin == -scale.marker.cmax
        # plotly expands the name "balance" (cmocean, Thyng et al. 2016) into its colours
        import numpy as np
        import plotly.colors

        assert list(scale.marker.colorscale[0]) == [0.0, plotly.colors.cmocean.balance[0]]
        # the bars carry colour strings (numbers made the browser log "Invalid color
        # specifier" once per bar): the flat middle of the scale on 0 %, its ends beyond
        colors = list(bars.marker.color)
        assert all(str(c).startswith("rgb(") for c in colors)
        grade = np.asarray(bars.customdata)
        steepest = int(np.argmax(grade))
        assert colors[steepest] == plotly.colors.sample_colorscale(
            [list(p) for p in scale.marker.colorscale],
            [0.5 + 0.5 * grade[steepest] / scale.marker.cmax])[0]
        assert figure.layout.yaxis.title.text == "elevation [m]"

    def test_profile_in_imperial_is_in_feet_and_miles(self):
        from ui.figures import profile_figure

        figure = profile_figure(self.course(), "imperial")
        assert figure.layout.yaxis.title.text == "elevation [ft]"
        assert figure.layout.xaxis.title.text == "distance [mi]"
        assert max(figure.data[2].x) == pytest.approx(10000 / 1609.344, rel=1e-6)

    def test_map_has_no_tiles_and_a_wind_arrow(self):
        from ui.figures import route_map_figure

        figure = route_map_figure(self.course(), "metric", wind_speed=5.0, wind_from=270.0)
        assert all(trace.type == "scatter" for trace in figure.data)
        arrow = figure.layout.annotations[0]
        # wind FROM the west blows TO the east: the tail sits left of the head (ax < 0)
        assert arrow.showarrow and arrow.ax < 0 and abs(arrow.ay) < 1e-9
        assert "18 km/h from 270°" in figure.layout.annotations[1].text  # 5 m/s = 18 km/h

    def test_along_course_panels(self):
        import numpy as np

        from ui.figures import along_course_figure

        course = self.course()
        n = course.distance.size
        figure = along_course_figure(course.distance, np.full(n, 10.0), np.full(n - 1, 250.0),
                                     np.zeros(n - 1), np.linspace(2e4, 1e4, n), "metric")
        assert len(figure.data) == 4
        assert figure.data[0].y[0] == pytest.approx(36.0)  # 10 m/s = 36 km/h
        running = along_course_figure(course.distance, np.full(n - 1, 4.0), system="imperial")
        assert len(running.data) == 1


def test_a_gpx_without_heights_is_refused_or_flat_on_request():
    app = started()
    flat = hill_road_gpx(5.0).replace(b"<ele>", b"<!--").replace(b"</ele>", b"-->")
    app.file_uploader(key="upload_gpx").set_value(("flat.gpx", flat, "application/gpx+xml"))
    app.run()
    no_failure(app)
    assert any("no heights" in e.value and "A file without heights" in e.value
               for e in app.error), [e.value for e in app.error]
    assert not any("--flat" in e.value or "command line" in e.value for e in app.error)
    app.checkbox(key="allow_flat").check().run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    assert metric(app, "Climbing, cleaned") == "0 m"


def test_running_quickest_plan_within_critical_speed():
    app = started()
    app.radio(key="sport").set_value("running").run()
    app.radio(key="running_approach").set_value("Quickest within my limits").run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    assert "Target pace [min/km]" in targets(app).columns


def test_runner_reserve_panel_is_in_metres():
    import numpy as np

    from ui.figures import along_course_figure

    distance = np.linspace(0.0, 1000.0, 11)
    figure = along_course_figure(distance, np.full(10, 4.0), w_prime_balance=np.full(10, 90.0),
                                 reserve="D′")
    assert figure.layout.yaxis2.title.text == "D′ left [m]"


def test_the_app_cleans_elevation_like_the_command_line(app):
    # Review finding 13: the app's smoothing window (100 m) differed from the library default
    # that `pacing course` uses (ElevationSmoothing(), 200 m), so the two showed different
    # cleaned ascents for the same file.
    from pacing.course.elevation import ElevationSmoothing
    from pacing.io.gpx import DEFAULT_DEMO_ROUTE, load_course

    defaults = ElevationSmoothing()
    assert app.number_input(key="smooth_window:metric").value == defaults.window
    assert app.number_input(key="max_grade_pct:metric").value == defaults.max_grade * 100.0
    assert metric(app, "Climbing, cleaned") == f"{load_course(DEFAULT_DEMO_ROUTE).ascent:.0f} m"


# ------------------------------------------------------------------ reopening a saved plan

def test_a_saved_plan_reopens_in_the_page_with_its_course_split_and_approach(tmp_path,
                                                                              monkeypatch):
    # Review 2, finding 1: "Show in the page" filled only the numbers and left the page on
    # the demo course with even power. The whole plan must come back: its stored course (an
    # uploaded file, not a demo), smoothing, segments, sport, numbers and pacing approach.
    monkeypatch.setenv("PACING_DATABASE_URL", str(tmp_path / "library.sqlite3"))
    app = started()
    app.file_uploader(key="upload_gpx").set_value(
        ("hill road.gpx", hill_road_gpx(8.0, 80.0), "application/gpx+xml")).run()
    app.number_input(key="smooth_window:metric").set_value(150.0).run()
    app.radio(key="split_mode").set_value("fixed length").run()
    app.number_input(key="split_length:metric").set_value(2.0).run()
    app.radio(key="approach").set_value("Quickest within my limits").run()
    app.number_input(key="wind_speed:metric").set_value(18.0).run()
    app.number_input(key="wind_from:metric").set_value(90.0).run()
    app.number_input(key="body_mass:metric").set_value(65.0).run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    saved = {label: metric(app, label)
             for label in ("Finish time", "Distance", "Gained on even power")}
    saved_table = targets(app)
    open_library(app)
    app.text_input(key="library_plan_name").input("hill fastest windy")
    app.button(key="library_save").click().run()
    assert any("Saved 'hill fastest windy'" in s.value for s in app.success)

    page = started()  # a new visit: demo course, even power, no wind
    assert metric(page, "Finish time") != saved["Finish time"]
    open_library(page)
    page.button(key="library_open").click().run()
    no_failure(page)
    assert not page.error, [e.value for e in page.error]
    assert {label: metric(page, label) for label in saved} == saved
    assert page.radio(key="approach").value == "Quickest within my limits"
    assert page.radio(key="split_mode").value == "fixed length"
    assert len(targets(page)) == len(saved_table) >= 4  # 8 km, every 2 km
    assert targets(page)["Split [h:mm:ss]"].tolist() == saved_table["Split [h:mm:ss]"].tolist()

    # choosing a demo course leaves the saved plan's course
    demos = page.selectbox(key="demo_route").options
    if len(demos) > 1:
        page.selectbox(key="demo_route").set_value(demos[1]).run()
        no_failure(page)
        assert metric(page, "Distance") != saved["Distance"]


def test_a_saved_running_plan_reopens_in_imperial(tmp_path, monkeypatch):
    monkeypatch.setenv("PACING_DATABASE_URL", str(tmp_path / "library.sqlite3"))
    app = started()
    app.radio(key="units").set_value("imperial").run()
    app.radio(key="sport").set_value("running").run()
    app.radio(key="running_approach").set_value("Even pace (for comparison)").run()
    app.radio(key="split_mode").set_value("my own marks").run()
    app.text_input(key="split_marks").set_value("3, 7.5, 12").run()  # miles
    app.text_input(key="flat_pace:imperial").set_value("8:30").run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    finish, table = metric(app, "Finish time"), targets(app)
    open_library(app)
    app.text_input(key="library_plan_name").input("long run")
    app.button(key="library_save").click().run()

    page = started()
    page.radio(key="units").set_value("imperial").run()
    open_library(page)
    page.button(key="library_open").click().run()
    no_failure(page)
    assert not page.error, [e.value for e in page.error]
    assert metric(page, "Finish time") == finish
    assert page.radio(key="sport").value == "running"
    assert page.radio(key="running_approach").value == "Even pace (for comparison)"
    assert targets(page)["To [mi]"].tolist() == table["To [mi]"].tolist()


# ------------------------------------------------------------------ words that fit the page

def test_running_notes_and_pace_errors_follow_imperial_units():
    # Review 2, finding 3: a running note said "(5:07 /km)" and the pace-range error said
    # "per km" with imperial units chosen.
    app = started()
    app.radio(key="units").set_value("imperial").run()
    app.radio(key="sport").set_value("running").run()
    no_failure(app)
    notes = [c.value for c in app.caption if c.value.startswith("Note:")]
    assert any("even pace at the same mean effort" in n and " /mi)" in n for n in notes), notes
    assert not any("/km" in n for n in notes), notes
    app.text_input(key="flat_pace:imperial").set_value("0:30").run()
    no_failure(app)
    errors = [e.value for e in app.error]
    # 2:00 and 15:00 per km are 3:13 and 24:08 per mile (1 mi = 1.609344 km, NIST SP 811)
    assert any("between 3:13 and 24:08 per mile" in e for e in errors), errors
    assert not any("per km" in e for e in errors), errors


def test_runners_are_told_to_run_and_riders_to_ride():
    # Review 2, finding 4: the caution for runners said "Ride within your skills".
    app = started()
    cautions = [w.value for w in app.warning] + [c.value for c in app.sidebar.caption]
    assert any("Ride within" in c for c in cautions)
    app.radio(key="sport").set_value("running").run()
    no_failure(app)
    cautions = [w.value for w in app.warning] + [c.value for c in app.sidebar.caption]
    assert any("Run within" in c for c in cautions)
    assert not any("Ride within" in c for c in cautions), cautions


@pytest.mark.parametrize("typed", [1.0, 2000.0])
def test_a_number_outside_its_range_is_said_not_dropped(typed):
    # Review 2, finding 10: an out-of-range power left the page unchanged without a word.
    app = started()
    finish = metric(app, "Finish time")
    app.number_input(key="mean_power:metric").set_value(typed).run()
    no_failure(app)
    errors = [e.value for e in app.error]
    assert any(e.startswith("Average power [W]:") and "is outside 30 to 800" in e
               and "the page keeps 240" in e for e in errors), errors
    assert metric(app, "Finish time") == finish


def test_a_recording_with_a_jump_names_the_gap_and_can_drop_it():
    # issue 13: two tracks 12.7 km apart (tests/recording_samples.py, built with geographiclib)
    from recording_samples import two_tracks_with_a_jump

    app = started()
    app.file_uploader(key="upload_gpx").set_value(
        ("two.gpx", two_tracks_with_a_jump().encode(), "application/gpx+xml")).run()
    no_failure(app)
    assert any("gap" in w.value for w in app.warning), [w.value for w in app.warning]
    joined = metric(app, "Distance")
    app.radio(key="course_gaps").set_value("drop").run()
    no_failure(app)
    assert metric(app, "Distance") != joined
    app.multiselect(key="course_tracks").set_value([2]).run()
    no_failure(app)


def test_a_refused_file_is_read_once():
    # the refusal is cached with the file's bytes: a rerun does not parse it again
    from ui import pipeline

    app = started()
    app.file_uploader(key="upload_gpx").set_value(
        ("broken.gpx", b"<gpx><trk><trkseg>", "application/gpx+xml")).run()
    calls = []
    real = pipeline.load_course_from_bytes
    pipeline.load_course_from_bytes = lambda *a, **k: calls.append(1) or real(*a, **k)
    try:
        app.run()
    finally:
        pipeline.load_course_from_bytes = real
    assert calls == [] and app.error


# ------------------------------------------------------------------ what a rerun works out

def counting_plans(monkeypatch) -> list:
    """Count the page's calls into the planning chain (ui.pipeline.race_outcome)."""
    from ui import pipeline

    calls: list = []
    real = pipeline.race_outcome
    monkeypatch.setattr(pipeline, "race_outcome",
                        lambda *a, **k: calls.append(1) or real(*a, **k))
    return calls


def test_switching_units_does_not_work_the_race_out_again(monkeypatch):
    # the plan is cached on its SI inputs; the unit system changes only the words and figures
    app = started()
    before = targets(app)["Target power [W]"].tolist()
    calls = counting_plans(monkeypatch)
    app.radio(key="units").set_value("imperial").run()
    app.radio(key="units").set_value("metric").run()
    app.run()
    no_failure(app)
    assert calls == []
    assert targets(app)["Target power [W]"].tolist() == before


def test_the_default_power_typed_in_is_the_same_plan(monkeypatch):
    # a widget gives 240 before it is touched and 240.0 after: one plan, worked out once
    app = started()
    default = app.number_input(key="mean_power:metric").value
    app.number_input(key="mean_power:metric").set_value(default + 5.0).run()
    calls = counting_plans(monkeypatch)
    app.number_input(key="mean_power:metric").set_value(default).run()
    no_failure(app)
    assert calls == []


def test_the_library_is_folded_away_until_asked_for():
    app = started()
    assert app.toggle(key="show_library").value is False
    assert not any(t.label == "Save this plan" for t in app.tabs)
    open_library(app)
    no_failure(app)
    assert any(t.label == "Save this plan" for t in app.tabs)
    # the section's header is not said twice (no "Library" subheader under it)
    assert "Library" not in [s.value for s in app.subheader]


def test_the_numeric_kernels_cost_is_said_once_they_are_ready(monkeypatch):
    import threading

    from pacing import kernels

    if not hasattr(kernels, "warm_up"):
        pytest.skip("the library has no compiled kernels to warm up")
    monkeypatch.setenv("PACING_APP_WARM_UP", "1")
    app = started()
    for thread in threading.enumerate():  # the warm-up the page started in the background
        if thread.name.startswith("pacing-kernels"):
            thread.join()
    app.run()
    no_failure(app)
    said = [c.value for c in app.caption if "Numeric kernels" in c.value]
    assert len(said) == 1
    assert said[0].startswith(("Numeric kernels ready in", "Numeric kernels not available"))


# ------------------------------------------------- issue 18: what a coach trusts at first

def test_a_reopened_plan_shows_its_values_in_the_boxes_and_keeps_them(tmp_path, monkeypatch):
    # "Show in the page" put the saved race in the headline while the boxes kept the old
    # values; the next unrelated edit brought the old race back (the browser, like AppTest,
    # sends back the values its widgets hold).
    monkeypatch.setenv("PACING_DATABASE_URL", str(tmp_path / "library.sqlite3"))
    app = started()
    app.number_input(key="body_mass:metric").set_value(65.0).run()
    app.number_input(key="temperature:metric").set_value(12.0).run()
    saved = metric(app, "Finish time")
    open_library(app)
    app.text_input(key="library_plan_name").input("light and cool")
    app.button(key="library_save").click().run()

    page = started()
    page.number_input(key="body_mass:metric").set_value(90.0).run()
    page.number_input(key="temperature:metric").set_value(30.0).run()
    open_library(page)
    page.button(key="library_open").click().run()
    no_failure(page)
    assert metric(page, "Finish time") == saved
    assert page.number_input(key="body_mass:metric").value == 65.0
    assert page.number_input(key="temperature:metric").value == 12.0
    page.radio(key="units").set_value("metric").run()  # any rerun: the boxes are sent back
    page.run()
    assert metric(page, "Finish time") == saved
    assert page.number_input(key="body_mass:metric").value == 65.0
    assert not page.warning or all("Session State" not in w.value for w in page.warning)


def test_a_plan_is_filed_under_the_athlete_the_page_shows(tmp_path, monkeypatch):
    # After storing a second athlete the selector still showed the first and the plan was
    # filed under them; the save tab never said which athlete.
    from pacing.store.library import open_library as open_store

    location = tmp_path / "library.sqlite3"
    monkeypatch.setenv("PACING_DATABASE_URL", str(location))
    app = started()
    open_library(app)
    for name in ("Ann", "Bea"):
        app.text_input(key="library_new_athlete").input(name)
        app.button(key="library_add_athlete").click().run()
        no_failure(app)
    assert app.selectbox(key="library_athlete").value.startswith("Bea ")
    box = app.checkbox(key="library_plan_link")
    assert "Bea" in box.label and "Ann" not in box.label
    app.text_input(key="library_plan_name").input("Bea's race")
    app.button(key="library_save").click().run()
    no_failure(app)
    with open_store(location) as library:
        bea = next(a for a in library.athletes() if a.athlete.name == "Bea")
        plan = library.plan(library.plans()[0].id)
    assert plan.inputs["athlete_id"] == bea.id
    assert not any("Stored in" in c.value for c in app.caption)  # no database address


def test_a_second_athlete_of_the_same_name_is_asked_about(tmp_path, monkeypatch):
    monkeypatch.setenv("PACING_DATABASE_URL", str(tmp_path / "library.sqlite3"))
    app = started()
    open_library(app)
    app.text_input(key="library_new_athlete").input("Ann Lee")
    app.button(key="library_add_athlete").click().run()
    app.text_input(key="library_new_athlete").input("ann lee")
    app.button(key="library_add_athlete").click().run()
    no_failure(app)
    assert any("'Ann Lee' is already in the library" in w.value for w in app.warning)


def test_running_defaults_agree_and_the_headline_gives_the_pace():
    # A flat pace of 5:00/km beside a critical speed of 3:42/km made the quickest plan
    # 28 minutes faster than the default one.
    from pacing.display.units import parse_clock

    app = started()
    app.radio(key="sport").set_value("running").run()
    no_failure(app)
    equal = parse_clock(metric(app, "Finish time"), "finish")
    pace = metric(app, "Average pace")
    assert pace.endswith(" min/km") and pace.count(":") == 1
    app.radio(key="running_approach").set_value("Quickest within my limits").run()
    quickest = parse_clock(metric(app, "Finish time"), "finish")
    assert abs(equal - quickest) < 300.0


def test_a_descent_speed_limit_caps_the_top_speed():
    app = started()
    top = float(metric(app, "Top speed").split()[0])
    app.checkbox(key="descent_cap_on").check().run()
    app.number_input(key="max_descent_speed:metric").set_value(50.0).run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    capped = float(metric(app, "Top speed").split()[0])
    assert capped <= 50.0 + 1e-9 < top


def test_start_speed_drafting_and_w_prime_model_reach_the_plan():
    app = started()
    finish = metric(app, "Finish time")
    app.number_input(key="drafting_pct:metric").set_value(30.0).run()
    no_failure(app)
    assert metric(app, "Finish time") < finish  # less drag, quicker (same H:MM:SS width)
    app.number_input(key="start_speed:metric").set_value(30.0).run()
    app.radio(key="w_prime_model").set_value("integral").run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    assert app.radio(key="w_prime_model").value == "integral"


def test_the_headline_explains_the_average_power_and_lists_the_easing():
    app = started()
    line = next(c.value for c in app.caption if "W planned" in c.value)
    assert line.startswith("240 W planned; ")
    assert "W ridden on average" in line
    assert any("Where the rider eases off" in e.label for e in app.expander)
    assert any("brakes" in str(v) for v in targets(app)["Eases off"])
    assert any(f.value.columns[0].startswith("At [") for f in app.dataframe)


def test_a_target_time_plan_does_not_claim_time_gained():
    app = started()
    app.radio(key="approach").set_value("Reach a finish time").run()
    no_failure(app)
    assert all(m.label != "Gained on even power" for m in app.metric)


def open_fold(app: AppTest, key: str) -> None:
    """Open a fold that works out its content only while open (st.expander with
    on_change="rerun"), as a click on it does."""
    app.session_state[key] = True
    app.run()
    no_failure(app)


def test_the_first_page_leaves_the_folded_tables_and_charts_for_later():
    # issue 15: "Where the watts go" and the segments' table cost the first page a chart, two
    # tables and pandas; they are worked out when opened
    app = started()
    labels = [e.label for e in app.expander]
    assert "Where the watts go" in labels
    assert any(label.endswith(" segments") for label in labels)
    assert not any("Air drag [%]" in f.value.columns for f in app.dataframe)
    assert not any("Terrain" in f.value.columns for f in app.dataframe)
    assert [c.proto.id for c in app.get("plotly_chart")]  # profile, map, along the course
    open_fold(app, "segments_open")
    overview = next(f.value for f in app.dataframe if "Terrain" in f.value.columns)
    assert len(overview) == len(targets(app))


def test_a_later_run_draws_the_course_figures_in_place():
    app = started()
    first = len(app.get("plotly_chart"))
    app.number_input(key="mean_power:metric").set_value(250.0).run()
    no_failure(app)
    assert app.session_state["first_page_drawn"] is True
    assert len(app.get("plotly_chart")) == first


def test_where_the_watts_go_closes_and_explains_the_square_law():
    app = started()
    open_fold(app, "watts_open")
    table = next(f.value for f in app.dataframe if "Air drag [%]" in f.value.columns)
    race = table[table["Segment"] == "whole race"].iloc[0]
    shares = [race[c] for c in table.columns if c.endswith("[%]")]
    assert sum(shares) == pytest.approx(100.0, abs=0.5)  # rounded to 0.1 % each
    assert race["Air drag [%]"] > 50.0 and race["Athlete's work [kJ]"] > 0
    line = next(c.value for c in app.caption if "Reynolds number" in c.value)
    assert "1.44 times the drag force" in line and "1.73 times the power" in line


def test_a_hot_day_brings_the_heat_caution_and_the_cautions_stay():
    from ui import text

    app = started()
    assert not any(w.value == text.HEAT_CAUTION for w in app.warning)
    assert any(w.value == text.speed_caution("cycling") for w in app.warning)
    assert any(c.value == text.EXERTION_CAUTION for c in app.caption)
    app.number_input(key="temperature:metric").set_value(31.0).run()
    no_failure(app)
    # the page's own caution, or the race-day model's heat warning when it gives one
    assert any(w.value == text.HEAT_CAUTION or "heat" in w.value for w in app.warning)


def test_the_w_prime_model_is_said_on_the_page_and_in_the_csv():
    app = started()
    assert any(c.value.startswith("W′ balance model: differential") for c in app.caption)
    app.radio(key="w_prime_model").set_value("integral").run()
    no_failure(app)
    assert any(c.value.startswith("W′ balance model: integral") for c in app.caption)


def test_the_downloads_name_the_w_prime_model():
    from pacing.io.exports import segment_table, table_to_csv
    from ui import pipeline, sections

    course = pipeline.load_course_from_bytes(hill_road_gpx(4.0), "hill", 200.0, 0.25)
    bounds = pipeline.segment_bounds(course, "by terrain")
    athlete = {"sport": "cycling", "body_mass": 70.0, "bike_mass": 8.0,
               "critical_power": 260.0, "w_prime": 18000.0, "drag_area": 0.3,
               "rolling_coefficient": 0.004, "drivetrain_efficiency": 0.976}
    outcome = pipeline.race_outcome(course, bounds, athlete, {}, {
        "strategy": "constant", "mean_power": 230.0, "w_prime_model": "integral"})
    notes = sections.file_notes(outcome, "metric")
    assert any(note.startswith("note: W′ balance model: integral") for note in notes)
    csv = table_to_csv(segment_table(outcome.rows, "metric"), notes)
    text = csv.decode() if isinstance(csv, bytes) else csv
    assert "W′ balance model: integral" in text


def test_the_page_table_fits_and_the_file_table_stays_whole():
    # issue 18: the target table cut off its last columns; the files keep every column
    import pandas as pd

    from ui import sections

    table = pd.DataFrame({"Segment": [1, 2], "From [km]": [0.0, 1.5], "To [km]": [1.5, 3.0],
                          "Target power [W]": [240.0, 250.0], "Power low [W]": [233.0, 243.0],
                          "Power high [W]": [247.0, 258.0], "Split [h:mm:ss]": ["0:02:40"] * 2})
    shown = sections.page_targets(table, ["start", ""])
    assert list(shown.columns) == ["Segment", "To [km]", "Target power [W]", "Range [W]",
                                   "Split [h:mm:ss]", "Eases off"]
    assert shown["Range [W]"].tolist() == ["233–247", "243–258"]
    assert list(table.columns)[1] == "From [km]"  # the file's table is not changed


def test_the_page_table_shows_the_weather_met_only_where_it_changes():
    import pandas as pd

    from ui import sections

    table = pd.DataFrame({"Segment": [1, 2], "Split [h:mm:ss]": ["0:02:40"] * 2,
                          "Clock [hh:mm]": ["09:00", "09:02"],
                          "Clock [ISO 8601]": ["2026-07-14T09:00:00+02:00",
                                               "2026-07-14T09:02:40+02:00"],
                          "Air [°C]": [24.0, 25.5], "Wind [km/h]": [10.0, 10.0],
                          "Wind from [deg]": [270.0, 270.0]})
    shown = sections.page_targets(table)
    assert list(shown.columns) == ["Segment", "Split [h:mm:ss]", "Clock [hh:mm]", "Air [°C]"]
    assert shown["Clock [hh:mm]"].tolist() == ["09:00", "09:02"]


def test_a_runner_sees_where_the_energy_goes_too():
    app = started()
    app.radio(key="sport").set_value("running").run()
    no_failure(app)
    open_fold(app, "watts_open")
    table = next(f.value for f in app.dataframe if "Running on the flat [%]" in f.value.columns)
    race = table[table["Segment"] == "whole race"].iloc[0]
    assert 80.0 < race["Running on the flat [%]"] < 100.0
    assert any("runner's Reynolds number" in c.value for c in app.caption)


def test_the_race_review_and_team_parts_open_without_a_failure():
    app = started()
    app.toggle(key="show_review").set_value(True)
    app.toggle(key="show_team").set_value(True)
    app.run()
    no_failure(app)
    headers = [header.value for header in app.header]
    assert headers[-2:] == ["10 · Review a race", "11 · Team time trial or team pursuit"]


def test_a_weather_table_plans_the_race_day_and_finds_the_best_start():
    app = started()
    app.toggle(key="race_day_table").set_value(True)
    app.run()
    no_failure(app)
    app.button(key="best_start_go").click()
    app.run()
    no_failure(app)
    assert any(element.value.startswith("Best start **") for element in app.markdown)


# ------------------------------------------- issue 16: a reopened plan keeps its race day

def weather_csv(wind_speed: float, wind_from: float, temperature: float) -> bytes:
    """A weather table for 1 July 2026, 06:00 to 16:00 every two hours (the CSV's columns,
    pacing.io.weather_file)."""
    lines = ["time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg"]
    for hour in range(6, 17, 2):
        lines.append(f"2026-07-01T{hour:02d}:00,{temperature + (hour - 6) * 0.5:.1f},55,"
                     f"{wind_speed:.1f},{wind_from:.0f}")
    return ("\n".join(lines) + "\n").encode()


def race_day_panel(app: AppTest) -> dict:
    """What the race-day panel shows: start, table toggle, boxes, test conditions, spread."""
    return {"date": app.date_input(key="race_day_date").value,
            "time": app.time_input(key="race_day_time").value,
            "table": app.toggle(key="race_day_table").value,
            "heat": app.checkbox(key="race_day_heat").value,
            "altitude": app.checkbox(key="race_day_altitude").value,
            **{key: app.number_input(key=key).value for key in (
                "race_day_test_temperature", "race_day_test_humidity",
                "race_day_test_elevation", "race_day_sd_wind", "race_day_sd_direction",
                "race_day_sd_temperature")}}


def test_a_reopened_plan_brings_back_its_race_day(tmp_path, monkeypatch):
    # "Show in the page" restored the athlete, weather and approach but not the race-day
    # panel: the next run planned with the panel's current table, start and boxes instead
    # of the saved race day (the silent wrong-data class of issue 18 item 1).
    from datetime import date, time

    monkeypatch.setenv("PACING_DATABASE_URL", str(tmp_path / "library.sqlite3"))
    app = started()
    app.date_input(key="race_day_date").set_value(date(2026, 7, 1))
    app.time_input(key="race_day_time").set_value(time(10, 0))
    app.toggle(key="race_day_table").set_value(True).run()
    app.file_uploader(key="race_day_csv").set_value(
        ("windy.csv", weather_csv(7.0, 250.0, 24.0), "text/csv"))
    app.checkbox(key="race_day_heat").set_value(True)
    app.number_input(key="race_day_test_temperature").set_value(15.0)
    app.number_input(key="race_day_sd_direction").set_value(10.0)
    app.run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    saved, panel = metric(app, "Finish time"), race_day_panel(app)
    open_library(app)
    app.text_input(key="library_plan_name").input("windy July morning")
    app.button(key="library_save").click().run()
    assert any("Saved 'windy July morning'" in s.value for s in app.success)

    # the same page, the panel changed: another table (calm and hot), other boxes and start
    app.file_uploader(key="race_day_csv").set_value(
        ("calm.csv", weather_csv(0.0, 0.0, 33.0), "text/csv"))
    app.time_input(key="race_day_time").set_value(time(13, 0))
    app.checkbox(key="race_day_heat").set_value(False)
    app.checkbox(key="race_day_altitude").set_value(True)
    app.number_input(key="race_day_test_temperature").set_value(None)
    app.number_input(key="race_day_test_elevation").set_value(800.0)
    app.number_input(key="race_day_sd_direction").set_value(0.0)
    app.run()
    no_failure(app)
    assert metric(app, "Finish time") != saved

    app.button(key="library_open").click().run()
    no_failure(app)
    assert not app.error, [e.value for e in app.error]
    assert metric(app, "Finish time") == saved
    assert race_day_panel(app) == panel
    app.run()  # any rerun: the widgets send back what they hold, the saved race day
    assert metric(app, "Finish time") == saved
    assert race_day_panel(app) == panel


def test_the_script_holds_no_bare_string_streamlit_would_print_on_the_page():
    # Streamlit's "magic" writes any bare expression of the script to the page, a string
    # under a constant included; only the module's docstring is exempt
    import ast

    tree = ast.parse(Path(APP).read_text())
    bare = [node.lineno for node in tree.body[1:]
            if isinstance(node, ast.Expr) and isinstance(node.value, ast.Constant)]
    assert bare == []
