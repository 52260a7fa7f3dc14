"""Persistence of the coach's library: athletes, setups, courses (original GPX) and saved
plans, through SQLAlchemy, in an SQLite file by default or any database URL.

Public API
----------
open_library(location=None) -> Library     location: path or URL, else $PACING_DATABASE_URL,
                                           else library.sqlite3 in the user's data folder;
                                           created and migrated (Alembic) on open
Library: add_/update_/delete_athlete, add_/update_/delete_setup, add_course, rename_course,
    find_courses, delete_course, save_plan, update_plan, delete_plan, add_plan_review,
    save_plan_with_review (both in one transaction), delete_plan_review; athlete(id),
    athletes(), setup(id), setups(athlete_id=None), course(id), courses(), plan(id),
    plans(athlete_id=None, course_id=None), plan_review(id), plan_reviews(plan_id=None),
    review_counts(). Setups
    take ``drag_area_origin=`` (DragAreaOrigin: the drag area's interval and source, e.g. a
    race review; pacing.store.drag_origin). Changes take ``revision=`` (ConflictError when
    stale); deletes take ``confirm=True``; adds and saves take ``on_existing=`` ("refuse",
    the default: NameTaken; "replace"; "keep-both": "name (2)").
reproduce_plan(saved, compute) -> ReproductionReport
export_library(library, athlete_id=None) -> dict; dump_library_file(...) -> str
read_library_file(text) -> LibraryFile (checked: at most 50 MiB, 32 levels deep, physical
    ranges); import_library(library, text, on_existing="refuse") -> ImportSummary
Records: AthleteRecord, SetupRecord, DragAreaOrigin, CourseSummary, CourseRecord,
    PlanSummary, PlanRecord, PlanReviewRecord.
Errors: pacing.errors.InputError (bad input, one line), pacing.errors.ConflictError (stale
revision: someone else changed the entry), and two InputErrors of the store:
pacing.store.statements.NameTaken (a name already stored) and
pacing.store.database.LibraryBusy (another program kept the library locked past every try).
"""
