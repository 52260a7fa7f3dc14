"""The library file (pacing.store.library_file): export then import gives the same library,
links are rewritten to the new ids, one athlete's part holds only theirs, a bad file is refused
whole and changes nothing, a failure half-way rolls everything back, a version 1 file keeps
importing.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import base64
import copy
import datetime
import hashlib
import json

import pytest
import sqlalchemy as sa

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    GPX,
    database_fixture,
    dump,
    fill,
    library_fixture,
)

import pacing
from pacing.athlete import Athlete
from pacing.errors import InputError
from pacing.store.library import open_library
from pacing.store.library_file import (
    dump_library_file,
    export_library,
    import_library,
    read_library_file,
)

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
    summary = import_library(library, json.dumps(document))
    assert summary.courses_already_stored == 2 and summary.courses == 0  # same GPX and name
    new_ann = max(a.id for a in library.athletes())
    copies = library.plans(athlete_id=new_ann)
    assert len(copies) == 2
    for summary_row in copies:
        plan = library.plan(summary_row.id)
        assert plan.inputs["athlete_id"] == new_ann
        assert library.setup(plan.inputs["setup_id"]).athlete_id == new_ann
        assert plan.summary.course_id in (ids["hill"], ids["flat"])


def test_export_of_one_athlete_holds_only_their_part(library):
    ids = fill(library)
    document = export_library(library, athlete_id=ids["bo"])
    assert [a["name"] for a in document["athletes"]] == ["Bo"]
    assert [p["name"] for p in document["plans"]] == ["Run"]
    assert [c["name"] for c in document["courses"]] == ["Flat out and back"]
    # the file carries the GPX as standard base64 (RFC 4648 section 4)
    assert base64.b64decode(document["courses"][0]["gpx_base64"], validate=True) == b"<gpx/>"
    with pytest.raises(InputError, match="no athlete with id 77"):
        export_library(library, athlete_id=77)


# ---------------------------------------------------------------------------------------------
# bad files

def _valid_document(library) -> dict:
    fill(library)
    return export_library(library)


def _corrupt(document: dict, how: str) -> str:
    doc = copy.deepcopy(document)
    if how == "truncated":
        return json.dumps(doc)[:-40]
    if how == "not json":
        return "athletes: Ann"
    if how == "other format":
        doc["format"] = "something else"
    elif how == "newer format":
        doc["format_version"] = 99
    elif how == "nan":
        # RFC 8259 section 6: NaN is not a JSON number; Python writes it, we must refuse it
        return json.dumps(doc).replace('"finish_time": 3725.0', '"finish_time": NaN')
    elif how == "athlete out of range":
        doc["athletes"][1]["body_mass"] = 2.0
    elif how == "setup out of range":
        doc["athletes"][0]["setups"][0]["drag_area"] = 5.0
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
    elif how == "unknown field":
        doc["plans"][0]["colour"] = "red"
    elif how == "missing field":
        del doc["plans"][1]["finish_time"]
    elif how == "bad target":
        doc["plans"][2]["targets"] = "none"
    elif how == "bad time":
        doc["athletes"][0]["created_at"] = "yesterday"
    elif how == "last entry bad":
        doc["plans"][-1]["finish_time"] = -5.0
    return json.dumps(doc)


CORRUPTIONS = ["truncated", "not json", "other format", "newer format", "nan",
               "athlete out of range", "setup out of range", "gpx damaged", "gpx not base64",
               "duplicate id", "missing course", "setup of another athlete", "unknown field",
               "missing field", "bad target", "bad time", "last entry bad"]


@pytest.mark.parametrize("how", CORRUPTIONS)
def test_import_refuses_a_bad_file_and_changes_nothing(library, how):
    text = _corrupt(_valid_document(library), how)
    before = dump(library)
    with pytest.raises(InputError) as error:
        import_library(library, text)
    assert "\n" not in str(error.value)
    assert dump(library) == before


def test_import_failing_half_way_rolls_everything_back(library, monkeypatch):
    text = json.dumps(_valid_document(library))
    before = dump(library)
    import pacing.store.library_file as library_file

    real_insert, calls = library_file.insert_row, []

    def failing_insert(connection, table, *args, **kwargs):
        calls.append(table.name)
        if table.name == "plans" and calls.count("plans") == 2:
            raise sa.exc.OperationalError("INSERT", {}, Exception("disk I/O error"))
        return real_insert(connection, table, *args, **kwargs)

    monkeypatch.setattr(library_file, "insert_row", failing_insert)
    with pytest.raises(InputError, match="disk I/O error"):
        import_library(library, text)
    assert calls.count("athletes") == 2  # it really had written before failing
    assert dump(library) == before


def test_read_library_file_checks_without_a_database():
    document = {"format": "pacing library", "format_version": 1, "athletes": [],
                "courses": [], "plans": []}
    empty = read_library_file(json.dumps(document).encode("utf-8-sig"))
    assert empty.athletes == () and empty.plans == ()
    with pytest.raises(InputError, match="UTF-8"):
        read_library_file(b"\xff\xfe{")


# ---------------------------------------------------------------------------------------------
# format version 1

# A library file exactly as format version 1 defines it (pacing/store/library_file.py). Later
# versions of pacing must keep importing it.
VERSION_1_FILE = """{
 "format": "pacing library", "format_version": 1,
 "exported_at": "2026-12-01T22:30:00+00:00", "exported_by": "pacing 0.1.0",
 "athletes": [{"id": 3, "name": "Ann", "body_mass": 61.0, "critical_power": 250.0,
   "w_prime": 18000.0, "height": 1.68, "flat_pace": null, "critical_speed": null,
   "d_prime": null, "created_at": "2026-11-30T08:00:00+00:00",
   "updated_at": "2026-11-30T09:00:00+01:00",
   "setups": [{"id": 8, "name": "TT bike", "bike_mass": 8.9, "drag_area": 0.23,
     "power_share": 0.95, "rolling_coefficient": 0.003, "drivetrain_efficiency": 0.976,
     "yaw_drag_table": [[0.0, 1.0], [10.0, 0.93]],
     "created_at": "2026-11-30T08:00:00+00:00", "updated_at": "2026-11-30T08:00:00+00:00"}]}],
 "courses": [{"id": 5, "name": "Tiny", "distance_m": 1000.0, "ascent_m": 12.5,
   "gpx_sha256": "b53b9a7e7640220fe6efaa08ad97e8d5db0deef003a7335b8b44666137b08906",
   "gpx_base64": "PGdweC8+",
   "created_at": "2026-11-30T08:00:00+00:00", "updated_at": "2026-11-30T08:00:00+00:00"}],
 "plans": [{"id": 9, "name": "Race day",
   "inputs": {"athlete_id": 3, "setup_id": 8, "course_id": 5, "power": 230.0},
   "strategy": "constant", "weather": null,
   "targets": [{"segment": 1, "power": 230.0, "time": 95.5}],
   "time_saved": null, "finish_time": 95.5, "library_version": "0.1.0", "notes": "",
   "created_at": "2026-11-30T08:00:00+00:00", "updated_at": "2026-11-30T08:00:00+00:00"}]
}"""


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


def test_reading_a_file_gives_its_format_version_and_exporter():
    read = read_library_file(VERSION_1_FILE)
    assert read.format_version == 1  # not the last plan's library_version
    assert read.exported_by == "pacing 0.1.0"
    assert read.exported_at == datetime.datetime(2026, 12, 1, 22, 30)  # naive UTC


def test_imported_plans_keep_the_version_of_pacing_that_made_them(library):
    document = json.loads(VERSION_1_FILE)
    document["plans"][0]["library_version"] = "0.0.9"
    import_library(library, json.dumps(document))
    (summary,) = library.plans()
    assert summary.library_version == "0.0.9"
    exported = export_library(library)
    assert exported["plans"][0]["library_version"] == "0.0.9"
    assert exported["exported_by"] == f"pacing {pacing.__version__}"
