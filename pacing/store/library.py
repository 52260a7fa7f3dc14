"""The coach's library: athletes, their setups, courses and saved plans, in one database.

Every write is one transaction. Every entry has a revision: a change or a delete that names
the revision it was based on is refused with ConflictError when someone changed the entry in
between, instead of silently overwriting. Deleting needs ``confirm=True``; without it the
InputError message says what would go (fit for the app's question to the user).

Example
-------
>>> from pacing.store.library import open_library
>>> with open_library("/tmp/demo-library.sqlite3") as library:     # doctest: +SKIP
...     ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
...     library.add_setup(ann.id, Setup(name="TT bike", drag_area=0.23))
"""

from __future__ import annotations

import datetime
import os
from collections.abc import Iterator, Mapping
from contextlib import contextmanager
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection, Engine
from sqlalchemy.exc import OperationalError, SQLAlchemyError

import pacing
from pacing.athlete import Athlete, Setup
from pacing.errors import ConflictError, InputError
from pacing.store.database import first_line, open_engine, shown_url, utc_now
from pacing.store.records import (
    PLAN_LINK_KEYS,
    AthleteRecord,
    CourseRecord,
    CourseSummary,
    PlanRecord,
    PlanSummary,
    SetupRecord,
)
from pacing.store.rows import (
    athlete_record,
    athlete_row,
    check_id,
    check_name,
    check_notes,
    course_row,
    course_summary,
    plan_inputs_text,
    plan_record,
    plan_result_values,
    plan_summary,
    plural,
    setup_record,
    setup_row,
)
from pacing.store.schema import athletes, courses, plans, setups

# ---------------------------------------------------------------------------------------------
# statements on a connection (shared with the import of library files)

def _exists(connection: Connection, table: sa.Table, entry_id: int) -> bool:
    """Whether `table` holds an entry with this id."""
    return connection.execute(sa.select(table.c.id).where(table.c.id == entry_id)).first() \
        is not None


def resolve_plan_links(connection: Connection, links: Mapping[str, int | None]
                       ) -> dict[str, int | None]:
    """The link columns of a plan, checked against the library.

    The setup must belong to the athlete when both are given; a setup alone links its athlete.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the transaction that writes the plan.
    links : Mapping
        ``athlete_id``, ``setup_id`` and ``course_id`` (PLAN_LINK_KEYS): library ids or None
        (a missing key counts as None).

    Returns
    -------
    dict
        The three link columns, the athlete filled in from the setup when only the setup is
        given.

    Raises
    ------
    InputError
        A linked entry that does not exist, or a setup of another athlete.
    """
    athlete_id, setup_id, course_id = (links.get(key) for key in PLAN_LINK_KEYS)
    if athlete_id is not None and not _exists(connection, athletes, athlete_id):
        raise InputError(f"no athlete with id {athlete_id}")
    if course_id is not None and not _exists(connection, courses, course_id):
        raise InputError(f"no course with id {course_id}")
    if setup_id is not None:
        owner = connection.execute(
            sa.select(setups.c.athlete_id).where(setups.c.id == setup_id)).scalar()
        if owner is None:
            raise InputError(f"no setup with id {setup_id}")
        if athlete_id is not None and owner != athlete_id:
            raise InputError(f"setup {setup_id} belongs to athlete {owner}, not {athlete_id}")
        athlete_id = owner
    return {"athlete_id": athlete_id, "setup_id": setup_id, "course_id": course_id}


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


def _update_row(connection: Connection, table: sa.Table, kind: str, entry_id: int,
                revision: int, values: Mapping[str, Any]) -> None:
    """Change an entry if it still has `revision` (which goes up by one); otherwise refuse."""
    check_id(entry_id, f"{kind} id")
    check_id(revision, "revision")
    result = connection.execute(
        table.update()
        .where(table.c.id == entry_id, table.c.revision == revision)
        .values(**values, revision=revision + 1, updated_at=utc_now()))
    if result.rowcount != 1:
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


def _count(connection: Connection, table: sa.Table,
           condition: sa.ColumnElement[bool]) -> int:
    """How many entries of `table` meet `condition`."""
    return connection.execute(sa.select(sa.func.count()).select_from(table)
                              .where(condition)).scalar_one()


# ---------------------------------------------------------------------------------------------

