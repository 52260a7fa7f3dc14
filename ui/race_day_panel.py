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

from datetime import date, datetime, time, timedelta
from typing import Any

import plotly.graph_objects as go
import streamlit as st

from pacing.display.notices import describe
from pacing.errors import InputError, first_line
from ui.race_day_data import (
    COLUMN_HELP,
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
    request_digest,
    rows_from_csv,
    start_within_table,
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

BEST_FOUND = "race_day:best_start"
"""Session key: (digest of the request and window, the best start found for it): the curve
stays on the page through reruns while the race and the window are the same."""

UPLOAD_KEY = "race_day_csv"
"""Widget key of the weather CSV's uploader."""

UPLOAD_MESSAGE = "race_day:upload_message"
"""Session key: what taking the upload did ("info", text, the start it set, ISO text) or why
it was refused ("error", text, ""), shown under the uploader (the info while the start is
the one it set)."""


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
    """The editor's columns: the CSV's names, short headers with their units, and what each
    holds on pointing at the header."""
    config: dict[str, Any] = {}
    for name, label, kind in WEATHER_COLUMNS:
        config[name] = (st.column_config.TextColumn(label, help=COLUMN_HELP[name],
                                                    width="medium")
                        if kind == "text"
                        else st.column_config.NumberColumn(label, help=COLUMN_HELP[name],
                                                           format="%g", width="small"))
    return config


def _take_upload() -> None:
    """The uploader's on_change (run before the page is drawn): the CSV's rows into the
    table, and the start moved within the table's span when it was outside (the date
    inputs can still be set then); a refusal kept to show in one line."""
    upload = st.session_state.get(UPLOAD_KEY)
    if upload is None:  # the file taken away: the table stays, the message goes
        st.session_state.pop(UPLOAD_MESSAGE, None)
        return
    if upload.file_id == st.session_state.get(CSV_TAKEN):
        return
    try:
        rows = rows_from_csv(upload.getvalue())
    except InputError as error:
        st.session_state[UPLOAD_MESSAGE] = ("error", f"Weather CSV: {first_line(error)}", "")
        return
    st.session_state[CSV_TAKEN] = upload.file_id
    _show_rows(rows)
    day = st.session_state.get(PANEL_KEYS["date"]) or date.today()
    clock = st.session_state.get(PANEL_KEYS["time"]) or time.fromisoformat(DEFAULT_START)
    moved, said = start_within_table(rows, datetime.combine(day, clock))
    st.session_state[PANEL_KEYS["date"]] = moved.date()
    st.session_state[PANEL_KEYS["time"]] = moved.time()
    st.session_state[UPLOAD_MESSAGE] = (
        ("info", said, moved.isoformat(timespec="minutes")) if said else None)


def table_problem(problem: str) -> str:
    """A check's one line as the page says it: "Weather table, row 3: …" [-]."""
    import re

    return re.sub(r"^weather row (\d+): ", r"Weather table, row \1: ",
                  problem if problem.startswith("weather row") else f"Weather table: {problem}")


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


def _weather_rows(start: str, weather: dict[str, Any] | None) -> list[dict[str, Any]] | None:
    """The weather table as edited (a new upload replaces it), or None when it does not
    read."""
    st.caption("The table's rows replace the single temperature, humidity and wind above "
               "(the sea-level pressure above, the wind's height and the terrain still "
               "apply). Units as in the headers, in both unit systems; type in the table or "
               "upload a CSV with the same columns.")
    st.file_uploader("Weather table from a CSV file", type=["csv"], key=UPLOAD_KEY,
                     on_change=_take_upload,
                     help="columns time, temperature_c, relative_humidity_pct, "
                          "wind_speed_mps, wind_from_deg; optional sea_level_pressure_hpa "
                          "or station_pressure_hpa, latitude and longitude")
    message = st.session_state.get(UPLOAD_MESSAGE)
    if message and message[0] == "error":
        st.error(message[1])
        return None
    if message and message[2] == start:  # said while the start is the one it moved to
        st.info(message[1])
    rows = st.session_state.get(ROWS) or starter_rows(datetime.fromisoformat(start),
                                                      weather=weather)
    version = int(st.session_state.get(EDITOR_VERSION, 0))
    edited = st.data_editor(rows, column_config=_column_config(), num_rows="dynamic",
                            key=f"race_day_editor:{version}", width="stretch")
    cleaned = clean_rows(edited if isinstance(edited, list) else edited.to_dict("records"))
    problem = check_rows(cleaned, start)
    if problem is not None:
        st.error(table_problem(problem))
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


def render(course: Any, system: str,
           weather: dict[str, Any] | None = None) -> dict[str, Any] | None:
    """Draw the race-day inputs; the dict ui/pipeline.py passes on, or None when the weather
    table does not read (the reason shown in one line).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (its span and place; kept for a later map of the places) [-].
    system : str
        "metric" or "imperial" (the table stays in the CSV's units) [-].
    weather : dict, optional
        The page's single weather in SI (ui.sections.weather_inputs): the table a coach
        turns on starts from it; None: 20 °C, 50 %, calm [-].

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
    rows = _weather_rows(start, weather) if through else []
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
    """Seconds slower than the best start against the start's clock time over the window
    (a time axis: the search's closer starts near the best sit where they belong), the best
    start marked, each point's finish time on hovering (plotly)."""
    from pacing.display.units import format_duration

    starts, finishes = best_start_moments(best), best_start_points(best)[1]
    slower = [finish - best.finish_time for finish in finishes]
    figure = go.Figure(go.Scatter(
        x=starts, y=slower, mode="lines+markers", line={"color": INK}, name="finish",
        customdata=[format_duration(finish) for finish in finishes],
        hovertemplate="start %{x|%H:%M}: finish %{customdata} (+%{y:.0f} s)<extra></extra>"))
    best_moment = best_start_moments(best, best.start)[0]
    figure.add_trace(go.Scatter(x=[best_moment], y=[0.0], mode="markers",
                                marker={"color": BEST_COLOR, "size": 12}, name="best start",
                                hovertemplate="best start %{x|%H:%M}<extra></extra>"))
    figure.update_layout(xaxis_title="start time", yaxis_title="slower than the best [s]",
                         height=300, margin={"l": 50, "r": 10, "t": 10, "b": 40},
                         showlegend=False, xaxis={"tickformat": "%H:%M"})
    return figure


def best_start_moments(best: Any, *starts: float) -> list[datetime]:
    """The local clock (naive datetime) of `starts` [s in the frame], or of every start of
    the search when none is given (pacing.plan.best_start.BestStart) [-]."""
    from pacing.weather.timeline import clock_text

    seconds = starts or tuple(start for start, _ in best.grid)
    return [datetime.fromisoformat(clock_text(moment, best.utc_offset)).replace(tzinfo=None)
            for moment in seconds]


def best_start_summary(best: Any) -> str:
    """"Best start 09:40: finish 1:11:58; the window's starts differ by up to 9 s." [-]."""
    from pacing.display.units import format_duration

    finishes = best_start_points(best)[1]
    spread = max(finishes) - min(finishes) if finishes else 0.0
    return (f"Best start **{best_start_clock(best)}**: finish {format_duration(best.finish_time)}"
            f"; the starts in this window differ by up to {spread:.0f} s.")


def _window_defaults(day: Any, race_date: date) -> tuple[time, time]:
    """The window offered first: from the weather table's first row on the race day (or
    midnight) to four hours later, within the table's last row."""
    from pacing.weather.timeline import clock_text

    first, last = (datetime.fromisoformat(clock_text(moment, day.offset)).replace(tzinfo=None)
                   for moment in day.weather.span)
    begin = first if first.date() == race_date else datetime.combine(race_date, time(0, 0))
    end = min(last, begin + timedelta(hours=4))
    if end.date() != begin.date():
        end = datetime.combine(begin.date(), time(23, 55))
    return begin.time(), max(end, begin).time()


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
    earliest, latest = _window_defaults(day, race_date)
    span = f"{earliest:%H%M}-{latest:%H%M}"  # a new table offers its own window
    left, right = st.columns(2)
    first = left.time_input("Earliest start", value=earliest, key=f"best_start_first:{span}",
                            step=300)
    last = right.time_input("Latest start", value=latest, key=f"best_start_last:{span}",
                            step=300)
    st.caption("Finish time of every start in the window (every 10 minutes, then closer near "
               "the best). A plan at a set power or pace feels the heat only through the "
               "air; mind the heat-illness risk of a later start.")
    asked = request_digest(request, race_date, first, last)
    if st.button("Find the best start in this window", key="best_start_go"):
        try:
            if last < first:
                raise InputError("the latest start must come after the earliest (same day)")
            with st.spinner("Planning the race for every start in the window…"):
                found = best_start(
                    request, clock_seconds(datetime.combine(race_date, first), day.offset),
                    clock_seconds(datetime.combine(race_date, last), day.offset))
        except InputError as error:
            st.session_state.pop(BEST_FOUND, None)
            st.error(first_line(error))
            return
        st.session_state[BEST_FOUND] = (asked, found)
    shown = st.session_state.get(BEST_FOUND)
    if shown is None or shown[0] != asked:  # none yet, or found for another race or window
        return
    best = shown[1]
    st.markdown(best_start_summary(best))
    st.plotly_chart(best_start_figure(best), key="best_start_plot")
