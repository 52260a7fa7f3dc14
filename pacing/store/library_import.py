"""Adding a library file (pacing.store.library_file) to a library.

The file is read and checked completely first (read_library_file); only then is everything
written in one transaction, so the database is either unchanged or holds the whole file.
Every entry gets a new id and the plans' link keys (``athlete_id``, ``setup_id``,
``course_id`` in their inputs) are rewritten to them; entries keep their creation and change
times, saved plans the version of pacing that made them. A course whose GPX file and name are
already in the library is reused, not stored twice.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

import sqlalchemy as sa
from sqlalchemy.engine import Connection

from pacing.store.library import Library
from pacing.store.library_file import FileCourse, FilePlan, LibraryFile, read_library_file
from pacing.store.library_plans import resolve_plan_links
from pacing.store.rows import (
    athlete_row,
    course_row,
    plan_inputs_text,
    plan_result_values,
    plural,
    setup_row,
)
from pacing.store.schema import athletes, courses, plans, setups
from pacing.store.statements import insert_row


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
    """

    athletes: int
    setups: int
    courses: int
    courses_already_stored: int
    plans: int

    def message(self) -> str:
        """One line for the user, e.g. "imported 1 athlete, 2 setups, 1 course and 3 saved
        plans"."""
        reused = (f" ({self.courses_already_stored} already in the library)"
                  if self.courses_already_stored else "")
        return (f"imported {plural(self.athletes, 'athlete')}, {plural(self.setups, 'setup')}, "
                f"{plural(self.courses, 'course')}{reused} and "
                f"{plural(self.plans, 'saved plan')}")


def _import_course(connection: Connection, course: FileCourse) -> tuple[int, bool]:
    """The library id of a file's course, and whether it was stored already (same GPX file
    and name: that course is reused, not stored twice)."""
    values = course_row(course.name, course.gpx, course.distance_m, course.ascent_m)
    existing = connection.execute(
        sa.select(courses.c.id).where(courses.c.gpx_sha256 == values["gpx_sha256"],
                                      courses.c.name == values["name"])
        .order_by(courses.c.id)).scalar()
    if existing is not None:
        return existing, True
    return insert_row(connection, courses, values, course.created_at, course.updated_at), False


def _import_plan(connection: Connection, plan: FilePlan,
                 maps: Mapping[str, Mapping[int, int]]) -> None:
    """Store a file's saved plan, its link keys rewritten from file ids to library ids."""
    inputs = dict(plan.inputs)
    for key, mapping in maps.items():
        if inputs.get(key) is not None:
            inputs[key] = mapping[inputs[key]]
    inputs_text, links = plan_inputs_text(inputs)
    insert_row(connection, plans, dict(
        plan_result_values(plan.result), **resolve_plan_links(connection, links),
        name=plan.name, inputs=inputs_text, notes=plan.notes,
        library_version=plan.library_version), plan.created_at, plan.updated_at)


def import_library(library: Library, source: str | bytes | LibraryFile) -> ImportSummary:
    """Add everything in a library file to the library, in one transaction.

    The file is checked completely first; a bad file raises InputError and the database is
    left as it was. Every entry gets a new id; plan inputs' link keys are rewritten to them.
    Saved plans keep the pacing version that made them.

    Parameters
    ----------
    library : Library
        The open library to add to.
    source : str or bytes or LibraryFile
        The file's text or bytes, or a file already read by read_library_file.

    Returns
    -------
    ImportSummary
        How many entries were added, and how many courses were already stored.

    Raises
    ------
    InputError
        A bad file (nothing written), or a database failure (everything rolled back).
    """
    data = source if isinstance(source, LibraryFile) else read_library_file(source)
    athlete_map: dict[int, int] = {}
    setup_map: dict[int, int] = {}
    course_map: dict[int, int] = {}
    reused = 0
    with library.transaction() as connection:
        for athlete in data.athletes:
            athlete_map[athlete.id] = insert_row(connection, athletes,
                                                 athlete_row(athlete.athlete),
                                                 athlete.created_at, athlete.updated_at)
        for setup in data.setups:
            setup_map[setup.id] = insert_row(
                connection, setups,
                dict(setup_row(setup.setup), athlete_id=athlete_map[setup.athlete_id]),
                setup.created_at, setup.updated_at)
        for course in data.courses:
            course_map[course.id], stored = _import_course(connection, course)
            reused += int(stored)
        maps = {"athlete_id": athlete_map, "setup_id": setup_map, "course_id": course_map}
        for plan in data.plans:
            _import_plan(connection, plan, maps)
    return ImportSummary(athletes=len(data.athletes), setups=len(data.setups),
                         courses=len(data.courses) - reused, courses_already_stored=reused,
                         plans=len(data.plans))
