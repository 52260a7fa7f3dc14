"""Adding a library file (pacing.store.library_file) to a library.

The file is read and checked completely first (read_library_file) and every row made; only then
is everything written in one short transaction (a few bulk inserts), so the database is either
unchanged or holds the whole file, and other writers wait for it only briefly.
Every entry gets a new id and the plans' link keys (``athlete_id``, ``setup_id``,
``course_id`` in their inputs) are rewritten to them; entries keep their creation and change
times, saved plans the version of pacing that made them. A course whose GPX file and name are
already in the library is reused, not stored twice. A name the library already holds refuses
the file, or with ``on_existing="keep-both"`` the imported entry is named "name (2)".
"""

from __future__ import annotations

import datetime
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection

from pacing.store.drag_origin import origin_columns
from pacing.store.library import Library
from pacing.store.library_file import LibraryFile, read_library_file
from pacing.store.rows import (
    NAME_LENGTH,
    athlete_row,
    course_row,
    plan_inputs_text,
    plan_result_values,
    plural,
    setup_row,
)
from pacing.store.schema import athletes, courses, plan_reviews, plans, setups, teams
from pacing.store.statements import NameTaken, check_on_existing


@dataclass(frozen=True)
class ImportSummary:
    """What an import added.

    Attributes
    ----------
    athletes : int
        New athletes [-].
    setups : int
        New setups [-].
    courses : int
        New courses [-].
    courses_already_stored : int
        Courses of the file whose GPX file and name were already stored, reused [-].
    plans : int
        New saved plans [-].
    teams : int
        New teams [-].
    reviews : int
        New race reviews kept with the saved plans [-].
    """

    athletes: int
    setups: int
    courses: int
    courses_already_stored: int
    plans: int
    teams: int = 0
    reviews: int = 0

    def message(self) -> str:
        """One line for the user, e.g. "imported 1 athlete, 2 setups, 1 course and 3 saved
        plans"."""
        reused = (f" ({self.courses_already_stored} already in the library)"
                  if self.courses_already_stored else "")
        text = (f"imported {plural(self.athletes, 'athlete')}, {plural(self.setups, 'setup')}, "
                f"{plural(self.courses, 'course')}{reused} and "
                f"{plural(self.plans, 'saved plan')}")
        text += f" with {plural(self.reviews, 'race review')}" if self.reviews else ""
        return text + (f", and {plural(self.teams, 'team')}" if self.teams else "")


def _stamped(values: Mapping[str, Any], created_at: datetime.datetime,
             updated_at: datetime.datetime) -> dict[str, Any]:
    """Column values of a new entry (revision 1) with its creation and change times."""
    return dict(values, revision=1, created_at=created_at, updated_at=updated_at)


def insert_many(connection: Connection, table: sa.Table, rows: list[dict[str, Any]]
                ) -> list[int]:
    """Insert new entries in one statement and return their ids in the order of `rows`.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside the writing transaction.
    table : sqlalchemy.Table
        One of the library's tables (pacing.store.schema).
    rows : list of dict
        Column values of each entry, with revision and times (checked before).

    Returns
    -------
    list of int
        The new ids, in the order of `rows`.
    """
    if not rows:
        return []
    result = connection.execute(
        table.insert().returning(table.c.id, sort_by_parameter_order=True), rows)
    return [row[0] for row in result]


@dataclass(frozen=True)
class _Prepared:
    """A library file's rows, made and checked before the writing transaction begins."""

    athletes: list[dict[str, Any]]
    setups: list[dict[str, Any]]
    setup_athletes: list[int]
    courses: list[dict[str, Any]]
    plans: list[dict[str, Any]]
    plan_inputs: list[dict[str, Any]]
    plan_owners: list[int | None]


def _prepare(data: LibraryFile) -> _Prepared:
    """Every row of the file, checked (no database needed): the slow part of an import,
    kept out of the writing transaction."""
    setup_owner = {setup.id: setup.athlete_id for setup in data.setups}
    plan_inputs = [dict(plan.inputs) for plan in data.plans]
    # a setup alone links its athlete (as pacing.store.library_plans.resolve_plan_links)
    plan_owners: list[int | None] = [
        inputs["athlete_id"] if inputs.get("athlete_id") is not None
        else setup_owner.get(inputs.get("setup_id", 0)) for inputs in plan_inputs]
    return _Prepared(
        athletes=[_stamped(athlete_row(a.athlete), a.created_at, a.updated_at)
                  for a in data.athletes],
        setups=[_stamped(dict(setup_row(s.setup),
                              **origin_columns(s.drag_area_origin, s.setup.drag_area)),
                         s.created_at, s.updated_at) for s in data.setups],
        setup_athletes=[s.athlete_id for s in data.setups],
        courses=[_stamped(course_row(c.name, c.gpx, c.distance_m, c.ascent_m), c.created_at,
                          c.updated_at) for c in data.courses],
        plans=[_stamped(dict(plan_result_values(p.result), name=p.name, notes=p.notes,
                             library_version=p.library_version), p.created_at, p.updated_at)
               for p in data.plans],
        plan_inputs=plan_inputs, plan_owners=plan_owners)


#: What an import does with a name the library holds already: refuse the file (NameTaken) or
#: keep both (the imported entry is named "name (2)").
IMPORT_ON_EXISTING = ("refuse", "keep-both")


