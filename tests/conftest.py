"""Shared test setup: no test touches the user's own library file."""

import pytest


@pytest.fixture(autouse=True)
def _private_library(tmp_path, monkeypatch):
    """Point the default library at a fresh SQLite file per test (tests that check the
    variable itself set or delete it again)."""
    monkeypatch.setenv("PACING_DATABASE_URL", f"sqlite:///{tmp_path / 'library.sqlite3'}")
