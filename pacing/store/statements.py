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


#: What a save does when the name is taken: refuse (NameTaken), replace the entry of that
#: name (it keeps its id, its revision goes up by one), or keep both (the new one is named
#: "name (2)", "name (3)", ...).
ON_EXISTING = ("refuse", "replace", "keep-both")


class NameTaken(InputError):
    """A save under a name the library already holds, refused (nothing was written).

    The message is one line; the app asks whether to replace the entry or keep both and
    saves again with that answer (``on_existing``).

    Parameters
    ----------
    kind : str
        What the entry is (e.g. ``"saved plan"``) [-].
    name : str
        The name asked for [-].
    entry_id : int
        Library id of the entry that holds it [-].
    """

    def __init__(self, kind: str, name: str, entry_id: int) -> None:
        article = "an" if kind[:1] in "aeiou" else "a"
        super().__init__(f"{article} {kind} named {name!r} is already in the library (id "
                         f"{entry_id}); replace it or keep both")
        self.kind = kind
        self.name = name
        self.entry_id = entry_id


def check_on_existing(on_existing: str, allowed: tuple[str, ...] = ON_EXISTING) -> str:
    """A valid `on_existing` answer.

    Parameters
    ----------
    on_existing : str
        One of `allowed` [-].
    allowed : tuple of str
        The answers this save knows (ON_EXISTING or a part of it) [-].

    Returns
    -------
    str
        `on_existing`.

    Raises
    ------
    InputError
        Any other value.
    """
    if on_existing not in allowed:
        raise InputError(f"on_existing must be one of {', '.join(allowed)}, got "
                         f"{on_existing!r}")
    return on_existing


def named_entry(connection: Connection, table: sa.Table, name: str,
                scope: sa.ColumnElement[bool] | None = None) -> int | None:
    """Id of the oldest entry of `table` with this name (within `scope`), or None.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside a transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    name : str
        The name, already normalised (pacing.store.rows.check_name) [-].
    scope : sqlalchemy.ColumnElement or None
        A condition that bounds where names must differ (a setup's athlete), or None for the
        whole table.

    Returns
    -------
    int or None
        The id [-].
    """
    query = sa.select(table.c.id).where(table.c.name == name).order_by(table.c.id).limit(1)
    if scope is not None:
        query = query.where(scope)
    return connection.execute(query).scalar()


def free_name(connection: Connection, table: sa.Table, name: str,
              scope: sa.ColumnElement[bool] | None = None, limit: int = 200) -> str:
    """`name` with the first free " (2)", " (3)", ... (within `scope`), shortened to fit in
    `limit` characters.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside a transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    name : str
        The name that is taken [-].
    scope : sqlalchemy.ColumnElement or None
        As named_entry.
    limit : int
        Longest name [characters].

    Returns
    -------
    str
        A name not yet in use [-].
    """
    query = sa.select(table.c.name).where(table.c.name.like(
        name[:limit - 12].replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_")
        + "%", escape="\\"))
    if scope is not None:
        query = query.where(scope)
    taken = set(connection.execute(query).scalars())
    number = 2
    while True:
        suffix = f" ({number})"
        candidate = name[:limit - len(suffix)].rstrip() + suffix
        if candidate not in taken:
            return candidate
        number += 1


def place_name(connection: Connection, table: sa.Table, kind: str, name: str,
               on_existing: str, scope: sa.ColumnElement[bool] | None = None
               ) -> tuple[str, int | None]:
    """Where a new entry named `name` goes: the name to store it under and the id of the
    entry it replaces (None: a new entry).

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the writing transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    kind : str
        What the entry is, for the message (e.g. ``"saved plan"``) [-].
    name : str
        The name asked for, already normalised [-].
    on_existing : str
        "refuse", "replace" or "keep-both" (ON_EXISTING) [-].
    scope : sqlalchemy.ColumnElement or None
        As named_entry.

    Returns
    -------
    tuple of (str, int or None)
        The name to store, and the id of the entry to replace or None.

    Raises
    ------
    NameTaken
        The name is taken and `on_existing` is "refuse".
    """
    existing = named_entry(connection, table, name, scope)
    if existing is None:
        return name, None
    if on_existing == "replace":
        return name, existing
    if on_existing == "keep-both":
        return free_name(connection, table, name, scope), None
    raise NameTaken(kind, name, existing)


def replace_row(connection: Connection, table: sa.Table, entry_id: int,
                values: Mapping[str, Any]) -> None:
    """Replace an entry's values whatever its revision (which goes up by one): the coach
    said to replace it.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the writing transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    entry_id : int
        Library id [-].
    values : Mapping
        The new column values, already checked (pacing.store.rows).
    """
    connection.execute(table.update().where(table.c.id == entry_id)
                       .values(**values, revision=table.c.revision + 1, updated_at=utc_now()))
