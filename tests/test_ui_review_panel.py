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
    fake = types.SimpleNamespace(fitted=fit, as_json=lambda words: {
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
