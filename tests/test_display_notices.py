"""Notices in words (pacing.display.notices): every code the core can make has a sentence, in
both unit systems, and no sentence leaks a NaN or an infinity."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from pacing.display.notices import WORDS, describe, labelled
from pacing.notices import Notice, note

ROOT = Path(__file__).resolve().parents[1]
CODE = re.compile(r"\b(?:warning|note|Notice)\(\s*\"([a-z0-9-]+)\"")


def codes_made_by_the_core() -> set[str]:
    """Every code written as warning("…"), note("…") or Notice("…") in pacing/."""
    found = set()
    for path in (ROOT / "pacing").rglob("*.py"):
        if "display" in path.parts:
            continue
        found |= set(CODE.findall(path.read_text(encoding="utf-8")))
    return found


@pytest.mark.parametrize("code", sorted(codes_made_by_the_core()))
def test_every_code_of_the_core_has_words(code):
    assert code in WORDS


def test_an_unknown_code_still_reaches_the_user_with_its_values():
    assert describe(Notice("made-up-code", {"distance_m": 5.0})) == "made-up-code (distance_m=5.0)"
    assert labelled(note("made-up-code")) == "note: made-up-code"
