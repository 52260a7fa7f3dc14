"""What the library hands back: small frozen records, detached from any database session.

Each stored entry carries its `id`, its `revision` (1 when created, +1 on every change; give it
back when saving a change so a stale copy is refused) and its creation and last-change times
(timezone-aware, UTC). The athlete and setup values are the domain objects of pacing.athlete.

Plan inputs and results are JSON values (dict, list, str, int, float, bool, None); the library
stores them as JSON text, so a tuple comes back as a list and a numpy number as a Python number.
"""

from __future__ import annotations

import datetime
from dataclasses import dataclass
from typing import Any

from pacing.athlete import Athlete, Setup

#: Keys of a plan result, as `compute(inputs)` returns it and as a saved plan keeps it.
PLAN_RESULT_KEYS = ("strategy", "weather", "targets", "time_saved", "finish_time")

#: Keys of plan inputs that link the plan to library entries (optional, integer ids).
PLAN_LINK_KEYS = ("athlete_id", "setup_id", "course_id")


@dataclass(frozen=True)
class AthleteRecord:
    """A stored athlete.

    Attributes
    ----------
    id : library id.
    athlete : the athlete's values.
    revision : change counter, 1 when created.
    created_at, updated_at : UTC times.
    """

    id: int
    athlete: Athlete
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class SetupRecord:
    """A stored setup (bike, kit and position); it belongs to one athlete.

    Attributes
    ----------
    id : library id.
    athlete_id : id of the athlete who rides it.
    setup : the setup's values.
    revision, created_at, updated_at : as AthleteRecord.
    """

    id: int
    athlete_id: int
    setup: Setup
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class CourseSummary:
    """A stored course without its GPX bytes (what listings return).

    Attributes
    ----------
    id : library id.
    name : label.
    distance_m : course length [m], as computed by the caller when saving.
    ascent_m : total climbing [m], as computed by the caller when saving.
    gpx_size : length of the original GPX file [bytes].
    gpx_sha256 : SHA-256 of the original GPX file (hex).
    revision, created_at, updated_at : as AthleteRecord.
    """

    id: int
    name: str
    distance_m: float
    ascent_m: float
    gpx_size: int
    gpx_sha256: str
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class CourseRecord:
    """A stored course with the original GPX file, byte for byte.

    Attributes
    ----------
    summary : everything but the file.
    gpx : the GPX file as it was given.
    """

    summary: CourseSummary
    gpx: bytes

    @property
    def id(self) -> int:
        return self.summary.id

    @property
    def name(self) -> str:
        return self.summary.name

    @property
    def revision(self) -> int:
        return self.summary.revision


@dataclass(frozen=True)
class PlanSummary:
    """A saved plan without its inputs and target table (what listings return).

    Attributes
    ----------
    id : library id.
    name : label.
    athlete_id, setup_id, course_id : linked library entries, or None.
    finish_time : predicted finish time [s].
    time_saved : time saved against the reference plan [s], or None.
    library_version : pacing.__version__ of the library that made the plan.
    notes : the coach's free text.
    revision, created_at, updated_at : as AthleteRecord.
    """

    id: int
    name: str
    athlete_id: int | None
    setup_id: int | None
    course_id: int | None
    finish_time: float
    time_saved: float | None
    library_version: str
    notes: str
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class PlanRecord:
    """A saved plan: all its inputs and the numbers it produced.

    Attributes
    ----------
    summary : name, links, finish time, time saved, version, notes, revision, times.
    inputs : everything the computation needs (athlete, setup, conditions, strategy request,
        segmentation, course id), a JSON object.
    strategy : the strategy the computation chose (JSON value).
    weather : the weather it used (JSON value).
    targets : the target table, one dict per segment.
    """

    summary: PlanSummary
    inputs: dict[str, Any]
    strategy: Any
    weather: Any
    targets: list[dict[str, Any]]

    @property
    def id(self) -> int:
        return self.summary.id

    @property
    def name(self) -> str:
        return self.summary.name

    @property
    def revision(self) -> int:
        return self.summary.revision

    def result(self) -> dict[str, Any]:
        """The saved numbers in the shape `compute(inputs)` returns (PLAN_RESULT_KEYS)."""
        return {
            "strategy": self.strategy,
            "weather": self.weather,
            "targets": self.targets,
            "time_saved": self.summary.time_saved,
            "finish_time": self.summary.finish_time,
        }
