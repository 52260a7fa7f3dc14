"""The team part of the web app: a team time trial on the page's course or a team pursuit on a
velodrome. The coach lists the riders (name, mass, CdA, CP, W′, cap), picks the race and the
counting rider, the drafting set and the W′ reserve, and reads the turn schedule, each rider's
W′ balance along the race, the gains over equal turns (at one speed, at one power; summary
line in ui.team_panel_summary), and downloads the schedule (CSV, XLSX) and its printable card
(PNG, PDF). Teams come from and go to the coach's library (the rider
table filled from a stored team; the table stored as one, asking before replacing a name).

The panel draws with the Streamlit module it is given (``render(st, …)``): app.py passes its
``st``. This module imports no Streamlit itself, so it stays a pure UI module
(tests/test_import_contracts.py) and its helpers are tested without a server.
"""

from __future__ import annotations

from collections.abc import Callable, MutableMapping
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go

from pacing.display.notices import describe
from pacing.display.units import to_display, unit_label
from pacing.errors import InputError, first_line
from pacing.physics.cycling import MARTIN_1998
from pacing.team.drafting import DEFAULT_DRAFTING_SET, DRAFTING_SETS
from pacing.team.plan import PlanOptions, TeamPlan, plan_team
from pacing.team.race import TeamRace, race_on_road, race_on_track
from pacing.team.riders import Team, TeamRider
from pacing.team.schedule import plan_notices, rider_rows, turn_rows
from ui.team_panel_summary import summary_line

RIDER_COLORS = ("#0f6e8c", "#b5542c", "#6a3d9a", "#5a6b2f", "#c28f1a", "#1b7f79", "#8c2d5a",
                "#3d5a80")
"""Line colours of the riders (the palette of the field-test panel)."""

DEFAULT_RIDERS = pd.DataFrame({
    "name": ["Rider 1", "Rider 2", "Rider 3", "Rider 4"],
    "mass_kg": [80.0, 78.0, 76.0, 82.0],
    "cda_m2": [0.21, 0.20, 0.20, 0.22],
    "cp_w": [430.0, 420.0, 410.0, 425.0],
    "w_prime_j": [24000.0, 22000.0, 23000.0, 21000.0],
    "max_power_w": [830.0, 787.0, 793.0, 775.0],
})
"""The rider table the panel opens with (an invented team; each cap CP + W′/60 s, the
default of pacing.team.riders, written out so no cell shows blank)."""

FILLED_RIDERS = "team:filled_riders"
"""Session key of the rider table filled from the library (the editor's starting rows)."""
ASKING = "team:asking"
"""Session key of the question asked when a team's name is already in the library."""
LIBRARY_MESSAGE = "team:library_message"
"""Session key of the last library write's message, shown after the page is drawn again."""
PICK_STORED = "team:pick_stored"
"""Session key of the id of the team just stored: the stored-team menu shows it next."""
PLANNED = "team:planned"
"""Session key of the last plan and the inputs it was made from: it stays on the page (a
download or any other rerun does not clear it) until the inputs change."""

RIDER_COLUMNS = {  # the table keeps the SI names of the library and team_from_frame
    "name": ("Rider", "text", "the rider's name, as on the schedule"),
    "mass_kg": ("Mass [kg]", "%.1f", "rider and bike"),
    "cda_m2": ("CdA [m²]", "%.3f", "drag area riding alone, in the team's position"),
    "cp_w": ("CP [W]", "%.0f", "critical power"),
    "w_prime_j": ("W′ [J]", "%.0f", "work above critical power, in joules (20 kJ = 20000)"),
    "max_power_w": ("Power cap [W]", "%.0f", "highest power in a turn; blank: CP + W′/60 s"),
    "crr": ("Crr [-]", "%.4f", "rolling resistance coefficient; blank: the default"),
}
"""Headers of the rider table: column → (header with its unit, number format, help)."""

CAUTION = ("Targets and speeds are model estimates, not safe limits. Keep the line safe at every "
           "change of lead; on the road ride within your skills and the road and obey traffic "
           "law; obey race rules and the commissaires, and consult a physician before hard "
           "efforts.")


