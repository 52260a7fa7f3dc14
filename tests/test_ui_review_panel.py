"""The race-review panel's pure helpers (ui.review_panel): tables, figures, the page's plan."""

from __future__ import annotations

import numpy as np
import pytest
from test_review_synthetic import STEP, Day, loop_heading, loop_profile, race_csv, ride

from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_by_grade
from ui.review_panel import fitted_line, gap_figure, power_figure, review_for_page, split_table

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
