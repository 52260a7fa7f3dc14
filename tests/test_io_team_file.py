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
    assert imperial["Time per mi [m:ss]"].iloc[0] == "2:09"  # 128.7 s
    assert turn_table(TURNS, "metric")["Time per km [m:ss]"].tolist() == ["1:20", "1:00"]
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


# ------------------------------------------------------------------------ printable card

def card_texts(figure) -> list[str]:
    return [text.get_text() for text in figure.axes[0].texts]


ORDERS = [["Ann", "=cmd"], ["=cmd", "Ann"]]


def test_the_card_holds_every_turn_its_targets_and_the_line_behind():
    from pacing.io.team_file import team_card_figure

    texts = card_texts(team_card_figure(TURNS, ORDERS, 2, lap_length=250.0,
                                        finish_time_s=45.04))
    assert "finish 0:45.0 · time taken on the 2nd rider of 2 across the line" in texts
    assert "start order: 1 Ann, 2 =cmd" in texts
    # turn 1: 375 m = 1.5 laps of 250 m at 12.5 m/s, so 20.00 s a lap, 700 W, Ann then no. 2
    assert {"1", "Ann", "1.5", "700", "20.00", "2"} <= set(texts)
    assert {"2", "=cmd", "1.0", "600", "15.00", "1"} <= set(texts)


def test_the_card_prints_the_caution_of_a_team_line_and_the_warnings():
    from pacing.io.team_file import team_card_figure

    texts = " ".join(card_texts(team_card_figure(
        TURNS, ORDERS, 2, warnings=["W′ runs out"], notes=["Ann drops out"])))
    flat = " ".join(texts.split())  # the caution is wrapped over lines
    assert TEAM_CAUTION in flat
    for words in ("keep the line safe at every change of lead", "commissaires",
                  "model estimates", "physician"):
        assert words in flat
    assert "⚠ W′ runs out" in flat and "Ann drops out" in flat


def test_a_road_card_gives_distances_and_time_per_kilometre_or_mile():
    from pacing.io.team_file import team_card_figure

    texts = card_texts(team_card_figure(TURNS, ORDERS, 2, "imperial"))
    # 375 m = 0.23 mi; 1609.344 m at 12.5 m/s = 128.7 s = 2:09 per mile (international mile)
    assert "0.00–0.23" in texts and "2:09" in texts and "per mi" in texts


def test_the_card_renders_as_png_and_pdf_growing_with_its_turns():
    from PIL import Image

    from pacing.io.team_file import TEAM_CARD, team_card_pdf, team_card_png

    png = team_card_png(TURNS, ORDERS, 2, lap_length=250.0, dpi=50)
    image = Image.open(io.BytesIO(png))
    width, height = TEAM_CARD.size(2)
    assert image.size == pytest.approx((width * 50, height * 50), abs=1)  # ±1 px rounding
    grey = np.asarray(image.convert("L"))
    assert (grey < 100).mean() > 0.01  # dark ink on a white card
    assert team_card_pdf(TURNS, ORDERS, 2).startswith(b"%PDF")
    assert TEAM_CARD.size(61)[0] == pytest.approx(3 * TEAM_CARD.size(5)[0])  # 30 a column


def test_a_card_without_turns_or_with_orders_missing_is_refused():
    from pacing.errors import InputError
    from pacing.io.team_file import team_card_png

    with pytest.raises(InputError, match="no turns"):
        team_card_png([], [], 3)
    with pytest.raises(InputError, match="line order per turn"):
        team_card_png(TURNS, ORDERS[:1], 2)


def test_line_orders_put_the_leader_first_and_leave_out_riders_who_dropped():
    from pacing.io.team_file import line_orders

    position = np.array([[0, 1, 2, 3], [3, 0, 1, 2], [2, -1, 0, 1]])
    assert line_orders(list("ABCD"), position) == [list("ABCD"), list("BCDA"), list("CDA")]
