"""The team schedule as files (pacing.io.team_file): CSV with notices first, XLSX sheets,
imperial units, names that a spreadsheet would take for formulas."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
import pytest

from pacing.io.team_file import (
    TEAM_CAUTION,
    balance_table,
    rider_table,
    safe_text,
    schedule_csv,
    schedule_xlsx,
    turn_table,
)
from pacing.team.schedule import RiderRow, TurnRow

TURNS = [TurnRow(1, "Ann", 0.0, 375.0, 30.0, 700.0, 12.5),
         TurnRow(2, "=cmd", 375.0, 625.0, 15.0, 600.0, 250.0 / 15.0)]
RIDERS = [RiderRow("Ann", 1200.0, 30.0, 520.0, None), RiderRow("=cmd", 0.0, 15.0, 480.0, 625.0)]


def test_track_table_gives_laps_and_lap_times():
    table = turn_table(TURNS, "metric", lap_length=250.0)
    assert table["Laps"].tolist() == [1.5, 1.0]
    assert table["Lap time [s]"].tolist() == [20.0, 15.0]
    assert table["Speed [km/h]"].tolist() == [45.0, 60.0]


def test_road_table_gives_the_time_per_kilometre_or_mile():
    assert turn_table(TURNS, "metric")["Time per km [s]"].tolist() == [80.0, 60.0]
    imperial = turn_table(TURNS, "imperial")
    # 1 mi = 1609.344 m exactly (international mile, 1959)
    assert imperial["Time per mi [s]"].iloc[0] == pytest.approx(1609.344 / 12.5, abs=0.05)
    assert imperial["To [mi]"].iloc[0] == pytest.approx(375.0 / 1609.344, abs=1e-3)


def test_formula_like_names_are_written_as_text():
    assert safe_text("=cmd") == "'=cmd" and safe_text("-1") == "'-1"
    assert turn_table(TURNS)["Leader"].tolist() == ["Ann", "'=cmd"]
    assert rider_table(RIDERS)["Rider"].tolist() == ["Ann", "'=cmd"]


def test_csv_starts_with_the_notices_and_the_caution_then_the_table():
    data = schedule_csv(TURNS, ["note: x drops out"], "metric", 250.0).decode("utf-8")
    lines = data.splitlines()
    assert lines[0] == "# note: x drops out" and lines[1] == "# " + TEAM_CAUTION
    table = pd.read_csv(io.StringIO(data), comment="#")
    assert table["Turn"].tolist() == [1, 2]


def test_xlsx_holds_turns_riders_balances_and_notes():
    balance = balance_table(np.array([375.0, 625.0]), np.array([[2e4, 1.5e4], [2e4, 1e4]]),
                            ["Ann", "=cmd"])
    data = schedule_xlsx(TURNS, RIDERS, balance, ["note: n"], "metric", 250.0)
    sheets = pd.read_excel(io.BytesIO(data), sheet_name=None)
    assert list(sheets) == ["turns", "riders", "W′ balance", "notes"]
    assert sheets["W′ balance"]["'=cmd W′ [kJ]"].tolist() == [20.0, 10.0]
    assert sheets["riders"]["Drops out at [km]"].iloc[1] == 0.625
    assert TEAM_CAUTION in sheets["notes"]["notes"].tolist()
