"""Notices in words: the one place where a core Notice (pacing.notices) becomes a sentence.

Each domain keeps its sentences in its own module as ``WORDS: dict[code, function]``; a function
takes the notice's values and the unit system ("metric" or "imperial") and returns one line.
This module merges them, so the page, the terminal and every export say the same thing.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from typing import Any

from pacing.display import (
    compare_words,
    course_words,
    fieldtest_words,
    plan_words,
    review_words,
    team_words,
    weather_words,
)
from pacing.notices import Notice

Words = Callable[[Mapping[str, Any], str], str]

WORDS: dict[str, Words] = {}
for _module in (plan_words, compare_words, fieldtest_words, course_words, weather_words,
                review_words, team_words):
    _overlap = WORDS.keys() & _module.WORDS.keys()
    if _overlap:
        raise RuntimeError(f"notice codes with two sentences: {sorted(_overlap)}")
    WORDS.update(_module.WORDS)


def describe(notice: Notice, system: str = "metric") -> str:
    """The notice as one line in the unit system's words.

    A code without a sentence still reaches the user: its code and values are shown as they
    are (tests/test_display_notices.py checks that every code the core makes has words).
    """
    words = WORDS.get(notice.code)
    if words is None:
        values = ", ".join(f"{k}={v}" for k, v in notice.values.items())
        return f"{notice.code}" + (f" ({values})" if values else "")
    return words(notice.values, system)


def describe_all(notices: Iterable[Notice], system: str = "metric") -> list[str]:
    """Every notice in words, in order."""
    return [describe(n, system) for n in notices]


def labelled(notice: Notice, system: str = "metric") -> str:
    """"warning: …" or "note: …" for the terminal and plain-text exports."""
    return f"{notice.level}: {describe(notice, system)}"
