"""The team panel (ui/team_panel.py): the rider table, the race, the W′ chart, the card
downloads, teams from and to the library (a temporary one: tests/store_fixtures.py), and the
panel drawn in a Streamlit test run (AppTest)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from store_fixtures import database_fixture, library_fixture  # noqa: F401

from pacing.errors import InputError
from pacing.io.team_file import rider_table
from pacing.store.statements import NameTaken
from pacing.team.drafting import DEFAULT_DRAFTING_SET, DRAFTING_SETS
from pacing.team.plan import plan_team
from pacing.team.riders import Team, TeamRider
from pacing.team.schedule import RiderRow
from ui.team_panel import (
    ASKING,
    DEFAULT_RIDERS,
    FILLED_RIDERS,
    balance_figure,
    drafting_key,
    fill_from_record,
    frame_from_team,
    race_from_inputs,
    shown_riders,
    store_team,
    team_from_frame,
)
from ui.team_panel_summary import summary_line

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
    line = summary_line(plan, race)
    assert "3rd rider" in line
    assert f"{plan.gain:.1f} s faster than equal turns at constant speed" in line
    assert f"{plan.power_gain:.1f} s faster than equal turns at one power" in line


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


def test_the_panel_offers_the_printable_card_after_planning():
    from streamlit.testing.v1 import AppTest

    def page():
        import streamlit as st

        from ui.team_panel import render

        render(st, "metric")

    app = AppTest.from_function(page, default_timeout=60)
    app.run()
    app.button(key="team_plan").click().run()
    assert not app.exception
    labels = [element.proto.label for element in app.get("download_button")]
    assert "Printable card (PNG)" in labels and "Printable card (PDF)" in labels


# ------------------------------------------------------------------------ the library

STORED = Team((TeamRider("Ann", 72.0, 0.19, 380.0, 22000.0),
               TeamRider("Bea", 70.0, 0.18, 360.0, 20000.0, max_power=700.0),
               TeamRider("Cat", 68.0, 0.18, 350.0, 21000.0, rolling_coefficient=0.004)))


def test_a_team_and_its_rider_table_make_each_other():
    frame = frame_from_team(STORED)
    assert frame["name"].tolist() == ["Ann", "Bea", "Cat"]
    assert np.isnan(frame["max_power_w"].iloc[0])  # the default cap shows blank
    assert frame["crr"].tolist()[2] == 0.004  # a Crr of its own gets the column
    assert team_from_frame(frame) == STORED
    plain = Team(STORED.riders[:2])
    assert "crr" not in frame_from_team(plain).columns
    assert team_from_frame(frame_from_team(plain)) == plain


def test_the_drafting_set_is_found_by_its_values():
    assert drafting_key(DRAFTING_SETS[DEFAULT_DRAFTING_SET].reductions) == DEFAULT_DRAFTING_SET
    assert drafting_key((0.0, 0.123)) is None and drafting_key(None) is None


def test_the_rider_table_is_stored_and_a_taken_name_is_refused_until_the_coach_says(library):
    choice = {**CHOICE, "drafting": DRAFTING_SETS[DEFAULT_DRAFTING_SET].reductions}
    stored = store_team(library, "Squad", DEFAULT_RIDERS, choice)
    assert stored.team == team_from_frame(DEFAULT_RIDERS) and stored.counts_rider == 3
    with pytest.raises(NameTaken):
        store_team(library, "Squad", frame_from_team(STORED), choice)
    assert library.team(stored.id).team.size == 4  # nothing replaced
    replaced = store_team(library, "Squad", frame_from_team(STORED), choice, "replace")
    assert replaced.id == stored.id and replaced.revision == 2 and replaced.team == STORED
    both = store_team(library, "Squad", DEFAULT_RIDERS, choice, "keep-both")
    assert both.name == "Squad (2)" and len(library.teams()) == 2


def test_a_stored_team_fills_the_rider_table_its_counting_rider_and_drafting(library):
    record = library.add_team("Trio", STORED, counts_rider=2,
                              drafting=DRAFTING_SETS[DEFAULT_DRAFTING_SET].reductions)
    state = {"team_riders": {"edited_rows": {0: {"name": "old"}}}}
    fill_from_record(state, record)
    assert "team_riders" not in state  # the old table's edits are dropped
    assert team_from_frame(state[FILLED_RIDERS]) == STORED
    assert state["team_counts"] == 2 and state["team_drafting"] == DEFAULT_DRAFTING_SET


def library_page(location):
    import streamlit as st

    from ui.team_panel import render

    render(st, "metric", library_location=location)


def test_the_panel_stores_the_table_and_asks_before_replacing_a_name(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library

    database = str(tmp_path / "library.sqlite3")
    app = AppTest.from_function(library_page, args=(database,), default_timeout=60)
    app.run()
    app.toggle(key="team_library").set_value(True).run()
    app.text_input(key="team_library_name").input("Squad").run()
    app.button(key="team_library_store").click().run()
    assert not app.exception and any("Stored the team 'Squad'" in s.value for s in app.success)
    app.button(key="team_library_store").click().run()
    assert ASKING in app.session_state and any("already in the library" in w.value
                                               for w in app.warning)
    app.button(key="team_library_replace").click().run()
    assert not app.exception and ASKING not in app.session_state
    with open_library(database) as library:
        teams = library.teams()
    assert [(t.name, t.revision) for t in teams] == [("Squad", 2)]
    # kept both: the menu of stored teams shows the one just stored, not the first
    app.button(key="team_library_store").click().run()
    app.button(key="team_library_keep_both").click().run()
    assert not app.exception
    with open_library(database) as library:
        newest = next(t for t in library.teams() if t.name == "Squad (2)")
    assert app.selectbox(key="team_library_pick").value == newest.id


def test_the_panel_fills_the_rider_table_from_a_stored_team(tmp_path):
    from streamlit.testing.v1 import AppTest

    from pacing.store.library import open_library

    database = str(tmp_path / "library.sqlite3")
    with open_library(database) as library:
        library.add_team("Trio", STORED)
    app = AppTest.from_function(library_page, args=(database,), default_timeout=60)
    app.run()
    app.toggle(key="team_library").set_value(True).run()
    app.button(key="team_library_fill").click().run()
    assert not app.exception
    shown = app.dataframe[0].value  # the rider editor
    assert shown["name"].tolist() == ["Ann", "Bea", "Cat"]
    app.button(key="team_plan").click().run()
    assert not app.exception and any("Finish" in s.value for s in app.success)


# ------------------------------------------------ what a new coach met in the browser (issue 18)

def test_the_pages_weather_with_a_race_day_makes_the_teams_air():
    # "Plan the team" raised a TypeError: the page's weather carries the race day's table
    from ui.team_panel import conditions_of

    weather = {"temperature": 30.0, "relative_humidity": 0.4, "sea_level_pressure": 101000.0,
               "wind_speed": 2.0, "wind_from": 90.0, "wind_height": 10.0,
               "roughness_length": 0.03, "race_day": {"rows": [], "start": None}}
    conditions = conditions_of(weather)
    assert conditions.temperature == 30.0 and conditions.wind_from == 90.0
    assert conditions_of(None) is None and conditions_of({}) is None


def test_drafting_sets_read_as_studies_with_their_reductions_not_keys():
    from ui.team_panel import drafting_caption, drafting_label

    labels = {key: drafting_label(key) for key in DRAFTING_SETS}
    assert labels["broker-1999"] == "Broker et al. 1999: 0/32/39/39 %"
    assert len(set(labels.values())) == len(labels)  # the two Blocken sets stay apart
    assert all(key not in label for key, label in labels.items())
    assert all("docs/" not in drafting_caption(key) for key in DRAFTING_SETS)


def test_the_rider_table_shows_headers_with_units():
    import streamlit as st

    from ui.team_panel import RIDER_COLUMNS, rider_columns

    config = rider_columns(st)
    assert set(config) >= set(DEFAULT_RIDERS.columns)
    assert all("[" in RIDER_COLUMNS[name][0] for name in DEFAULT_RIDERS.columns if name != "name")


def test_the_plan_stays_on_the_page_after_a_rerun_until_the_inputs_change():
    # a download reran the page and the plan (and the other downloads) went away
    from streamlit.testing.v1 import AppTest

    def page():
        import streamlit as st

        from ui.team_panel import render

        render(st, "metric", weather={"temperature": 20.0, "race_day": {"rows": [{}]}})

    app = AppTest.from_function(page, default_timeout=60)
    app.run()
    app.button(key="team_plan").click().run()
    assert not app.exception and any("Finish" in s.value for s in app.success)
    app.run()  # a rerun without the button: the plan is still shown
    assert any("Finish" in s.value for s in app.success)
    assert any("single weather" in c.value for c in app.caption)
    app.number_input(key="team_reserve").set_value(1.0).run()
    assert not any("Finish" in s.value for s in app.success)
    assert any("Plan the team" in i.value for i in app.info)
