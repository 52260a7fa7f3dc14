"""The race day in the web app: the weather through the race (an editable table, or a CSV
uploaded into it), the start, acclimatisation, where the athlete's limits were measured and
the forecast's spread; after a plan, the best-start curve and the environment summary.

`render(course, system)` draws the inputs and returns the race-day dict ui/pipeline.py passes
on to the request (pacing.io.weather_file.race_day_from_inputs reads it), or None while the
table does not read (the one-line reason, naming the row, is shown instead of a traceback).
The pure parts live in ui/race_day_data.py. The panel reads every value from its own session
keys (ui.race_day_data.PANEL_KEYS, the rows its table starts from under ROWS), so a reopened
plan sets them before the panel is drawn (ui.race_day_data.panel_state); rows put there
(ROWS_TO_SHOW) or a new upload start the table afresh.
"""

from __future__ import annotations

from datetime import date, datetime, time
from typing import Any

import plotly.graph_objects as go
import streamlit as st

from pacing.display.notices import describe
from pacing.errors import InputError, first_line
from ui.race_day_data import (
    DEFAULT_START,
    PANEL_KEYS,
    ROWS,
    ROWS_TO_SHOW,
    WEATHER_COLUMNS,
    best_start_clock,
    best_start_points,
    check_rows,
    clean_rows,
    environment_lines,
    race_day_inputs,
    rows_from_csv,
    starter_rows,
)

INK = "#1d2b3a"
BEST_COLOR = "#b5542c"

EDITOR_VERSION = "race_day:editor_version"
"""Session key: the number in the editable table's key; a new one shows new rows (ROWS)
without the edits made to the old ones."""

CSV_TAKEN = "race_day:csv_taken"
"""Session key: the id of the uploaded weather CSV already taken into the rows (an upload
is taken once, so a reopened plan's rows are not overwritten by a file still shown)."""


def _given(key: str, value: Any) -> Any:
    """A widget's first value, or None when its session state already holds one (a reopened
    plan's): Streamlit warns when a widget gets both."""
    return None if key in st.session_state else value


def _show_rows(rows: list[dict[str, Any]]) -> None:
    """Start the editable table afresh from `rows` (the edits of the old table dropped)."""
    version = int(st.session_state.get(EDITOR_VERSION, 0))
    st.session_state.pop(f"race_day_editor:{version}", None)
    st.session_state[ROWS] = rows
    st.session_state[EDITOR_VERSION] = version + 1


def _column_config() -> dict[str, Any]:
    """The editor's columns: the CSV's names, headers with their units."""
    config: dict[str, Any] = {}
    for name, label, kind in WEATHER_COLUMNS:
        config[name] = (st.column_config.TextColumn(label) if kind == "text"
                        else st.column_config.NumberColumn(label, format="%.2f"))
    return config


def _start_inputs() -> str:
    """The start date and time, ISO 8601 text (local to the race)."""
    left, right = st.columns(2)
    day_key, time_key = PANEL_KEYS["date"], PANEL_KEYS["time"]
    day = left.date_input("Race date", value=_given(day_key, date.today()), key=day_key)
    clock = right.time_input("Start time", key=time_key, step=300,
                             value=_given(time_key, time.fromisoformat(DEFAULT_START)))
    day = day if isinstance(day, date) else date.today()
    clock = clock if isinstance(clock, time) else time.fromisoformat(DEFAULT_START)
    return datetime.combine(day, clock).isoformat(timespec="minutes")


def _weather_rows(start: str) -> list[dict[str, Any]] | None:
    """The weather table as edited (a new upload replaces it), or None when it does not
    read."""
    upload = st.file_uploader("Weather table (CSV, same columns)", type=["csv"],
                              key="race_day_csv")
    if upload is not None and upload.file_id != st.session_state.get(CSV_TAKEN):
        try:
            rows = rows_from_csv(upload.getvalue())
        except InputError as error:
            st.error(f"Weather CSV: {first_line(error)}")
            return None
        st.session_state[CSV_TAKEN] = upload.file_id
        _show_rows(rows)
    rows = st.session_state.get(ROWS) or starter_rows(datetime.fromisoformat(start))
    version = int(st.session_state.get(EDITOR_VERSION, 0))
    edited = st.data_editor(rows, column_config=_column_config(), num_rows="dynamic",
                            key=f"race_day_editor:{version}", width="stretch")
    cleaned = clean_rows(edited if isinstance(edited, list) else edited.to_dict("records"))
    problem = check_rows(cleaned, start)
    if problem is not None:
        st.error(f"Weather table: {problem}")
        return None
    return cleaned


def _limits_inputs() -> dict[str, float | None]:
    """Where the athlete's limits were measured (empty: 20 °C, 50 %, sea level)."""
    st.caption("Where critical power / speed was measured (empty: 20 °C, 50 %, sea level)")
    cols = st.columns(3)
    return {"limits_temperature_c": cols[0].number_input(
                "Test temperature [°C]", value=None,
                key=PANEL_KEYS["limits_temperature_c"]),
            "limits_humidity_pct": cols[1].number_input(
                "Test humidity [%]", value=None, min_value=0.0, max_value=100.0,
                key=PANEL_KEYS["limits_humidity_pct"]),
            "limits_elevation_m": cols[2].number_input(
                "Test elevation [m]", value=None, key=PANEL_KEYS["limits_elevation_m"])}


