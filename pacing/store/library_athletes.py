"""The library's athletes and their setups: add, read, list, change at a revision, delete
with confirmation (an athlete goes with their setups and saved plans; a setup in use by saved
plans is kept).
"""

from __future__ import annotations

import sqlalchemy as sa

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.store.drag_origin import origin_columns
from pacing.store.library_base import LibraryBase
from pacing.store.records import AthleteRecord, DragAreaOrigin, SetupRecord
from pacing.store.rows import athlete_record, athlete_row, plural, setup_record, setup_row
from pacing.store.schema import athletes, plan_reviews, plans, setups
from pacing.store.statements import (
    NameTaken,
    check_on_existing,
    count_rows,
    delete_row,
    insert_row,
    place_name,
    replace_row,
    update_row,
)


def _name_in_use(connection, name: str, exclude_id: int | None = None
                 ) -> tuple[int, str] | None:
    """(id, stored name) of an athlete whose name is `name` apart from letter case (Unicode
    case folding), other than `exclude_id`; None when the name is free. "Ann Lee" and
    "ann lee" are one coach's athlete: a second one is never stored silently."""
    wanted = name.casefold()
    for entry_id, stored in connection.execute(
            sa.select(athletes.c.id, athletes.c.name).order_by(athletes.c.id)):
        if entry_id != exclude_id and stored.casefold() == wanted:
            return int(entry_id), str(stored)
    return None


class AthleteMethods(LibraryBase):
    """The methods of pacing.store.library.Library on athletes and their setups.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine on a migrated library database (pacing.store.database.open_engine).
    """

    # ---- athletes ---------------------------------------------------------------------------

    def add_athlete(self, athlete: Athlete, *, on_existing: str = "refuse") -> AthleteRecord:
        """Store a new athlete; a name already in the library is never overwritten silently.

        Parameters
        ----------
        athlete : pacing.athlete.Athlete
            The athlete's values (SI).
        on_existing : str
            When an athlete of that name is stored: "refuse" (NameTaken), "replace" (its
            values, keeping its id, setups and plans) or "keep-both" (this one is named
            "name (2)") [-].

        Returns
        -------
        AthleteRecord
            As stored: new id and revision 1, or the replaced athlete's id and next revision.

        Raises
        ------
        NameTaken
            The name is taken (letter case aside: "ann" is "Ann") and `on_existing` is
            "refuse".
        """
        values = athlete_row(athlete)
        check_on_existing(on_existing)
        with self.transaction() as connection:
            same = _name_in_use(connection, values["name"])
            if same is not None:  # the stored spelling: "ann" refused as "Ann", or "Ann (2)"
                values["name"] = same[1]
            values["name"], replaced = place_name(connection, athletes, "athlete",
                                                  values["name"], on_existing)
            if replaced is None:
                entry_id = insert_row(connection, athletes, values)
            else:
                replace_row(connection, athletes, replaced, values)
                entry_id = replaced
        return self.athlete(entry_id)

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
        NameTaken
            Another athlete has that name (letter case aside).
        """
        values = athlete_row(athlete)
        with self.transaction() as connection:
            same = _name_in_use(connection, values["name"], exclude_id=athlete_id)
            if same is not None:
                raise NameTaken("athlete", same[1], same[0])
            update_row(connection, athletes, "athlete", athlete_id, revision, values)
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
            n_setups = count_rows(connection, setups, setups.c.athlete_id == athlete_id)
            n_plans = count_rows(connection, plans, plans.c.athlete_id == athlete_id)
            if not confirm:
                raise InputError(
                    f"deleting athlete {row.name!r} also deletes {plural(n_setups, 'setup')} "
                    f"and {plural(n_plans, 'saved plan')}; confirm to go ahead")
            connection.execute(plan_reviews.delete().where(plan_reviews.c.plan_id.in_(
                sa.select(plans.c.id).where(plans.c.athlete_id == athlete_id))))
            connection.execute(plans.delete().where(plans.c.athlete_id == athlete_id))
            connection.execute(setups.delete().where(setups.c.athlete_id == athlete_id))
            delete_row(connection, athletes, "athlete", athlete_id, revision)

    # ---- setups -----------------------------------------------------------------------------

    def add_setup(self, athlete_id: int, setup: Setup, *, on_existing: str = "refuse",
                  drag_area_origin: DragAreaOrigin | None = None) -> SetupRecord:
        """Store a new setup of an athlete; a name the athlete's setups already hold is never
        overwritten silently.

        Parameters
        ----------
        athlete_id : int
            Library id of the athlete who rides it.
        setup : pacing.athlete.Setup
            The setup's values (SI).
        on_existing : str
            When the athlete has a setup of that name: "refuse" (NameTaken), "replace" (its
            values, keeping its id) or "keep-both" (this one is named "name (2)") [-].
        drag_area_origin : DragAreaOrigin or None
            The drag area's interval and source when it was measured (a race review); None
            when it was typed in.

        Returns
        -------
        SetupRecord
            As stored: new id and revision 1, or the replaced setup's id and next revision.

        Raises
        ------
        NameTaken
            The name is taken and `on_existing` is "refuse".
        """
        values = setup_row(setup)
        values.update(origin_columns(drag_area_origin, values["drag_area"]))
        check_on_existing(on_existing)
        with self.transaction() as connection:
            self._one(athletes, "athlete", athlete_id, connection)
            values["name"], replaced = place_name(connection, setups, "setup", values["name"],
                                                  on_existing, setups.c.athlete_id == athlete_id)
            if replaced is None:
                entry_id = insert_row(connection, setups, dict(values, athlete_id=athlete_id))
            else:
                replace_row(connection, setups, replaced, values)
                entry_id = replaced
        return self.setup(entry_id)

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

    def update_setup(self, setup_id: int, setup: Setup, *, revision: int,
                     drag_area_origin: DragAreaOrigin | None = None) -> SetupRecord:
        """Replace a setup's values.

        Parameters
        ----------
        setup_id : int
            Library id.
        setup : pacing.athlete.Setup
            The new values (SI).
        revision : int
            The revision of the copy the change is based on (the record's `revision`).
        drag_area_origin : DragAreaOrigin or None
            The new drag area's interval and source (a race review). None keeps the stored
            origin while the drag area stays the same, and drops it when the drag area changes
            (a typed-in value has no interval).

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
        if drag_area_origin is not None:
            values.update(origin_columns(drag_area_origin, values["drag_area"]))
        with self.transaction() as connection:
            if drag_area_origin is None:
                stored = self._one(setups, "setup", setup_id, connection)
                if stored.drag_area != values["drag_area"]:
                    values.update(origin_columns(None, values["drag_area"]))
            update_row(connection, setups, "setup", setup_id, revision, values)
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
            n_plans = count_rows(connection, plans, plans.c.setup_id == setup_id)
            if n_plans:
                raise InputError(f"setup {row.name!r} is used by "
                                 f"{plural(n_plans, 'saved plan')}; delete them first")
            if not confirm:
                raise InputError(f"deleting setup {row.name!r} cannot be undone; confirm to "
                                 "go ahead")
            delete_row(connection, setups, "setup", setup_id, revision)
