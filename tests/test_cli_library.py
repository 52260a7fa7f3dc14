"""``pacing library list|show|export|import`` (pacing.cli.library): readable listings, JSON
export to a file or standard output, import of a library file, one-line errors with exit 2."""

from __future__ import annotations

import io
import json
import re
import subprocess
import sys

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

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


def test_a_setup_shows_where_its_cda_came_from(capsys, database):
    from pacing.store.records import DragAreaOrigin

    code, out, _ = run(capsys, "library", "--database", database, "show", "setup", "1")
    assert code == 0 and "CdA from" in out and "interval" not in out
    with open_library(database) as library:
        record = library.setup(1)
        library.update_setup(1, Setup(name="TT bike", drag_area=0.236), revision=record.revision,
                             drag_area_origin=DragAreaOrigin(
                                 0.228, 0.244, "race review of Hill TT.csv, 2026-12-05"))
    code, out, _ = run(capsys, "library", "--database", database, "show", "setup", "1")
    assert code == 0 and "0.2360" in out
    assert re.search(r"CdA 95 % interval \[m²\] +0\.2280-0\.2440", out)
    assert "race review of Hill TT.csv, 2026-12-05" in out


def test_a_saved_plan_shows_its_race_reviews_and_each_one_shows_its_json(capsys, database):
    review = {"planned_time_s": 3725.0, "actual_time_s": 3790.5, "segments": [],
              "attribution": {"power_s": 65.5}, "fitted": {"cda_m2": 0.236}, "warnings": []}
    code, out, _ = run(capsys, "library", "--database", database, "show", "plan", "1")
    assert "race reviews (0)" in out
    with open_library(database) as library:
        library.add_plan_review(1, review, ride_name="Hill TT.csv", ride_sha256="ab" * 32)
    code, out, _ = run(capsys, "library", "--database", database, "show", "plan", "1")
    assert code == 0 and "race reviews (1)" in out
    row = out.split("race reviews (1)\n")[1].splitlines()[1]
    assert "Hill TT.csv" in row and "1:02:05" in row and "1:03:10" in row
    assert "+65.5" in row and "0.2360" in row
    code, out, _ = run(capsys, "library", "--database", database, "show", "review", "1")
    assert code == 0 and "Race day" in out and "ab" * 32 in out
    assert json.loads(out[out.index("\n{"):]) == review


def test_list_counts_each_plans_reviews_and_lists_them_with_their_ids(capsys, database):
    review = {"planned_time_s": 3725.0, "actual_time_s": 3790.5, "segments": [],
              "attribution": {"power_s": 65.5}, "fitted": {"cda_m2": 0.236}, "warnings": []}
    code, out, _ = run(capsys, "library", "--database", database, "list")
    assert code == 0 and "race reviews (0)" in out
    with open_library(database) as library:
        library.add_plan_review(1, review, ride_name="Hill TT.csv", ride_sha256="ab" * 32)
        library.add_plan_review(1, dict(review, actual_time_s=3700.0, fitted=None),
                                ride_name="Hill TT again.gpx", ride_sha256="cd" * 32)
    code, out, _ = run(capsys, "library", "--database", database, "list")
    assert code == 0
    plans = out.split("saved plans (1)\n")[1].splitlines()
    column = plans[0].index("race reviews")
    assert plans[1][column:].startswith("2 ")
    rows = out.split("race reviews (2)\n")[1].splitlines()
    assert rows[0].split()[:4] == ["id", "saved", "plan", "race"]
    assert rows[1].split()[:5] == ["1", "1", "Race", "day", "Hill"]
    assert "+65.5" in rows[1] and "0.2360" in rows[1] and "1:03:10" in rows[1]
    assert "-25.0" in rows[2] and rows[2].rstrip().endswith("-")  # no fit: no CdA
    code, out, _ = run(capsys, "library", "--database", database, "show", "review", "2")
    assert code == 0 and "Hill TT again.gpx" in out


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
    (["show", "plan", str(10**23)], "positive whole number up to"),  # OverflowError before
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


def test_a_file_too_large_is_refused_before_it_is_read(capsys, database, tmp_path):
    import tracemalloc

    big = tmp_path / "big.json"
    with big.open("wb") as stream:
        stream.truncate(56_000_000)  # a sparse 56 MB file: 15 s and 1.2 GB before (issue 14)
    tracemalloc.start()
    code, out, err = run(capsys, "library", "--database", database, "import", str(big))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "larger than 50 MiB (53.4 MiB)" in err
    assert peak < 5_000_000  # [bytes]: the file was never read


