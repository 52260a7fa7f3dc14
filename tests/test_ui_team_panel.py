"""The team panel (ui/team_panel.py): the rider table, the race, the W′ chart, and the panel
drawn in a Streamlit test run (AppTest)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from pacing.errors import InputError
from pacing.io.team_file import rider_table
from pacing.team.plan import plan_team
from pacing.team.schedule import RiderRow
from ui.team_panel import (
    DEFAULT_RIDERS,
    balance_figure,
    race_from_inputs,
    shown_riders,
    summary_line,
    team_from_frame,
)

CHOICE = {"kind": "track", "distance_m": 4000.0, "lap_m": 250.0, "counts_rider": 3,
          "drafting": (0.0, 0.3, 0.38), "reserve_j": 0.0, "standing_start": True}


def test_the_default_rider_table_makes_a_team_of_four_with_default_caps():
    team = team_from_frame(DEFAULT_RIDERS)
    assert [r.name for r in team.riders] == ["Rider 1", "Rider 2", "Rider 3", "Rider 4"]
    assert team.riders[0].power_cap == pytest.approx(430.0 + 24000.0 / 60.0)


def test_a_bad_row_is_refused_naming_it():
    frame = DEFAULT_RIDERS.astype(object)
    frame.loc[1, "cp_w"] = "lots"
    with pytest.raises(InputError, match="rider row 2"):
        team_from_frame(frame)


def test_a_road_race_needs_the_pages_course():
    with pytest.raises(InputError, match="load a course"):
        race_from_inputs({**CHOICE, "kind": "road"})


def test_the_chart_has_one_line_per_rider_in_kilojoules():
    team = team_from_frame(DEFAULT_RIDERS)
    race = race_from_inputs(CHOICE)
    plan = plan_team(team, race)
    figure = balance_figure(plan, "imperial")
    assert len(figure.data) == 4
    assert max(np.max(trace.y) for trace in figure.data) <= 24.0 + 1e-9
    assert figure.layout.xaxis.title.text == "distance [mi]"
    assert "gain" in summary_line(plan, race) and "rider 3" in summary_line(plan, race)


def test_the_track_race_takes_the_air_density_of_the_day():
    race = race_from_inputs(CHOICE)
    assert race.density[0] == pytest.approx(1.1993, abs=1e-3)  # CIPM-2007, 20 °C, 50 %


def test_the_panel_plans_a_team_pursuit_in_a_streamlit_run():
    from streamlit.testing.v1 import AppTest

    def page():
        import streamlit as st

        from ui.team_panel import render

        render(st, "metric")

    app = AppTest.from_function(page, default_timeout=60)
    app.run()
    assert not app.exception
    app.button(key="team_plan").click().run()
    assert not app.exception
    assert any("Finish" in s.value for s in app.success)
    assert len(app.dataframe) == 3  # the rider editor, the schedule, the riders
    table = app.dataframe[1].value
    assert isinstance(table, pd.DataFrame) and "Lap time [s]" in table.columns


def test_riders_who_finish_show_a_blank_not_none_or_nan():
    table = shown_riders(rider_table([RiderRow("A", 1.0, 2.0, 3.0, None),
                                      RiderRow("B", 1.0, 2.0, 3.0, 3750.0)]))
    assert table.iloc[:, -1].tolist() == ["", "3.750"]
