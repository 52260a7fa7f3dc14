"""The library's courses: the original GPX file kept byte for byte with a name and its
summary; found again by the file's SHA-256, renamed at a revision, deleted with confirmation
(a course in use by saved plans is kept).
"""

from __future__ import annotations

import sqlalchemy as sa

from pacing.errors import InputError
from pacing.store.library_base import LibraryBase
from pacing.store.records import CourseRecord, CourseSummary
from pacing.store.rows import check_name, course_row, course_summary, plural
from pacing.store.schema import courses, plans
from pacing.store.statements import (
    check_on_existing,
    count_rows,
    delete_row,
    insert_row,
    place_name,
    replace_row,
    update_row,
)


class CourseMethods(LibraryBase):
    """The methods of pacing.store.library.Library on courses.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine on a migrated library database (pacing.store.database.open_engine).
    """

    def add_course(self, name: str, gpx: bytes, distance_m: float, ascent_m: float, *,
                   on_existing: str = "refuse") -> CourseRecord:
        """Store a course: its original GPX file byte for byte, a name and its summary; a
        name already in the library is never overwritten silently.

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
        on_existing : str
            When a course of that name is stored: "refuse" (NameTaken), "replace" (its file
            and summary, keeping its id; refused while saved plans use it) or "keep-both"
            (this one is named "name (2)") [-].

        Returns
        -------
        CourseRecord
            As stored: new id, revision 1 (or the replaced course's id and next revision),
            the file's SHA-256 and size.

        Raises
        ------
        NameTaken
            The name is taken and `on_existing` is "refuse".
        """
        values = course_row(name, gpx, distance_m, ascent_m)
        check_on_existing(on_existing)
        with self.transaction() as connection:
            values["name"], replaced = place_name(connection, courses, "course",
                                                  values["name"], on_existing)
            if replaced is None:
                entry_id = insert_row(connection, courses, values)
            else:
                n_plans = count_rows(connection, plans, plans.c.course_id == replaced)
                if n_plans:
                    raise InputError(f"course {values['name']!r} is used by "
                                     f"{plural(n_plans, 'saved plan')}: its file cannot be "
                                     "replaced; keep both")
                replace_row(connection, courses, replaced, values)
                entry_id = replaced
        return self.course(entry_id)

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
            update_row(connection, courses, "course", course_id, revision, values)
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
            n_plans = count_rows(connection, plans, plans.c.course_id == course_id)
            if n_plans:
                raise InputError(f"course {row.name!r} is used by "
                                 f"{plural(n_plans, 'saved plan')}; delete them first")
            if not confirm:
                raise InputError(f"deleting course {row.name!r} cannot be undone; confirm to "
                                 "go ahead")
            delete_row(connection, courses, "course", course_id, revision)
