"""Statements on a connection inside one writing transaction, shared by the library's methods
(pacing.store.library) and the import of library files (pacing.store.library_import).

A new entry starts at revision 1. A change or a delete that names the revision it was based on
goes through only while the entry still has that revision (which then goes up by one);
otherwise it is refused: InputError when the entry is gone, ConflictError when someone changed
it in between, instead of silently overwriting.
"""

from __future__ import annotations

import datetime
from collections.abc import Mapping
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection

from pacing.errors import ConflictError, InputError
from pacing.store.database import utc_now
from pacing.store.rows import check_id


def entry_exists(connection: Connection, table: sa.Table, entry_id: int) -> bool:
    """Whether `table` holds an entry with this id.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside a transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    entry_id : int
        Library id [-].

    Returns
    -------
    bool
        True when the entry is stored.
    """
    return connection.execute(sa.select(table.c.id).where(table.c.id == entry_id)).first() \
        is not None


def count_rows(connection: Connection, table: sa.Table,
               condition: sa.ColumnElement[bool]) -> int:
    """How many entries of `table` meet `condition`.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside a transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    condition : sqlalchemy.ColumnElement
        A condition on the table's columns.

    Returns
    -------
    int
        The number of entries [-].
    """
    return connection.execute(sa.select(sa.func.count()).select_from(table)
                              .where(condition)).scalar_one()


def insert_row(connection: Connection, table: sa.Table, values: Mapping[str, Any],
               created_at: datetime.datetime | None = None,
               updated_at: datetime.datetime | None = None) -> int:
    """Insert a new entry (revision 1) and return its id.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the writing transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    values : Mapping
        Column values, already checked (pacing.store.rows).
    created_at : datetime.datetime or None
        Creation time, naive UTC (kept when importing a library file); None for now.
    updated_at : datetime.datetime or None
        Time of the last change, naive UTC; None for the creation time.

    Returns
    -------
    int
        The new entry's id.
    """
    now = utc_now()
    created = created_at or now
    row = dict(values, revision=1, created_at=created, updated_at=updated_at or created)
    key = connection.execute(table.insert().values(**row)).inserted_primary_key
    if key is None:  # SQLAlchemy gives None only for statements that are not single inserts
        raise RuntimeError(f"the database gave no id for the new {table.name} entry")
    return key[0]


def update_row(connection: Connection, table: sa.Table, kind: str, entry_id: int,
               revision: int, values: Mapping[str, Any]) -> None:
    """Change an entry if it still has `revision` (which goes up by one); otherwise refuse.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the writing transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    kind : str
        What the entry is, for the messages (e.g. ``"athlete"``).
    entry_id : int
        Library id [-].
    revision : int
        The revision the change is based on [-].
    values : Mapping
        The changed column values, already checked (pacing.store.rows).

    Raises
    ------
    InputError
        No entry with this id (or an id or revision that is not a positive whole number).
    ConflictError
        The entry has another revision now: someone changed it since.
    """
    check_id(entry_id, f"{kind} id")
    check_id(revision, "revision")
    result = connection.execute(
        table.update()
        .where(table.c.id == entry_id, table.c.revision == revision)
        .values(**values, revision=revision + 1, updated_at=utc_now()))
    if result.rowcount != 1:
        _refuse_stale(connection, table, kind, entry_id, revision)


def delete_row(connection: Connection, table: sa.Table, kind: str, entry_id: int,
               revision: int | None) -> None:
    """Delete one entry, only at `revision` if given; otherwise refuse.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the writing transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    kind : str
        What the entry is, for the messages (e.g. ``"setup"``).
    entry_id : int
        Library id [-].
    revision : int or None
        The revision the deletion is based on [-]; None deletes whatever is stored.

    Raises
    ------
    InputError
        No entry with this id.
    ConflictError
        The entry has another revision than `revision` now.
    """
    condition = table.c.id == entry_id
    if revision is not None:
        condition = condition & (table.c.revision == check_id(revision, "revision"))
    if connection.execute(table.delete().where(condition)).rowcount != 1:
        _refuse_stale(connection, table, kind, entry_id, revision)


def _refuse_stale(connection: Connection, table: sa.Table, kind: str, entry_id: int,
                  revision: int | None) -> None:
    """Raise why a change by revision failed: InputError when the entry is gone,
    ConflictError when another revision is stored."""
    current = connection.execute(
        sa.select(table.c.revision).where(table.c.id == entry_id)).scalar()
    if current is None:
        raise InputError(f"no {kind} with id {entry_id}")
    raise ConflictError(f"{kind} {entry_id} was changed elsewhere since you loaded it "
                        f"(revision {revision}, now {current}); reload it and try again")
