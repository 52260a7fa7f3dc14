"""The library's transactions (pacing.store.library_base.LibraryBase): a writer kept waiting by
another program's lock past SQLite's timeout gets a one-line conflict, and the library works
again once the lock is gone.
"""

from __future__ import annotations

import sqlite3

import pytest

from pacing.athlete import Athlete
from pacing.errors import ConflictError
from pacing.store.library import open_library


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
