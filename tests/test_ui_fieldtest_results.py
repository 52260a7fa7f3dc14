"""The road test's results as the page shows them (ui.fieldtest_results): the positions'
table, intervals in words and the differences between positions. The fit itself is checked
in tests/test_fieldtest_*.py and the panel in tests/test_ui_panels.py."""

from __future__ import annotations

import statistics
from types import SimpleNamespace

import pytest

from ui.fieldtest_results import difference_lines, interval_words, position_table


def position(label: str, laps: list[float], interval=(0.29, 0.31)) -> SimpleNamespace:
    return SimpleNamespace(label=label, drag_area=statistics.fmean(laps),
                           drag_area_ci95=interval, laps=len(laps), lap_drag_area=laps)


def test_an_interval_reads_low_to_high_or_says_why_there_is_none():
    assert interval_words((0.29012, 0.31049), 4, " m²") == "0.2901 to 0.3105 m²"
    assert interval_words(None, 4) == "no interval (fewer than 3 laps)"


def test_the_lap_to_lap_spread_is_the_sample_coefficient_of_variation():
    laps = [0.301, 0.296, 0.305, 0.299]
    result = SimpleNamespace(positions=[position("hoods", laps), position("drops", [0.28])])
    table = position_table(result)
    # reference: Python's statistics module (sample standard deviation, n - 1)
    expected = 100.0 * statistics.stdev(laps) / statistics.fmean(laps)
    assert float(table.loc[0, "Lap-to-lap spread [%]"]) == pytest.approx(expected, abs=0.05)
    assert table.loc[1, "Lap-to-lap spread [%]"] == "–"  # one lap: no spread
    assert table["Laps"].tolist() == [4, 1]


def test_a_difference_is_called_real_only_when_its_interval_excludes_zero():
    result = SimpleNamespace(differences=[
        SimpleNamespace(label="drops", baseline="hoods", difference=-0.021,
                        ci95=(-0.030, -0.012), significant=True),
        SimpleNamespace(label="aero", baseline="hoods", difference=-0.004,
                        ci95=(-0.011, 0.003), significant=False),
        SimpleNamespace(label="tops", baseline="hoods", difference=0.01, ci95=None,
                        significant=False)])
    real, unclear, no_interval = difference_lines(result)
    assert real.startswith("drops − hoods: -0.0210 m²") and "a real difference" in real
    assert "not a clear difference" in unclear
    assert "ride at least 3 laps" in no_interval
