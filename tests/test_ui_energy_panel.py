"""Where the watts go on the page (ui.energy_panel): the table's shares add up to the
athlete's work, the chart stacks one bar per segment and one for the race, and the line on the
square law gives this race's Reynolds number.
"""

from __future__ import annotations

import sys
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # the app's ui/ package sits beside app.py
    sys.path.insert(0, str(ROOT))

from pacing.plan.energy import ENERGY_TERMS, EasingEvent, EnergyBudget  # noqa: E402
from ui import energy_panel  # noqa: E402


def budget() -> EnergyBudget:
    """Two segments: a climb (most work into height) and a descent (gravity pays, brakes)."""
    terms = {key: np.zeros(2) for key in ENERGY_TERMS}
    terms["air"] = np.array([40_000.0, 60_000.0])
    terms["rolling"] = np.array([10_000.0, 8_000.0])
    terms["climbing"] = np.array([48_000.0, -30_000.0])
    terms["drivetrain"] = np.array([2_000.0, 1_000.0])
    terms["braking"] = np.array([0.0, 1_000.0])
    work = sum(terms.values())
    return EnergyBudget(work=work, terms=terms, walking_work=np.zeros(2))


def test_each_row_of_the_table_shares_out_the_energy_spent():
    frame = energy_panel.energy_frame(budget())
    assert list(frame["Segment"]) == ["1", "2", "whole race"]
    shares = frame[[c for c in frame.columns if c.endswith("[%]")]]
    assert np.allclose(shares.sum(axis=1), 100.0, atol=0.3)  # rounded to 0.1 % each
    assert (shares >= 0).all().all()
    assert frame["Athlete's work [kJ]"].tolist() == [100.0, 40.0, 140.0]
    assert frame["From gravity [kJ]"].tolist() == [0.0, 30.0, 30.0]
    # the descent: 40 kJ ridden + 30 kJ from gravity = 70 kJ, 60 of them into the air
    assert frame.loc[1, "Air drag [%]"] == pytest.approx(100.0 * 60.0 / 70.0, abs=0.05)
    assert frame.loc[0, "Climbing (height gained) [%]"] == pytest.approx(48.0)


def test_the_chart_stacks_every_sink_per_segment_and_for_the_race():
    spec = energy_panel.energy_spec(budget())
    cycling = [v for k, v in energy_panel.SINK_LABELS.items() if k != "flat running"]
    assert [t["name"] for t in spec["data"]] == cycling
    assert all(t["x"] == ["1", "2", "race"] for t in spec["data"])
    totals = np.sum([t["y"] for t in spec["data"]], axis=0)
    assert np.allclose(totals, 100.0)
    assert spec["layout"]["barmode"] == "stack"


def test_the_easing_table_names_what_the_rider_does():
    events = [EasingEvent(0.0, 10.0, "start", 0.0, 0.0, 10.0, np.inf),
              EasingEvent(4990.0, 5010.0, "braking", 10.0, 2600.0, 400.0, 42.0)]
    frame = energy_panel.easing_frame(events, "metric")
    assert frame["At [km]"].tolist() == [0.0, 4.99]
    assert frame["Down to [km/h]"].tolist() == [0.0, 36.0]
    assert frame["Tightest bend [m]"].tolist() == ["straight", 42]
    assert frame["What"].iloc[1].startswith("brakes")


def test_the_square_law_line_uses_the_race_numbers():
    outcome = SimpleNamespace(reynolds=6.04e5, air_speed=9.2, sport="cycling")
    line = energy_panel.reynolds_line(outcome, "metric")
    assert "6.0 × 10⁵" in line and "33 km/h" in line  # 9.2 m/s = 33.1 km/h
    assert "riding 20 % faster costs about 1.44 times the drag force and 1.73 times" in line
    runner = SimpleNamespace(reynolds=3.1e5, air_speed=4.0, sport="running")
    assert "running 20 % faster" in energy_panel.reynolds_line(runner, "imperial")
    assert energy_panel.reynolds_line(SimpleNamespace(reynolds=None, air_speed=None,
                                                      sport="cycling"), "metric") is None


def test_each_segment_says_where_the_rider_eases_off():
    rows = [SimpleNamespace(start=0.0, end=1000.0), SimpleNamespace(start=1000.0, end=2000.0),
            SimpleNamespace(start=2000.0, end=3000.0)]
    events = [EasingEvent(0.0, 10.0, "start", 0.0, 0.0, 10.0, np.inf),
              EasingEvent(1200.0, 1220.0, "braking", 9.0, 900.0, 300.0, 30.0),
              EasingEvent(1700.0, 1720.0, "braking", 9.0, 900.0, 300.0, 30.0),
              EasingEvent(1900.0, 1910.0, "coasting", 14.0, 0.0, 50.0, 80.0)]
    assert energy_panel.easing_per_segment(rows, events) == ["start", "brakes ×2, coasts", ""]


def test_short_headers_keep_their_units():
    assert energy_panel.short_labels(["Air drag [%]", "From gravity [kJ]", "Segment"]) == {
        "Air drag [%]": "Air [%]", "From gravity [kJ]": "Gravity [kJ]", "Segment": "Segment"}


def test_a_runners_table_says_where_the_metabolic_energy_goes():
    from pacing.plan.energy import RunningBudget

    terms = {"flat running": np.array([360_000.0, 360_000.0]),
             "grade": np.array([120_000.0, -90_000.0]), "air": np.array([20_000.0, 30_000.0])}
    running = RunningBudget(work=sum(terms.values()), terms=terms)
    frame = energy_panel.energy_frame(running)
    assert {"Athlete's energy [kJ]", "Saved running downhill [kJ]",
            "Running on the flat [%]"} <= set(frame.columns)
    shares = frame[[c for c in frame.columns if c.endswith("[%]")]]
    assert np.allclose(shares.sum(axis=1), 100.0, atol=0.3)
    assert energy_panel.energy_note(running) == energy_panel.RUNNING_ENERGY_NOTE
