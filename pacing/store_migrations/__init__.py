"""Alembic migrations of the library database (run by pacing.store.migrate, not by hand)."""
