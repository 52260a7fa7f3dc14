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
    where : str
        Path in the result, e.g. ``finish_time`` or ``targets[3].power``.
    saved : Any
        The saved value (None if missing), in the unit the result uses.
    recomputed : Any
        The recomputed value (None if missing), in the same unit.
    """

    where: str
    saved: Any
    recomputed: Any


@dataclass(frozen=True)
class ReproductionReport:
    """What reopening a saved plan gave.

    Attributes
    ----------
    plan_id : int
        Library id of the saved plan.
    same : bool
        True when every number agrees within RELATIVE_TOLERANCE (or ABSOLUTE_TOLERANCE) and
        everything else is equal.
    saved : dict
        The saved result (keys of PLAN_RESULT_KEYS).
    recomputed : dict
        The result computed now, as it would be stored.
    differences : tuple of Difference
        Every place that differs (empty when `same`).
    saved_library_version : str
        ``pacing.__version__`` of the pacing that made the saved plan.
    current_library_version : str
        ``pacing.__version__`` of the pacing that computed it now.
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
        """One line for the user: reproduced, or how many values differ and the likely
        cause (another pacing version, or inputs that give other numbers now)."""
        if self.same:
            return "the saved plan reproduces exactly"
        cause = (f"the model changed (saved with pacing {self.saved_library_version}, now "
                 f"{self.current_library_version})" if self.library_version_differs
                 else "its inputs give other numbers now")
        count = len(self.differences)
        values = "1 value differs" if count == 1 else f"{count} values differ"
        return f"the saved plan does not reproduce: {values}; {cause}"


def numbers_agree(saved: float, recomputed: float) -> bool:
    """Whether two numbers are the same within the reproduction tolerances.

    Parameters
    ----------
    saved : float
        The saved number (any unit).
    recomputed : float
        The recomputed number (same unit).

    Returns
    -------
    bool
        True when they differ by at most RELATIVE_TOLERANCE of the larger or by at most
        ABSOLUTE_TOLERANCE (math.isclose).
    """
    return math.isclose(saved, recomputed, rel_tol=RELATIVE_TOLERANCE,
                        abs_tol=ABSOLUTE_TOLERANCE)


def _is_number(value: Any) -> bool:
    """Whether a JSON value is a number (bool is not)."""
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def compare_values(saved: Any, recomputed: Any, where: str) -> list[Difference]:
    """Every difference between two JSON values, walking dicts and lists.

    Parameters
    ----------
    saved : Any
        The saved JSON value.
    recomputed : Any
        The recomputed JSON value.
    where : str
        The path of both values in the result (e.g. ``"targets"``).

    Returns
    -------
    list of Difference
        One per leaf that differs (numbers compared with numbers_agree, everything else by
        type and equality; a missing key or item counts as None).
    """
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
    saved : PlanRecord
        The saved plan (Library.plan).
    compute : callable
        The caller's computation, ``compute(inputs) -> result`` with the keys of
        PLAN_RESULT_KEYS; it gets a copy of the saved inputs.

    Returns
    -------
    ReproductionReport
        `same`, or both versions of the numbers and each difference; and the pacing version
        that saved the plan beside the current one.

    Raises
    ------
    InputError
        `saved` is not a saved plan, or `compute` returns something other than a dict.
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
