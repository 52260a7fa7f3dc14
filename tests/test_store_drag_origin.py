"""A setup keeps where its drag area came from (pacing.store.drag_origin, migration 0004): the
95 % interval and the source of a drag area measured on a race; on SQLite and PostgreSQL."""

from __future__ import annotations

import datetime
import json

import pytest
import sqlalchemy as sa

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.store.database import downgrade, migrate, schema_revision
from pacing.store.drag_origin import check_origin, race_review_source
from pacing.store.library_export import dump_library_file
from pacing.store.library_file import read_library_file
from pacing.store.library_import import import_library
from pacing.store.records import DragAreaOrigin
from tests.store_fixtures import VERSION_1_FILE, database_fixture, library_fixture

__all__ = ["database_fixture", "library_fixture"]

DAY = DragAreaOrigin(0.221, 0.239, "race review of Hill TT.csv, 2026-12-05")


def _setup(library, drag_area=0.23, origin=DAY):
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    return library.add_setup(ann.id, Setup(name="TT bike", drag_area=drag_area),
                             drag_area_origin=origin)


def test_a_setup_keeps_its_drag_area_interval_and_source(library):
    stored = _setup(library)
    again = library.setup(stored.id)
    assert again.drag_area_origin == DAY
    assert again.setup.drag_area == 0.23


def test_a_typed_in_drag_area_has_no_origin(library):
    stored = _setup(library, origin=None)
    assert library.setup(stored.id).drag_area_origin is None


def test_changing_other_values_keeps_the_origin_changing_the_drag_area_drops_it(library):
    stored = _setup(library)
    heavier = library.update_setup(stored.id, Setup(name="TT bike", drag_area=0.23,
                                                    bike_mass=9.4), revision=stored.revision)
    assert heavier.drag_area_origin == DAY
    typed = library.update_setup(stored.id, Setup(name="TT bike", drag_area=0.25,
                                                  bike_mass=9.4), revision=heavier.revision)
    assert typed.drag_area_origin is None


def test_a_new_race_value_replaces_the_drag_area_and_its_origin(library):
    stored = _setup(library)
    later = DragAreaOrigin(0.205, 0.225, "race review of Flat TT.gpx, 2027-03-01")
    kept = library.update_setup(stored.id, Setup(name="TT bike", drag_area=0.215),
                                revision=stored.revision, drag_area_origin=later)
    assert kept.setup.drag_area == 0.215 and kept.drag_area_origin == later


@pytest.mark.parametrize("origin, match", [
    (DragAreaOrigin(0.24, 0.26, "x"), "must hold the drag area"),
    (DragAreaOrigin(0.0, 0.26, "x"), "must hold the drag area"),
    (DragAreaOrigin(0.2, 11.0, "x"), "must hold the drag area"),
    (DragAreaOrigin(float("nan"), 0.26, "x"), "finite"),
    (DragAreaOrigin(0.2, 0.26, ""), "1-300 characters"),
    (DragAreaOrigin(0.2, 0.26, "two\nlines"), "one line"),
    (DragAreaOrigin(0.2, 0.26, "a\u202eb"), "one line"),
])
def test_a_bad_origin_is_refused_in_one_line(origin, match):
    with pytest.raises(InputError, match=match) as caught:
        check_origin(origin, 0.23)
    assert "\n" not in str(caught.value)


def test_a_refused_origin_stores_nothing(library):
    ann = library.add_athlete(Athlete(name="Ann", body_mass=61.0))
    with pytest.raises(InputError):
        library.add_setup(ann.id, Setup(name="TT bike", drag_area=0.23),
                          drag_area_origin=DragAreaOrigin(0.3, 0.4, "x"))
    assert library.setups(ann.id) == ()


def test_the_source_names_the_race_and_the_day():
    assert race_review_source("Hill TT.csv", datetime.date(2026, 12, 5)) \
        == "race review of Hill TT.csv, 2026-12-05"
    assert race_review_source("  a\tb  ", datetime.date(2026, 1, 2)) \
        == "race review of a b, 2026-01-02"


def test_the_origin_goes_through_the_library_file_and_back(library):
    _setup(library)
    text = dump_library_file(library)
    entry = json.loads(text)["athletes"][0]["setups"][0]
    assert entry["drag_area_origin"] == {"low_m2": 0.221, "high_m2": 0.239,
                                         "source": "race review of Hill TT.csv, 2026-12-05"}
    import_library(library, text, on_existing="keep-both")
    origins = [s.drag_area_origin for s in library.setups()]
    assert origins == [DAY, DAY]


def test_older_files_without_an_origin_still_read():
    data = read_library_file(VERSION_1_FILE)
    assert data.format_version == 1
    assert all(s.drag_area_origin is None for s in data.setups)


def test_a_bad_origin_in_a_file_names_its_place(library):
    _setup(library)
    document = json.loads(dump_library_file(library))
    document["athletes"][0]["setups"][0]["drag_area_origin"]["high_m2"] = 0.1
    with pytest.raises(InputError, match=r"athletes\[0\]\.setups\[0\].*must hold"):
        read_library_file(json.dumps(document))
    document["athletes"][0]["setups"][0]["drag_area_origin"] = {"low_m2": 0.2}
    with pytest.raises(InputError, match=r"drag_area_origin must be an object"):
        read_library_file(json.dumps(document))


def test_migration_0004_keeps_setups_and_going_down_drops_only_the_origin(library):
    stored = _setup(library)
    downgrade(library.engine, "0003")
    assert schema_revision(library.engine) == "0003"
    with library.engine.connect() as connection:
        columns = {c["name"] for c in sa.inspect(connection).get_columns("setups")}
        tables = set(sa.inspect(connection).get_table_names())
    assert "drag_area_low" not in columns and "plan_reviews" not in tables
    migrate(library.engine)
    again = library.setup(stored.id)
    assert again.setup == stored.setup and again.drag_area_origin is None


def test_a_fitted_cda_is_rounded_and_its_interval_widened_outward():
    from pacing.store.drag_origin import fitted_drag_area

    cda, origin = fitted_drag_area(0.23637, [0.22812, 0.24455], "race review of a.csv, x")
    assert cda == 0.2364 and (origin.low_m2, origin.high_m2) == (0.2281, 0.2446)
    cda, origin = fitted_drag_area(0.23636, (0.23636, 0.23637), "s")
    assert origin.low_m2 <= cda <= origin.high_m2
    assert fitted_drag_area(0.2364, None, "s") == (0.2364, None)
