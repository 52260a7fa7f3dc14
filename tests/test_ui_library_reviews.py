"""The race reviews kept with a saved plan in the library panel (ui.library_reviews): listed,
downloaded as the JSON the review command prints (read back with the standard library's json,
RFC 8259), deleted only once the coach ticked it, the plan kept."""

from __future__ import annotations

import datetime
import json
import types

from pacing.store.library import open_library
from ui.library_reviews import review_file_json, review_label

REVIEW = {"planned_time_s": 1000.0, "actual_time_s": 1010.0, "segments": [],
          "attribution": {"power_s": 10.0}, "fitted": None, "warnings": [],
          "note": "Été"}


def test_a_kept_review_is_named_by_its_id_file_and_time_and_reads_back_as_json():
    record = types.SimpleNamespace(id=3, ride_name="Hill TT.csv", review=REVIEW,
                                   created_at=datetime.datetime(2026, 12, 5, 13, 7))
    assert review_label(record) == "race review 3 · Hill TT.csv · 2026-12-05 13:07 UTC"
    data = review_file_json(record)
    assert json.loads(data.decode("utf-8")) == REVIEW
    assert "Été".encode() in data and data.endswith(b"\n")


def _page(path, plan_id):
    import streamlit as st

    from pacing.store.library import open_library
    from ui.library_reviews import render_plan_reviews

    message = st.session_state.pop("library:message", None)
    if message:
        st.success(message)
    render_plan_reviews(st, open_library(path), plan_id)


def test_a_review_is_deleted_only_once_ticked_and_the_plan_stays(tmp_path):
    from streamlit.testing.v1 import AppTest

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        plan = library.save_plan("Hill TT", {}, {"targets": [], "finish_time": 1000.0})
        first = library.add_plan_review(plan.id, REVIEW, ride_name="a.csv",
                                        ride_sha256="ab" * 32)
        library.add_plan_review(plan.id, REVIEW, ride_name="b.gpx", ride_sha256="cd" * 32)
    app = AppTest.from_function(_page, args=(path, plan.id)).run(timeout=30)
    assert not app.exception
    assert "(2)" in app.markdown[0].value
    assert app.button(key="library_delete_review").disabled
    app.checkbox(key=f"library_delete_review_sure:{first.id}").check().run(timeout=30)
    app.button(key="library_delete_review").click().run(timeout=30)
    assert not app.exception
    assert f"Deleted race review {first.id} (a.csv)" in app.success[0].value
    with open_library(path) as library:
        assert [r.ride_name for r in library.plan_reviews(plan.id)] == ["b.gpx"]
        assert library.plan(plan.id).name == "Hill TT"


def test_a_plan_without_reviews_shows_nothing(tmp_path):
    from streamlit.testing.v1 import AppTest

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        plan = library.save_plan("Hill TT", {}, {"targets": [], "finish_time": 1000.0})
    app = AppTest.from_function(_page, args=(path, plan.id)).run(timeout=30)
    assert not app.exception and not app.markdown and not app.dataframe
