"""The library's saved plans: everything that made a plan and the numbers it gave, linked
to the athlete, setup and course it was made for (links checked), with the version of pacing
that made it; changed at a revision, deleted with confirmation.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection

import pacing
from pacing.errors import InputError
from pacing.store.library_base import LibraryBase
from pacing.store.records import PLAN_LINK_KEYS, PlanRecord, PlanSummary
from pacing.store.rows import (
    check_name,
    check_notes,
    plan_inputs_text,
    plan_record,
    plan_result_values,
    plan_summary,
)
from pacing.store.schema import athletes, courses, plan_reviews, plans, setups
from pacing.store.statements import (
    check_on_existing,
    delete_row,
    entry_exists,
    insert_row,
    place_name,
    replace_row,
    update_row,
)


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
    if athlete_id is not None and not entry_exists(connection, athletes, athlete_id):
        raise InputError(f"no athlete with id {athlete_id}")
    if course_id is not None and not entry_exists(connection, courses, course_id):
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


@dataclass(frozen=True)
class CheckedPlan:
    """A plan to save, checked before any transaction (checked_plan).

    Attributes
    ----------
    name : str
        The checked label.
    inputs_text : str
        The inputs as JSON text.
    links : dict
        The inputs' link keys (PLAN_LINK_KEYS), checked against the library when written.
    values : dict
        The result's columns (plan_result_values).
    notes : str
        The checked notes.
    on_existing : str
        "refuse", "replace" or "keep-both" [-].
    """

    name: str
    inputs_text: str
    links: dict[str, int | None]
    values: dict[str, Any]
    notes: str
    on_existing: str


def checked_plan(name: str, inputs: Mapping[str, Any], result: Mapping[str, Any],
                 notes: str = "", on_existing: str = "refuse") -> CheckedPlan:
    """Check a plan to save (as PlanMethods.save_plan takes it) without touching the library.

    Raises
    ------
    InputError
        A bad name, inputs, result, notes or `on_existing`, in one line.
    """
    name = check_name(name, "a plan")
    inputs_text, links = plan_inputs_text(inputs)
    values = plan_result_values(result)
    notes = check_notes(notes)
    check_on_existing(on_existing)
    return CheckedPlan(name, inputs_text, dict(links), values, notes, on_existing)


def write_plan(connection: Connection, plan: CheckedPlan) -> int:
    """Write a checked plan inside the caller's transaction: links resolved, the name placed
    (NameTaken, or replace, or "name (2)"), the version of pacing recorded.

    Parameters
    ----------
    connection : sqlalchemy.engine.Connection
        A connection inside a writing transaction (LibraryBase.transaction).
    plan : CheckedPlan
        What checked_plan gave.

    Returns
    -------
    int
        The saved plan's id (the replaced plan's when replacing).
    """
    link_columns = resolve_plan_links(connection, plan.links)
    name, replaced = place_name(connection, plans, "saved plan", plan.name, plan.on_existing)
    row = dict(plan.values, **link_columns, name=name, inputs=plan.inputs_text,
               notes=plan.notes, library_version=pacing.__version__)
    if replaced is None:
        return insert_row(connection, plans, row)
    replace_row(connection, plans, replaced, row)
    return replaced


class PlanMethods(LibraryBase):
    """The methods of pacing.store.library.Library on saved plans.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine on a migrated library database (pacing.store.database.open_engine).
    """

    def save_plan(self, name: str, inputs: Mapping[str, Any], result: Mapping[str, Any], *,
                  notes: str = "", on_existing: str = "refuse") -> PlanRecord:
        """Save a new plan: everything that made it and the numbers it gave. A name already
        in the library is never overwritten silently.

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
        on_existing : str
            When a saved plan of that name is stored: "refuse" (NameTaken), "replace" (all
            of it, keeping its id) or "keep-both" (this one is named "name (2)") [-].

        Returns
        -------
        PlanRecord
            As stored: new id and revision 1, or the replaced plan's id and next revision.

        Raises
        ------
        NameTaken
            The name is taken and `on_existing` is "refuse".
        """
        checked = checked_plan(name, inputs, result, notes, on_existing)
        with self.transaction() as connection:
            entry_id = write_plan(connection, checked)
        return self.plan(entry_id)

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
            update_row(connection, plans, "plan", plan_id, revision, values)
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
            # its race reviews go with it (pacing.store.library_reviews)
            connection.execute(plan_reviews.delete().where(plan_reviews.c.plan_id == plan_id))
            delete_row(connection, plans, "plan", plan_id, revision)
