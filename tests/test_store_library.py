"""The coach's library as a whole (pacing.store.library: Library, open_library): two connections
on one database see each other's changes, a stale copy is detected, concurrent writers neither
corrupt nor overwrite.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import threading

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    fill,
    plan_result,
)

from pacing.athlete import Athlete
from pacing.errors import ConflictError
from pacing.store.library import open_library


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
