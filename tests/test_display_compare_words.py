"""The sentences of the compare notices (pacing.display.compare_words): every code speaks in both
unit systems, in one line, with its unit words, and a plausible number never turns into 'nan'."""

from __future__ import annotations

import pytest
from words_samples import SampleValues

from pacing.display.compare_words import WORDS

SYSTEMS = ("metric", "imperial")


@pytest.mark.parametrize("system", SYSTEMS)
@pytest.mark.parametrize("code", sorted(WORDS))
def test_every_code_speaks_one_line_in_both_systems(code, system):
    sentence = WORDS[code](SampleValues(), system)
    assert sentence.strip() and "\n" not in sentence
    assert "nan" not in sentence.lower().split() and "None" not in sentence


def test_there_is_something_to_say():
    assert WORDS
