"""Warnings and notes as data: a code and its values, made once in the core.

The core never writes sentences for people. Where it knows something the user must hear (a
limit broken, a model stretched beyond its range, a result that may mislead), it returns a
`Notice`: a code, a level and the numbers behind it in SI units, each key ending with its unit
(``distance_m``, ``balance_j``, ``speed_mps``, ``share``, ``count``). The edges turn notices into
words and units (pacing.display.notices) on every surface: page, terminal, JSON and exports.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

LEVELS = ("warning", "note")
"""A *warning* says the result may mislead or a limit is broken; a *note* explains a number."""


@dataclass(frozen=True)
class Notice:
    """Something the core knows that the user must be told.

    Attributes
    ----------
    code : what happened, in words of our own joined by hyphens (``"w-prime-exhausted"``);
        pacing.display.notices has the sentence for every code.
    values : the numbers (SI, key ending with the unit) and names the sentence needs.
    level : "warning" or "note".
    """

    code: str
    values: Mapping[str, Any] = field(default_factory=dict)
    level: str = "warning"

    def __post_init__(self) -> None:
        if self.level not in LEVELS:
            raise ValueError(f"notice level must be one of {LEVELS}, got {self.level!r}")

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready form: {"code", "level", "values"}."""
        return {"code": self.code, "level": self.level, "values": dict(self.values)}


def warning(code: str, **values: Any) -> Notice:
    """A Notice of level "warning"."""
    return Notice(code, values, "warning")


def note(code: str, **values: Any) -> Notice:
    """A Notice of level "note"."""
    return Notice(code, values, "note")
