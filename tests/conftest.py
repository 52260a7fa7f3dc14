"""Shared test setup: no test touches the user's own library file."""

import pytest


@pytest.fixture(autouse=True)
def _private_library(tmp_path, monkeypatch):
    """Point the default library at a fresh SQLite file per test (tests that check the
    variable itself set or delete it again)."""
    monkeypatch.setenv("PACING_DATABASE_URL", f"sqlite:///{tmp_path / 'library.sqlite3'}")


# Property tests: random exploration on developers' machines; on CI (CI=true) the same examples
# every run, so a landing never depends on luck. A counterexample found locally becomes a test.
import os  # noqa: E402

from hypothesis import settings  # noqa: E402

settings.register_profile("ci", derandomize=True, deadline=None, print_blob=True)
if os.environ.get("CI", "").lower() in ("1", "true", "yes"):
    settings.load_profile("ci")
