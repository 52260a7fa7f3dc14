"""Checks of what goes into the library (pacing.store.rows): names, plan results and notes are
refused with a one-line InputError naming the field, and nothing is stored, on every backend
(tests/store_fixtures.py)."""

from __future__ import annotations

import datetime
import math

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    library_fixture,
    plan_result,
)

from pacing.athlete import Athlete
from pacing.errors import InputError


@pytest.mark.parametrize("result, words", [
    ({"targets": []}, "needs 'finish_time'"),
    ({"finish_time": 100.0}, "needs 'targets'"),
    ({"finish_time": -1.0, "targets": []}, "positive"),
    ({"finish_time": math.nan, "targets": []}, "finite"),
    ({"finish_time": 1.0, "targets": [{"power": math.inf}]}, r"targets\[0\].power"),
    ({"finish_time": 1.0, "targets": [{"power": float("nan")}]}, "finite"),
    ({"finish_time": 1.0, "targets": "fast"}, "list of records"),
    ({"finish_time": 1.0, "targets": [], "speed": 3}, "unknown keys"),
    ({"finish_time": 1.0, "targets": [{"when": datetime.date(2026, 1, 1)}]}, "cannot be saved"),
])
def test_bad_plan_results_are_refused(library, result, words):
    with pytest.raises(InputError, match=words):
        library.save_plan("bad", {}, result)
    assert library.plans() == ()


@pytest.mark.parametrize("name", ["", "   ", "Ann\x00", "Ann\nBo", "x" * 201, 7])
def test_bad_names_are_refused_on_every_backend(library, name):
    with pytest.raises(InputError, match="name"):
        library.add_athlete(Athlete(name=name))
    assert library.athletes() == ()


def test_plan_notes_may_span_lines_but_hold_no_nul(library):
    plan = library.save_plan("p", {}, plan_result(), notes="line one\nline two\tend")
    assert library.plan(plan.id).summary.notes == "line one\nline two\tend"
    with pytest.raises(InputError, match="NUL"):
        library.save_plan("p", {}, plan_result(), notes="a\x00b")


@pytest.mark.parametrize("gpx, distance, ascent, words", [
    (b"", 1000.0, 0.0, "the GPX file is empty"),
    ("<gpx/>", 1000.0, 0.0, "must be bytes"),
    (b"<gpx/>", 0.0, 0.0, "distance must be positive"),
    (b"<gpx/>", 1000.0, -1.0, "ascent must not be negative"),
    (b"<gpx/>", math.inf, 0.0, "finite"),
    (b"<gpx/>", 1000.0, None, "must be a number"),
])
def test_bad_courses_are_refused(library, gpx, distance, ascent, words):
    with pytest.raises(InputError, match=words):
        library.add_course("c", gpx, distance, ascent)
    assert library.courses() == ()


@pytest.mark.parametrize("value", [0, -3, 1.0, "1", True, None])
def test_ids_are_positive_whole_numbers(library, value):
    with pytest.raises(InputError, match="positive whole number"):
        library.athlete(value)
