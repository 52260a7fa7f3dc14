"""Athletes and their setups in the library (pacing.store.library_athletes): they round trip, a
setup belongs to a stored athlete, deleting an athlete needs confirmation and says what goes
with them.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import datetime

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    dump,
    fill,
    library_fixture,
)

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError


def test_athletes_round_trip(library):
    cyclist = Athlete(name="Ann", body_mass=61.0, critical_power=250.0, w_prime=18000.0,
                      height=1.68)
    runner = Athlete(name="Bo Ångström", body_mass=0.1 + 70.2, critical_power=None,
                     w_prime=None, height=None, flat_pace=245.0, critical_speed=4.3,
                     d_prime=210.0)
    stored = [library.add_athlete(cyclist), library.add_athlete(runner)]
    assert [library.athlete(r.id).athlete for r in stored] == [cyclist, runner]
    assert [r.athlete for r in library.athletes()] == [cyclist, runner]
    assert stored[0].revision == 1
    assert stored[0].created_at.tzinfo == datetime.UTC
    assert stored[0].created_at == stored[0].updated_at


def test_setups_round_trip_and_belong_to_an_athlete(library):
    ann = library.add_athlete(Athlete(name="Ann"))
    bo = library.add_athlete(Athlete(name="Bo"))
    tt = Setup(name="TT", bike_mass=8.9, drag_area=0.2345678901234567, power_share=0.95,
               rolling_coefficient=0.0029, drivetrain_efficiency=0.975,
               yaw_drag_table=((0.0, 1.0), (5.0, 0.97), (10.0, 0.93)))
    stored = library.add_setup(ann.id, tt)
    library.add_setup(bo.id, Setup(name="road"))
    assert library.setup(stored.id).setup == tt
    assert library.setup(stored.id).athlete_id == ann.id
    assert [r.setup for r in library.setups(ann.id)] == [tt]
    assert len(library.setups()) == 2
    with pytest.raises(InputError, match="no athlete with id 99"):
        library.add_setup(99, tt)


def test_deleting_needs_confirmation_and_says_what_goes(library):
    ids = fill(library)
    before = dump(library)
    with pytest.raises(InputError, match="also deletes 2 setups and 2 saved plans; confirm"):
        library.delete_athlete(ids["ann"])
    with pytest.raises(InputError, match="confirm"):
        library.delete_plan(ids["race"])
    assert dump(library) == before
    library.delete_athlete(ids["ann"], confirm=True)
    assert [a.id for a in library.athletes()] == [ids["bo"]]
    assert library.setups() == ()
    assert [p.id for p in library.plans()] == [ids["run"]]


# ---------------------------------------------------------------------------------------------
# a name already stored is never overwritten silently

def test_an_athlete_under_a_taken_name_is_refused_unless_told(library):
    from pacing.store.statements import NameTaken

    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    with pytest.raises(NameTaken, match="an athlete named 'Ann' is already in the library") \
            as error:
        library.add_athlete(Athlete(name=" Ann ", body_mass=70.0))  # the same once trimmed
    assert error.value.entry_id == ann.id and "\n" not in str(error.value)
    assert [a.athlete.body_mass for a in library.athletes()] == [61.0]

    both = library.add_athlete(Athlete(name="Ann", body_mass=70.0), on_existing="keep-both")
    third = library.add_athlete(Athlete(name="Ann", body_mass=72.0), on_existing="keep-both")
    assert (both.athlete.name, third.athlete.name) == ("Ann (2)", "Ann (3)")

    replaced = library.add_athlete(Athlete(name="Ann", body_mass=62.5), on_existing="replace")
    assert replaced.id == ann.id and replaced.revision == ann.revision + 1
    assert library.athlete(ann.id).athlete.body_mass == 62.5
    with pytest.raises(InputError, match="on_existing must be one of"):
        library.add_athlete(Athlete(name="Ann"), on_existing="overwrite")


def test_setup_names_are_unique_per_athlete(library):
    from pacing.store.statements import NameTaken

    ann = library.add_athlete(Athlete(name="Ann"))
    bo = library.add_athlete(Athlete(name="Bo"))
    road = library.add_setup(ann.id, Setup(name="road", drag_area=0.30))
    library.add_setup(bo.id, Setup(name="road", drag_area=0.32))  # another athlete's: fine
    with pytest.raises(NameTaken, match="a setup named 'road'"):
        library.add_setup(ann.id, Setup(name="road", drag_area=0.25))
    kept = library.add_setup(ann.id, Setup(name="road", drag_area=0.25), on_existing="keep-both")
    assert kept.setup.name == "road (2)"
    replaced = library.add_setup(ann.id, Setup(name="road", drag_area=0.27),
                                 on_existing="replace")
    assert replaced.id == road.id and replaced.setup.drag_area == 0.27


def test_keep_both_fits_the_name_length(library):
    long_name = "x" * 200
    library.add_athlete(Athlete(name=long_name))
    kept = library.add_athlete(Athlete(name=long_name), on_existing="keep-both")
    assert kept.athlete.name.endswith(" (2)") and len(kept.athlete.name) <= 200


def test_a_name_differing_only_in_letter_case_is_the_same_athlete(library):
    # issue 18: duplicate athlete names were accepted silently ("Ann Lee" and "ann lee")
    from pacing.store.statements import NameTaken

    first = library.add_athlete(Athlete(name="Ann Lee", body_mass=61.0))
    with pytest.raises(NameTaken, match="'Ann Lee' is already in the library"):
        library.add_athlete(Athlete(name="ann lee", body_mass=62.0))
    both = library.add_athlete(Athlete(name="ANN LEE", body_mass=63.0), on_existing="keep-both")
    assert both.athlete.name == "Ann Lee (2)"
    replaced = library.add_athlete(Athlete(name="ann lee", body_mass=64.0),
                                   on_existing="replace")
    assert replaced.id == first.id and replaced.athlete.name == "Ann Lee"
    assert replaced.athlete.body_mass == 64.0
    assert len(library.athletes()) == 2


def test_renaming_onto_another_athletes_name_is_refused(library):
    from pacing.store.statements import NameTaken

    library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    bo = library.add_athlete(Athlete(name="Bo", body_mass=70.0))
    with pytest.raises(NameTaken, match="'Ann'"):
        library.update_athlete(bo.id, Athlete(name="ANN", body_mass=70.0), revision=bo.revision)
    again = library.update_athlete(bo.id, Athlete(name="Bo", body_mass=71.0),
                                   revision=bo.revision)  # keeping its own name is fine
    assert again.athlete.body_mass == 71.0
