"""The race-review panel's pure helpers (ui.review_panel): tables, figures, the page's plan."""

from __future__ import annotations

import numpy as np
import pytest
from test_review_synthetic import STEP, Day, loop_heading, loop_profile, race_csv, ride

from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_by_grade
from ui.review_panel import (
    day_drag_area,
    fitted_line,
    gap_figure,
    power_figure,
    review_for_page,
    review_json,
    segment_frame,
    split_table,
)

ATHLETE = {"sport": "cycling", "body_mass": 72.0, "bike_mass": 8.0, "drag_area": 0.30,
           "rolling_coefficient": 0.004, "drivetrain_efficiency": 0.976,
           "critical_power": 300.0, "w_prime": 20000.0}
APPROACH = {"strategy": "constant", "mean_power": 250.0, "start_speed": 10.0}


@pytest.fixture(scope="module")
def review():
    distance = np.arange(0.0, 10_001.0, STEP)
    course = synthetic_course(distance, loop_profile(distance),
                              loop_heading(distance[:-1] + STEP / 2))
    data = race_csv(ride(Day(power=lambda x: 200.0 if 500.0 <= x < 1500.0 else 250.0)))
    return review_for_page(data, "race.csv", (course, split_by_grade(course), ATHLETE, {},
                                              APPROACH), fit=False)


def test_the_page_plan_is_the_plan_reviewed(review):
    assert review.planned_time == pytest.approx(996.0, abs=1.0)
    assert review.attribution.power_s == pytest.approx(37.4, abs=1.5)


def test_the_split_table_ends_with_the_total_of_its_parts(review):
    table = split_table(review)
    assert table["Cause"].iloc[-1].startswith("total")
    assert table["Time [s]"].iloc[:-1].sum() == pytest.approx(table["Time [s]"].iloc[-1],
                                                              abs=0.35)


def test_the_page_segment_table_leaves_out_what_repeats_and_the_files_keep_it(review):
    from pacing.io.review_file import review_table

    page, full = segment_frame(review, "metric"), review_table(review, "metric")
    assert "From [km]" in full.columns and "From [km]" not in page.columns
    assert "Stopped [s]" not in page.columns  # this rider never stopped
    assert set(page.columns) < set(full.columns)
    assert len(page) == len(full)


def test_figures_along_the_course_in_the_page_units(review):
    gap = gap_figure(review, "imperial")
    assert gap.layout.xaxis.title.text == "distance [mi]"
    assert gap.data[0].y[-1] == pytest.approx(review.actual_time - review.planned_time)
    power = power_figure(review, "metric")
    assert [trace.name for trace in power.data] == ["planned", "ridden"]
    assert np.all(np.isfinite(power.data[1].y))


def test_no_fitted_line_without_a_fit(review):
    assert fitted_line(review) is None


def test_the_panel_asks_for_a_ride_first():
    from streamlit.testing.v1 import AppTest

    def page():
        import numpy as np

        from pacing.course.geometry import synthetic_course
        from ui.review_panel import render

        distance = np.arange(0.0, 1001.0, 10.0)
        course = synthetic_course(distance, np.zeros(distance.size))
        render(course, np.array([0, 100]), {"sport": "cycling"}, {},
               {"strategy": "constant", "mean_power": 250.0}, "metric")

    app = AppTest.from_function(page).run(timeout=30)
    assert not app.exception
    assert "Upload the race's ride" in app.info[0].value


def test_the_review_kept_with_a_plan_is_what_the_command_prints(review):
    import json

    from pacing.cli.review import review_as_dict

    assert json.dumps(review_json(review)) == json.dumps(review_as_dict(review))


def _fitted(cda, interval):
    import types

    fit = types.SimpleNamespace(as_json=lambda: {"cda_m2": cda, "cda_ci95": interval})
    return types.SimpleNamespace(fitted=fit)


def test_the_day_cda_is_kept_with_its_interval_and_the_race():
    import datetime

    cda, origin = day_drag_area(_fitted(0.23637, [0.22812, 0.24455]), "Hill TT.csv",
                                datetime.date(2026, 12, 5))
    assert cda == 0.2364
    assert (origin.low_m2, origin.high_m2) == (0.2281, 0.2446)  # widened outward
    assert origin.source == "race review of Hill TT.csv, 2026-12-05"


def test_a_rounded_cda_stays_inside_its_interval_and_no_interval_gives_no_origin():
    cda, origin = day_drag_area(_fitted(0.23636, [0.23636, 0.23637]), "a.csv")
    assert origin.low_m2 <= cda <= origin.high_m2
    assert day_drag_area(_fitted(0.2364, None), "a.csv") == (0.2364, None)


def _panel_page(path):
    """A page with only the library part of the review panel, on a fake fitted review."""
    import types

    import streamlit as st

    from ui import review_panel

    fit = types.SimpleNamespace(as_json=lambda: {"cda_m2": 0.23637,
                                                 "cda_ci95": [0.22812, 0.24455]})
    fake = types.SimpleNamespace(fitted=fit, planned_time=1000.0, as_json=lambda words: {
        "planned_time_s": 1000.0, "actual_time_s": 1010.0, "segments": [],
        "attribution": {}, "fitted": fit.as_json(), "warnings": words(())})
    st.session_state.setdefault("library:location", path)
    review_panel._keep_cda(fake, "Hill TT.csv")
    review_panel._keep_review(fake, "Hill TT.csv", "ab" * 32)


