"""Reopening a saved plan: compute it again from its inputs and say whether the numbers hold.

The library stores what a plan was computed from and what came out; the computation itself
belongs to the caller (the app or the command line), who passes it in as
``compute(inputs) -> result`` with the keys of PLAN_RESULT_KEYS.
"""

from __future__ import annotations

import copy
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import pacing
from pacing.errors import InputError
from pacing.store import jsontext
from pacing.store.records import PLAN_RESULT_KEYS, PlanRecord

#: Two numbers are the same when they differ by at most this fraction of the larger one [-].
RELATIVE_TOLERANCE = 1e-9
#: ... or by at most this much, for numbers that should be zero (float round-off) [-].
ABSOLUTE_TOLERANCE = 1e-12


@dataclass(frozen=True)
class Difference:
    """One place where the recomputed numbers differ from the saved ones.

    Attributes
    ----------
    where : path in the result, e.g. ``finish_time`` or ``targets[3].power``.
    saved : the saved value (None if missing).
    recomputed : the recomputed value (None if missing).
    """

    where: str
    saved: Any
    recomputed: Any


@dataclass(frozen=True)
class ReproductionReport:
    """What reopening a saved plan gave.

    Attributes
    ----------
    plan_id : id of the saved plan.
    same : True when every number agrees within RELATIVE_TOLERANCE and everything else
        is equal.
    saved : the saved result (keys of PLAN_RESULT_KEYS).
    recomputed : the result computed now, as it would be stored.
    differences : every place that differs (empty when `same`).
    saved_library_version : pacing version that made the saved plan.
    current_library_version : pacing version that computed it now.
    """

    plan_id: int
    same: bool
    saved: dict[str, Any]
    recomputed: dict[str, Any]
    differences: tuple[Difference, ...]
    saved_library_version: str
    current_library_version: str

    @property
    def library_version_differs(self) -> bool:
        """Whether the plan was made by another version of pacing."""
        return self.saved_library_version != self.current_library_version

    def message(self) -> str:
        """One line for the user."""
        if self.same:
            return "the saved plan reproduces exactly"
        cause = (f"the model changed (saved with pacing {self.saved_library_version}, now "
                 f"{self.current_library_version})" if self.library_version_differs
                 else "its inputs give other numbers now")
        count = len(self.differences)
        values = "1 value differs" if count == 1 else f"{count} values differ"
        return f"the saved plan does not reproduce: {values}; {cause}"


def numbers_agree(saved: float, recomputed: float) -> bool:
    """Whether two numbers are the same within the reproduction tolerances."""
    return math.isclose(saved, recomputed, rel_tol=RELATIVE_TOLERANCE,
                        abs_tol=ABSOLUTE_TOLERANCE)


def _is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def compare_values(saved: Any, recomputed: Any, where: str) -> list[Difference]:
    """Every difference between two JSON values (numbers compared with numbers_agree)."""
    if _is_number(saved) and _is_number(recomputed):
        return [] if numbers_agree(saved, recomputed) else [Difference(where, saved, recomputed)]
    if isinstance(saved, dict) and isinstance(recomputed, dict):
        out: list[Difference] = []
        for key in list(saved) + [k for k in recomputed if k not in saved]:
            out += compare_values(saved.get(key), recomputed.get(key), f"{where}.{key}")
        return out
    if isinstance(saved, list) and isinstance(recomputed, list):
        out = []
        for index in range(max(len(saved), len(recomputed))):
            out += compare_values(saved[index] if index < len(saved) else None,
                                  recomputed[index] if index < len(recomputed) else None,
                                  f"{where}[{index}]")
        return out
    if type(saved) is type(recomputed) and saved == recomputed:
        return []
    return [Difference(where, saved, recomputed)]


def reproduce_plan(saved: PlanRecord,
                   compute: Callable[[dict[str, Any]], Mapping[str, Any]]
                   ) -> ReproductionReport:
    """Compute a saved plan again from its inputs and compare the numbers.

    Parameters
    ----------
    saved : the saved plan (Library.plan).
    compute : the caller's computation, ``compute(inputs) -> result`` with the keys of
        PLAN_RESULT_KEYS; it gets a copy of the saved inputs.

    Returns a ReproductionReport: `same`, or both versions of the numbers, each difference,
    and whether the pacing version differs from the one that saved the plan.
    """
    if not isinstance(saved, PlanRecord):
        raise InputError(f"expected a saved plan, got {type(saved).__name__}")
    result = compute(copy.deepcopy(saved.inputs))
    if not isinstance(result, Mapping):
        raise InputError(f"the plan computation returned a {type(result).__name__}, not a "
                         "dict")
    recomputed = {key: jsontext.to_json_value(result.get(key), key) for key in PLAN_RESULT_KEYS}
    saved_result = saved.result()
    differences = []
    for key in PLAN_RESULT_KEYS:
        differences += compare_values(saved_result[key], recomputed[key], key)
    return ReproductionReport(
        plan_id=saved.id,
        same=not differences,
        saved=saved_result,
        recomputed=recomputed,
        differences=tuple(differences),
        saved_library_version=saved.summary.library_version,
        current_library_version=pacing.__version__,
    )
