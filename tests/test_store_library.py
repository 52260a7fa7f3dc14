"""The coach's library (pacing.store.library.Library): every entity round trips, plan links
are checked, revisions refuse stale saves, deletes need confirmation and keep what is in use,
concurrent writers neither corrupt nor overwrite.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import datetime
import hashlib
import sqlite3
import threading

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    GPX,
    database_fixture,
    dump,
    fill,
    library_fixture,
    plan_inputs,
    plan_result,
)

import pacing
from pacing.athlete import Athlete, Setup
from pacing.errors import ConflictError, InputError
from pacing.store.library import open_library

# ---------------------------------------------------------------------------------------------
# round trips

def test_athletes_round_trip(library):
    cyclist = Athlete(name="Ann", body_mass=61.0, critical_power=250.0, w_prime=18000.0,
                      height=1.68)
    runner = Athlete(name="Bo Ångström", body_mass=0.1 + 70.2, critical_power=None,
                     w_prime=None, height=None, flat_pace=245.0, critical_speed=4.3,
                     d_prime=210.0)
    stored = [library.add_athlete(cyclist), library.add_athlete(runner)]
    assert [library.athlete(r.id).athlete for r in stored] == [cyclist, runner]
    assert [r.athlete for r in library.athletes()] == [cyclist, runner]
    assert stored[0].revision == 1
    assert stored[0].created_at.tzinfo == datetime.UTC
    assert stored[0].created_at == stored[0].updated_at


def test_setups_round_trip_and_belong_to_an_athlete(library):
    ann = library.add_athlete(Athlete(name="Ann"))
    bo = library.add_athlete(Athlete(name="Bo"))
    tt = Setup(name="TT", bike_mass=8.9, drag_area=0.2345678901234567, power_share=0.95,
               rolling_coefficient=0.0029, drivetrain_efficiency=0.975,
               yaw_drag_table=((0.0, 1.0), (5.0, 0.97), (10.0, 0.93)))
    stored = library.add_setup(ann.id, tt)
    library.add_setup(bo.id, Setup(name="road"))
    assert library.setup(stored.id).setup == tt
    assert library.setup(stored.id).athlete_id == ann.id
    assert [r.setup for r in library.setups(ann.id)] == [tt]
    assert len(library.setups()) == 2
    with pytest.raises(InputError, match="no athlete with id 99"):
        library.add_setup(99, tt)


def test_courses_keep_the_gpx_file_byte_for_byte(library):
    stored = library.add_course("Col de l’Été", GPX, 41250.0, 610.0)
    again = library.course(stored.id)
    assert again.gpx == GPX
    # checksum by the reference implementation (Python's hashlib, FIPS 180-4 SHA-256)
    assert again.summary.gpx_sha256 == hashlib.sha256(GPX).hexdigest()
    assert again.summary.gpx_size == len(GPX)
    assert (again.name, again.summary.distance_m, again.summary.ascent_m) == (
        "Col de l’Été", 41250.0, 610.0)
    listed = library.courses()
    assert [c.id for c in listed] == [stored.id] and not hasattr(listed[0], "gpx")


def test_plans_round_trip_with_inputs_results_and_version(library):
    ids = fill(library)
    plan = library.plan(ids["race"])
    assert plan.inputs == plan_inputs(ids["ann"], ids["tt"], ids["hill"])
    assert plan.result() == plan_result()
    assert plan.summary.library_version == pacing.__version__
    assert plan.summary.notes == "start easy"
    assert (plan.summary.athlete_id, plan.summary.setup_id, plan.summary.course_id) == (
        ids["ann"], ids["tt"], ids["hill"])
    assert {p.id for p in library.plans(athlete_id=ids["ann"])} == {ids["race"], ids["easy"]}
    assert {p.id for p in library.plans(course_id=ids["flat"])} == {ids["easy"], ids["run"]}


def test_the_same_gpx_file_is_found_again(library):
    stored = library.add_course("Hill loop", GPX, 41250.0, 610.0)
    library.add_course("other", b"<gpx/>", 1000.0, 0.0)
    assert [c.id for c in library.find_courses(GPX)] == [stored.id]
    assert library.find_courses(GPX + b" ") == ()


def test_plan_links_must_exist_and_agree(library):
    ids = fill(library)
    with pytest.raises(InputError, match="no course with id 999"):
        library.save_plan("x", {"course_id": 999}, plan_result())
    with pytest.raises(InputError, match="belongs to athlete"):
        library.save_plan("x", {"athlete_id": ids["bo"], "setup_id": ids["tt"]}, plan_result())
    with pytest.raises(InputError, match="positive whole number"):
        library.save_plan("x", {"course_id": "3"}, plan_result())
    # a setup alone links its athlete
    plan = library.save_plan("x", {"setup_id": ids["tt"]}, plan_result())
    assert plan.summary.athlete_id == ids["ann"]


json_values = st.recursive(
    st.none() | st.booleans() | st.integers(-2**53, 2**53)
    | st.floats(allow_nan=False, allow_infinity=False) | st.text(max_size=20),
    lambda children: st.lists(children, max_size=4)
    | st.dictionaries(st.text(max_size=8), children, max_size=4),
    max_leaves=20,
)


@settings(max_examples=25, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(inputs=st.dictionaries(st.text(max_size=8).filter(lambda k: not k.endswith("_id")),
                              json_values, max_size=5),
       strategy=json_values, finish=st.floats(1e-3, 1e7))
def test_any_json_plan_round_trips_exactly(library, inputs, strategy, finish):
    result = {"strategy": strategy, "targets": [{"x": strategy}], "finish_time": finish}
    plan = library.plan(library.save_plan("p", inputs, result).id)
    assert plan.inputs == inputs
    assert plan.strategy == strategy and plan.summary.finish_time == finish


# ---------------------------------------------------------------------------------------------
# changes, revisions, deletes

def test_update_with_the_current_revision_bumps_it(library):
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    changed = library.update_athlete(ann.id, Athlete(name="Ann", body_mass=60.0),
                                     revision=ann.revision)
    assert changed.revision == 2 and changed.athlete.body_mass == 60.0
    assert changed.updated_at >= changed.created_at == ann.created_at


def test_a_stale_revision_is_refused_not_overwritten(library):
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    first = library.update_athlete(ann.id, Athlete(name="Ann", body_mass=60.0),
                                     revision=ann.revision)
    with pytest.raises(ConflictError, match="changed elsewhere") as error:
        library.update_athlete(ann.id, Athlete(name="Ann", body_mass=99.0),
                               revision=ann.revision)
    assert "\n" not in str(error.value)
    assert library.athlete(ann.id) == first


def test_every_kind_refuses_stale_revisions(library):
    ids = fill(library)
    setup = library.setup(ids["tt"])
    library.update_setup(setup.id, Setup(name="TT v2"), revision=setup.revision)
    with pytest.raises(ConflictError):
        library.update_setup(setup.id, Setup(name="TT v3"), revision=setup.revision)
    course = library.course(ids["hill"])
    library.rename_course(course.id, "Hill loop (2026)", revision=course.revision)
    with pytest.raises(ConflictError):
        library.rename_course(course.id, "other", revision=course.revision)
    plan = library.plan(ids["race"])
    library.update_plan(plan.id, revision=plan.revision, notes="negative split")
    with pytest.raises(ConflictError):
        library.update_plan(plan.id, revision=plan.revision, name="other")
    with pytest.raises(ConflictError):
        library.delete_plan(plan.id, confirm=True, revision=plan.revision)
    assert library.plan(plan.id).summary.notes == "negative split"


def test_updating_a_plan_replaces_inputs_and_result_together(library):
    ids = fill(library)
    plan = library.plan(ids["race"])
    with pytest.raises(InputError, match="together"):
        library.update_plan(plan.id, revision=plan.revision, inputs={})
    new = library.update_plan(plan.id, revision=plan.revision,
                              inputs=plan_inputs(ids["ann"], ids["road"], ids["flat"]),
                              result=plan_result(1.2))
    assert new.summary.setup_id == ids["road"] and new.result() == plan_result(1.2)
    assert new.summary.notes == "start easy" and new.revision == 2


def test_a_plan_records_the_version_of_pacing_that_computed_its_numbers(library, monkeypatch):
    monkeypatch.setattr(pacing, "__version__", "0.0.9")
    plan = library.save_plan("p", {}, plan_result())
    assert plan.summary.library_version == "0.0.9"
    monkeypatch.setattr(pacing, "__version__", "0.2.0")
    renamed = library.update_plan(plan.id, revision=plan.revision, name="q", notes="n")
    assert renamed.summary.library_version == "0.0.9"  # same numbers, same version
    recomputed = library.update_plan(plan.id, revision=renamed.revision, inputs={},
                                     result=plan_result(1.1))
    assert recomputed.summary.library_version == "0.2.0"
    assert [p.library_version for p in library.plans()] == ["0.2.0"]


def test_updating_a_missing_entry_says_so(library):
    with pytest.raises(InputError, match="no athlete with id 5"):
        library.update_athlete(5, Athlete(), revision=1)


def test_deleting_needs_confirmation_and_says_what_goes(library):
    ids = fill(library)
    before = dump(library)
    with pytest.raises(InputError, match="also deletes 2 setups and 2 saved plans; confirm"):
        library.delete_athlete(ids["ann"])
    with pytest.raises(InputError, match="confirm"):
        library.delete_plan(ids["race"])
    assert dump(library) == before
    library.delete_athlete(ids["ann"], confirm=True)
    assert [a.id for a in library.athletes()] == [ids["bo"]]
    assert library.setups() == ()
    assert [p.id for p in library.plans()] == [ids["run"]]


def test_courses_and_setups_in_use_are_kept(library):
    ids = fill(library)
    with pytest.raises(InputError, match="used by 2 saved plans"):
        library.delete_course(ids["flat"], confirm=True)
    with pytest.raises(InputError, match="used by 1 saved plan;"):
        library.delete_setup(ids["tt"], confirm=True)
    library.delete_plan(ids["race"], confirm=True)
    library.delete_setup(ids["tt"], confirm=True)
    library.delete_course(ids["hill"], confirm=True, revision=1)
    with pytest.raises(InputError, match="no course with id"):
        library.course(ids["hill"])


# ---------------------------------------------------------------------------------------------
# concurrent writers

def test_two_connections_a_stale_copy_is_detected(database):
    with open_library(database) as first, open_library(database) as second:
        plan_id = fill(first)["race"]
        mine, theirs = first.plan(plan_id), second.plan(plan_id)
        first.update_plan(plan_id, revision=mine.revision, notes="coach A")
        with pytest.raises(ConflictError):
            second.update_plan(plan_id, revision=theirs.revision, notes="coach B")
        fresh = second.plan(plan_id)
        assert fresh.summary.notes == "coach A"
        second.update_plan(plan_id, revision=fresh.revision, notes="coach B, after reloading")
        assert first.plan(plan_id).summary.notes == "coach B, after reloading"


def test_concurrent_writers_lose_nothing(database):
    """Four writers, each with its own engine: each adds plans and increments one shared
    number by read-modify-write with retry on conflict. No update is lost, nothing breaks."""
    with open_library(database) as library:
        athlete_id = library.add_athlete(Athlete(name="shared", w_prime=10000.0)).id
    writers, rounds = 4, 8
    errors, conflicts = [], []

    def writer(number):
        try:
            with open_library(database) as mine:
                for i in range(rounds):
                    mine.save_plan(f"w{number}-{i}", {"athlete_id": athlete_id},
                                   plan_result(1.0 + i / 10))
                    while True:
                        record = mine.athlete(athlete_id)
                        athlete = record.athlete
                        changed = Athlete(**{**athlete.__dict__,
                                             "w_prime": athlete.w_prime + 1.0})
                        try:
                            mine.update_athlete(athlete_id, changed, revision=record.revision)
                            break
                        except ConflictError:
                            conflicts.append(number)
        except Exception as error:  # noqa: BLE001 - collected for the assertion
            errors.append(error)

    threads = [threading.Thread(target=writer, args=(n,)) for n in range(writers)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert errors == []
    with open_library(database) as library:
        record = library.athlete(athlete_id)
        assert record.athlete.w_prime == 10000.0 + writers * rounds
        assert record.revision == 1 + writers * rounds
        assert len(library.plans()) == writers * rounds
        for summary in library.plans():
            round_number = int(summary.name.split("-")[1])
            assert library.plan(summary.id).result() == plan_result(1.0 + round_number / 10)
        if library.engine.dialect.name == "sqlite":
            # SQLite's own consistency check (sqlite.org/pragma.html#pragma_integrity_check)
            with library.engine.connect() as connection:
                assert connection.exec_driver_sql("PRAGMA integrity_check").scalar() == "ok"


def test_a_writer_that_waits_too_long_gets_a_clear_conflict(tmp_path, monkeypatch):
    monkeypatch.setattr("pacing.store.database.SQLITE_BUSY_TIMEOUT", 0.2)
    path = tmp_path / "busy.sqlite3"
    with open_library(path) as library:
        other = sqlite3.connect(path, isolation_level=None)
        other.execute("BEGIN IMMEDIATE")  # another program holds the write lock
        try:
            with pytest.raises(ConflictError, match="busy with another writer"):
                library.add_athlete(Athlete(name="Ann"))
        finally:
            other.execute("ROLLBACK")
            other.close()
        assert library.add_athlete(Athlete(name="Ann")).id == 1
