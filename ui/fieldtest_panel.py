"""Measure CdA on the road, in the web app: upload test rides (one per riding position), give
the mass and the air, pick a method, and read CdA and Crr per position with 95 % intervals,
whether the positions really differ, the warnings, and plots of the virtual against the
measured elevation of every lap with the residuals. A measured position becomes a setup (and
goes into the library when one is open).

The estimation is pacing.fieldtest.wind_estimate.estimate_drag_in_wind (Chung's virtual
elevation, or the regression of Lim et al. 2011, with a steady wind estimated from the laps
when the user does not give one); rides are read by pacing.io.rides.read_ride. The same ride
uploaded twice is refused (its laps would count twice). `render_fieldtest` draws the panel;
the rides and the fit are ui.fieldtest_run, the tables, lines and figures ui.fieldtest_results
(both without Streamlit).
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
import streamlit as st

from pacing.display.notices import describe
from pacing.errors import InputError, first_line
from pacing.fieldtest.methods import FIELD_TEST_METHODS
from ui.fieldtest_results import (
    difference_lines,
    interval_words,
    lap_figure,
    position_table,
    road_test_cda_note,
    rolling_line,
    wind_line,
)
from ui.fieldtest_run import FieldTestRun, note_lines, run_fieldtest


@st.cache_resource(max_entries=8, show_spinner="Fitting CdA and Crr…")
def _cached_run(key: str, _files: Sequence[tuple[Any, ...]], total_mass: float,
                _conditions: Any, method: str, rolling: float | None,
                efficiency: float, wind_given: bool = True,
                ) -> tuple[FieldTestRun | None, str | None]:
    """(FieldTestRun, None) or (None, one-line refusal), keyed on the files' digests and
    the inputs."""
    try:
        return run_fieldtest(_files, total_mass, _conditions, method, rolling, efficiency,
                             wind_given=wind_given), None
    except InputError as error:
        return None, first_line(error)
    except (ValueError, ArithmeticError, np.linalg.LinAlgError) as error:
        return None, f"the rides could not be fitted: {first_line(error)}"


WIND_CHOICES = ("estimate it from the laps", "as given here")
"""How the panel takes the test day's wind: estimated (the default) or as typed."""


def _conditions_inputs(system: str) -> tuple[Any, bool]:
    """The test day's air and wind as drawn (pacing.weather.conditions.Conditions), and
    whether the wind is given (else estimated from the laps)."""
    from pacing.weather.conditions import Conditions
    from ui.widgets import unit_number

    choice = st.radio("Wind on the test day", WIND_CHOICES, key="ft_wind_choice",
                      horizontal=True,
                      help="estimated: a steady wind (speed and direction) is fitted with CdA "
                           "and Crr from how the laps depend on the direction of travel; a "
                           "loop ridden at several speeds or an out-and-back tells it from "
                           "drag. Given: the wind typed here (0 = calm), checked against "
                           "the laps")
    cols = st.columns(3)
    with cols[0]:
        temperature = unit_number("Air temperature", "temperature", system, "ft_temperature",
                                  20.0, -30.0, 50.0, 0.5)
        humidity = unit_number("Relative humidity [%]", None, system, "ft_humidity", 50.0, 0.0,
                               100.0, 1.0) / 100.0
    with cols[1]:
        pressure = 100.0 * unit_number("Sea-level pressure [hPa]", None, system, "ft_pressure",
                                       1013.25, 870.0, 1085.0, 0.25)
        height = unit_number("Wind measured at", "elevation", system, "ft_wind_height", 10.0,
                             1.0, 100.0, 1.0, help="weather stations measure at 10 m")
    with cols[2]:
        wind = unit_number("Wind speed", "wind_speed", system, "ft_wind_speed", 0.0, 0.0, 20.0,
                           0.5, help="test in calm air if you can")
        wind_from = unit_number("Wind comes from [° from north]", None, system, "ft_wind_from",
                                0.0, 0.0, 360.0, 5.0)
    conditions = Conditions(temperature=temperature, relative_humidity=humidity,
                            sea_level_pressure=pressure, wind_speed=wind, wind_from=wind_from,
                            wind_height=height)
    return conditions, choice == WIND_CHOICES[1]


