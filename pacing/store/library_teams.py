"""The library's teams (riders for team time trials and team pursuits): their rows (riders
and drafting as JSON text, each rider checked by pacing.team.riders.TeamRider) and the methods
of the Library on them: add, read, list, change at a revision, delete with confirmation.
"""

from __future__ import annotations

import datetime
import math
import numbers
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sqlalchemy as sa

from pacing.errors import InputError
from pacing.store import jsontext
from pacing.store.database import as_utc
from pacing.store.library_base import LibraryBase
from pacing.store.library_file_json import (
    checked_at,
    entry_stamps,
    json_list,
    json_object,
    new_id,
)
from pacing.store.records import TeamRecord
from pacing.store.rows import check_id, check_name
from pacing.store.schema import teams
from pacing.store.statements import (
    check_on_existing,
    delete_row,
    insert_row,
    place_name,
    replace_row,
    update_row,
)
from pacing.team.drafting import checked_reductions
from pacing.team.riders import Team, TeamRider

#: Fields of a team in the library file (pacing.store.library_file, format version 2).
TEAM_FILE_KEYS = frozenset({"id", "name", "riders", "drafting", "counts_rider", "created_at",
                            "updated_at"})

#: Fields of each rider of a stored team (pacing.team.riders.TeamRider), in file order.
TEAM_RIDER_FIELDS = ("name", "mass", "drag_area", "critical_power", "w_prime", "max_power",
                     "rolling_coefficient")


def _number_or_none(value: Any, what: str) -> float | None:
    """None, or a finite real number as float (InputError naming `what` otherwise)."""
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, numbers.Real) \
            or not math.isfinite(float(value)):
        raise InputError(f"{what} must be a finite number, got {value!r:.40}")
    return float(value)


def team_row(name: Any, team: Any, drafting: Any = None, counts_rider: Any = None
             ) -> dict[str, Any]:
    """Column values of a team (checked: name, riders, drafting, counting rider).

    Parameters
    ----------
    name : str
        The team's name [-].
    team : pacing.team.riders.Team
        The riders in starting order (each checked by TeamRider) [-].
    drafting : sequence of float or None
        Drag reduction by place in the line, leader first [-]; None for the default.
    counts_rider : int or None
        The rider whose time counts, 1 to the number of riders [-]; None for the default.

    Returns
    -------
    dict
        ``name``, ``riders`` and ``drafting`` as JSON text (drafting None when not given),
        ``counts_rider``.

    Raises
    ------
    InputError
        Not a Team, a bad name, drafting values or counting rider.
    """
    if not isinstance(team, Team):
        raise InputError(f"expected a Team, got {type(team).__name__}")
    riders = [{field: getattr(rider, field) for field in TEAM_RIDER_FIELDS}
              for rider in team.riders]
    for rider in riders:
        rider["name"] = check_name(rider["name"], "a rider")
    if counts_rider is not None:
        check_id(counts_rider, "counting rider")
        if counts_rider > team.size:
            raise InputError(f"counting rider must be 1 to {team.size}, got {counts_rider}")
    return {"name": check_name(name, "a team"), "riders": jsontext.dumps(riders, "riders"),
            "drafting": None if drafting is None
            else jsontext.dumps(list(checked_reductions(drafting)), "drafting"),
            "counts_rider": counts_rider}


def team_from_values(riders: Any, where: str = "team") -> Team:
    """A pacing.team.riders.Team from a list of rider dicts (TEAM_RIDER_FIELDS).

    Parameters
    ----------
    riders : list of dict
        The riders as stored (SI) [-].
    where : str
        Where they come from, for the message [-].

    Returns
    -------
    pacing.team.riders.Team
        The team [-].

    Raises
    ------
    InputError
        A rider that is not an object of TEAM_RIDER_FIELDS, or fails TeamRider's checks.
    """
    if not isinstance(riders, list):
        raise InputError(f"{where}: riders must be a list")
    made = []
    for index, rider in enumerate(riders):
        if not isinstance(rider, Mapping) or set(rider) - set(TEAM_RIDER_FIELDS):
            raise InputError(f"{where}: rider {index + 1} must hold only "
                             f"{', '.join(TEAM_RIDER_FIELDS)}")
        made.append(_rider(rider, f"{where}: rider {index + 1}"))
    return Team(tuple(made))


def _rider(values: Mapping[str, Any], where: str) -> TeamRider:
    """A TeamRider of stored values: name, mass, drag area, CP and W′ required."""
    numbers = {k: _number_or_none(values.get(k), f"{where} {k.replace('_', ' ')}")
               for k in TEAM_RIDER_FIELDS[1:]}
    required = {k: numbers[k] for k in ("mass", "drag_area", "critical_power", "w_prime")}
    missing = sorted(k for k, v in required.items() if v is None)
    if missing:
        raise InputError(f"{where} lacks {', '.join(missing)}")
    crr = numbers["rolling_coefficient"]
    return TeamRider(name=check_name(values.get("name"), "a rider"),
                     mass=float(required["mass"] or 0.0),
                     drag_area=float(required["drag_area"] or 0.0),
                     critical_power=float(required["critical_power"] or 0.0),
                     w_prime=float(required["w_prime"] or 0.0), max_power=numbers["max_power"],
                     **({} if crr is None else {"rolling_coefficient": crr}))


