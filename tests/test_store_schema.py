"""The tables the code uses (pacing.store.schema) are exactly those the newest migration
creates, on SQLite and, with the `postgres` marker, on PostgreSQL (tests/store_fixtures.py)."""

from __future__ import annotations

from alembic.autogenerate import compare_metadata
from alembic.runtime.migration import MigrationContext

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
)

from pacing.store.database import head_revision, schema_revision
from pacing.store.library import open_library
from pacing.store.schema import metadata


def test_migration_from_empty_gives_the_tables_the_code_uses(database):
    with open_library(database) as library:
        assert schema_revision(library.engine) == head_revision() == "0004"
        with library.engine.connect() as connection:
            assert compare_metadata(MigrationContext.configure(connection), metadata) == []
