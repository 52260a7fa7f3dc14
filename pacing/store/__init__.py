"""Persistence of the coach's library: athletes, setups, courses (original GPX) and saved
plans, through SQLAlchemy, in an SQLite file by default or any database URL.

Public API
----------
open_library(location=None) -> Library       create/migrate on open; see Library's methods
reproduce_plan(saved, compute) -> ReproductionReport
export_library(library, athlete_id=None) -> dict; dump_library_file(...) -> str
read_library_file(text) -> LibraryFile (validated); import_library(library, text) -> ImportSummary
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