def team_from_frame(frame: pd.DataFrame) -> Team:
    """The team of the rider table (one row per rider, in starting order).

    Parameters
    ----------
    frame : pandas.DataFrame
        Columns name, mass_kg [kg], cda_m2 [m²], cp_w [W], w_prime_j [J], max_power_w [W]
        (blank: the default cap) and, optionally, crr [-] (blank: the default) [-].

    Returns
    -------
    pacing.team.riders.Team
        The team [-].

    Raises
    ------
    InputError
        A row with a missing or wrong value (one line naming the row).
    """
    riders = []
    for number, values in enumerate(frame.dropna(how="all").to_dict("records"), start=1):
        try:
            cap, crr = values.get("max_power_w"), values.get("crr")
            riders.append(TeamRider(
                name=str(values["name"]), mass=float(values["mass_kg"]),
                drag_area=float(values["cda_m2"]), critical_power=float(values["cp_w"]),
                w_prime=float(values["w_prime_j"]),
                max_power=None if cap is None or pd.isna(cap) else float(cap),
                **({} if crr is None or pd.isna(crr) else {"rolling_coefficient": float(crr)})))
        except (TypeError, ValueError) as error:
            raise InputError(f"rider row {number}: {first_line(error)}") from None
    return Team(tuple(riders))


def frame_from_team(team: Team) -> pd.DataFrame:
    """The rider table of a team (the inverse of team_from_frame): a blank cap where the
    rider has the default one, a crr column only when a rider's Crr is not the default.

    Parameters
    ----------
    team : pacing.team.riders.Team
        The riders in starting order [-].

    Returns
    -------
    pandas.DataFrame
        Columns of DEFAULT_RIDERS (and crr) [SI].
    """
    riders = team.riders
    frame = pd.DataFrame({
        "name": [r.name for r in riders], "mass_kg": [r.mass for r in riders],
        "cda_m2": [r.drag_area for r in riders], "cp_w": [r.critical_power for r in riders],
        "w_prime_j": [r.w_prime for r in riders],
        "max_power_w": [np.nan if r.max_power is None else r.max_power for r in riders],
    })
    if any(r.rolling_coefficient != MARTIN_1998["rolling_coefficient"] for r in riders):
        frame["crr"] = [r.rolling_coefficient for r in riders]
    return frame


def rider_columns(st: Any) -> dict[str, Any]:
    """The rider editor's column headers with units and help (RIDER_COLUMNS) [-]."""
    config: dict[str, Any] = {}
    for name, (label, number_format, helptext) in RIDER_COLUMNS.items():
        config[name] = (st.column_config.TextColumn(label, help=helptext)
                        if number_format == "text"
                        else st.column_config.NumberColumn(label, help=helptext,
                                                           format=number_format))
    return config


def drafting_label(key: str) -> str:
    """A drafting set as the menu shows it, short enough for its box: the study's first
    author and year, what the key adds (a position), and the reductions by place,
    "Broker et al. 1999: 0/32/39/39 %", "Blocken et al. 2013, dropped: 2/23 %" [-]."""
    import re

    found = DRAFTING_SETS[key]
    authors = found.source.split("(")[0].strip()
    first = re.split(r",| &| and ", authors)[0].strip()
    year = re.search(r"\((\d{4})\)", found.source)
    study = f"{first}{' et al.' if first != authors else ''}" + (f" {year[1]}" if year else "")
    tail = re.sub(r"^[a-z]+-\d{4}-?", "", key).replace("-", " ")
    places = "/".join(f"{100.0 * value:.0f}" for value in found.reductions)
    return f"{study}{', ' + tail if tail else ''}: {places} %"


def drafting_caption(key: str) -> str:
    """How a drafting set was measured, for the page (without pointers into the project's
    files, which a coach does not have) [-]."""
    import re

    text = re.sub(r",\s*docs/[\w./-]+", "", DRAFTING_SETS[key].conditions)
    return (f"Drag reduction by place in the line, leader first. {text[0].upper()}{text[1:]}."
            " Places beyond the study's take its last value.")


