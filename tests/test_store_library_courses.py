"""Courses in the library (pacing.store.library_courses): the GPX file is kept byte for byte and
found again by its checksum; courses (and setups) that saved plans use are kept.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import hashlib

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    GPX,
    database_fixture,
    fill,
    library_fixture,
)

from pacing.errors import InputError


def test_courses_keep_the_gpx_file_byte_for_byte(library):
    stored = library.add_course("Col de l’Été", GPX, 41250.0, 610.0)
    again = library.course(stored.id)
    assert again.gpx == GPX
    # checksum by the reference implementation (Python's hashlib, FIPS 180-4 SHA-256)
    assert again.summary.gpx_sha256 == hashlib.sha256(GPX).hexdigest()
    assert again.summary.gpx_size == len(GPX)
    assert (again.name, again.summary.distance_m, again.summary.ascent_m) == (
        "Col de l’Été", 41250.0, 610.0)
    listed = library.courses()
    assert [c.id for c in listed] == [stored.id] and not hasattr(listed[0], "gpx")


def test_the_same_gpx_file_is_found_again(library):
    stored = library.add_course("Hill loop", GPX, 41250.0, 610.0)
    library.add_course("other", b"<gpx/>", 1000.0, 0.0)
    assert [c.id for c in library.find_courses(GPX)] == [stored.id]
    assert library.find_courses(GPX + b" ") == ()


def test_courses_and_setups_in_use_are_kept(library):
    ids = fill(library)
    with pytest.raises(InputError, match="used by 2 saved plans"):
        library.delete_course(ids["flat"], confirm=True)
    with pytest.raises(InputError, match="used by 1 saved plan;"):
        library.delete_setup(ids["tt"], confirm=True)
    library.delete_plan(ids["race"], confirm=True)
    library.delete_setup(ids["tt"], confirm=True)
    library.delete_course(ids["hill"], confirm=True, revision=1)
    with pytest.raises(InputError, match="no course with id"):
        library.course(ids["hill"])


def test_a_course_under_a_taken_name_is_refused_unless_told(library):
    from store_fixtures import plan_result

    from pacing.store.statements import NameTaken

    loop = library.add_course("Loop", b"<gpx>1</gpx>", 1000.0, 10.0)
    with pytest.raises(NameTaken, match="a course named 'Loop'"):
        library.add_course("Loop", b"<gpx>2</gpx>", 2000.0, 20.0)
    assert library.add_course("Loop", b"<gpx>2</gpx>", 2000.0, 20.0,
                              on_existing="keep-both").name == "Loop (2)"
    replaced = library.add_course("Loop", b"<gpx>3</gpx>", 3000.0, 30.0, on_existing="replace")
    assert replaced.id == loop.id and replaced.gpx == b"<gpx>3</gpx>"
    library.save_plan("p", {"course_id": loop.id}, plan_result())
    with pytest.raises(InputError, match="used by 1 saved plan"):  # plans keep their file
        library.add_course("Loop", b"<gpx>4</gpx>", 4000.0, 40.0, on_existing="replace")
    assert library.course(loop.id).gpx == b"<gpx>3</gpx>"
