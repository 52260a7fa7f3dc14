"""Reopening a saved plan (pacing.store.reproduce.reproduce_plan): the same inputs give the same
numbers, or the report says what changed, shows both versions and whether pacing's version differs.
"""

from __future__ import annotations

import datetime
import math

import pytest

import pacing
from pacing.errors import InputError
from pacing.store.records import PlanRecord, PlanSummary
from pacing.store.reproduce import RELATIVE_TOLERANCE, compare_values, reproduce_plan

NOW = datetime.datetime(2026, 12, 1, 20, 0, tzinfo=datetime.UTC)


def result(finish_time=3725.0, powers=(250.0, 231.5, 190.25)) -> dict:
    return {
        "strategy": {"kind": "fastest", "mean_power": 230.0},
        "weather": {"temperature": 18.5, "wind_speed": 3.0},
        "targets": [{"segment": i, "power": p, "note": "climb" if i == 0 else ""}
                    for i, p in enumerate(powers)],
        "time_saved": 41.5,
        "finish_time": finish_time,
    }


def saved_plan(version: str | None = None) -> PlanRecord:
    saved = result()
    summary = PlanSummary(id=7, name="Race day", athlete_id=1, setup_id=2, course_id=3,
                          finish_time=saved["finish_time"], time_saved=saved["time_saved"],
                          library_version=version or pacing.__version__, notes="",
                          revision=1, created_at=NOW, updated_at=NOW)
    return PlanRecord(summary=summary, inputs={"course_id": 3, "power": 230.0},
                      strategy=saved["strategy"], weather=saved["weather"],
                      targets=saved["targets"])


def test_the_same_inputs_give_the_same_numbers():
    seen = []

    def compute(inputs):
        seen.append(inputs)
        return result()

    report = reproduce_plan(saved_plan(), compute)
    assert report.same and report.differences == ()
    assert report.message() == "the saved plan reproduces exactly"
    assert seen == [{"course_id": 3, "power": 230.0}]
    assert not report.library_version_differs


def test_compute_gets_a_copy_of_the_inputs():
    plan = saved_plan()

    def compute(inputs):
        inputs["power"] = -1
        return result()

    reproduce_plan(plan, compute)
    assert plan.inputs["power"] == 230.0


def test_round_off_below_the_tolerance_is_the_same():
    nudged = 3725.0 * (1 + RELATIVE_TOLERANCE / 10)
    tuple_targets = dict(result(finish_time=nudged))
    tuple_targets["targets"] = tuple(tuple_targets["targets"])  # tuples compare as lists
    assert reproduce_plan(saved_plan(), lambda _: tuple_targets).same


def test_a_changed_model_is_reported_with_both_numbers(monkeypatch):
    monkeypatch.setattr(pacing, "__version__", "99.0.0")
    changed = result(finish_time=3725.0 * (1 + 10 * RELATIVE_TOLERANCE),
                     powers=(250.0, 240.0, 190.25))
    report = reproduce_plan(saved_plan(version="0.1.0"), lambda _: changed)
    assert not report.same
    assert [(d.where, d.saved, d.recomputed) for d in report.differences] == [
        ("targets[1].power", 231.5, 240.0),
        ("finish_time", 3725.0, changed["finish_time"]),
    ]
    assert report.saved == result() and report.recomputed["targets"][1]["power"] == 240.0
    assert report.library_version_differs
    assert report.saved_library_version == "0.1.0"
    assert report.current_library_version == "99.0.0"
    assert report.message() == ("the saved plan does not reproduce: 2 values differ; the "
                                "model changed (saved with pacing 0.1.0, now 99.0.0)")


def test_same_version_other_numbers_says_the_inputs_give_other_numbers():
    report = reproduce_plan(saved_plan(), lambda _: result(powers=(250.0, 231.5)))
    assert [d.where for d in report.differences] == ["targets[2]"]
    assert report.differences[0].recomputed is None
    assert report.message().endswith("1 value differs; its inputs give other numbers now")


def test_missing_keys_and_text_changes_count():
    changed = result()
    del changed["weather"]
    changed["targets"][0]["note"] = "steep"
    report = reproduce_plan(saved_plan(), lambda _: changed)
    assert {d.where for d in report.differences} == {"weather", "targets[0].note"}


def test_a_computation_that_returns_no_dict_is_refused():
    with pytest.raises(InputError, match="not a dict"):
        reproduce_plan(saved_plan(), lambda _: [1, 2])
    with pytest.raises(InputError, match="not a finite number"):
        reproduce_plan(saved_plan(), lambda _: result(finish_time=math.nan))


@pytest.mark.parametrize("saved, recomputed, same", [
    (1.0, 1.0 + 0.5e-9, True),   # relative 5e-10 < 1e-9
    (1.0, 1.0 + 2e-9, False),
    (0.0, 1e-13, True),          # round-off around zero
    (0.0, 1e-9, False),
    (True, 1, False),            # a flag is not a number
    (1, 1.0, True),
    ("a", "a", True),
    ([1.0, 2.0], [1.0], False),
    ({"a": 1.0}, {"a": 1.0, "b": None}, True),  # a missing value and None are the same
])
def test_compare_values(saved, recomputed, same):
    assert (compare_values(saved, recomputed, "x") == []) is same
