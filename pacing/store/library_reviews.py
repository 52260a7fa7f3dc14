"""Reviews of the races ridden to saved plans (migration 0004): the review's JSON as the review
command prints it (pacing.cli.review.review_as_dict), with the race file's name and SHA-256.
Stored, listed by plan, read, deleted with confirmation; they go with their plan.
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
from pacing.store.records import PlanReviewRecord
from pacing.store.rows import check_name
from pacing.store.schema import plan_reviews, plans
from pacing.store.statements import delete_row, insert_row

#: Keys a stored review must hold (the review command's JSON; "fitted" may be null).
REVIEW_KEYS = ("planned_time_s", "actual_time_s", "segments", "attribution", "fitted",
               "warnings")
_SHA256 = re.compile(r"[0-9a-f]{64}")


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

    def plan_reviews(self, plan_id: int) -> tuple[PlanReviewRecord, ...]:
        """The reviews kept with a saved plan, oldest first (InputError if no such plan)."""
        self._one(plans, "plan", plan_id)
        query = (sa.select(plan_reviews).where(plan_reviews.c.plan_id == plan_id)
                 .order_by(plan_reviews.c.created_at, plan_reviews.c.id))
        return tuple(plan_review_record(row) for row in self._rows(query))

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
    from pacing.store.library_file import _checked, _list, _object, _stamps

    found = []
    for index, entry in enumerate(_list(entries, where)):
        place = f"{where}[{index}]"
        entry = _object(entry, place, set(FILE_REVIEW_KEYS), set(FILE_REVIEW_KEYS))
        row = _checked(review_columns, place, entry["review"], entry["ride_name"],
                       entry["ride_sha256"])
        found.append(FileReview(row, *_stamps(entry, place)))
    return tuple(found)
