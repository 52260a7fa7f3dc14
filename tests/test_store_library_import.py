"""Adding a library file to a library (pacing.store.library_import): export then import gives the
same library, links are rewritten to the new ids, a bad file is refused whole and changes
nothing, a failure half-way rolls everything back, a version 1 file keeps importing with the
version of pacing that made its plans.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import base64
import copy
import datetime
import hashlib
import json
from collections.abc import Callable

import pytest
import sqlalchemy as sa

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    GPX,
    VERSION_1_FILE,
    database_fixture,
    dump,
    fill,
    library_fixture,
)

import pacing
from pacing.athlete import Athlete
from pacing.errors import InputError
from pacing.store.library import open_library
from pacing.store.library_export import dump_library_file, export_library
from pacing.store.library_import import import_library
from pacing.store.statements import NameTaken

# ---------------------------------------------------------------------------------------------
# export and import

def test_export_then_import_into_an_empty_library_gives_the_same_library(database, tmp_path):
    with open_library(database) as source:
        fill(source)
        text = dump_library_file(source)
        original = export_library(source)
    target_path = tmp_path / "other.sqlite3"
    with open_library(target_path) as target:
        summary = import_library(target, text)
        assert (summary.athletes, summary.setups, summary.courses, summary.plans) == (2, 2, 2, 3)
        copied = export_library(target)
        assert target.course(1).gpx == GPX
    del original["exported_at"], copied["exported_at"]
    assert copied == original


def test_import_rewrites_links_to_the_new_ids(library):
    ids = fill(library)
    document = export_library(library, athlete_id=ids["ann"])
    with pytest.raises(NameTaken, match="an athlete named 'Ann' is already in the library"):
        import_library(library, json.dumps(document))  # refused by default: nothing written
    summary = import_library(library, json.dumps(document), on_existing="keep-both")
    assert summary.courses_already_stored == 2 and summary.courses == 0  # same GPX and name
    assert [a.athlete.name for a in library.athletes()] == ["Ann", "Ann (2)", "Bo"]
    assert sorted(p.name for p in library.plans()) == [
        "Easy", "Easy (2)", "Race day", "Race day (2)", "Run"]
    new_ann = max(a.id for a in library.athletes())
    copies = library.plans(athlete_id=new_ann)
    assert len(copies) == 2
    for summary_row in copies:
        plan = library.plan(summary_row.id)
        assert plan.inputs["athlete_id"] == new_ann
        assert library.setup(plan.inputs["setup_id"]).athlete_id == new_ann
        assert plan.summary.course_id in (ids["hill"], ids["flat"])

# ---------------------------------------------------------------------------------------------
# bad files

def _valid_document(library) -> dict:
    fill(library)
    return export_library(library)


def _set(path: tuple, value) -> Callable[[dict], None]:
    """An edit of a document: the value at `path` (keys and indices) set to `value`."""
    def edit(doc: dict) -> None:
        for key in path[:-1]:
            doc = doc[key]
        doc[path[-1]] = value
    return edit


# Corruptions that edit the valid document; from "year 1" on, found by attacking the import
# (issue 14).
EDITS: dict[str, Callable[[dict], None]] = {
    "other format": _set(("format",), "something else"),
    "newer format": _set(("format_version",), 99),
    "athlete out of range": _set(("athletes", 1, "body_mass"), 2.0),
    "setup out of range": _set(("athletes", 0, "setups", 0, "drag_area"), 5.0),
    "unknown field": _set(("plans", 0, "colour"), "red"),
    "bad target": _set(("plans", 2, "targets"), "none"),
    "bad time": _set(("athletes", 0, "created_at"), "yesterday"),
    "last entry bad": _set(("plans", -1, "finish_time"), -5.0),
    # OverflowError before
    "year 1": _set(("athletes", 0, "created_at"), "0001-01-01T00:00:00+01:00"),
    "year 9999": _set(("plans", 0, "updated_at"), "9999-12-31T23:59:59-01:00"),
    "nested past the limit": _set(("plans", 0, "inputs", "deep"),
                                  json.loads("[" * 40 + "]" * 40)),
    "course too long": _set(("courses", 0, "distance_m"), 1e300),  # stored as given before
    "critical power too high": _set(("athletes", 0, "critical_power"), 1e23),
    "id too large": _set(("athletes", 0, "id"), 10**23),
    "name with a direction override": _set(("athletes", 0, "name"), "\u202eennA"),
    "notes with NUL": _set(("plans", 0, "notes"), "a\x00b"),
}
# Corruptions of the text itself, after the valid document.
TAILS = {
    "nested deeply": ', "x": ' + "[" * 100_000 + "]" * 100_000,  # RecursionError before
    "number too long": ', "x": ' + "9" * 5000,  # Python reads at most 4300 digits
}


def _corrupt(document: dict, how: str) -> str:
    doc = copy.deepcopy(document)
    if how in EDITS:
        EDITS[how](doc)
        return json.dumps(doc)
    if how in TAILS:
        return json.dumps(doc)[:-1] + TAILS[how] + "}"
    if how == "truncated":
        return json.dumps(doc)[:-40]
    if how == "not json":
        return "athletes: Ann"
    if how == "nan":
        # RFC 8259 section 6: NaN is not a JSON number; Python writes it, we must refuse it
        return json.dumps(doc).replace('"finish_time": 3725.0', '"finish_time": NaN')
    elif how == "gpx damaged":
        gpx = bytearray(base64.b64decode(doc["courses"][0]["gpx_base64"]))
        gpx[10] ^= 1
        doc["courses"][0]["gpx_base64"] = base64.b64encode(bytes(gpx)).decode()
    elif how == "gpx not base64":
        doc["courses"][0]["gpx_base64"] = "***"
    elif how == "duplicate id":
        doc["courses"][1]["id"] = doc["courses"][0]["id"]
    elif how == "missing course":
        doc["plans"][2]["inputs"]["course_id"] = 999
    elif how == "setup of another athlete":
        doc["plans"][0]["inputs"]["athlete_id"] = doc["athletes"][1]["id"]
    elif how == "missing field":
        del doc["plans"][1]["finish_time"]
    return json.dumps(doc)


CORRUPTIONS = ["truncated", "not json", "nan", "gpx damaged", "gpx not base64",
               "duplicate id", "missing course", "setup of another athlete", "missing field",
               *EDITS, *TAILS]


@pytest.mark.parametrize("how", CORRUPTIONS)
def test_import_refuses_a_bad_file_and_changes_nothing(library, how):
    text = _corrupt(_valid_document(library), how)
    before = dump(library)
    with pytest.raises(InputError) as error:
        import_library(library, text, on_existing="keep-both")
    assert "\n" not in str(error.value) and len(str(error.value)) < 300
    assert dump(library) == before


def test_import_failing_half_way_rolls_everything_back(library, monkeypatch):
    text = json.dumps(_valid_document(library))
    before = dump(library)
    import pacing.store.library_import as library_import

    real_insert, calls = library_import.insert_many, []

    def failing_insert(connection, table, rows):
        calls.append(table.name)
        if table.name == "plans":
            raise sa.exc.OperationalError("INSERT", {}, Exception("disk I/O error"))
        return real_insert(connection, table, rows)

    monkeypatch.setattr(library_import, "insert_many", failing_insert)
    with pytest.raises(InputError, match="disk I/O error"):
        import_library(library, text, on_existing="keep-both")
    assert calls[:2] == ["athletes", "setups"]  # it really had written before failing
    assert dump(library) == before

# ---------------------------------------------------------------------------------------------
# format version 1

def test_a_version_1_file_imports(library):
    # the checksum in the file is the SHA-256 of b"<gpx/>" (hashlib, FIPS 180-4)
    assert hashlib.sha256(b"<gpx/>").hexdigest() in VERSION_1_FILE
    summary = import_library(library, VERSION_1_FILE)
    assert summary.message() == "imported 1 athlete, 1 setup, 1 course and 1 saved plan"
    (athlete,) = library.athletes()
    assert athlete.athlete == Athlete(name="Ann", body_mass=61.0, critical_power=250.0,
                                      w_prime=18000.0, height=1.68)
    assert athlete.updated_at == datetime.datetime(2026, 11, 30, 8, 0, tzinfo=datetime.UTC)
    (setup,) = library.setups(athlete.id)
    assert setup.setup.yaw_drag_table == ((0.0, 1.0), (10.0, 0.93))
    (course,) = library.courses()
    assert library.course(course.id).gpx == b"<gpx/>"  # base64 "PGdweC8+" (RFC 4648)
    (plan_summary,) = library.plans()
    plan = library.plan(plan_summary.id)
    assert plan.inputs == {"athlete_id": athlete.id, "setup_id": setup.id,
                           "course_id": course.id, "power": 230.0}
    assert plan.strategy == "constant" and plan.summary.time_saved is None


def test_imported_plans_keep_the_version_of_pacing_that_made_them(library):
    document = json.loads(VERSION_1_FILE)
    document["plans"][0]["library_version"] = "0.0.9"
    import_library(library, json.dumps(document))
    (summary,) = library.plans()
    assert summary.library_version == "0.0.9"
    exported = export_library(library)
    assert exported["plans"][0]["library_version"] == "0.0.9"
    assert exported["exported_by"] == f"pacing {pacing.__version__}"


def test_a_file_over_the_size_limit_is_refused_at_once_with_little_memory(library):
    import time
    import tracemalloc

    from pacing.store.library_file_json import FILE_SIZE_LIMIT

    data = b" " * 56_000_000  # 56 MB: 15 s and 1.2 GB before (issue 14)
    assert len(data) > FILE_SIZE_LIMIT
    tracemalloc.start()
    start = time.perf_counter()
    with pytest.raises(InputError, match="larger than 50 MiB"):
        import_library(library, data)
    elapsed = time.perf_counter() - start
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert elapsed < 0.5 and peak < 1_000_000  # [s], [bytes]: nothing read or copied
    assert library.athletes() == ()


def test_a_big_import_is_one_short_write(library):
    from store_fixtures import big_library_file

    summary = import_library(library, big_library_file(300))
    assert (summary.athletes, summary.setups, summary.plans) == (300, 300, 600)
    plan = library.plan(library.plans()[0].id)
    assert library.setup(plan.summary.setup_id).athlete_id == plan.summary.athlete_id
