"""Persistence of the coach's library: athletes, setups, courses (original GPX) and saved
plans, through SQLAlchemy, in an SQLite file by default or any database URL.

Public API
----------
open_library(location=None) -> Library     location: path or URL, else $PACING_DATABASE_URL,
                                           else library.sqlite3 in the user's data folder;
                                           created and migrated (Alembic) on open
Library: add_/update_/delete_athlete, add_/update_/delete_setup, add_course, rename_course,
    find_courses, delete_course, save_plan, update_plan, delete_plan; athlete(id),
    athletes(), setup(id), setups(athlete_id=None), course(id), courses(), plan(id),
    plans(athlete_id=None, course_id=None). Changes take ``revision=`` (ConflictError when
    stale); deletes take ``confirm=True``.
reproduce_plan(saved, compute) -> ReproductionReport
export_library(library, athlete_id=None) -> dict; dump_library_file(...) -> str
read_library_file(text) -> LibraryFile (checked); import_library(library, text) -> ImportSummary
Records: AthleteRecord, SetupRecord, CourseSummary, CourseRecord, PlanSummary, PlanRecord.
Errors: pacing.errors.InputError (bad input, one line), pacing.errors.ConflictError (stale
revision: someone else changed the entry).
"""

from pacing.store.database import (
    DATABASE_ENV,
    default_database_path,
    head_revision,
    migrate,
    resolve_database_url,
    schema_revision,
)
from pacing.store.library import Library, open_library
from pacing.store.library_file import (
    FORMAT_NAME,
    FORMAT_VERSION,
    ImportSummary,
    LibraryFile,
    dump_library_file,
    export_library,
    import_library,
    read_library_file,
)
from pacing.store.records import (
    PLAN_LINK_KEYS,
    PLAN_RESULT_KEYS,
    AthleteRecord,
    CourseRecord,
    CourseSummary,
    PlanRecord,
    PlanSummary,
    SetupRecord,
)
from pacing.store.reproduce import Difference, ReproductionReport, reproduce_plan

__all__ = [
    "DATABASE_ENV", "FORMAT_NAME", "FORMAT_VERSION", "PLAN_LINK_KEYS", "PLAN_RESULT_KEYS",
    "AthleteRecord", "CourseRecord", "CourseSummary", "Difference", "ImportSummary",
    "Library", "LibraryFile", "PlanRecord", "PlanSummary", "ReproductionReport", "SetupRecord",
    "default_database_path", "dump_library_file", "export_library", "head_revision",
    "import_library", "migrate", "open_library", "read_library_file", "reproduce_plan",
    "resolve_database_url", "schema_revision",
]