def _uploaded_rides(uploads: Sequence[Any]) -> list[tuple[str, bytes, str, tuple]] | None:
    """(file name, bytes, position label, lap times [s]) of each uploaded ride, with their
    inputs drawn; None (after showing the error) when lap times do not read."""
    from ui.pipeline import parse_marks

    files = []
    for index, upload in enumerate(uploads):
        cols = st.columns([2, 3])
        label = cols[0].text_input(f"Position ridden in {upload.name}",
                                   value=Path(upload.name).stem,
                                   key=f"ft_label:{index}:{upload.name}")
        marks = cols[1].text_input(
            "Lap starts [s from the ride start, comma separated]", value="",
            key=f"ft_laps:{index}:{upload.name}",
            help="leave empty to find the laps from the positions (each pass near the start "
                 "point); give at least two times to mark them yourself")
        try:
            lap_times = parse_marks(marks) if marks.strip() else ()
        except InputError as error:
            st.error(f"{upload.name}: lap starts: {first_line(error)}", icon="⚠️")
            return None
        files.append((upload.name, upload.getvalue(), label, lap_times))
    return files


def _fit_inputs(system: str) -> tuple[float, str, float | None, float]:
    """(mass [kg], method key, Crr held [-] or None, drivetrain efficiency [-]) as drawn."""
    from ui.widgets import unit_number

    cols = st.columns(3)
    with cols[0]:
        mass = unit_number("Rider, bike and kit", "mass", system, "ft_mass", 80.0, 30.0, 250.0,
                           0.5, help="everything that moves, weighed on the test day")
    with cols[1]:
        method = st.radio("Method", list(FIELD_TEST_METHODS), key="ft_method",
                          format_func=lambda key: FIELD_TEST_METHODS[key].label,
                          help="Chung's virtual elevation, loop closure: every lap returns to "
                               "its start height, so noisy GPS heights do not matter; Chung's "
                               "virtual elevation against recorded heights: follow a trusted "
                               "elevation trace; the regression of Lim et al. (2011): laps at "
                               "constant speed")
    with cols[2]:
        hold = st.checkbox("Hold Crr at a known value", key="ft_hold_crr")
        rolling = None
        if hold:
            rolling = unit_number("Crr [-]", None, system, "ft_crr", 0.004, 0.0005, 0.03,
                                  0.0005)
        efficiency = unit_number("Drivetrain efficiency [%]", None, system, "ft_efficiency",
                                 97.6, 85.0, 100.0, 0.1) / 100.0
    return float(mass), str(method), rolling, float(efficiency)


def _run_key(files: Sequence[tuple[str, bytes, str, tuple]], mass: float, conditions: Any,
             method: str, rolling: float | None, efficiency: float,
             wind_given: bool = True) -> str:
    """Cache key of a run: the files' digests and every input."""
    digest = hashlib.sha256()
    for name, data, position, lap_times in files:
        digest.update(name.encode() + b"\0" + position.encode() + b"\0" + repr(lap_times).encode()
                      + hashlib.sha256(data).digest())
    return (f"{digest.hexdigest()}|{mass!r}|{conditions!r}|{method}|{rolling!r}|{efficiency!r}"
            f"|{wind_given!r}")


def _show_run(run: FieldTestRun, system: str) -> None:
    """The measured CdA and Crr, the table, the differences, warnings, notes and lap plots."""
    result = run.result
    cols = st.columns(len(result.positions) + 1)
    for column, position in zip(cols, result.positions, strict=False):
        column.metric(f"CdA · {position.label}", f"{position.drag_area:.3f} m²",
                      help="95 % interval " + interval_words(position.drag_area_ci95, 4, " m²"))
    cols[-1].metric("Crr", f"{result.rolling_coefficient:.4f}",
                    help="held at the value given" if result.rolling_fixed else
                    "held at a typical value (laps lack speed variety)"
                    if result.rolling_held else
                    "95 % interval " + interval_words(result.rolling_coefficient_ci95, 5))
    st.dataframe(position_table(result), hide_index=True, key="ft_positions")
    st.caption(rolling_line(result) + f" · air density {run.air_density:.3f} kg/m³ · "
               f"{result.laps} laps")
    wind = wind_line(result, system)
    if wind:
        st.caption(wind)
    st.caption(road_test_cda_note())
    for line in difference_lines(result):
        st.markdown(f"- {line}")
    for notice in result.warnings:
        if notice.level == "warning":
            st.warning(describe(notice, system))
        else:
            st.caption(f"Note: {describe(notice, system)}")
    for line in note_lines(run.notes, system, "warning"):
        st.warning(line)
    for line in note_lines(run.notes, system):
        st.caption(f"Note: {line}")
    for index, position in enumerate(result.positions):
        st.plotly_chart(lap_figure(position, system), key=f"ft_laps:{index}")