def conditions_of(weather: dict | None) -> Any:
    """The page's single weather (ui.sections.weather_inputs, perhaps with the race day's
    table, which the team plan does not use) as pacing.weather.conditions.Conditions of its
    fields; None for no weather [-]."""
    import dataclasses

    from pacing.weather.conditions import Conditions

    if not weather:
        return None
    names = {field.name for field in dataclasses.fields(Conditions)}
    return Conditions(**{key: value for key, value in weather.items() if key in names})


def drafting_key(reductions: Any) -> str | None:
    """The published drafting set of these reductions, None when none matches [-].

    Parameters
    ----------
    reductions : sequence of float or None
        Drag reduction by place, leader first [-].
    """
    if reductions is None:
        return None
    for key, found in DRAFTING_SETS.items():
        if len(found.reductions) == len(reductions) and np.allclose(
                found.reductions, reductions, rtol=0.0, atol=1e-12):
            return key
    return None


def fill_from_record(state: MutableMapping[str, Any], record: Any) -> None:
    """Put a stored team into the panel (a button's on_click, run before the page is drawn):
    its riders into the rider table (the table's own edits dropped), its counting rider and
    its drafting set where stored.

    Parameters
    ----------
    state : MutableMapping
        The session state [-].
    record : pacing.store.records.TeamRecord
        The stored team [-].
    """
    state[FILLED_RIDERS] = frame_from_team(record.team)
    if "team_riders" in state:
        del state["team_riders"]
    if record.counts_rider is not None:
        state["team_counts"] = int(record.counts_rider)
    key = drafting_key(record.drafting)
    if key is not None:
        state["team_drafting"] = key
    state[LIBRARY_MESSAGE] = f"The rider table now shows the team {record.name!r}."


def store_team(library: Any, name: str, frame: pd.DataFrame, choice: dict[str, Any],
               on_existing: str = "refuse") -> Any:
    """Store the rider table as a team with the race's drafting and counting rider.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library [-].
    name : str
        The team's name [-].
    frame : pandas.DataFrame
        The rider table (team_from_frame) [-].
    choice : dict
        The race choices (drafting, counts_rider) of _inputs [-].
    on_existing : str
        "refuse" (NameTaken when the name is stored), "replace" or "keep-both" [-].

    Returns
    -------
    pacing.store.records.TeamRecord
        The team as stored [-].
    """
    team = team_from_frame(frame)
    counts = int(choice["counts_rider"])
    return library.add_team(name, team, drafting=tuple(choice["drafting"]),
                            counts_rider=counts if counts <= team.size else None,
                            on_existing=on_existing)


def balance_figure(plan: TeamPlan, system: str) -> go.Figure:
    """Each rider's W′ balance along the race [kJ against km or mi].

    Parameters
    ----------
    plan : pacing.team.plan.TeamPlan
        The plan [-].
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    plotly.graph_objects.Figure
        One line per rider, ending where a rider drops out [-].
    """
    ride, team = plan.ride, plan.team
    end = ride.cells.start + ride.cells.length
    figure = go.Figure()
    for index, rider in enumerate(team.riders):
        inside = ride.turns.position[ride.cells.turn, index] >= 0
        figure.add_trace(go.Scatter(
            x=to_display(end[inside], "distance", system), y=ride.balance[index, inside] / 1000,
            mode="lines", name=rider.name,
            line={"color": RIDER_COLORS[index % len(RIDER_COLORS)], "width": 2}))
    figure.update_layout(xaxis_title=f"distance [{unit_label('distance', system)}]",
                         yaxis_title="W′ balance [kJ]", height=320,
                         margin={"l": 10, "r": 10, "t": 10, "b": 10})
    return figure


