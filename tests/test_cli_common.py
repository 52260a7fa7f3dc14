"""Flags shared by the commands and the words of the planning chain on the terminal
(pacing.cli.common)."""

from __future__ import annotations

import argparse
import warnings

import pytest

from pacing.cli.common import (
    add_air_flags,
    check_shared_flags,
    conditions_from_args,
    notices_as_json,
    report_notices,
)
from pacing.errors import InputError
from pacing.notices import note, warning


def air_args(*flags: str) -> argparse.Namespace:
    parser = argparse.ArgumentParser()
    add_air_flags(parser)
    return parser.parse_args(list(flags))


def test_the_air_flags_become_the_day_s_conditions_with_humidity_from_percent():
    args = air_args("--temperature", "28", "--humidity", "40", "--wind-speed", "3",
                    "--wind-from", "270")
    check_shared_flags(args)
    day = conditions_from_args(args)
    assert (day.temperature, day.relative_humidity) == (28.0, 0.4)
    assert (day.wind_speed, day.wind_from, day.wind_height) == (3.0, 270.0, 10.0)


def test_a_wind_speed_without_its_direction_is_refused():
    with pytest.raises(InputError, match="--wind-from"):
        check_shared_flags(air_args("--wind-speed", "3"))


SAID = (warning("w-prime-exhausted", distance_m=3800.0, lowest_balance_j=-4000.0),
        note("limits-reached", limits=["mean-power"]))


def test_notices_in_json_carry_their_data_and_their_words():
    entries = notices_as_json(SAID)
    assert [e["code"] for e in entries] == ["w-prime-exhausted", "limits-reached"]
    assert entries[0]["values"] == {"distance_m": 3800.0, "lowest_balance_j": -4000.0}
    assert entries[0]["text"].startswith("W′ runs out at 3.8 km")


def test_warnings_go_to_stderr_and_notes_under_the_table():
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        lines = report_notices(SAID, table=True)
    assert [str(w.message)[:20] for w in caught] == ["W′ runs out at 3.8 k"]
    assert lines == ["note: the plan holds to the mean power asked for"]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        assert report_notices(SAID, table=False) == []
    assert len(caught) == 1
