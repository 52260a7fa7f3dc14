"""Saved plans in the library (pacing.store.library_plans): inputs, results and the version of
pacing round trip (any JSON exactly), links to athletes, setups and courses are checked,
inputs and result are replaced together.

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    fill,
    library_fixture,
    plan_inputs,
    plan_result,
)

import pacing
from pacing.errors import InputError


def test_plans_round_trip_with_inputs_results_and_version(library):
    ids = fill(library)
    plan = library.plan(ids["race"])
    assert plan.inputs == plan_inputs(ids["ann"], ids["tt"], ids["hill"])
    assert plan.result() == plan_result()
    assert plan.summary.library_version == pacing.__version__
    assert plan.summary.notes == "start easy"
    assert (plan.summary.athlete_id, plan.summary.setup_id, plan.summary.course_id) == (
        ids["ann"], ids["tt"], ids["hill"])
    assert {p.id for p in library.plans(athlete_id=ids["ann"])} == {ids["race"], ids["easy"]}
    assert {p.id for p in library.plans(course_id=ids["flat"])} == {ids["easy"], ids["run"]}


def test_plan_links_must_exist_and_agree(library):
    ids = fill(library)
    with pytest.raises(InputError, match="no course with id 999"):
        library.save_plan("x", {"course_id": 999}, plan_result())
    with pytest.raises(InputError, match="belongs to athlete"):
        library.save_plan("x", {"athlete_id": ids["bo"], "setup_id": ids["tt"]}, plan_result())
    with pytest.raises(InputError, match="positive whole number"):
        library.save_plan("x", {"course_id": "3"}, plan_result())
    # a setup alone links its athlete
    plan = library.save_plan("x", {"setup_id": ids["tt"]}, plan_result())
    assert plan.summary.athlete_id == ids["ann"]


json_values = st.recursive(
    st.none() | st.booleans() | st.integers(-2**53, 2**53)
    | st.floats(allow_nan=False, allow_infinity=False) | st.text(max_size=20),
    lambda children: st.lists(children, max_size=4)
    | st.dictionaries(st.text(max_size=8), children, max_size=4),
    max_leaves=20,
)


@settings(max_examples=25, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(inputs=st.dictionaries(st.text(max_size=8).filter(lambda k: not k.endswith("_id")),
                              json_values, max_size=5),
       strategy=json_values, finish=st.floats(1e-3, 1e7))
def test_any_json_plan_round_trips_exactly(library, inputs, strategy, finish):
    result = {"strategy": strategy, "targets": [{"x": strategy}], "finish_time": finish}
    plan = library.plan(library.save_plan("p", inputs, result, on_existing="keep-both").id)
    assert plan.inputs == inputs
    assert plan.strategy == strategy and plan.summary.finish_time == finish


def test_updating_a_plan_replaces_inputs_and_result_together(library):
    ids = fill(library)
    plan = library.plan(ids["race"])
    with pytest.raises(InputError, match="together"):
        library.update_plan(plan.id, revision=plan.revision, inputs={})
    new = library.update_plan(plan.id, revision=plan.revision,
                              inputs=plan_inputs(ids["ann"], ids["road"], ids["flat"]),
                              result=plan_result(1.2))
    assert new.summary.setup_id == ids["road"] and new.result() == plan_result(1.2)
    assert new.summary.notes == "start easy" and new.revision == 2


def test_a_plan_records_the_version_of_pacing_that_computed_its_numbers(library, monkeypatch):
    monkeypatch.setattr(pacing, "__version__", "0.0.9")
    plan = library.save_plan("p", {}, plan_result())
    assert plan.summary.library_version == "0.0.9"
    monkeypatch.setattr(pacing, "__version__", "0.2.0")
    renamed = library.update_plan(plan.id, revision=plan.revision, name="q", notes="n")
    assert renamed.summary.library_version == "0.0.9"  # same numbers, same version
    recomputed = library.update_plan(plan.id, revision=renamed.revision, inputs={},
                                     result=plan_result(1.1))
    assert recomputed.summary.library_version == "0.2.0"
    assert [p.library_version for p in library.plans()] == ["0.2.0"]


def test_a_plan_under_a_taken_name_is_refused_unless_told(library):
    from store_fixtures import plan_result

    from pacing.store.statements import NameTaken

    first = library.save_plan("race day", {}, plan_result())
    with pytest.raises(NameTaken, match="a saved plan named 'race day'"):
        library.save_plan("race day", {}, plan_result(0.9), notes="second look")
    assert [p.id for p in library.plans()] == [first.id]
    kept = library.save_plan("race day", {}, plan_result(0.9), on_existing="keep-both")
    assert kept.name == "race day (2)"
    replaced = library.save_plan("race day", {"power": 1.0}, plan_result(1.1),
                                 notes="new", on_existing="replace")
    assert replaced.id == first.id and replaced.revision == 2
    assert replaced.inputs == {"power": 1.0} and replaced.summary.notes == "new"
    assert replaced.summary.finish_time == plan_result(1.1)["finish_time"]


def test_a_saved_plan_keeps_its_weather_table_in_its_inputs(library):
    import numpy as np

    from pacing.weather.timeline import WeatherTable, table_as_dict, table_from_dict

    table = WeatherTable(time=np.array([0.0, 3600.0, 7200.0]),
                         temperature=np.array([18.5, 24.0, 31.25]),
                         relative_humidity=np.array([0.7, 0.5, 0.35]),
                         wind_speed=np.array([3.0, 5.0, 6.0]),
                         wind_from=np.array([350.0, 10.0, 180.0]),
                         pressure=np.array([101500.0, 101450.0, 101200.0]), utc_offset=7200.0)
    saved = library.save_plan("hot afternoon", {"weather_table": table_as_dict(table),
                                                "start_s": 1800.0}, plan_result())
    again = table_from_dict(library.plan(saved.summary.id).inputs["weather_table"])
    for name in ("time", "temperature", "relative_humidity", "wind_speed", "wind_from",
                 "pressure"):
        np.testing.assert_array_equal(getattr(again, name), getattr(table, name))
    assert again.latitude is None and again.utc_offset == 7200.0