class _Names:
    """The names of one table taken so far, and how an imported entry's name is placed."""

    def __init__(self, connection: Connection, table: sa.Table, kind: str,
                 on_existing: str) -> None:
        self.kind = kind
        self.on_existing = on_existing
        self.ids = dict(connection.execute(
            sa.select(table.c.name, sa.func.min(table.c.id)).group_by(table.c.name)).all())
        self.taken = set(self.ids)

    def place(self, name: str) -> str:
        """The name an imported entry is stored under (NameTaken when refused)."""
        if name in self.taken:
            if self.on_existing == "refuse":
                raise NameTaken(self.kind, name, self.ids.get(name, 0))
            number = 2
            while f"{name[:NAME_LENGTH - 12].rstrip()} ({number})" in self.taken:
                number += 1
            name = f"{name[:NAME_LENGTH - 12].rstrip()} ({number})"
        self.taken.add(name)
        return name


def _placed(rows: list[dict[str, Any]], names: _Names) -> list[dict[str, Any]]:
    """`rows` with each name placed by `names`."""
    return [dict(row, name=names.place(row["name"])) for row in rows]


def _course_ids(connection: Connection, rows: list[dict[str, Any]], on_existing: str
                ) -> tuple[list[int], int]:
    """Library ids of the file's courses, stored now unless the same GPX file and name are
    already stored (reused, not stored twice); and how many were reused."""
    digests = sorted({row["gpx_sha256"] for row in rows})
    stored: dict[tuple[str, str], int] = {}
    for start in range(0, len(digests), 500):  # bounded IN lists
        for row in connection.execute(
                sa.select(courses.c.id, courses.c.gpx_sha256, courses.c.name)
                .where(courses.c.gpx_sha256.in_(digests[start:start + 500]))
                .order_by(courses.c.id.desc())):
            stored[(row.gpx_sha256, row.name)] = row.id  # the oldest one wins
    new_rows = [row for row in rows if (row["gpx_sha256"], row["name"]) not in stored]
    names = _Names(connection, courses, "course", on_existing)
    new_ids = iter(insert_many(connection, courses, _placed(new_rows, names)))
    ids = [stored.get((row["gpx_sha256"], row["name"])) or next(new_ids) for row in rows]
    return ids, len(rows) - len(new_rows)


def _plan_rows(prepared: _Prepared, maps: Mapping[str, Mapping[int, int]]
               ) -> list[dict[str, Any]]:
    """The plans' rows, their link keys rewritten from file ids to library ids."""
    rows = []
    for values, inputs, owner in zip(prepared.plans, prepared.plan_inputs,
                                     prepared.plan_owners, strict=True):
        inputs = dict(inputs)
        for key, mapping in maps.items():
            if inputs.get(key) is not None:
                inputs[key] = mapping[inputs[key]]
        text, links = plan_inputs_text(inputs)
        links["athlete_id"] = None if owner is None else maps["athlete_id"][owner]
        rows.append(dict(values, **links, inputs=text))
    return rows


def import_library(library: Library, source: str | bytes | LibraryFile, *,
                   on_existing: str = "refuse") -> ImportSummary:
    """Add everything in a library file to the library, in one transaction.

    The file is checked completely first and every row made before the writing transaction
    begins (which then only inserts, a few statements per table); a bad file raises
    InputError and the database is left as it was. Every entry gets a new id; plan inputs'
    link keys are rewritten to them. Saved plans keep the pacing version that made them.

    Parameters
    ----------
    library : Library
        The open library to add to.
    source : str or bytes or LibraryFile
        The file's text or bytes, or a file already read by read_library_file.
    on_existing : str
        When an athlete, course, saved plan or team of the file has a name the library holds (a
        course with the same GPX file and name is reused, not a clash): "refuse" the whole
        file (NameTaken, nothing written) or "keep-both" (the imported one is named
        "name (2)") [-].

    Returns
    -------
    ImportSummary
        How many entries were added, and how many courses were already stored.

    Raises
    ------
    InputError
        A bad file (nothing written), or a database failure (everything rolled back).
    NameTaken
        A name is taken and `on_existing` is "refuse" (nothing written).
    """
    check_on_existing(on_existing, IMPORT_ON_EXISTING)
    data = source if isinstance(source, LibraryFile) else read_library_file(source)
    prepared = _prepare(data)
    with library.transaction() as connection:
        athlete_ids = insert_many(connection, athletes, _placed(
            prepared.athletes, _Names(connection, athletes, "athlete", on_existing)))
        athlete_map = dict(zip((a.id for a in data.athletes), athlete_ids, strict=True))
        setup_ids = insert_many(connection, setups, [
            dict(row, athlete_id=athlete_map[owner])
            for row, owner in zip(prepared.setups, prepared.setup_athletes, strict=True)])
        course_ids, reused = _course_ids(connection, prepared.courses, on_existing)
        maps = {"athlete_id": athlete_map,
                "setup_id": dict(zip((s.id for s in data.setups), setup_ids, strict=True)),
                "course_id": dict(zip((c.id for c in data.courses), course_ids, strict=True))}
        plan_ids = insert_many(connection, plans, _placed(
            _plan_rows(prepared, maps), _Names(connection, plans, "saved plan", on_existing)))
        insert_many(connection, plan_reviews, [
            _stamped(dict(review.row, plan_id=plan_id), review.created_at, review.updated_at)
            for plan, plan_id in zip(data.plans, plan_ids, strict=True)
            for review in plan.reviews])
        insert_many(connection, teams, _placed(
            [_stamped(t.row, t.created_at, t.updated_at) for t in data.teams],
            _Names(connection, teams, "team", on_existing)))
    return ImportSummary(athletes=len(data.athletes), setups=len(data.setups),
                         courses=len(data.courses) - reused, courses_already_stored=reused,
                         plans=len(data.plans), teams=len(data.teams),
                         reviews=sum(len(plan.reviews) for plan in data.plans))
