"""The library panel's "Backup" tab (ui.library_backup): a library file brought in all or
nothing, a name already stored asked about before both are kept, a bad file refused in one
line with nothing changed. (The panel's own walk: tests/test_ui_panels.py.)"""

from __future__ import annotations

import json

from pacing.athlete import Athlete
from pacing.store.library import open_library
from pacing.store.library_export import dump_library_file


def _page(path):
    import streamlit as st

    from pacing.store.library import open_library
    from ui.library_backup import render_backup

    message = st.session_state.pop("library:message", None)
    if message:
        st.success(message)
    render_backup(st, open_library(path))


def _names(path):
    with open_library(path) as library:
        return sorted(a.athlete.name for a in library.athletes())


def test_a_file_with_a_name_already_stored_is_asked_about_then_kept_both(tmp_path):
    from streamlit.testing.v1 import AppTest

    path = str(tmp_path / "library.sqlite3")
    with open_library(path) as library:
        library.add_athlete(Athlete(name="Ann", body_mass=61.0))
        text = dump_library_file(library)
    app = AppTest.from_function(_page, args=(path,)).run(timeout=30)
    app.file_uploader(key="library_import_file").set_value(
        ("library.json", text.encode(), "application/json")).run(timeout=30)
    app.button(key="library_import").click().run(timeout=30)
    assert not app.exception
    assert "already in the library" in app.warning[0].value
    assert _names(path) == ["Ann"]
    app.button(key="library_import_keep_both").click().run(timeout=30)
    assert not app.exception
    assert _names(path) == ["Ann", "Ann (2)"]
    assert "brought in" in app.caption[0].value  # the same file is not offered again


def test_a_bad_file_is_refused_in_one_line_and_changes_nothing(tmp_path):
    from streamlit.testing.v1 import AppTest

    path = str(tmp_path / "library.sqlite3")
    bad = json.dumps({"format": "pacing library", "format_version": 1, "athletes": [
        {"id": 1, "name": "Bo", "body_mass": float("nan")}], "courses": [], "plans": []})
    app = AppTest.from_function(_page, args=(path,)).run(timeout=30)
    app.file_uploader(key="library_import_file").set_value(
        ("library.json", bad.encode(), "application/json")).run(timeout=30)
    app.button(key="library_import").click().run(timeout=30)
    assert not app.exception
    (error,) = app.error
    assert error.value.startswith("The file was refused, nothing changed:")
    assert "NaN" in error.value and "\n" not in error.value
    assert _names(path) == []
