"""Reviews of the races ridden to saved plans (migration 0004): the review's JSON as the review
command prints it (pacing.cli.review.review_as_dict), with the race file's name and SHA-256.
Stored (with an existing plan, or with a new plan in one transaction), listed by plan or all
together, counted per plan, read, deleted with confirmation; they go with their plan.
"""

from __future__ import annotations

import datetime
import hashlib
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import sqlalchemy as sa

from pacing.errors import InputError
from pacing.store import jsontext
from pacing.store.database import as_utc
from pacing.store.library_base import LibraryBase
from pacing.store.library_file_json import checked_at, entry_stamps, json_list, json_object
from pacing.store.library_plans import checked_plan, write_plan
from pacing.store.records import PlanRecord, PlanReviewRecord
from pacing.store.rows import check_name, plan_record
from pacing.store.schema import plan_reviews, plans
from pacing.store.statements import delete_row, insert_row

#: Keys a stored review must hold (the review command's JSON; "fitted" may be null).
REVIEW_KEYS = ("planned_time_s", "actual_time_s", "segments", "attribution", "fitted",
               "warnings")
_SHA256 = re.compile(r"[0-9a-f]{64}")
#: Largest difference between a saved plan's finish time and the planned time of a review for
#: the review to count as one of that plan [s]: the same inputs give the same plan to far
#: better than a second; a review of another plan kept with it would mislead.
SAME_PLAN_TOLERANCE = 1.0


def same_plan_time(saved_finish_time: float, planned_time: float) -> bool:
    """Whether a review's planned time is the saved plan's finish time (within
    SAME_PLAN_TOLERANCE).

    Parameters
    ----------
    saved_finish_time : float
        The saved plan's finish time [s].
    planned_time : float
        The planned time of the plan the review was made against [s].

    Returns
    -------
    bool
    """
    return abs(float(saved_finish_time) - float(planned_time)) <= SAME_PLAN_TOLERANCE


def ride_digest(ride: bytes) -> str:
    """SHA-256 of a race file, 64 lower-case hexadecimal digits."""
    return hashlib.sha256(bytes(ride)).hexdigest()


def check_review(review: Any) -> dict[str, Any]:
    """A review as JSON: an object with REVIEW_KEYS, finite planned and ridden times [s].

    Raises
    ------
    InputError
        Not an object, a key missing, or a time that is not a finite positive number.
    """
    if not isinstance(review, Mapping):
        raise InputError(f"a race review must be a JSON object, got {type(review).__name__}")
    missing = [key for key in REVIEW_KEYS if key not in review]
    if missing:
        raise InputError(f"the race review lacks {', '.join(missing)}")
    for key in ("planned_time_s", "actual_time_s"):
        value = review[key]
        if isinstance(value, bool) or not isinstance(value, (int, float)) \
                or not math.isfinite(value) or value <= 0:
            raise InputError(f"the race review's {key} must be a positive number of seconds")
    value = jsontext.to_json_value(dict(review), "race review")
    assert isinstance(value, dict)
    return value


def review_columns(review: Any, ride_name: Any, ride_sha256: Any) -> dict[str, Any]:
    """Checked column values of a plan review (without plan_id)."""
    if not isinstance(ride_sha256, str) or not _SHA256.fullmatch(ride_sha256):
        raise InputError("the race file's SHA-256 must be 64 lower-case hexadecimal digits")
    checked = check_review(review)
    return {"ride_name": check_name(ride_name, "a race file"), "ride_sha256": ride_sha256,
            "review": jsontext.dumps(checked, "race review")}


def plan_review_record(row: Any) -> PlanReviewRecord:
    """The PlanReviewRecord of a row of the plan_reviews table."""
    return PlanReviewRecord(id=row.id, plan_id=row.plan_id, ride_name=row.ride_name,
                            ride_sha256=row.ride_sha256, review=jsontext.loads(row.review),
                            revision=row.revision, created_at=as_utc(row.created_at),
                            updated_at=as_utc(row.updated_at))