def test_the_day_cda_goes_on_the_setup_and_then_into_the_page_cda_box(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.athlete import Athlete, Setup
    from pacing.store.library import open_library

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
        tt = library.add_setup(ann.id, Setup(name="TT bike", drag_area=0.25))
        plan = library.save_plan("Hill TT", {"sport": "cycling"},
                                 {"strategy": {}, "weather": {}, "targets": [],
                                  "time_saved": None, "finish_time": 1000.0})
    app = AppTest.from_function(_panel_page, args=(path,))
    app.session_state["library:athlete_id"] = ann.id
    app.session_state["library:course"] = {"gpx": b"<gpx/>", "name": "c", "plan": "Hill TT",
                                           "plan_id": plan.id}
    app.run(timeout=30)
    assert not app.exception
    app.button(key="review_keep_cda").click().run(timeout=30)
    assert not app.exception and "0.2364" in app.success[0].value
    with open_library(path) as library:
        stored = library.setup(tt.id)
    assert stored.setup.drag_area == 0.2364
    assert (stored.drag_area_origin.low_m2, stored.drag_area_origin.high_m2) == (0.2281, 0.2446)
    assert stored.drag_area_origin.source.startswith("race review of Hill TT.csv, ")
    app.button(key="review_use_cda").click().run(timeout=30)
    assert not app.exception
    assert app.session_state["si:cda"] == 0.2364  # the page's CdA store (ui.widgets)
    assert app.session_state["cda_preset"] is not None  # switched to "my own value"
    app.button(key="review_keep_review").click().run(timeout=30)
    assert not app.exception
    with open_library(path) as library:
        (kept,) = library.plan_reviews(plan.id)
    assert kept.review["actual_time_s"] == 1010.0 and kept.ride_name == "Hill TT.csv"


def test_without_a_library_plan_in_the_page_the_review_cannot_be_kept(tmp_path):
    from streamlit.testing.v1 import AppTest

    app = AppTest.from_function(_panel_page, args=(str(tmp_path / "l.sqlite3"),))
    app.run(timeout=30)
    assert not app.exception
    captions = " ".join(c.value for c in app.caption)
    assert "choose an athlete" in captions and "Show a saved plan" in captions


# ------------------------------------------------------------------- the review kept with its plan

PAGE_PLAN_INPUTS = {"course_gpx": b"<gpx/>", "course_name": "Hill loop",
                    "course_distance": 10000.0, "course_ascent": 120.0,
                    "athlete": {"sport": "cycling", "body_mass": 61.0},
                    "weather": {}, "approach": {"strategy": "constant", "mean_power": 250.0},
                    "bounds": [0, 1000]}


def _page_plan(finish_time=1000.0):
    return {"inputs": PAGE_PLAN_INPUTS, "result": {
        "strategy": {}, "weather": {}, "targets": [{"segment": 1, "power": 250.0}],
        "time_saved": None, "finish_time": finish_time}}


def _library_with_ann(path):
    from pacing.athlete import Athlete
    from pacing.store.library import open_library

    with open_library(path) as library:
        return library.add_athlete(Athlete(name="Ann", body_mass=61.0)).id


def test_a_plan_made_on_the_page_is_saved_with_its_review_in_one_step(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library

    path = str(tmp_path / "library.sqlite3")
    ann = _library_with_ann(path)
    app = AppTest.from_function(_panel_page, args=(path,))
    app.session_state["library:athlete_id"] = ann
    app.session_state["library:filed_under"] = "Ann"
    app.session_state["library:page_plan"] = _page_plan()
    app.run(timeout=30)
    assert not app.exception
    name = app.text_input(key="review_plan_name:" + "ab" * 8)  # one per race file
    assert name.value == "Hill TT"  # the race file's name
    name.input("Hill TT, June")
    app.button(key="review_save_plan").click().run(timeout=30)
    assert not app.exception
    assert "Saved the plan 'Hill TT, June' with the review of Hill TT.csv" in app.success[-1].value
    with open_library(path) as library:
        (plan,) = library.plans()
        (kept,) = library.plan_reviews(plan.id)
        stored = library.plan(plan.id)
    assert plan.name == "Hill TT, June" and plan.athlete_id == ann
    assert stored.inputs["course_id"] == 1 and "course_gpx" not in stored.inputs
    assert kept.review["actual_time_s"] == 1010.0 and kept.ride_sha256 == "ab" * 32
    # the next run names where it is kept instead of offering it again
    assert not [b for b in app.button if b.key == "review_save_plan"]
    assert any("kept with the saved plan 'Hill TT, June' (race review 1)" in c.value
               for c in app.caption)


def test_a_taken_plan_name_is_asked_about_and_nothing_saved_is_replaced(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        first = library.save_plan("Hill TT", {"sport": "cycling"},
                                  {"targets": [], "finish_time": 990.0})
    app = AppTest.from_function(_panel_page, args=(path,))
    app.session_state["library:page_plan"] = _page_plan()
    app.run(timeout=30)
    app.button(key="review_save_plan").click().run(timeout=30)
    assert not app.exception
    assert any("already in the library" in w.value for w in app.warning)
    with open_library(path) as library:
        assert [p.name for p in library.plans()] == ["Hill TT"]
    app.button(key="review_save_plan_keep_both").click().run(timeout=30)
    assert not app.exception
    with open_library(path) as library:
        names = sorted(p.name for p in library.plans())
        assert library.plan(first.id).summary.finish_time == 990.0  # kept as it was
        assert library.plan_reviews(first.id) == ()
        copy = next(p for p in library.plans() if p.name == "Hill TT (2)")
        assert len(library.plan_reviews(copy.id)) == 1
    assert names == ["Hill TT", "Hill TT (2)"]


def test_a_saved_plan_the_page_no_longer_plans_is_not_given_the_review(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        old = library.save_plan("Hill TT", {"sport": "cycling"},
                                {"targets": [], "finish_time": 1060.0})
    app = AppTest.from_function(_panel_page, args=(path,))
    app.session_state["library:course"] = {"gpx": b"<gpx/>", "name": "c", "plan": "Hill TT",
                                           "plan_id": old.id}
    app.session_state["library:page_plan"] = _page_plan()
    app.run(timeout=30)
    assert not app.exception
    assert not [b for b in app.button if b.key == "review_keep_review"]
    assert any("no longer plans as the saved plan 'Hill TT' did" in c.value
               for c in app.caption)
    assert [b for b in app.button if b.key == "review_save_plan"]


def test_a_stale_page_plan_is_not_saved_with_the_review(tmp_path):
    from streamlit.testing.v1 import AppTest

    path = str(tmp_path / "library.sqlite3")
    app = AppTest.from_function(_panel_page, args=(path,))
    app.session_state["library:page_plan"] = _page_plan(finish_time=1200.0)
    app.run(timeout=30)
    assert not app.exception
    assert not [b for b in app.button if b.key == "review_save_plan"]


def test_a_review_already_kept_is_found_by_its_file_and_the_plans_finish():
    import types

    from ui.review_panel import kept_with

    reviews = [types.SimpleNamespace(id=4, plan_id=1, ride_sha256="ab" * 32),
               types.SimpleNamespace(id=5, plan_id=2, ride_sha256="ab" * 32)]
    assert kept_with(reviews, "ab" * 32, 1000.0, {1: 900.0, 2: 1000.4}).id == 5
    assert kept_with(reviews, "ab" * 32, 1000.0, {1: 900.0}) is None  # plan 2 deleted
    assert kept_with(reviews, "cd" * 32, 1000.0, {1: 1000.0, 2: 1000.0}) is None


def _picker_page(path):
    import streamlit as st

    from ui import review_panel

    st.session_state.setdefault("library:location", path)
    review_panel._pick_saved_plan()


def test_a_saved_plan_is_picked_for_the_review_and_shown_in_the_page(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        course = library.add_course("Hill loop", b"<gpx/>", 10000.0, 120.0)
        library.save_plan("no course", {"sport": "cycling"}, {"targets": [],
                                                              "finish_time": 900.0})
        plan = library.save_plan(
            "Hill TT", {"course_id": course.id, "course_name": "Hill loop",
                        "athlete": {"sport": "cycling", "body_mass": 61.0},
                        "weather": {}, "approach": {"strategy": "constant",
                                                    "mean_power": 250.0}},
            {"targets": [], "finish_time": 1000.0})
    app = AppTest.from_function(_picker_page, args=(path,)).run(timeout=30)
    assert not app.exception
    picker = app.selectbox(key="review_pick_plan")
    assert picker.options == ["Hill TT · 0:16:40"]  # only plans with their course
    picker.set_value("Hill TT · 0:16:40").run(timeout=30)
    app.button(key="review_show_plan").click().run(timeout=30)
    assert not app.exception
    assert app.session_state["library:course"]["plan_id"] == plan.id
    assert app.session_state["si:body_mass"] == 61.0
    assert any("The page shows the saved plan 'Hill TT'" in c.value for c in app.caption)


def test_a_page_plan_saved_before_the_race_is_given_the_review_not_saved_again(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library
    from ui.library_data import save_current_plan

    path = str(tmp_path / "library.sqlite3")
    page_plan = _page_plan()
    with open_library(path) as library:
        before = save_current_plan(library, "Hill TT plan", "", page_plan["inputs"],
                                   page_plan["result"])
    app = AppTest.from_function(_panel_page, args=(path,))
    app.session_state["library:page_plan"] = page_plan
    app.run(timeout=30)
    assert not app.exception
    assert any("saved in the library as 'Hill TT plan'" in c.value for c in app.caption)
    assert not [b for b in app.button if b.key == "review_save_plan"]
    app.button(key="review_keep_review").click().run(timeout=30)
    assert not app.exception
    with open_library(path) as library:
        assert [p.id for p in library.plans()] == [before.id]
        assert len(library.plan_reviews(before.id)) == 1