def render_fieldtest(system: str, location: str | None = None,
                     athlete_id: int | None = None) -> Any:
    """Draw the field-test panel.

    Parameters
    ----------
    system : str
        "metric" or "imperial".
    location : str or None
        Library path or URL to save setups into; None takes the library the library panel
        opened in this session (if any).
    athlete_id : int or None
        Library athlete the setup belongs to; None takes the athlete chosen in the library
        panel.

    Returns
    -------
    pacing.athlete.Setup or None
        The setup made from a measured position in the run where the user asks for one.
    """
    st.subheader("Measure CdA on the road")
    st.caption("Ride laps of a quiet loop with a power meter, one file per riding position "
               "(CSV with time_s, speed_mps, power_w and optional elevation_m, latitude, "
               "longitude, separated by commas, semicolons or tabs, decimal commas welcome; "
               "or GPX with power in the track-point extensions). Laps at clearly different "
               "speeds let CdA and Crr be told apart. Methods: Chung's virtual elevation "
               "(loop closure, or against recorded heights) and the regression of Lim et al. "
               "(2011). Upload each ride once: the same ride twice would count its laps "
               "twice.")
    uploads = st.file_uploader("Test rides", type=["csv", "gpx"], accept_multiple_files=True,
                               key="ft_files") or []
    files = _uploaded_rides(uploads)
    if files is None:
        return None
    mass, method, rolling, efficiency = _fit_inputs(system)
    with st.expander("Air and wind on the test day", expanded=False):
        try:
            conditions, wind_given = _conditions_inputs(system)
        except InputError as error:
            st.error(first_line(error), icon="⚠️")
            return None
    if not files:
        st.info("Upload one or more test rides to measure CdA.")
        return None
    key = _run_key(files, mass, conditions, method, rolling, efficiency, wind_given)
    run, refusal = _cached_run(key, tuple(files), mass, conditions, method, rolling, efficiency,
                               wind_given)
    if refusal:
        st.error(refusal, icon="⚠️")
        return None
    _show_run(run, system)
    return _setup_maker(run.result, system, location, athlete_id)


def _setup_maker(result: Any, system: str, location: str | None,
                 athlete_id: int | None) -> Any:
    """Inputs that turn a measured position into a setup (and save it to the library);
    returns the Setup in the run where it is made, else None."""
    from ui.widgets import unit_number

    st.markdown("**Turn a measured position into a setup**")
    cols = st.columns(4)
    labels = [p.label for p in result.positions]
    position = cols[0].selectbox("Position", labels, key="ft_setup_position")
    name = cols[1].text_input("Setup name", value=position, key="ft_setup_name")
    with cols[2]:
        bike = unit_number("Bike and kit", "mass", system, "ft_setup_bike", 8.0, 0.0, 60.0, 0.1)
    with cols[3]:
        share = unit_number("Power share [%]", None, system, "ft_setup_share", 100.0, 30.0,
                            120.0, 1.0, help="share of the athlete's power this position allows")
    try:
        setup = result.setup(position, name=name.strip() or position, bike_mass=bike,
                             power_share=share / 100.0)
    except InputError as error:
        st.error(first_line(error), icon="⚠️")
        return None
    made = None
    cols = st.columns(2)
    if cols[0].button("Make the setup", key="ft_make_setup"):
        made = setup
        st.success(f"Setup {setup.name!r}: CdA {setup.drag_area:.4f} m², Crr "
                   f"{setup.rolling_coefficient:.5f}.")
    if location is None:
        location = st.session_state.get("library:location")
    owner = athlete_id if athlete_id is not None else st.session_state.get("library:athlete_id")
    if owner is not None and (location is not None or "library:location" in st.session_state):
        from ui.library_panel import _library, save_asking

        pressed = cols[1].button("Save it to the library", key="ft_save_setup")
        # a name already stored is never overwritten silently: replace, keep both or cancel
        save_asking("ft_setup", pressed,
                    lambda on_existing: _library(location).add_setup(
                        int(owner), setup, on_existing=on_existing),
                    lambda stored: f"Stored setup {stored.setup.name!r} (#{stored.id}) in the "
                                   "library.")
    else:
        cols[1].caption("Open the library and choose an athlete to save it there.")
    return made
