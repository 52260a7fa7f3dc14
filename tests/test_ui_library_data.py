"""The library panel's pure helpers (ui.library_data) for the race review: the page's plan
recognised among the saved plans, and saved together with a review (one transaction)."""

from __future__ import annotations

import pytest

from pacing.store.library import open_library
from pacing.store.statements import NameTaken
from ui.library_data import same_page_plan, save_current_plan, save_current_plan_with_review

PAGE = {"course_gpx": b"<gpx/>", "course_name": "Hill loop", "course_distance": 10000.0,
        "course_ascent": 120.0, "smoothing": {"window": 200.0, "max_grade": 0.25,
                                              "allow_flat": False},
        "bounds": [0, 400, 1000], "athlete": {"sport": "cycling", "body_mass": 61.0},
        "weather": {"temperature": 18.5}, "approach": {"strategy": "constant",
                                                       "mean_power": 250.0}}
RESULT = {"strategy": None, "weather": None, "targets": [{"segment": 1}], "time_saved": None,
          "finish_time": 1000.0}
REVIEW = {"planned_time_s": 1000.0, "actual_time_s": 1010.0, "segments": [],
          "attribution": {}, "fitted": None, "warnings": []}


def test_the_page_plan_is_recognised_in_its_saved_inputs(tmp_path):
    with open_library(tmp_path / "library.sqlite3") as library:
        saved = save_current_plan(library, "Hill TT", "", PAGE, RESULT)
    assert "course_gpx" not in saved.inputs and saved.inputs["course_id"] == 1
    assert same_page_plan(saved.inputs, PAGE)
    other = dict(PAGE, approach={"strategy": "constant", "mean_power": 251.0})
    assert not same_page_plan(saved.inputs, other)
    assert not same_page_plan(saved.inputs, dict(PAGE, bounds=[0, 1000]))
    assert same_page_plan(dict(saved.inputs, athlete_id=4), PAGE)  # links do not make a plan


def test_the_page_plan_is_saved_with_a_review_its_course_stored_once(tmp_path):
    with open_library(tmp_path / "library.sqlite3") as library:
        first = save_current_plan(library, "before the race", "", PAGE, RESULT)
        plan, kept = save_current_plan_with_review(library, "raced", PAGE, RESULT, REVIEW,
                                                   "race.csv", "ab" * 32)
        assert plan.inputs["course_id"] == first.inputs["course_id"]
        assert len(library.courses()) == 1
        assert kept.plan_id == plan.id and kept.review == REVIEW
        with pytest.raises(NameTaken):
            save_current_plan_with_review(library, "raced", PAGE, RESULT, REVIEW, "race.csv",
                                          "ab" * 32)
        again, _ = save_current_plan_with_review(library, "raced", PAGE, RESULT, REVIEW,
                                                 "race.csv", "ab" * 32,
                                                 on_existing="keep-both")
        assert again.name == "raced (2)"