def shown_riders(table: pd.DataFrame) -> pd.DataFrame:
    """The rider table for the page: the drop-out column as text, blank for riders who
    finish (never "None" or NaN on the page).

    Parameters
    ----------
    table : pandas.DataFrame
        pacing.io.team_file.rider_table [display units].

    Returns
    -------
    pandas.DataFrame
        The same table, its last column as text [-].
    """
    shown = table.copy()
    column = shown.columns[-1]
    shown[column] = [("" if value is None or pd.isna(value) else f"{value:.3f}")
                     for value in shown[column]]
    return shown


def race_from_inputs(choice: dict[str, Any], course: Any = None,
                     conditions: Any = None) -> TeamRace:
    """The race the panel's inputs describe.

    Parameters
    ----------
    choice : dict
        kind ("track" or "road"), distance_m [m], lap_m [m], counts_rider [-], drafting
        (tuple [-]), reserve_j [J], standing_start (bool) [-].
    course : pacing.course.geometry.Course or None
        The page's course (road) [-].
    conditions : pacing.weather.conditions.Conditions or None
        The page's air (default Conditions()) [-].

    Returns
    -------
    pacing.team.race.TeamRace
        The race [-].
    """

    from pacing.weather.conditions import Conditions, air_along_course, density_along

    conditions = conditions or Conditions()
    rules = {"counts_rider": int(choice["counts_rider"]), "drafting": choice["drafting"],
             "w_prime_reserve": float(choice["reserve_j"]),
             "standing_start": bool(choice["standing_start"])}
    if choice["kind"] == "track":
        density = float(density_along(np.array([0.0]), 0.0, conditions)[0])
        return race_on_track(float(choice["distance_m"]), float(choice["lap_m"]), density,
                             **rules)
    if course is None:
        raise InputError("load a course first for a team time trial on the road")
    return race_on_road(course, air_along_course(course, conditions), **rules)


def _inputs(st: Any, system: str, has_course: bool) -> tuple[pd.DataFrame, dict[str, Any]]:
    """The rider table and the race choices."""
    st.caption("One row per rider, in starting order (the first leads off). Leave the cap "
               "blank for CP + W′/60 s.")
    frame = st.data_editor(st.session_state.get(FILLED_RIDERS, DEFAULT_RIDERS),
                           num_rows="dynamic", key="team_riders", hide_index=True,
                           column_config=rider_columns(st))
    columns = st.columns(3)
    kinds = ["track", "road"] if has_course else ["track"]
    kind = columns[0].radio("Race", kinds, key="team_kind", horizontal=True,
                            format_func={"track": "team pursuit (velodrome)",
                                         "road": "team time trial (this course)"}.get)
    distance = columns[0].number_input("Track distance [m]", 500.0, 20000.0, 4000.0, 250.0,
                                       key="team_distance", disabled=kind != "track")
    lap = columns[0].number_input("Lap length [m]", 133.0, 500.0, 250.0, 1.0,
                                  key="team_lap", disabled=kind != "track")
    riders = max(int(frame.dropna(how="all").shape[0]), 1)
    counts = columns[1].number_input("Team time taken on rider no. (across the line)",
                                     1, max(riders, 1),
                                     min(3 if kind == "track" else riders, riders), 1,
                                     key="team_counts",
                                     help="3: the team's time is the third rider's (team "
                                          "pursuit); the 4th or 5th in a road team time trial")
    reserve = columns[1].number_input("W′ reserve [kJ]", 0.0, 20.0, 0.0, 0.5,
                                      key="team_reserve") * 1000.0
    standing = columns[1].toggle("Standing start", value=True, key="team_standing")
    key = columns[2].selectbox("Drafting by position", sorted(DRAFTING_SETS),
                               index=sorted(DRAFTING_SETS).index(DEFAULT_DRAFTING_SET),
                               key="team_drafting", format_func=drafting_label,
                               help="published drag reductions by place in the line")
    columns[2].caption(drafting_caption(key))
    parts = columns[2].number_input(
        "Parts with a leader power of their own", 1, 8, PlanOptions().power_parts, 1,
        key="team_power_parts",
        help="the race cut into equal parts, each with its own factor on the leaders' power; "
             "1 for one power per rider")
    return frame, {"kind": kind, "distance_m": distance, "lap_m": lap, "counts_rider": counts,
                   "drafting": DRAFTING_SETS[key].reductions, "reserve_j": reserve,
                   "standing_start": standing, "power_parts": int(parts)}