def team_record(row: Any) -> TeamRecord:
    """The TeamRecord of a row of the teams table.

    Parameters
    ----------
    row : Any
        A database row of the teams table.

    Returns
    -------
    TeamRecord
        The record, times timezone-aware (UTC).
    """
    drafting = None if row.drafting is None else tuple(jsontext.loads(row.drafting))
    return TeamRecord(id=row.id, name=row.name, team=team_from_values(
        jsontext.loads(row.riders), f"team {row.id}"), drafting=drafting,
        counts_rider=row.counts_rider, revision=row.revision,
        created_at=as_utc(row.created_at), updated_at=as_utc(row.updated_at))


@dataclass(frozen=True)
class FileTeam:
    """A team read from a library file (riders checked by pacing.team.riders).

    Attributes
    ----------
    name : str
        The team's name.
    row : dict
        Its column values (pacing.store.library_teams.team_row).
    created_at, updated_at : datetime.datetime
        When the exporting library stored and last changed it (naive UTC).
    """

    name: str
    row: dict[str, Any]
    created_at: datetime.datetime
    updated_at: datetime.datetime


def read_file_teams(entries: Any) -> tuple[FileTeam, ...]:
    """The teams of a library file, each checked as the library checks a new team.

    Parameters
    ----------
    entries : Any
        The file's "teams" value (a JSON list) [-].

    Returns
    -------
    tuple of FileTeam
        In file order [-].

    Raises
    ------
    InputError
        One line naming the place (``teams[2]: …``).
    """
    seen: set[int] = set()
    found = []
    keys = set(TEAM_FILE_KEYS)
    for index, entry in enumerate(json_list(entries, "teams")):
        where = f"teams[{index}]"
        entry = json_object(entry, where, keys, keys)
        new_id(entry, where, seen)
        team = checked_at(team_from_values, where, entry["riders"], "riders")
        row = checked_at(team_row, where, entry["name"], team, entry["drafting"],
                       entry["counts_rider"])
        found.append(FileTeam(row["name"], row, *entry_stamps(entry, where)))
    return tuple(found)


class TeamMethods(LibraryBase):
    """The methods of pacing.store.library.Library on teams.

    Parameters
    ----------
    engine : sqlalchemy.engine.Engine
        An engine on a migrated library database (pacing.store.database.open_engine).
    """

    def add_team(self, name: str, team: Team, *, drafting: Any = None,
                 counts_rider: int | None = None, on_existing: str = "refuse") -> TeamRecord:
        """Store a team; a name already in the library is never overwritten silently.

        Parameters
        ----------
        name : str
            The team's name [-].
        team : pacing.team.riders.Team
            The riders in starting order [-].
        drafting : sequence of float or None
            Drag reduction by place, leader first [-]; None for the default set.
        counts_rider : int or None
            The rider whose time counts [-]; None for the race's default.
        on_existing : str
            When a team of that name is stored: "refuse" (NameTaken), "replace" or
            "keep-both" (this one is named "name (2)") [-].

        Returns
        -------
        TeamRecord
            As stored: new id and revision 1, or the replaced team's id and next revision.
        """
        values = team_row(name, team, drafting, counts_rider)
        check_on_existing(on_existing)
        with self.transaction() as connection:
            values["name"], replaced = place_name(connection, teams, "team", values["name"],
                                                  on_existing)
            if replaced is None:
                entry_id = insert_row(connection, teams, values)
            else:
                replace_row(connection, teams, replaced, values)
                entry_id = replaced
        return self.team(entry_id)

    def team(self, team_id: int) -> TeamRecord:
        """The team with this id (InputError if there is none).

        Parameters
        ----------
        team_id : int
            Library id.

        Returns
        -------
        TeamRecord
            The stored team.
        """
        return team_record(self._one(teams, "team", team_id))

    def teams(self) -> tuple[TeamRecord, ...]:
        """All teams, ordered by name, then id.

        Returns
        -------
        tuple of TeamRecord
            The stored teams.
        """
        query = sa.select(teams).order_by(teams.c.name, teams.c.id)
        return tuple(team_record(row) for row in self._rows(query))

    def change_team(self, team_id: int, name: str, team: Team, *, revision: int,
                    drafting: Any = None, counts_rider: int | None = None) -> TeamRecord:
        """Change a team at the revision it was read with (ConflictError when stale).

        Parameters
        ----------
        team_id : int
            Library id.
        name : str
            The name [-].
        team : pacing.team.riders.Team
            The riders [-].
        revision : int
            The revision of the copy the change is based on [-].
        drafting : sequence of float or None
            Drag reduction by place [-].
        counts_rider : int or None
            The counting rider [-].

        Returns
        -------
        TeamRecord
            As stored now (revision one higher).
        """
        values = team_row(name, team, drafting, counts_rider)
        with self.transaction() as connection:
            update_row(connection, teams, "team", team_id, revision, values)
        return self.team(team_id)

    def delete_team(self, team_id: int, *, confirm: bool = False,
                    revision: int | None = None) -> None:
        """Delete a team.

        Parameters
        ----------
        team_id : int
            Library id.
        confirm : bool
            Must be True; otherwise nothing is deleted (InputError).
        revision : int or None
            The revision the deletion is based on (ConflictError if stale); None deletes
            whatever is stored.
        """
        with self.transaction() as connection:
            row = self._one(teams, "team", team_id, connection)
            if not confirm:
                raise InputError(f"deleting team {row.name!r} cannot be undone; confirm to "
                                 "go ahead")
            delete_row(connection, teams, "team", team_id, revision)
