"""Writing the library file (pacing.store.library_file describes the format): the whole
library, or one athlete with their setups, their saved plans and the courses those use, read
in one transaction; ids are those of the library, times ISO 8601 in UTC, GPX files in base64.
"""

from __future__ import annotations

import base64
import datetime
import json
from typing import Any

import sqlalchemy as sa
from sqlalchemy.engine import Connection

import pacing
from pacing.errors import InputError
from pacing.store import jsontext
from pacing.store.database import as_utc
from pacing.store.drag_origin import origin_entry
from pacing.store.library import Library
from pacing.store.library_file import FORMAT_NAME, FORMAT_VERSION
from pacing.store.library_reviews import file_review_entry
from pacing.store.rows import (
    ATHLETE_NUMBERS,
    SETUP_NUMBERS,
    athlete_from_row,
    check_id,
    origin_from_row,
    setup_from_row,
)
from pacing.store.schema import athletes, courses, plan_reviews, plans, setups, teams


def _stamp(value: datetime.datetime) -> str:
    """A stored time as ISO 8601 text with its UTC offset."""
    return as_utc(value).isoformat()


def _export_rows(connection: Connection, athlete_id: int | None
                 ) -> tuple[list[Any], list[Any], list[Any], list[Any]]:
    """The rows an export holds, by id: athletes, their setups, courses and plans (of one
    athlete: their plans and only the courses those use)."""
    athlete_query = sa.select(athletes).order_by(athletes.c.id)
    plan_query = sa.select(plans).order_by(plans.c.id)
    if athlete_id is not None:
        check_id(athlete_id, "athlete id")
        athlete_query = athlete_query.where(athletes.c.id == athlete_id)
        plan_query = plan_query.where(plans.c.athlete_id == athlete_id)
    athlete_rows = list(connection.execute(athlete_query))
    if athlete_id is not None and not athlete_rows:
        raise InputError(f"no athlete with id {athlete_id}")
    setup_rows = list(connection.execute(
        sa.select(setups).where(setups.c.athlete_id.in_([r.id for r in athlete_rows]))
        .order_by(setups.c.id)))
    plan_rows = list(connection.execute(plan_query))
    course_query = sa.select(courses).order_by(courses.c.id)
    if athlete_id is not None:
        used = sorted({r.course_id for r in plan_rows if r.course_id is not None})
        course_query = course_query.where(courses.c.id.in_(used))
    course_rows = list(connection.execute(course_query))
    return athlete_rows, setup_rows, course_rows, plan_rows


def _setup_entry(row: Any) -> dict[str, Any]:
    """A setup as the file holds it."""
    setup = setup_from_row(row)
    return {"id": row.id, "name": setup.name,
            **{field: getattr(setup, field) for field in SETUP_NUMBERS},
            "yaw_drag_table": (None if setup.yaw_drag_table is None
                               else [list(pair) for pair in setup.yaw_drag_table]),
            "drag_area_origin": origin_entry(origin_from_row(row)),
            "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at)}


def _athlete_entry(row: Any, setup_rows: list[Any]) -> dict[str, Any]:
    """An athlete as the file holds it, with their setups among `setup_rows`."""
    athlete = athlete_from_row(row)
    return {
        "id": row.id, "name": athlete.name,
        **{field: getattr(athlete, field) for field in ATHLETE_NUMBERS},
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
        "setups": [_setup_entry(s) for s in setup_rows if s.athlete_id == row.id],
    }


def _course_entry(row: Any) -> dict[str, Any]:
    """A course as the file holds it, the GPX file in base64 (RFC 4648 section 4)."""
    return {
        "id": row.id, "name": row.name, "distance_m": row.distance_m, "ascent_m": row.ascent_m,
        "gpx_sha256": row.gpx_sha256,
        "gpx_base64": base64.b64encode(bytes(row.gpx)).decode("ascii"),
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
    }


def _plan_entry(row: Any, review_rows: list[Any]) -> dict[str, Any]:
    """A saved plan as the file holds it, with its race reviews among `review_rows`."""
    return {
        "id": row.id, "name": row.name, "inputs": jsontext.loads(row.inputs),
        "strategy": jsontext.loads(row.strategy), "weather": jsontext.loads(row.weather),
        "targets": jsontext.loads(row.targets), "time_saved": row.time_saved,
        "finish_time": row.finish_time, "library_version": row.library_version,
        "notes": row.notes,
        "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at),
        "reviews": [file_review_entry(r) for r in review_rows if r.plan_id == row.id],
    }


def _team_entries(connection: Connection) -> list[dict[str, Any]]:
    """Every team as the file holds it (riders and drafting as JSON values)."""
    return [{"id": row.id, "name": row.name, "riders": jsontext.loads(row.riders),
             "drafting": None if row.drafting is None else jsontext.loads(row.drafting),
             "counts_rider": row.counts_rider,
             "created_at": _stamp(row.created_at), "updated_at": _stamp(row.updated_at)}
            for row in connection.execute(sa.select(teams).order_by(teams.c.id))]


def export_library(library: Library, athlete_id: int | None = None) -> dict[str, Any]:
    """The library, or one athlete's part of it, in the library file format.

    Parameters
    ----------
    library : Library
        The open library; everything is read in one transaction.
    athlete_id : int or None
        Only this athlete, their setups, their saved plans and the courses those plans use;
        None for the whole library (with its teams).

    Returns
    -------
    dict
        The JSON-ready document described in pacing.store.library_file (SI numbers, times
        as ISO 8601 text in UTC).

    Raises
    ------
    InputError
        No athlete with `athlete_id`.
    """
    with library.reading() as connection:
        athlete_rows, setup_rows, course_rows, plan_rows = _export_rows(connection, athlete_id)
        team_entries = _team_entries(connection) if athlete_id is None else []
        review_rows = list(connection.execute(
            sa.select(plan_reviews).where(plan_reviews.c.plan_id.in_([r.id for r in plan_rows]))
            .order_by(plan_reviews.c.created_at, plan_reviews.c.id)))
    return {
        "format": FORMAT_NAME,
        "format_version": FORMAT_VERSION,
        "exported_at": datetime.datetime.now(datetime.UTC).isoformat(),
        "exported_by": f"pacing {pacing.__version__}",
        "athletes": [_athlete_entry(row, setup_rows) for row in athlete_rows],
        "courses": [_course_entry(row) for row in course_rows],
        "plans": [_plan_entry(row, review_rows) for row in plan_rows],
        "teams": team_entries,
    }


def dump_library_file(library: Library, athlete_id: int | None = None) -> str:
    """The library file as text.

    Parameters
    ----------
    library : Library
        The open library.
    athlete_id : int or None
        Only this athlete's part (see export_library); None for the whole library.

    Returns
    -------
    str
        UTF-8 JSON, indented, ending with a newline.
    """
    return json.dumps(export_library(library, athlete_id), ensure_ascii=False, indent=1,
                      allow_nan=False) + "\n"