class Library:
    """A coach's library in one database. Open it with `open_library`; close it when done
    (or use it as a context manager). Methods return frozen records, never database objects.

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

    def __enter__(self) -> Library:
        return self

    def __exit__(self, *_exc: object) -> None:
        self.close()

    @contextmanager
    def transaction(self) -> Iterator[Connection]:
        """One transaction: committed when the block ends, rolled back on any error.

        Database failures become a one-line InputError (ConflictError when SQLite stayed
        locked by another writer past its timeout).

        Yields
        ------
        sqlalchemy.engine.Connection
            The connection inside the transaction.
        """
        try:
            with self._engine.begin() as connection:
                yield connection
        except OperationalError as error:
            if "locked" in first_line(error) or "busy" in first_line(error):
                raise ConflictError("the library is busy with another writer; try again") \
                    from None
            raise InputError(f"library database error: {first_line(error)}") from None
        except SQLAlchemyError as error:
            raise InputError(f"library database error: {first_line(error)}") from None

    # ---- athletes ---------------------------------------------------------------------------

    def add_athlete(self, athlete: Athlete) -> AthleteRecord:
        """Store a new athlete.

        Parameters
        ----------
        athlete : pacing.athlete.Athlete
            The athlete's values (SI).

        Returns
        -------
        AthleteRecord
            As stored: new id, revision 1.
        """
        values = athlete_row(athlete)
        with self.transaction() as connection:
            new_id = insert_row(connection, athletes, values)
        return self.athlete(new_id)

    def athlete(self, athlete_id: int) -> AthleteRecord:
        """The athlete with this id.

        Parameters
        ----------
        athlete_id : int
            Library id.

        Returns
        -------
        AthleteRecord
            The stored athlete (InputError if there is none).
        """
        return athlete_record(self._one(athletes, "athlete", athlete_id))

    def athletes(self) -> tuple[AthleteRecord, ...]:
        """All athletes.

        Returns
        -------
        tuple of AthleteRecord
            Ordered by name, then id.
        """
        return tuple(athlete_record(row) for row in
                     self._rows(sa.select(athletes).order_by(athletes.c.name, athletes.c.id)))

    def update_athlete(self, athlete_id: int, athlete: Athlete, *, revision: int
                       ) -> AthleteRecord:
        """Replace an athlete's values.

        Parameters
        ----------
        athlete_id : int
            Library id.
        athlete : pacing.athlete.Athlete
            The new values (SI).
        revision : int
            The revision of the copy the change is based on (the record's `revision`).

        Returns
        -------
        AthleteRecord
            As stored now (revision one higher).

        Raises
        ------
        ConflictError
            Someone changed the athlete since `revision`.
        """
        values = athlete_row(athlete)
        with self.transaction() as connection:
            _update_row(connection, athletes, "athlete", athlete_id, revision, values)
        return self.athlete(athlete_id)

    def delete_athlete(self, athlete_id: int, *, confirm: bool = False,
                       revision: int | None = None) -> None:
        """Delete an athlete with their setups and saved plans.

        Parameters
        ----------
        athlete_id : int
            Library id.
        confirm : bool
            Must be True; otherwise nothing is deleted and the InputError says what would go.
        revision : int or None
            The revision the deletion is based on (ConflictError if stale); None deletes
            whatever is stored.
        """
        with self.transaction() as connection:
            row = self._one(athletes, "athlete", athlete_id, connection)
            n_setups = _count(connection, setups, setups.c.athlete_id == athlete_id)
            n_plans = _count(connection, plans, plans.c.athlete_id == athlete_id)
            if not confirm:
                raise InputError(
                    f"deleting athlete {row.name!r} also deletes {plural(n_setups, 'setup')} "
                    f"and {plural(n_plans, 'saved plan')}; confirm to go ahead")
            connection.execute(plans.delete().where(plans.c.athlete_id == athlete_id))
            connection.execute(setups.delete().where(setups.c.athlete_id == athlete_id))
            self._delete(connection, athletes, "athlete", athlete_id, revision)

    # ---- setups -----------------------------------------------------------------------------

    def add_setup(self, athlete_id: int, setup: Setup) -> SetupRecord:
        """Store a new setup of an athlete.

        Parameters
        ----------
        athlete_id : int
            Library id of the athlete who rides it.
        setup : pacing.athlete.Setup
            The setup's values (SI).

        Returns
        -------
        SetupRecord
            As stored: new id, revision 1.
        """
        values = setup_row(setup)
        with self.transaction() as connection:
            self._one(athletes, "athlete", athlete_id, connection)
            new_id = insert_row(connection, setups, dict(values, athlete_id=athlete_id))
        return self.setup(new_id)

    def setup(self, setup_id: int) -> SetupRecord:
        """The setup with this id.

        Parameters
        ----------
        setup_id : int
            Library id.

        Returns
        -------
        SetupRecord
            The stored setup (InputError if there is none).
        """
        return setup_record(self._one(setups, "setup", setup_id))

    def setups(self, athlete_id: int | None = None) -> tuple[SetupRecord, ...]:
        """All setups, or those of one athlete.

        Parameters
        ----------
        athlete_id : int or None
            Library id of the athlete; None for every setup.

        Returns
        -------
        tuple of SetupRecord
            Ordered by athlete id, name, then id.
        """
        query = sa.select(setups).order_by(setups.c.athlete_id, setups.c.name, setups.c.id)
        if athlete_id is not None:
            query = query.where(setups.c.athlete_id == athlete_id)
        return tuple(setup_record(row) for row in self._rows(query))

    def update_setup(self, setup_id: int, setup: Setup, *, revision: int) -> SetupRecord:
        """Replace a setup's values.

        Parameters
        ----------
        setup_id : int
            Library id.
        setup : pacing.athlete.Setup
            The new values (SI).
        revision : int
            The revision of the copy the change is based on (the record's `revision`).

        Returns
        -------
        SetupRecord
            As stored now (revision one higher).

        Raises
        ------
        ConflictError
            Someone changed the setup since `revision`.
        """
        values = setup_row(setup)
        with self.transaction() as connection:
            _update_row(connection, setups, "setup", setup_id, revision, values)
        return self.setup(setup_id)

    def delete_setup(self, setup_id: int, *, confirm: bool = False,
                     revision: int | None = None) -> None:
        """Delete a setup (refused while saved plans use it).

        Parameters
        ----------
        setup_id : int
            Library id.
        confirm : bool
            Must be True; otherwise nothing is deleted (InputError).
        revision : int or None
            The revision the deletion is based on (ConflictError if stale); None deletes
            whatever is stored.
        """
        with self.transaction() as connection:
            row = self._one(setups, "setup", setup_id, connection)
            n_plans = _count(connection, plans, plans.c.setup_id == setup_id)
            if n_plans:
                raise InputError(f"setup {row.name!r} is used by "
                                 f"{plural(n_plans, 'saved plan')}; delete them first")
            if not confirm:
                raise InputError(f"deleting setup {row.name!r} cannot be undone; confirm to "
                                 "go ahead")
            self._delete(connection, setups, "setup", setup_id, revision)

    # ---- courses ----------------------------------------------------------------------------

    def add_course(self, name: str, gpx: bytes, distance_m: float, ascent_m: float
                   ) -> CourseRecord:
        """Store a course: its original GPX file byte for byte, a name and its summary.

        Parameters
        ----------
        name : str
            Label.
        gpx : bytes
            The GPX file as read from disk or upload, at most GPX_SIZE_LIMIT [bytes].
        distance_m : float
            Course length, computed by the caller [m].
        ascent_m : float
            Total climbing, computed by the caller [m].

        Returns
        -------
        CourseRecord
            As stored: new id, revision 1, the file's SHA-256 and size.
        """
        values = course_row(name, gpx, distance_m, ascent_m)
        with self.transaction() as connection:
            new_id = insert_row(connection, courses, values)
        return self.course(new_id)

    def course(self, course_id: int) -> CourseRecord:
        """The course with this id, with its GPX bytes.

        Parameters
        ----------
        course_id : int
            Library id.

        Returns
        -------
        CourseRecord
            The stored course and its original file (InputError if there is none).
        """
        row = self._one(courses, "course", course_id)
        return CourseRecord(summary=course_summary(row), gpx=bytes(row.gpx))

    def courses(self) -> tuple[CourseSummary, ...]:
        """All courses, without their GPX bytes.

        Returns
        -------
        tuple of CourseSummary
            Ordered by name, then id.
        """
        columns = [column for column in courses.c if column.name != "gpx"]
        query = sa.select(*columns).order_by(courses.c.name, courses.c.id)
        return tuple(course_summary(row) for row in self._rows(query))

    def find_courses(self, gpx: bytes) -> tuple[CourseSummary, ...]:
        """Stored courses whose GPX file is exactly `gpx` (same SHA-256): lets the app reuse
        a course instead of storing the same file twice.

        Parameters
        ----------
        gpx : bytes
            A GPX file [bytes].

        Returns
        -------
        tuple of CourseSummary
            Oldest first; empty when the file is not stored.
        """
        digest = course_row("probe", gpx, 1.0, 0.0)["gpx_sha256"]
        columns = [column for column in courses.c if column.name != "gpx"]
        query = sa.select(*columns).where(courses.c.gpx_sha256 == digest).order_by(courses.c.id)
        return tuple(course_summary(row) for row in self._rows(query))

    def rename_course(self, course_id: int, name: str, *, revision: int) -> CourseRecord:
        """Rename a course (its GPX file never changes: a new file is a new course).

        Parameters
        ----------
        course_id : int
            Library id.
        name : str
            The new label.
        revision : int
            The revision of the copy the change is based on (the record's `revision`).

        Returns
        -------
        CourseRecord
            As stored now (revision one higher).
        """
        values = {"name": check_name(name, "a course")}
        with self.transaction() as connection:
            _update_row(connection, courses, "course", course_id, revision, values)
        return self.course(course_id)

    def delete_course(self, course_id: int, *, confirm: bool = False,
                      revision: int | None = None) -> None:
        """Delete a course (refused while saved plans use it).

        Parameters
        ----------
        course_id : int
            Library id.
        confirm : bool
            Must be True; otherwise nothing is deleted (InputError).
        revision : int or None
            The revision the deletion is based on (ConflictError if stale); None deletes
            whatever is stored.
        """
        with self.transaction() as connection:
            row = self._one(courses, "course", course_id, connection)
            n_plans = _count(connection, plans, plans.c.course_id == course_id)
            if n_plans:
                raise InputError(f"course {row.name!r} is used by "
                                 f"{plural(n_plans, 'saved plan')}; delete them first")
            if not confirm:
                raise InputError(f"deleting course {row.name!r} cannot be undone; confirm to "
                                 "go ahead")
            self._delete(connection, courses, "course", course_id, revision)

    # ---- plans ------------------------------------------------------------------------------

    def save_plan(self, name: str, inputs: Mapping[str, Any], result: Mapping[str, Any], *,
                  notes: str = "") -> PlanRecord:
        """Save a new plan: everything that made it and the numbers it gave.

        The plan records ``pacing.__version__`` as the version of pacing that made it
        (PlanSummary.library_version; pacing.store.reproduce compares it when the plan is
        worked out again).

        Parameters
        ----------
        name : str
            Label.
        inputs : Mapping
            JSON object of everything the computation needs (athlete, setup, conditions,
            strategy request, segmentation, ...; SI numbers). Its optional integer keys
            ``athlete_id``, ``setup_id`` and ``course_id`` link the plan to library entries
            (checked; a setup alone links its athlete).
        result : Mapping
            What `compute(inputs)` returned: ``finish_time`` [s] and ``targets`` (list of
            dicts) required, ``strategy``, ``weather`` and ``time_saved`` [s] optional.
        notes : str
            The coach's free text.

        Returns
        -------
        PlanRecord
            As stored: new id, revision 1.
        """
        name = check_name(name, "a plan")
        inputs_text, links = plan_inputs_text(inputs)
        values = plan_result_values(result)
        notes = check_notes(notes)
        with self.transaction() as connection:
            link_columns = resolve_plan_links(connection, links)
            new_id = insert_row(connection, plans, dict(
                values, **link_columns, name=name, inputs=inputs_text, notes=notes,
                library_version=pacing.__version__))
        return self.plan(new_id)

    def plan(self, plan_id: int) -> PlanRecord:
        """The saved plan with this id, with its inputs and target table.

        Parameters
        ----------
        plan_id : int
            Library id.

        Returns
        -------
        PlanRecord
            The saved plan (InputError if there is none).
        """
        return plan_record(self._one(plans, "plan", plan_id))

    def plans(self, athlete_id: int | None = None, course_id: int | None = None
              ) -> tuple[PlanSummary, ...]:
        """Saved plans without their inputs and target tables.

        Parameters
        ----------
        athlete_id : int or None
            Only the plans of this athlete; None for all.
        course_id : int or None
            Only the plans on this course; None for all.

        Returns
        -------
        tuple of PlanSummary
            Newest change first.
        """
        columns = [column for column in plans.c
                   if column.name not in ("inputs", "strategy", "weather", "targets")]
        query = sa.select(*columns).order_by(plans.c.updated_at.desc(), plans.c.id.desc())
        if athlete_id is not None:
            query = query.where(plans.c.athlete_id == athlete_id)
        if course_id is not None:
            query = query.where(plans.c.course_id == course_id)
        return tuple(plan_summary(row) for row in self._rows(query))

    def update_plan(self, plan_id: int, *, revision: int, name: str | None = None,
                    inputs: Mapping[str, Any] | None = None,
                    result: Mapping[str, Any] | None = None,
                    notes: str | None = None) -> PlanRecord:
        """Change a saved plan: rename it, change its notes, or replace its inputs and result
        together (which records the current ``pacing.__version__``).

        Parameters
        ----------
        plan_id : int
            Library id.
        revision : int
            The revision of the copy the change is based on (the record's `revision`).
        name : str or None
            The new label; None keeps it.
        inputs : Mapping or None
            New inputs (as save_plan); given together with `result`, or None to keep both.
        result : Mapping or None
            New result (as save_plan); given together with `inputs`, or None to keep both.
        notes : str or None
            New notes; None keeps them.

        Returns
        -------
        PlanRecord
            As stored now (revision one higher).

        Raises
        ------
        ConflictError
            Someone changed the plan since `revision`.
        """
        values: dict[str, Any] = {}
        if name is not None:
            values["name"] = check_name(name, "a plan")
        if notes is not None:
            values["notes"] = check_notes(notes)
        if (inputs is None) != (result is None):
            raise InputError("a plan's inputs and result are replaced together")
        links = None
        if inputs is not None:
            values["inputs"], links = plan_inputs_text(inputs)
            values.update(plan_result_values(result))
            values["library_version"] = pacing.__version__
        with self.transaction() as connection:
            if links is not None:
                values.update(resolve_plan_links(connection, links))
            _update_row(connection, plans, "plan", plan_id, revision, values)
        return self.plan(plan_id)

    def delete_plan(self, plan_id: int, *, confirm: bool = False,
                    revision: int | None = None) -> None:
        """Delete a saved plan.

        Parameters
        ----------
        plan_id : int
            Library id.
        confirm : bool
            Must be True; otherwise nothing is deleted (InputError).
        revision : int or None
            The revision the deletion is based on (ConflictError if stale); None deletes
            whatever is stored.
        """
        with self.transaction() as connection:
            row = self._one(plans, "plan", plan_id, connection)
            if not confirm:
                raise InputError(f"deleting saved plan {row.name!r} cannot be undone; confirm "
                                 "to go ahead")
            self._delete(connection, plans, "plan", plan_id, revision)

    # ---- helpers ----------------------------------------------------------------------------

    def _rows(self, query: sa.Select) -> list[Any]:
        """Every row of `query`, read in its own transaction."""
        with self.transaction() as connection:
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

    @staticmethod
    def _delete(connection: Connection, table: sa.Table, kind: str, entry_id: int,
                revision: int | None) -> None:
        """Delete one entry, only at `revision` if given; otherwise refuse (_refuse_stale)."""
        condition = table.c.id == entry_id
        if revision is not None:
            condition = condition & (table.c.revision == check_id(revision, "revision"))
        if connection.execute(table.delete().where(condition)).rowcount != 1:
            _refuse_stale(connection, table, kind, entry_id, revision)


def open_library(location: str | os.PathLike | None = None) -> Library:
    """Open (and on first use create) the library.

    The schema is migrated to the newest revision on the way (see pacing.store.database).

    Parameters
    ----------
    location : str or os.PathLike or None
        An SQLAlchemy URL or the path of an SQLite file; None for the environment variable
        PACING_DATABASE_URL, else ``library.sqlite3`` in the user's data directory.

    Returns
    -------
    Library
        The open library (close it, or use it in a ``with`` block).

    Raises
    ------
    InputError
        A location that cannot hold a library, or a database that cannot be reached or
        migrated, in one line.
    """
    return Library(open_engine(location))
