"""What the library hands back (pacing.store.records): frozen records whose shortcuts read their
summary, and a saved plan's result in the shape a computation returns it."""

from __future__ import annotations

import dataclasses
import datetime

import pytest

from pacing.store.records import (
    PLAN_RESULT_KEYS,
    CourseRecord,
    CourseSummary,
    PlanRecord,
    PlanSummary,
)

NOW = datetime.datetime(2026, 12, 1, 20, 0, tzinfo=datetime.UTC)


def saved_plan() -> PlanRecord:
    summary = PlanSummary(id=7, name="Race day", athlete_id=1, setup_id=2, course_id=3,
                          finish_time=3725.0, time_saved=41.5, library_version="0.1.0",
                          notes="", revision=4, created_at=NOW, updated_at=NOW)
    return PlanRecord(summary=summary, inputs={"course_id": 3, "power": 230.0},
                      strategy={"kind": "fastest"}, weather=None,
                      targets=[{"segment": 0, "power": 250.0}])


def test_plan_result_has_the_documented_keys():
    assert tuple(saved_plan().result()) == PLAN_RESULT_KEYS


def test_a_plan_result_holds_the_saved_numbers():
    plan = saved_plan()
    assert plan.result() == {"strategy": {"kind": "fastest"}, "weather": None,
                             "targets": [{"segment": 0, "power": 250.0}], "time_saved": 41.5,
                             "finish_time": 3725.0}


def test_records_read_id_name_and_revision_from_their_summary():
    plan = saved_plan()
    assert (plan.id, plan.name, plan.revision) == (7, "Race day", 4)
    course = CourseRecord(
        summary=CourseSummary(id=2, name="Hill loop", distance_m=41250.0, ascent_m=610.0,
                              gpx_size=6, gpx_sha256="0" * 64, revision=3, created_at=NOW,
                              updated_at=NOW),
        gpx=b"<gpx/>")
    assert (course.id, course.name, course.revision) == (2, "Hill loop", 3)


def test_records_are_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        saved_plan().summary.notes = "changed"  # type: ignore[misc]