def _spread_inputs() -> dict[str, float]:
    """The forecast's standard deviations (all 0: no band)."""
    st.caption("Forecast uncertainty (1 standard deviation; 0 for no finish-time band)")
    cols = st.columns(3)
    asked = (("wind_speed_mps", "Wind speed ± [m/s]", 20.0, 0.5),
             ("wind_from_deg", "Wind direction ± [deg]", 180.0, 5.0),
             ("temperature_c", "Temperature ± [°C]", 15.0, 0.5))
    spread: dict[str, float] = {}
    for column, (name, label, high, step) in zip(cols, asked, strict=True):
        key = PANEL_KEYS[f"spread_{name}"]
        value = column.number_input(label, 0.0, high, _given(key, 0.0), step, key=key)
        spread[name] = float(value or 0.0)
    return {**spread, "samples": 200, "seed": 0}


def render(course: Any, system: str) -> dict[str, Any] | None:
    """Draw the race-day inputs; the dict ui/pipeline.py passes on, or None when the weather
    table does not read (the reason shown in one line).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (its span and place; kept for a later map of the places) [-].
    system : str
        "metric" or "imperial" (the table stays in the CSV's units) [-].

    Returns
    -------
    dict or None
        {"rows", "start", "heat_acclimatised", "altitude_acclimatised",
        "limits_temperature_c", "limits_humidity_pct", "limits_elevation_m", "spread"}.
    """
    del course, system
    if ROWS_TO_SHOW in st.session_state:  # a reopened plan's table
        _show_rows(list(st.session_state.pop(ROWS_TO_SHOW) or []))
    start = _start_inputs()
    through = st.toggle("Weather changes through the race (a table)", key=PANEL_KEYS["table"])
    rows = _weather_rows(start) if through else []
    left, right = st.columns(2)
    heat = left.checkbox("Heat-acclimatised (about two weeks of training in the heat)",
                         key=PANEL_KEYS["heat"])
    altitude = right.checkbox("Altitude-acclimatised (some weeks at altitude)",
                              key=PANEL_KEYS["altitude"])
    limits = _limits_inputs()
    spread = _spread_inputs()
    if rows is None:
        return None
    return race_day_inputs(rows, start, heat_acclimatised=heat, altitude_acclimatised=altitude,
                           limits=limits, spread=spread)


def best_start_figure(best: Any) -> go.Figure:
    """Finish time against start time over the window, the best start marked (plotly)."""
    starts, finishes = best_start_points(best)
    minutes = [finish / 60.0 for finish in finishes]
    figure = go.Figure(go.Scatter(x=starts, y=minutes, mode="lines+markers",
                                  line={"color": INK}, name="finish"))
    best_clock = best_start_clock(best)
    figure.add_trace(go.Scatter(x=[best_clock], y=[best.finish_time / 60.0], mode="markers",
                                marker={"color": BEST_COLOR, "size": 12}, name="best start"))
    figure.update_layout(xaxis_title="start", yaxis_title="finish time [min]", height=300,
                         margin={"l": 50, "r": 10, "t": 10, "b": 40}, showlegend=False)
    return figure


def show_environment(race_day: Any, notices: Any, system: str) -> None:
    """The environment summary (heat, altitude trade-off, WBGT band, test conditions, band)
    and the race day's cautions among `notices` (warnings as warning boxes, notes as
    captions).

    Parameters
    ----------
    race_day : pacing.plan.race_day.RaceDayResult or None
        The result's race day (RaceResult.race_day) [-].
    notices : iterable of pacing.notices.Notice
        The result's notices; those of the race day are shown [-].
    system : str
        "metric" or "imperial" [-].
    """
    from pacing.plan.race_day import RACE_DAY_CODES

    for line in environment_lines(race_day, system):
        st.markdown(f"- {line}")
    for notice in notices:
        if notice.code.startswith(RACE_DAY_CODES):
            (st.warning if notice.level == "warning" else st.caption)(describe(notice, system))


def show_best_start(request: Any) -> None:
    """A window of start times, and on request the finish time of each start plotted with
    the best one (pacing.plan.best_start.best_start); refusals in one line.

    Parameters
    ----------
    request : pacing.plan.race.RaceRequest
        The page's request, whose race day has a weather table [-].
    """
    from pacing.plan.best_start import best_start
    from pacing.weather.timeline import clock_seconds, clock_text

    day = request.race_day
    if day is None or day.weather is None:
        st.caption("The best start needs the weather through the race (the table above).")
        return
    anchor = day.start if day.start is not None else day.weather.span[0]
    race_date = datetime.fromisoformat(clock_text(anchor, day.offset)).date()
    left, right = st.columns(2)
    first = left.time_input("Earliest start", value=time(8, 0), key="best_start_first")
    last = right.time_input("Latest start", value=time(12, 0), key="best_start_last")
    if not st.button("Find the best start in this window", key="best_start_go"):
        return
    try:
        if last < first:
            raise InputError("the latest start must come after the earliest (same day)")
        best = best_start(request,
                          clock_seconds(datetime.combine(race_date, first), day.offset),
                          clock_seconds(datetime.combine(race_date, last), day.offset))
    except InputError as error:
        st.error(first_line(error))
        return
    st.markdown(f"Best start **{best_start_clock(best)}**: finish time "
                f"{best.finish_time / 60.0:.1f} min.")
    st.plotly_chart(best_start_figure(best), key="best_start_plot")