def _show(st: Any, race: TeamRace, plan: TeamPlan, system: str) -> None:
    """The plan: summary, notices, schedule, riders, W′ chart, downloads, caution."""
    from pacing.io.team_file import (
        balance_table,
        rider_table,
        schedule_csv,
        schedule_xlsx,
        team_card_inputs,
        team_card_pdf,
        team_card_png,
        turn_table,
    )

    st.success(summary_line(plan, race))
    team = plan.team
    notices = plan_notices(plan)
    for notice in notices:
        (st.warning if notice.level == "warning" else st.caption)(describe(notice, system))
    turns = turn_rows(team, plan.ride)
    riders = rider_rows(team, plan.ride)
    st.dataframe(turn_table(turns, system, race.lap_length), hide_index=True)
    st.dataframe(shown_riders(rider_table(riders, system)), hide_index=True)
    st.plotly_chart(balance_figure(plan, system), key="team_balance")
    words = [describe(n, system) for n in notices]
    cells = plan.ride.cells
    balance = balance_table(cells.start + cells.length, plan.ride.balance,
                            [r.name for r in team.riders], system)
    columns = st.columns(4)
    columns[0].download_button("Turn schedule (CSV)",
                               schedule_csv(turns, words, system, race.lap_length),
                               "team_schedule.csv", "text/csv", key="team_csv", on_click="ignore")
    columns[1].download_button("Turn schedule and W′ (XLSX)",
                               schedule_xlsx(turns, riders, balance, words, system,
                                             race.lap_length),
                               "team_schedule.xlsx", key="team_xlsx", on_click="ignore",
                               mime="application/vnd.openxmlformats-officedocument."
                                    "spreadsheetml.sheet")
    card = team_card_inputs(race, plan, system)
    columns[2].download_button("Printable card (PNG)", team_card_png(**card),
                               "team_card.png", "image/png", key="team_card_png",
                               on_click="ignore")
    columns[3].download_button("Printable card (PDF)", team_card_pdf(**card),
                               "team_card.pdf", "application/pdf", key="team_card_pdf",
                               on_click="ignore")
    st.caption(CAUTION)


def ask_before_replacing(st: Any, pressed: bool, action: Callable[[str], Any],
                         success: Callable[[Any], str]) -> None:
    """Store when `pressed`, refusing a name already in the library; then ask "Replace it",
    "Keep both" (stored as "name (2)") or "Cancel" and store again with the answer, as the
    library panel does for athletes. Nothing is replaced without the coach's say.

    Parameters
    ----------
    st : module
        streamlit [-].
    pressed : bool
        The store button was pressed in this run [-].
    action : callable
        ``action(on_existing)`` stores with "refuse", "replace" or "keep-both" [-].
    success : callable
        The message of what the store returned [-].
    """
    from pacing.store.statements import NameTaken

    def attempt(on_existing: str) -> None:
        st.session_state.pop(ASKING, None)
        try:
            stored = action(on_existing)
        except NameTaken as taken:
            st.session_state[ASKING] = f"A team named {taken.name!r} is already in the library."
            return
        except InputError as error:
            st.error(first_line(error), icon="⚠️")
            return
        st.session_state[LIBRARY_MESSAGE] = success(stored)
        st.session_state[PICK_STORED] = getattr(stored, "id", None)
        st.rerun()

    if pressed:
        attempt("refuse")
    question = st.session_state.get(ASKING)
    if question is None:
        return
    st.warning(f"{question} Replace it, or keep both (the new one gets a number)?")
    columns = st.columns(3)
    if columns[0].button("Replace it", key="team_library_replace"):
        attempt("replace")
    if columns[1].button("Keep both", key="team_library_keep_both"):
        attempt("keep-both")
    if columns[2].button("Cancel", key="team_library_cancel"):
        st.session_state.pop(ASKING, None)
        st.rerun()


