"""``pacing library list|show|export|import`` (pacing.cli.library): readable listings, JSON
export to a file or standard output, import of a library file, one-line errors with exit 2."""

from __future__ import annotations

import io
import json
import subprocess
import sys

import pytest

import pacing
from pacing.athlete import Athlete, Setup
from pacing.cli import main
from pacing.store.library import open_library

GPX = b"<?xml version='1.0'?>\r\n<gpx version='1.1'><trk><name>Loop</name></trk></gpx>\r\n"


@pytest.fixture
def database(tmp_path, monkeypatch):
    monkeypatch.delenv("PACING_DATABASE_URL", raising=False)
    path = tmp_path / "library.sqlite3"
    with open_library(path) as library:
        ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0, critical_power=250.0))
        tt = library.add_setup(ann.id, Setup(name="TT bike", drag_area=0.23))
        course = library.add_course("Hill loop", GPX, 41250.0, 610.0)
        library.save_plan(
            "Race day", {"athlete_id": ann.id, "setup_id": tt.id, "course_id": course.id},
            {"finish_time": 3725.0, "time_saved": 41.5, "strategy": "fastest",
             "targets": [{"segment": 1, "power": 251.25}, {"segment": 2, "power": 230.0}]})
    return str(path)


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_list_prints_every_kind(capsys, database):
    code, out, _ = run(capsys, "library", "--database", database, "list")
    assert code == 0
    for words in ("athletes (1)", "Ann", "setups (1)", "TT bike", "courses (1)", "Hill loop",
                  "41250", "saved plans (1)", "Race day", "1:02:05"):
        assert words in out


def test_a_new_library_is_created_on_first_use(capsys, tmp_path):
    code, out, _ = run(capsys, "library", "--database", str(tmp_path / "new.sqlite3"), "list")
    assert code == 0 and "athletes (0)" in out and (tmp_path / "new.sqlite3").is_file()


def test_the_environment_variable_names_the_library(capsys, database, monkeypatch):
    monkeypatch.setenv("PACING_DATABASE_URL", database)
    code, out, _ = run(capsys, "library", "list")
    assert code == 0 and "Race day" in out


def test_show_each_kind(capsys, database, tmp_path):
    code, out, _ = run(capsys, "library", "--database", database, "show", "athlete", "1")
    assert code == 0 and "body mass [kg]" in out and "61.0" in out and "1 TT bike" in out
    code, out, _ = run(capsys, "library", "--database", database, "show", "setup", "1")
    assert code == 0 and "0.2300" in out
    gpx_copy = tmp_path / "copy.gpx"
    code, out, _ = run(capsys, "library", "--database", database, "show", "course", "1",
                       "--gpx", str(gpx_copy))
    assert code == 0 and "610.0" in out and gpx_copy.read_bytes() == GPX
    code, out, _ = run(capsys, "library", "--database", database, "show", "plan", "1")
    assert code == 0 and "251.25" in out and '"course_id": 1' in out and "1:02:05" in out


def test_saved_plans_show_the_version_of_pacing_that_made_them(capsys, database):
    code, out, _ = run(capsys, "library", "--database", database, "list")
    header, row = out.split("saved plans (1)\n")[1].splitlines()[:2]
    assert header.endswith("made by pacing")
    assert row.split()[-1] == pacing.__version__
    code, out, _ = run(capsys, "library", "--database", database, "show", "plan", "1")
    assert f"made by pacing  {pacing.__version__}" in out


def test_export_to_standard_output_and_to_a_file(capsys, database, tmp_path):
    code, out, _ = run(capsys, "library", "--database", database, "export")
    assert code == 0
    document = json.loads(out)
    assert document["format"] == "pacing library" and len(document["plans"]) == 1
    target = tmp_path / "backup.json"
    code, out, _ = run(capsys, "library", "--database", database, "export", "--athlete", "1",
                       "-o", str(target))
    assert code == 0 and str(target) in out
    assert json.loads(target.read_text(encoding="utf-8"))["athletes"][0]["name"] == "Ann"


def test_import_adds_the_file(capsys, database, tmp_path):
    backup = tmp_path / "backup.json"
    assert run(capsys, "library", "--database", database, "export", "-o", str(backup))[0] == 0
    other = str(tmp_path / "other.sqlite3")
    code, out, _ = run(capsys, "library", "--database", other, "import", str(backup))
    assert code == 0
    assert out.strip() == "imported 1 athlete, 1 setup, 1 course and 1 saved plan"
    with open_library(other) as library:
        assert library.course(1).gpx == GPX


def test_import_from_standard_input(capsys, database, tmp_path, monkeypatch):
    code, out, _ = run(capsys, "library", "--database", database, "export")
    monkeypatch.setattr(sys, "stdin", io.TextIOWrapper(io.BytesIO(out.encode("utf-8"))))
    code, out, _ = run(capsys, "library", "--database", str(tmp_path / "x.sqlite3"),
                       "import", "-")
    assert code == 0 and "1 saved plan" in out


@pytest.mark.parametrize("argv, words", [
    (["show", "plan", "9"], "no plan with id 9"),
    (["show", "athlete", "0"], "positive whole number"),
    (["show", "plan", "1", "--gpx", "x.gpx"], "--gpx only goes with"),
    (["export", "--athlete", "5"], "no athlete with id 5"),
    (["import", "no-such-file.json"], "no such file"),
])
def test_errors_are_one_line_with_exit_code_2(capsys, database, argv, words):
    code, out, err = run(capsys, "library", "--database", database, *argv)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("pacing library: error:") and words in err


def test_a_bad_file_is_refused_and_the_library_is_unchanged(capsys, database, tmp_path):
    before = run(capsys, "library", "--database", database, "export")[1]
    bad = json.loads(before)
    bad["plans"][0]["finish_time"] = "fast"
    bad_file = tmp_path / "bad.json"
    bad_file.write_text(json.dumps(bad), encoding="utf-8")
    code, _, err = run(capsys, "library", "--database", database, "import", str(bad_file))
    assert code == 2 and "plans[0]: finish time must be a number" in err
    after = run(capsys, "library", "--database", database, "export")[1]
    assert json.loads(after)["plans"] == json.loads(before)["plans"]
    assert len(json.loads(after)["athletes"]) == 1


def test_bad_database_location_exit_code_2(capsys, tmp_path):
    code, _, err = run(capsys, "library", "--database", str(tmp_path / "no" / "x.sqlite3"),
                       "list")
    assert code == 2 and "does not exist" in err


def test_python_dash_m_entry_point(database):
    completed = subprocess.run(
        [sys.executable, "-m", "pacing", "library", "--database", database, "show", "course",
         "1"], capture_output=True, text=True, timeout=60, check=False)
    assert completed.returncode == 0, completed.stderr
    assert "Hill loop" in completed.stdout
