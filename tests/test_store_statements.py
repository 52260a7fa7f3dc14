"""Revisions (pacing.store.statements), through the library's methods: a change at the current
revision bumps it, a stale revision is refused for every kind of entry instead of
overwriting, a missing entry says so.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    fill,
    library_fixture,
)

from pacing.athlete import Athlete, Setup
from pacing.errors import ConflictError, InputError


def test_update_with_the_current_revision_bumps_it(library):
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    changed = library.update_athlete(ann.id, Athlete(name="Ann", body_mass=60.0),
                                     revision=ann.revision)
    assert changed.revision == 2 and changed.athlete.body_mass == 60.0
    assert changed.updated_at >= changed.created_at == ann.created_at


def test_a_stale_revision_is_refused_not_overwritten(library):
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    first = library.update_athlete(ann.id, Athlete(name="Ann", body_mass=60.0),
                                     revision=ann.revision)
    with pytest.raises(ConflictError, match="changed elsewhere") as error:
        library.update_athlete(ann.id, Athlete(name="Ann", body_mass=99.0),
                               revision=ann.revision)
    assert "\n" not in str(error.value)
    assert library.athlete(ann.id) == first


def test_every_kind_refuses_stale_revisions(library):
    ids = fill(library)
    setup = library.setup(ids["tt"])
    library.update_setup(setup.id, Setup(name="TT v2"), revision=setup.revision)
    with pytest.raises(ConflictError):
        library.update_setup(setup.id, Setup(name="TT v3"), revision=setup.revision)
    course = library.course(ids["hill"])
    library.rename_course(course.id, "Hill loop (2026)", revision=course.revision)
    with pytest.raises(ConflictError):
        library.rename_course(course.id, "other", revision=course.revision)
    plan = library.plan(ids["race"])
    library.update_plan(plan.id, revision=plan.revision, notes="negative split")
    with pytest.raises(ConflictError):
        library.update_plan(plan.id, revision=plan.revision, name="other")
    with pytest.raises(ConflictError):
        library.delete_plan(plan.id, confirm=True, revision=plan.revision)
    assert library.plan(plan.id).summary.notes == "negative split"


def test_updating_a_missing_entry_says_so(library):
    with pytest.raises(InputError, match="no athlete with id 5"):
        library.update_athlete(5, Athlete(), revision=1)
