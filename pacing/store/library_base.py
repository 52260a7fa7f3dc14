"""The part of the coach's library every kind of entry shares: the engine on the database,
transactions that turn database failures into one-line refusals, and reading rows by id.

`LibraryBase` is the base of pacing.store.library.Library, whose methods on athletes and
setups (pacing.store.library_athletes), courses (pacing.store.library_courses) and saved plans
(pacing.store.library_plans) write through `transaction` and the statements of
pacing.store.statements.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from typing import Any, Self

import sqlalchemy as sa
from sqlalchemy.engine import Connection, Engine
from sqlalchemy.exc import OperationalError, SQLAlchemyError

from pacing.errors import InputError
from pacing.store.database import (
    LibraryBusy,
    busy_message,
    first_line,
    is_locked,
    shown_url,
    writing,
)
from pacing.store.rows import check_id


class LibraryBase:
    """An open library database: its engine, transactions and reads by id. Use it through
    pacing.store.library.Library (open_library), which adds the methods on each kind of
    entry.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine on a migrated library database (pacing.store.database.open_engine); the
        library disposes of it when closed.
    """

    def __init__(self, engine: Engine) -> None:
        self._engine = engine

    @property
    def engine(self) -> Engine:
        """The SQLAlchemy engine on the library's database."""
        return self._engine

    @property
    def location(self) -> str:
        """The database URL, password hidden."""
        return shown_url(self._engine)

    def close(self) -> None:
        """Close every connection to the database."""
        self._engine.dispose()

    def __enter__(self) -> Self:
        return self

    def __exit__(self, *_exc: object) -> None:
        self.close()

    @contextmanager
    def transaction(self) -> Iterator[Connection]:
        """One writing transaction: committed when the block ends, rolled back on any error.

        The write lock is taken before the block runs (pacing.store.database.writing: SQLite
        BEGIN IMMEDIATE, tried WRITE_TRIES times); keep the block short. Database failures
        become a one-line InputError (LibraryBusy when another program kept the library
        locked past every try).

        Yields
        ------
        sqlalchemy.engine.Connection
            The connection inside the transaction.
        """
        with self._refusing_failures():
            with writing(self._engine) as connection:
                yield connection

    @contextmanager
    def reading(self) -> Iterator[Connection]:
        """One reading transaction: a consistent view of the library, no write lock taken
        (SQLite in WAL mode: a writer at work does not hold it up).

        Yields
        ------
        sqlalchemy.engine.Connection
            The connection inside the transaction.
        """
        with self._refusing_failures():
            with self._engine.connect() as connection, connection.begin():
                yield connection

    @contextmanager
    def _refusing_failures(self) -> Iterator[None]:
        """Database failures inside the block as one-line InputErrors."""
        try:
            yield
        except OperationalError as error:
            if is_locked(error):
                raise LibraryBusy(busy_message()) from None
            raise InputError(f"library database error: {first_line(error)}") from None
        except SQLAlchemyError as error:
            raise InputError(f"library database error: {first_line(error)}") from None

    def _rows(self, query: sa.Select) -> list[Any]:
        """Every row of `query`, read in its own reading transaction."""
        with self.reading() as connection:
            return list(connection.execute(query))

    def _one(self, table: sa.Table, kind: str, entry_id: int,
             connection: Connection | None = None) -> Any:
        """The row of `table` with this id (InputError naming `kind` if none)."""
        check_id(entry_id, f"{kind} id")
        query = sa.select(table).where(table.c.id == entry_id)
        if connection is None:
            found = self._rows(query)
            row = found[0] if found else None
        else:
            row = connection.execute(query).first()
        if row is None:
            raise InputError(f"no {kind} with id {entry_id}")
        return row
