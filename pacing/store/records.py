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
from pacing.team.riders import Team

#: Keys of a plan result, as `compute(inputs)` returns it and as a saved plan keeps it.
PLAN_RESULT_KEYS = ("strategy", "weather", "targets", "time_saved", "finish_time")

#: Keys of plan inputs that link the plan to library entries (optional, integer ids).
PLAN_LINK_KEYS = ("athlete_id", "setup_id", "course_id")


@dataclass(frozen=True)
class AthleteRecord:
    """A stored athlete.

    Attributes
    ----------
    id : int
        Library id.
    athlete : pacing.athlete.Athlete
        The athlete's values (SI).
    revision : int
        Change counter: 1 when created, +1 on every change.
    created_at : datetime.datetime
        When it was stored (timezone-aware, UTC).
    updated_at : datetime.datetime
        When it was last changed (timezone-aware, UTC).
    """

    id: int
    athlete: Athlete
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class DragAreaOrigin:
    """Where a setup's drag area came from: its interval and its source (e.g. a race review).

    Attributes
    ----------
    low_m2, high_m2 : float
        The drag area's interval (95 %), low <= the setup's drag area <= high [m²].
    source : str
        Where the value came from, one line (e.g. "race review of Hill TT.csv, 2026-12-05").
    """

    low_m2: float
    high_m2: float
    source: str


@dataclass(frozen=True)
class SetupRecord:
    """A stored setup (bike, kit and position); it belongs to one athlete.

    Attributes
    ----------
    id : int
        Library id.
    athlete_id : int
        Library id of the athlete who rides it.
    setup : pacing.athlete.Setup
        The setup's values (SI).
    revision : int
        Change counter: 1 when created, +1 on every change.
    created_at : datetime.datetime
        When it was stored (timezone-aware, UTC).
    updated_at : datetime.datetime
        When it was last changed (timezone-aware, UTC).
    drag_area_origin : DragAreaOrigin or None
        The drag area's interval and source when it was measured (a race review); None when
        it was typed in or changed since.
    """

    id: int
    athlete_id: int
    setup: Setup
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime
    drag_area_origin: DragAreaOrigin | None = None


@dataclass(frozen=True)
class CourseSummary:
    """A stored course without its GPX bytes (what listings return).

    Attributes
    ----------
    id : int
        Library id.
    name : str
        Label.
    distance_m : float
        Course length, as computed by the caller when saving [m].
    ascent_m : float
        Total climbing, as computed by the caller when saving [m].
    gpx_size : int
        Length of the original GPX file [bytes].
    gpx_sha256 : str
        SHA-256 of the original GPX file (64 hexadecimal digits).
    revision : int
        Change counter: 1 when created, +1 on every change.
    created_at : datetime.datetime
        When it was stored (timezone-aware, UTC).
    updated_at : datetime.datetime
        When it was last changed (timezone-aware, UTC).
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
    summary : CourseSummary
        Everything but the file.
    gpx : bytes
        The GPX file as it was given, byte for byte.
    """

    summary: CourseSummary
    gpx: bytes

    @property
    def id(self) -> int:
        """Library id (of the summary)."""
        return self.summary.id

    @property
    def name(self) -> str:
        """Label (of the summary)."""
        return self.summary.name

    @property
    def revision(self) -> int:
        """Change counter (of the summary)."""
        return self.summary.revision


@dataclass(frozen=True)
class PlanSummary:
    """A saved plan without its inputs and target table (what listings return).

    Attributes
    ----------
    id : int
        Library id.
    name : str
        Label.
    athlete_id : int or None
        Library id of the linked athlete, or None.
    setup_id : int or None
        Library id of the linked setup, or None.
    course_id : int or None
        Library id of the linked course, or None.
    finish_time : float
        Predicted finish time [s].
    time_saved : float or None
        Time saved against the reference plan, or None [s].
    library_version : str
        ``pacing.__version__`` of the pacing that computed the plan's numbers (compared by
        pacing.store.reproduce when the plan is worked out again).
    notes : str
        The coach's free text.
    revision : int
        Change counter: 1 when created, +1 on every change.
    created_at : datetime.datetime
        When it was stored (timezone-aware, UTC).
    updated_at : datetime.datetime
        When it was last changed (timezone-aware, UTC).
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
    summary : PlanSummary
        Name, links, finish time, time saved, pacing version, notes, revision and times.
    inputs : dict
        Everything the computation needs (athlete, setup, conditions, strategy request,
        segmentation, course id), a JSON object (SI numbers).
    strategy : Any
        The strategy the computation chose (JSON value).
    weather : Any
        The weather it used (JSON value).
    targets : list of dict
        The target table, one dict per segment (SI numbers).
    """

    summary: PlanSummary
    inputs: dict[str, Any]
    strategy: Any
    weather: Any
    targets: list[dict[str, Any]]

    @property
    def id(self) -> int:
        """Library id (of the summary)."""
        return self.summary.id

    @property
    def name(self) -> str:
        """Label (of the summary)."""
        return self.summary.name

    @property
    def revision(self) -> int:
        """Change counter (of the summary)."""
        return self.summary.revision

    def result(self) -> dict[str, Any]:
        """The saved numbers in the shape `compute(inputs)` returns.

        Returns
        -------
        dict
            The keys of PLAN_RESULT_KEYS: strategy, weather, targets, time_saved [s] and
            finish_time [s].
        """
        return {
            "strategy": self.strategy,
            "weather": self.weather,
            "targets": self.targets,
            "time_saved": self.summary.time_saved,
            "finish_time": self.summary.finish_time,
        }


@dataclass(frozen=True)
class TeamRecord:
    """A stored team (riders for team time trials and team pursuits).

    Attributes
    ----------
    id : int
        Library id.
    name : str
        The team's name.
    team : pacing.team.riders.Team
        The riders in starting order (SI values).
    drafting : tuple of float or None
        The team's drag reduction by place in the line, leader first [-]; None for the
        default set.
    counts_rider : int or None
        The rider whose time counts; None for the race's default [-].
    revision : int
        Change counter: 1 when created, +1 on every change.
    created_at : datetime.datetime
        When it was stored (timezone-aware, UTC).
    updated_at : datetime.datetime
        When it was last changed (timezone-aware, UTC).
    """

    id: int
    name: str
    team: Team
    drafting: tuple[float, ...] | None
    counts_rider: int | None
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime


@dataclass(frozen=True)
class PlanReviewRecord:
    """A stored review of a race ridden to a saved plan.

    Attributes
    ----------
    id : int
        Library id.
    plan_id : int
        Library id of the saved plan reviewed.
    ride_name : str
        The race file's name.
    ride_sha256 : str
        SHA-256 of the race file (64 hexadecimal digits).
    review : dict
        The review as JSON (what ``pacing review --json`` prints: planned_time_s,
        actual_time_s, segments, attribution, fitted, warnings; SI).
    revision : int
        Change counter: 1 when created, +1 on every change.
    created_at : datetime.datetime
        When it was stored (timezone-aware, UTC).
    updated_at : datetime.datetime
        When it was last changed (timezone-aware, UTC).
    """

    id: int
    plan_id: int
    ride_name: str
    ride_sha256: str
    review: dict[str, Any]
    revision: int
    created_at: datetime.datetime
    updated_at: datetime.datetime