def test_a_deeply_nested_file_is_one_line(capsys, database, tmp_path):
    deep = tmp_path / "deep.json"
    deep.write_text("[" * 100_000, encoding="utf-8")  # RecursionError before (issue 14)
    code, _, err = run(capsys, "library", "--database", database, "import", str(deep))
    assert code == 2 and err.count("\n") == 1 and "deeper than 32 levels" in err


def test_an_export_file_is_private_to_its_owner(capsys, database, tmp_path):
    target = tmp_path / "backup.json"
    assert run(capsys, "library", "--database", database, "export", "-o", str(target))[0] == 0
    assert target.stat().st_mode & 0o777 == 0o600


def test_import_never_merges_names_silently(capsys, database, tmp_path):
    backup = tmp_path / "backup.json"
    assert run(capsys, "library", "--database", database, "export", "-o", str(backup))[0] == 0
    code, out, err = run(capsys, "library", "--database", database, "import", str(backup))
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "nothing imported: athlete 'Ann' is already in the library" in err
    assert "--on-existing keep-both" in err
    code, out, _ = run(capsys, "library", "--database", database, "import", str(backup),
                       "--on-existing", "keep-both")
    assert code == 0 and "0 courses (1 already in the library)" in out
    with open_library(database) as library:
        assert [a.athlete.name for a in library.athletes()] == ["Ann", "Ann (2)"]
        assert sorted(p.name for p in library.plans()) == ["Race day", "Race day (2)"]


# ---------------------------------------------------------------------------------------------
# fuzz: whatever the file, `library import` answers with exit 0 or one line and exit 2

JSON = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats(allow_nan=False)
    | st.text(max_size=12),
    lambda children: st.lists(children, max_size=4)
    | st.dictionaries(st.text(max_size=8), children, max_size=4),
    max_leaves=12)


def _valid_backup() -> dict:
    from store_fixtures import VERSION_1_FILE

    return json.loads(VERSION_1_FILE)


def _paths(value, prefix=()):
    """Every path (keys and indices) into a JSON value."""
    yield prefix
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _paths(item, (*prefix, key))
    elif isinstance(value, list):
        for index, item in enumerate(value):
            yield from _paths(item, (*prefix, index))


PATHS = [path for path in _paths(_valid_backup()) if path]


@st.composite
def mutated_backups(draw) -> bytes:
    """A valid backup with one value replaced or removed, or its text cut or spliced."""
    document = _valid_backup()
    how = draw(st.sampled_from(["replace", "remove", "cut", "splice"]))
    if how in ("replace", "remove"):
        *parents, last = draw(st.sampled_from(PATHS))
        holder = document
        for key in parents:
            holder = holder[key]
        if how == "replace":
            holder[last] = draw(JSON | st.sampled_from(
                [1e300, -1.0, 0, 10**30, "0001-01-01T00:00:00+01:00", "\u202eX", "", []]))
        else:
            del holder[last]
        return json.dumps(document).encode()
    text = json.dumps(document).encode()
    at = draw(st.integers(0, len(text)))
    if how == "cut":
        return text[:at]
    return text[:at] + draw(st.binary(max_size=8)) + text[at:]


@settings(max_examples=150, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(content=mutated_backups() | JSON.map(lambda v: json.dumps(v).encode())
       | st.dictionaries(st.sampled_from(["format", "format_version", "athletes", "courses",
                                          "plans", "exported_at"]), JSON)
       .map(lambda d: json.dumps({"format": "pacing library", **d}).encode()))
def test_library_import_fuzz_exit_0_or_one_line_and_2(capsys, tmp_path, content):
    from pacing.errors import InputError
    from pacing.store.library_file import read_library_file

    try:
        read_library_file(content)  # only ever a one-line InputError, nothing else
    except InputError as error:
        assert "\n" not in str(error)
    source = tmp_path / "fuzz.json"
    source.write_bytes(content)
    code, out, err = run(capsys, "library", "--database", str(tmp_path / "fuzz.sqlite3"),
                         "import", str(source), "--on-existing", "keep-both")
    assert code in (0, 2)
    if code == 2:
        assert out == "" and err.count("\n") == 1 and err.startswith("pacing library: error:")
    else:
        assert out.startswith("imported ") and err == ""
