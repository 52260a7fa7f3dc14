"""Race reviews kept with saved plans (pacing.store.library_reviews, migration 0004): stored,
listed, read, exported and imported with their plan, deleted with it; SQLite and PostgreSQL.
SHA-256 digests from hashlib (FIPS 180-4)."""

from __future__ import annotations

import hashlib
import json

import pytest

from pacing.errors import InputError
from pacing.store.library_export import dump_library_file
from pacing.store.library_file import read_library_file
from pacing.store.library_import import import_library
from pacing.store.library_reviews import ride_digest
from tests.store_fixtures import VERSION_1_FILE, database_fixture, fill, library_fixture

__all__ = ["database_fixture", "library_fixture"]

RIDE = b"time_s,power_w,speed_mps\n0,250,10.5\n1,252,10.6\n"
# invented numbers in the shape `pacing review --json` prints
REVIEW = {"planned_time_s": 3725.0, "actual_time_s": 3790.5,
          "segments": [{"start_m": 0.0, "end_m": 41250.0, "planned_time_s": 3725.0,
                        "actual_time_s": 3790.5, "delta_s": 65.5, "planned_power_w": 231.0,
                        "actual_power_w": 224.0}],
          "attribution": {"power_s": 40.0, "drag_s": 15.0, "rolling_s": 2.0, "wind_s": 5.0,
                          "stops_s": 3.0, "other_s": 0.5},
          "fitted": {"cda_m2": 0.236, "cda_ci95": [0.228, 0.244], "crr": 0.0033,
                     "crr_ci95": None, "wind_speed_mps": 2.0, "wind_from_deg": 225.0},
          "warnings": []}


def _kept(library):
    ids = fill(library)
    kept = library.add_plan_review(ids["race"], REVIEW, ride_name="Hill TT.csv",
                                   ride_sha256=ride_digest(RIDE))
    return ids, kept


def test_the_digest_is_sha256_of_the_file():
    assert ride_digest(b"abc") == ("ba7816bf8f01cfea414140de5dae2223"
                                   "b00361a396177a9cb410ff61f20015ad")  # FIPS 180-4 example
    assert ride_digest(RIDE) == hashlib.sha256(RIDE).hexdigest()


def test_a_review_is_kept_with_its_plan_byte_for_byte(library):
    ids, kept = _kept(library)
    assert kept.plan_id == ids["race"] and kept.revision == 1
    assert kept.review == REVIEW
    assert library.plan_review(kept.id) == kept
    assert library.plan_reviews(ids["race"]) == (kept,)
    assert library.plan_reviews(ids["easy"]) == ()


def test_several_reviews_of_one_plan_are_listed_oldest_first(library):
    ids, first = _kept(library)
    second = library.add_plan_review(ids["race"], dict(REVIEW, actual_time_s=3700.0),
                                     ride_name="Hill TT 2.gpx", ride_sha256="0" * 64)
    assert [r.id for r in library.plan_reviews(ids["race"])] == [first.id, second.id]


@pytest.mark.parametrize("change, match", [
    ({"review": {"planned_time_s": 1.0}}, "lacks"),
    ({"review": dict(REVIEW, actual_time_s=float("nan"))}, "positive number"),
    ({"review": [1, 2]}, "JSON object"),
    ({"ride_sha256": "xyz"}, "SHA-256"),
    ({"ride_name": " "}, "needs a name"),
])
def test_a_bad_review_is_refused_in_one_line(library, change, match):
    ids = fill(library)
    values = {"review": REVIEW, "ride_name": "a.csv", "ride_sha256": ride_digest(RIDE),
              **change}
    with pytest.raises(InputError, match=match) as caught:
        library.add_plan_review(ids["race"], values["review"], ride_name=values["ride_name"],
                                ride_sha256=values["ride_sha256"])
    assert "\n" not in str(caught.value)
    assert library.plan_reviews(ids["race"]) == ()


def test_a_review_needs_a_saved_plan(library):
    with pytest.raises(InputError, match="no plan with id 99"):
        library.add_plan_review(99, REVIEW, ride_name="a.csv", ride_sha256="0" * 64)


def test_reviews_go_with_their_plan_and_their_athlete(library):
    ids, kept = _kept(library)
    library.delete_plan(ids["race"], confirm=True)
    with pytest.raises(InputError, match="no race review"):
        library.plan_review(kept.id)
    other = library.add_plan_review(ids["easy"], REVIEW, ride_name="b.csv",
                                    ride_sha256="1" * 64)
    library.delete_athlete(ids["ann"], confirm=True)
    with pytest.raises(InputError, match="no race review"):
        library.plan_review(other.id)


def test_deleting_a_review_needs_confirmation(library):
    _ids, kept = _kept(library)
    with pytest.raises(InputError, match="confirm"):
        library.delete_plan_review(kept.id)
    library.delete_plan_review(kept.id, confirm=True, revision=1)
    with pytest.raises(InputError, match="no race review"):
        library.plan_review(kept.id)


def test_reviews_go_through_the_library_file_and_back(library):
    ids, kept = _kept(library)
    text = dump_library_file(library)
    plan = next(p for p in json.loads(text)["plans"] if p["id"] == ids["race"])
    assert plan["reviews"][0]["ride_sha256"] == hashlib.sha256(RIDE).hexdigest()
    assert plan["reviews"][0]["review"] == REVIEW
    summary = import_library(library, text, on_existing="keep-both")
    assert summary.reviews == 1 and "with 1 race review" in summary.message()
    copies = [p for p in library.plans() if p.name.startswith("Race day")]
    assert len(copies) == 2
    reviews = [library.plan_reviews(p.id) for p in copies]
    assert sorted(len(r) for r in reviews) == [1, 1]
    copy = next(r[0] for r in reviews if r[0].id != kept.id)
    assert copy.review == REVIEW and copy.ride_name == "Hill TT.csv"


