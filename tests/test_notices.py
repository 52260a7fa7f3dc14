"""Warnings and notes as data (pacing.notices): a code, SI values and a level."""

from __future__ import annotations

import json

import pytest

from pacing.notices import LEVELS, Notice, note, warning


def test_a_notice_is_data_with_a_level():
    made = warning("w-prime-exhausted", distance_m=3800.0)
    assert made == Notice("w-prime-exhausted", {"distance_m": 3800.0}, "warning")
    assert note("x").level == "note"
    assert LEVELS == ("warning", "note")


def test_its_dict_is_json_ready():
    made = note("limits-reached", limits=["mean-power"], distance_m=12.5)
    assert json.loads(json.dumps(made.as_dict())) == {
        "code": "limits-reached", "level": "note",
        "values": {"limits": ["mean-power"], "distance_m": 12.5}}


def test_an_unknown_level_is_refused():
    with pytest.raises(ValueError, match="level"):
        Notice("x", {}, "shout")