class ReviewMethods(LibraryBase):
    """The methods of pacing.store.library.Library on the reviews kept with saved plans."""

    def add_plan_review(self, plan_id: int, review: Mapping[str, Any], *, ride_name: str,
                        ride_sha256: str) -> PlanReviewRecord:
        """Keep a race review with a saved plan.

        Parameters
        ----------
        plan_id : int
            Library id of the saved plan the race was ridden to.
        review : Mapping
            The review as JSON (pacing.cli.review.review_as_dict; SI).
        ride_name : str
            The race file's name.
        ride_sha256 : str
            SHA-256 of the race file (ride_digest).

        Returns
        -------
        PlanReviewRecord
            As stored (new id, revision 1).
        """
        values = review_columns(review, ride_name, ride_sha256)
        with self.transaction() as connection:
            self._one(plans, "plan", plan_id, connection)
            entry_id = insert_row(connection, plan_reviews, dict(values, plan_id=plan_id))
        return self.plan_review(entry_id)

    def plan_review(self, review_id: int) -> PlanReviewRecord:
        """The stored review with this id (InputError if there is none)."""
        return plan_review_record(self._one(plan_reviews, "race review", review_id))

    def save_plan_with_review(self, name: str, inputs: Mapping[str, Any],
                              result: Mapping[str, Any], review: Mapping[str, Any], *,
                              ride_name: str, ride_sha256: str, notes: str = "",
                              on_existing: str = "refuse"
                              ) -> tuple[PlanRecord, PlanReviewRecord]:
        """Save a new plan and keep a race review with it, in one transaction: both are
        stored or neither. It never replaces a saved plan (whose reviews would then belong to
        another plan): a name already stored is refused (NameTaken) or, with
        ``on_existing="keep-both"``, this plan is saved as "name (2)".

        Parameters
        ----------
        name, inputs, result, notes
            As PlanMethods.save_plan.
        review : Mapping
            The review as JSON (as add_plan_review).
        ride_name : str
            The race file's name.
        ride_sha256 : str
            SHA-256 of the race file (ride_digest).
        on_existing : str
            "refuse" or "keep-both" [-].

        Returns
        -------
        tuple of (PlanRecord, PlanReviewRecord)
            As stored (new ids, revision 1).

        Raises
        ------
        NameTaken
            The name is taken and `on_existing` is "refuse".
        InputError
            A bad plan or review, or ``on_existing="replace"``, in one line.
        """
        if on_existing == "replace":
            raise InputError("a plan saved with its race review never replaces a saved plan: "
                             "keep both or choose another name")
        checked = checked_plan(name, inputs, result, notes, on_existing)
        values = review_columns(review, ride_name, ride_sha256)
        with self.transaction() as connection:
            plan_id = write_plan(connection, checked)
            review_id = insert_row(connection, plan_reviews, dict(values, plan_id=plan_id))
        return plan_record(self._one(plans, "plan", plan_id)), self.plan_review(review_id)

    def plan_reviews(self, plan_id: int | None = None) -> tuple[PlanReviewRecord, ...]:
        """The reviews kept with a saved plan, oldest first (InputError if no such plan); with
        no `plan_id`, every saved plan's, plan by plan (by id), each plan's oldest first."""
        query = sa.select(plan_reviews)
        if plan_id is None:
            query = query.order_by(plan_reviews.c.plan_id, plan_reviews.c.created_at,
                                   plan_reviews.c.id)
        else:
            self._one(plans, "plan", plan_id)
            query = (query.where(plan_reviews.c.plan_id == plan_id)
                     .order_by(plan_reviews.c.created_at, plan_reviews.c.id))
        return tuple(plan_review_record(row) for row in self._rows(query))

    def review_counts(self) -> dict[int, int]:
        """How many race reviews each saved plan keeps: plan id → count (plans without
        reviews left out)."""
        query = (sa.select(plan_reviews.c.plan_id, sa.func.count(plan_reviews.c.id))
                 .group_by(plan_reviews.c.plan_id))
        return {int(plan_id): int(count) for plan_id, count in self._rows(query)}

    def delete_plan_review(self, review_id: int, *, confirm: bool = False,
                           revision: int | None = None) -> None:
        """Delete a kept review (needs ``confirm=True``; ConflictError if `revision` is
        stale)."""
        with self.transaction() as connection:
            row = self._one(plan_reviews, "race review", review_id, connection)
            if not confirm:
                raise InputError(f"deleting the review of {row.ride_name!r} cannot be undone; "
                                 "confirm to go ahead")
            delete_row(connection, plan_reviews, "race review", review_id, revision)


# ---------------------------------------------------------------------------------------------
# the library file (format version 3): a plan's "reviews"

#: Fields of a kept review in the library file.
FILE_REVIEW_KEYS = frozenset({"ride_name", "ride_sha256", "review", "created_at",
                              "updated_at"})


@dataclass(frozen=True)
class FileReview:
    """A race review kept with a plan, read from a library file.

    Attributes
    ----------
    row : dict
        Checked column values (ride_name, ride_sha256, review as JSON text), without plan_id.
    created_at, updated_at : datetime.datetime
        When the exporting library stored and last changed it (naive UTC).
    """

    row: dict[str, Any]
    created_at: datetime.datetime
    updated_at: datetime.datetime


def file_review_entry(row: Any) -> dict[str, Any]:
    """A kept review (a plan_reviews row) as the library file holds it."""
    return {"ride_name": row.ride_name, "ride_sha256": row.ride_sha256,
            "review": jsontext.loads(row.review),
            "created_at": as_utc(row.created_at).isoformat(),
            "updated_at": as_utc(row.updated_at).isoformat()}


def read_file_reviews(entries: Any, where: str) -> tuple[FileReview, ...]:
    """A plan's "reviews" list of a library file, checked as add_plan_review checks them."""
    found = []
    for index, entry in enumerate(json_list(entries, where)):
        place = f"{where}[{index}]"
        entry = json_object(entry, place, set(FILE_REVIEW_KEYS), set(FILE_REVIEW_KEYS))
        row = checked_at(review_columns, place, entry["review"], entry["ride_name"],
                       entry["ride_sha256"])
        found.append(FileReview(row, *entry_stamps(entry, place)))
    return tuple(found)
