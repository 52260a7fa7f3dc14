"""Alembic migrations of the library database (run by pacing.store.database.migrate, not by
hand)."""