def test_one_athletes_export_holds_only_their_plans_reviews(library):
    ids, _kept_review = _kept(library)
    document = json.loads(dump_library_file(library, ids["bo"]))
    assert all(p["reviews"] == [] for p in document["plans"])


def test_older_files_have_no_reviews():
    assert all(p.reviews == () for p in read_library_file(VERSION_1_FILE).plans)


def test_a_bad_review_in_a_file_names_its_place(library):
    _kept(library)
    document = json.loads(dump_library_file(library))
    plan_index = next(i for i, p in enumerate(document["plans"]) if p["reviews"])
    document["plans"][plan_index]["reviews"][0]["review"]["actual_time_s"] = -1
    with pytest.raises(InputError, match=rf"plans\[{plan_index}\]\.reviews\[0\].*positive"):
        read_library_file(json.dumps(document))


# ---------------------------------------------------------------------------------------------
# a plan saved with its review in one step; every review listed and counted

def test_every_plans_reviews_are_listed_together_and_counted(library):
    ids, first = _kept(library)
    other = library.add_plan_review(ids["easy"], REVIEW, ride_name="b.csv",
                                    ride_sha256="1" * 64)
    second = library.add_plan_review(ids["race"], REVIEW, ride_name="c.csv",
                                     ride_sha256="2" * 64)
    listed = library.plan_reviews()
    assert [r.id for r in listed] == sorted(
        [first.id, second.id, other.id], key=lambda i: (library.plan_review(i).plan_id, i))
    assert library.review_counts() == {ids["race"]: 2, ids["easy"]: 1}
    library.delete_plan(ids["race"], confirm=True)
    assert library.review_counts() == {ids["easy"]: 1}


def test_no_reviews_no_counts(library):
    fill(library)
    assert library.plan_reviews() == () and library.review_counts() == {}


def _save_both(library, ids, name="Raced", **options):
    from tests.store_fixtures import plan_inputs, plan_result

    return library.save_plan_with_review(
        name, plan_inputs(ids["ann"], ids["tt"], ids["hill"]), plan_result(), REVIEW,
        ride_name="Hill TT.csv", ride_sha256=ride_digest(RIDE), **options)


def test_a_plan_and_its_review_are_saved_in_one_step(library):
    ids = fill(library)
    plan, kept = _save_both(library, ids, notes="raced it")
    assert plan.name == "Raced" and plan.summary.notes == "raced it"
    assert plan.summary.athlete_id == ids["ann"] and plan.summary.course_id == ids["hill"]
    assert kept.plan_id == plan.id and kept.review == REVIEW
    assert library.plan_reviews(plan.id) == (kept,)


def test_a_taken_name_saves_neither_until_told_to_keep_both(library):
    from pacing.store.statements import NameTaken
    from tests.store_fixtures import dump

    ids = fill(library)
    before = dump(library)
    with pytest.raises(NameTaken):
        _save_both(library, ids, name="Race day")
    assert dump(library) == before
    with pytest.raises(InputError, match="never replaces"):
        _save_both(library, ids, name="Race day", on_existing="replace")
    assert dump(library) == before
    plan, kept = _save_both(library, ids, name="Race day", on_existing="keep-both")
    assert plan.name == "Race day (2)" and kept.plan_id == plan.id
    assert library.plan(ids["race"]).summary.finish_time == 3725.0  # the first one kept
    assert library.plan_reviews(ids["race"]) == ()


def test_when_the_review_cannot_be_written_the_plan_is_not_saved_either(library, monkeypatch):
    from pacing.store import library_reviews
    from tests.store_fixtures import dump

    ids = fill(library)
    before = dump(library)
    real = library_reviews.insert_row

    def failing(connection, table, values, *args):
        if table.name == "plan_reviews":
            raise InputError("disk full (simulated)")
        return real(connection, table, values, *args)

    monkeypatch.setattr(library_reviews, "insert_row", failing)
    with pytest.raises(InputError, match="simulated"):
        _save_both(library, ids)
    assert dump(library) == before


@pytest.mark.parametrize("change, match", [
    ({"review": {"planned_time_s": 1.0}}, "lacks"),
    ({"ride_sha256": "xyz"}, "SHA-256"),
    ({"name": " "}, "needs a name"),
])
def test_a_bad_plan_or_review_saves_nothing(library, change, match):
    from tests.store_fixtures import dump, plan_inputs, plan_result

    ids = fill(library)
    before = dump(library)
    values = {"name": "Raced", "review": REVIEW, "ride_sha256": ride_digest(RIDE), **change}
    with pytest.raises(InputError, match=match):
        library.save_plan_with_review(
            values["name"], plan_inputs(ids["ann"], ids["tt"], ids["hill"]), plan_result(),
            values["review"], ride_name="a.csv", ride_sha256=values["ride_sha256"])
    assert dump(library) == before


def test_a_review_is_of_a_saved_plan_when_their_times_agree_within_a_second():
    from pacing.store.library_reviews import SAME_PLAN_TOLERANCE, same_plan_time

    assert SAME_PLAN_TOLERANCE == 1.0
    assert same_plan_time(1000.0, 1000.99) and same_plan_time(1000.0, 999.0)
    assert not same_plan_time(1000.0, 1001.01) and not same_plan_time(1000.0, 970.0)
