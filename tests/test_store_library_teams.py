"""Teams in the library (pacing.store.library_teams, migration 0003): stored like athletes,
changed at a revision, deleted with confirmation, carried by the library file (format 2).

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import json

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import VERSION_1_FILE, database_fixture, library_fixture  # noqa: F401

from pacing.errors import ConflictError, InputError
from pacing.store.library_export import dump_library_file, export_library
from pacing.store.library_file import read_library_file
from pacing.store.library_import import import_library
from pacing.store.library_teams import team_from_values
from pacing.store.statements import NameTaken
from pacing.team.riders import Team, TeamRider

PURSUIT = Team((TeamRider("Ann", 72.0, 0.19, 380.0, 22000.0),
                TeamRider("Bea", 70.0, 0.18, 360.0, 20000.0, max_power=900.0),
                TeamRider("Cat", 68.0, 0.18, 350.0, 21000.0, rolling_coefficient=0.0025)))


def test_a_team_comes_back_as_stored(library):
    stored = library.add_team("Pursuit A", PURSUIT, drafting=(0.0, 0.3, 0.38),
                              counts_rider=3)
    again = library.team(stored.id)
    assert again.name == "Pursuit A" and again.revision == 1
    assert again.team == PURSUIT
    assert again.drafting == (0.0, 0.3, 0.38) and again.counts_rider == 3
    assert [t.name for t in library.teams()] == ["Pursuit A"]


def test_defaults_are_kept_as_none(library):
    stored = library.add_team("Plain", PURSUIT)
    assert stored.drafting is None and stored.counts_rider is None


def test_a_taken_name_is_refused_unless_told_otherwise(library):
    first = library.add_team("Pursuit A", PURSUIT)
    with pytest.raises(NameTaken):
        library.add_team("Pursuit A", PURSUIT)
    assert library.add_team("Pursuit A", PURSUIT, on_existing="keep-both").name == \
        "Pursuit A (2)"
    replaced = library.add_team("Pursuit A", Team(PURSUIT.riders[:2]), on_existing="replace")
    assert replaced.id == first.id and replaced.revision == 2 and replaced.team.size == 2


def test_a_change_from_a_stale_copy_is_refused(library):
    stored = library.add_team("Pursuit A", PURSUIT)
    library.change_team(stored.id, "Pursuit B", PURSUIT, revision=1, counts_rider=2)
    with pytest.raises(ConflictError):
        library.change_team(stored.id, "Pursuit C", PURSUIT, revision=1)
    assert library.team(stored.id).name == "Pursuit B"


def test_deleting_needs_confirmation(library):
    stored = library.add_team("Pursuit A", PURSUIT)
    with pytest.raises(InputError, match="confirm"):
        library.delete_team(stored.id)
    library.delete_team(stored.id, confirm=True, revision=1)
    with pytest.raises(InputError, match="no team"):
        library.team(stored.id)


@pytest.mark.parametrize(("kwargs", "words"), [
    ({"drafting": (0.0, 0.95)}, "drafting"),
    ({"counts_rider": 4}, "counting rider"),
    ({"counts_rider": 0}, "counting rider"),
])
def test_bad_team_values_are_refused_in_one_line(library, kwargs, words):
    with pytest.raises(InputError, match=words):
        library.add_team("Pursuit A", PURSUIT, **kwargs)


def test_stored_riders_are_checked_again_when_read():
    with pytest.raises(InputError, match="lacks w_prime"):
        team_from_values([{"name": "A", "mass": 70.0, "drag_area": 0.2, "critical_power": 300},
                          {"name": "B", "mass": 70.0, "drag_area": 0.2,
                           "critical_power": 300, "w_prime": 20000.0}])
    with pytest.raises(InputError, match="must hold only"):
        team_from_values([{"name": "A", "power": 1}])


def test_teams_go_through_the_library_file_and_back(library, tmp_path):
    library.add_team("Pursuit A", PURSUIT, drafting=(0.0, 0.3), counts_rider=3)
    text = dump_library_file(library)
    document = json.loads(text)
    assert document["format_version"] >= 2  # teams came with version 2
    assert document["teams"][0]["riders"][1]["max_power"] == 900.0
    summary = import_library(library, text, on_existing="keep-both")
    assert summary.teams == 1 and "1 team" in summary.message()
    names = [t.name for t in library.teams()]
    assert names == ["Pursuit A", "Pursuit A (2)"]
    assert library.teams()[1].team == PURSUIT


def test_one_athletes_export_carries_no_teams(library):
    from pacing.athlete import Athlete

    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    library.add_team("Pursuit A", PURSUIT)
    assert export_library(library, ann.id)["teams"] == []


def test_a_version_1_file_without_teams_is_still_read():
    assert read_library_file(VERSION_1_FILE).teams == ()


def test_a_file_with_a_bad_team_is_refused_naming_the_place(library):
    document = export_library(library)
    document["teams"] = [{"id": 1, "name": "T", "riders": [{"name": "A", "mass": -1.0,
                                                             "drag_area": 0.2,
                                                             "critical_power": 300.0,
                                                             "w_prime": 20000.0}],
                          "drafting": None, "counts_rider": None,
                          "created_at": "2026-11-30T08:00:00+00:00",
                          "updated_at": "2026-11-30T08:00:00+00:00"}]
    with pytest.raises(InputError, match=r"teams\[0\]"):
        read_library_file(json.dumps(document))