def _library_part(st: Any, frame: pd.DataFrame, choice: dict[str, Any],
                  location: Any) -> None:
    """Teams in the library: fill the rider table from a stored team, store the table."""
    from pacing.store.library import open_library

    message = st.session_state.pop(LIBRARY_MESSAGE, None)
    if message:
        st.success(message)
    try:
        with open_library(location) as library:
            records = library.teams()
            if records:
                labels = {r.id: f"{r.name} ({r.team.size} riders)" for r in records}
                stored = st.session_state.pop(PICK_STORED, None)
                if stored in labels:  # the team just stored is the one shown
                    st.session_state["team_library_pick"] = stored
                chosen = st.selectbox("Stored team", list(labels), format_func=labels.get,
                                      key="team_library_pick")
                record = next(r for r in records if r.id == chosen)
                st.button("Fill the rider table with it", key="team_library_fill",
                          on_click=fill_from_record, args=(st.session_state, record))
            else:
                st.caption("No team is stored yet.")
            name = st.text_input("Team name", key="team_library_name",
                                 placeholder="e.g. club pursuit squad")
            pressed = st.button("Store the rider table as a team", key="team_library_store")
            ask_before_replacing(
                st, pressed, lambda on_existing: store_team(library, name, frame, choice,
                                                            on_existing),
                lambda stored: f"Stored the team {stored.name!r} "
                               f"({stored.team.size} riders).")
    except InputError as error:
        st.error(first_line(error), icon="⚠️")


def render(st: Any, system: str, course: Any = None, weather: dict | None = None,
           library_location: Any = None) -> None:
    """Draw the team panel with the Streamlit module `st`.

    Parameters
    ----------
    st : module
        streamlit (app.py passes its own) [-].
    system : str
        "metric" or "imperial" [-].
    course : pacing.course.geometry.Course or None
        The page's course, for a team time trial on it [-].
    weather : dict or None
        The page's weather as Conditions fields in SI (ui.sections.weather_inputs) [-].
    library_location : str, os.PathLike or None
        The coach's library (pacing.store.library.open_library; None: PACING_DATABASE_URL,
        else the default file) [-].
    """
    st.subheader("Team time trial or team pursuit")
    frame, choice = _inputs(st, system, course is not None)
    if weather and (weather.get("race_day") or {}).get("rows"):
        st.caption("The team plan rides in the page's single weather (section 3), not in the "
                   "race day's weather table.")
    if st.toggle("Teams in the library", key="team_library",
                 help="fill the rider table from a stored team, or store it as one"):
        _library_part(st, frame, choice, library_location)
    pressed = st.button("Plan the team", key="team_plan", type="primary")
    try:
        conditions = conditions_of(weather)
        key = plan_key(frame, choice, conditions, course)
        if pressed:
            team = team_from_frame(frame)
            race = race_from_inputs(choice, course, conditions)
            with st.spinner("Choosing turns and powers…"):
                plan = plan_team(team, race, PlanOptions(
                    power_parts=int(choice.get("power_parts", PlanOptions().power_parts))))
            st.session_state[PLANNED] = (key, race, plan)
    except (InputError, ValueError) as error:
        st.session_state.pop(PLANNED, None)
        st.error(first_line(error), icon="⚠️")
        return
    planned = st.session_state.get(PLANNED)
    if planned is None:
        return
    if planned[0] != key:
        st.info("The riders or the race changed: press “Plan the team” for a new plan.")
        return
    _show(st, planned[1], planned[2], system)


def plan_key(frame: pd.DataFrame, choice: dict[str, Any], conditions: Any,
             course: Any) -> str:
    """A digest of everything a team plan is made from: the rider table, the race choices,
    the air and the course (its name and points) [-]."""
    import hashlib

    points = None if course is None else (course.name, course.distance.size,
                                           float(course.distance[-1]),
                                           float(np.sum(course.elevation)))
    text = repr((frame.to_csv(index=False), sorted(choice.items()), conditions, points))
    return hashlib.sha1(text.encode()).hexdigest()
