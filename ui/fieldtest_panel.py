"""Measure CdA on the road, in the web app: upload test rides (one per riding position), give
the mass and the air, pick a method, and read CdA and Crr per position with 95 % intervals,
whether the positions really differ, the warnings, and plots of the virtual against the
measured elevation of every lap with the residuals. A measured position becomes a setup (and
goes into the library when one is open).

The estimation is pacing.fieldtest.wind_estimate.estimate_drag_in_wind (Chung's virtual
elevation, or the regression of Lim et al. 2011, with a steady wind estimated from the laps
when the user does not give one); rides are read by pacing.io.rides.read_ride. The same ride
uploaded twice is refused (its laps would count twice). Pure helpers build the rides, tables
and plotly figures; `render_fieldtest` draws the panel.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import streamlit as st
from plotly.subplots import make_subplots

from pacing.display.notices import describe
from pacing.display.units import to_display, unit_label
from pacing.errors import InputError, first_line
from pacing.fieldtest.methods import FIELD_TEST_METHODS
from pacing.notices import Notice

LAP_COLORS = ("#0f6e8c", "#b5542c", "#6a3d9a", "#5a6b2f", "#c28f1a", "#1b7f79", "#8c2d5a",
              "#3d5a80")
"""Line colours of the laps (our own palette)."""
INK = "#1d2b3a"
REFERENCE_COLOR = "rgba(29,43,58,0.55)"

BOOTSTRAP_DRAWS = 1000
"""Bootstrap draws for the 95 % intervals (pacing.fieldtest.estimate.estimate_drag's default)."""


@dataclass(frozen=True, eq=False)
class FieldTestRun:
    """A finished field test.

    Attributes
    ----------
    result : pacing.fieldtest.estimate.FieldTestResult
        CdA per position, Crr, intervals and warnings.
    tests : tuple of pacing.fieldtest.estimate.PositionTest
        The position tests it used.
    air_density : float
        Mean air density over the rides [kg/m³].
    notes : tuple of (str, pacing.notices.Notice)
        Notes and warnings of reading and cleaning each ride, after the position's label.
    """

    result: Any
    tests: tuple[Any, ...]
    air_density: float
    notes: tuple[tuple[str, Notice], ...]


def note_lines(notes: Sequence[tuple[str, Notice]], system: str,
               level: str = "note") -> list[str]:
    """Each ride's notices of one level in words after its label ("hoods: dropped 3 samples
    …").

    Parameters
    ----------
    notes : sequence of (str, pacing.notices.Notice)
        Position label and notice of reading and cleaning its ride.
    system : str
        "metric" or "imperial".
    level : str
        "note" (what was filled or dropped) or "warning" (what may mislead, e.g. power
        dropouts).

    Returns
    -------
    list of str
        One line per notice of that level.
    """
    return [f"{label}: {describe(notice, system)}" for label, notice in notes
            if notice.level == level]


def read_tests(files: Sequence[tuple[Any, ...]],
               conditions: Any) -> tuple[list[Any], list[tuple[str, Notice]]]:
    """PositionTests (pacing.fieldtest.estimate) from uploaded files with their air.

    Parameters
    ----------
    files : sequence of tuple
        (file name, bytes, position label) per ride, optionally with a fourth item: lap
        boundaries as times from the ride start [s] (empty: laps found from the positions);
        an empty label takes the file name.
    conditions : pacing.weather.conditions.Conditions
        The air and wind of the test day.

    Returns
    -------
    tuple
        (tests, notes): one PositionTest per file; notes of reading and cleaning as
        (position label, pacing.notices.Notice).
    """
    from pacing.fieldtest.estimate import PositionTest
    from pacing.fieldtest.laps import indices_at_times, laps_from_bounds
    from pacing.fieldtest.ride import ride_air
    from pacing.io.rides import read_ride

    tests: list[PositionTest] = []
    notes: list[tuple[str, Notice]] = []
    if not files:
        raise InputError("upload at least one test ride (CSV or GPX)")
    refuse_duplicates(files)
    for index, (file_name, data, label, *rest) in enumerate(files):
        lap_times = tuple(rest[0]) if rest and rest[0] else ()
        suffix = Path(file_name).suffix.lower().lstrip(".")
        try:
            ride = read_ride(bytes(data), name=Path(file_name).stem,
                             kind=suffix if suffix in ("csv", "gpx") else None)
        except InputError as error:
            raise InputError(f"{file_name}: {first_line(error)}") from None
        label = (label or "").strip() or ride.name
        if label in (t.label for t in tests):
            label = f"{label} ({index + 1})"
        laps = None
        if lap_times:
            try:
                laps = tuple(laps_from_bounds(indices_at_times(ride, lap_times),
                                              ride.time.size))
            except InputError as error:
                raise InputError(f"{file_name}: {first_line(error)}") from None
        air = ride_air(ride, conditions)
        tests.append(PositionTest(label, ride, air.density, laps, air.headwind, air.crosswind))
        notes.extend((label, notice) for notice in ride.notes)
    return tests, notes


def refuse_duplicates(files: Sequence[tuple[Any, ...]]) -> None:
    """Refuse the same ride uploaded twice: its laps would count twice in the fit.

    Two files are the same ride when their bytes are identical (SHA-256), whatever their
    names; the message names both.

    Parameters
    ----------
    files : sequence of tuple
        (file name, bytes, …) per ride.

    Raises
    ------
    InputError
        One line naming the two files.
    """
    seen: dict[bytes, str] = {}
    for file_name, data, *_ in files:
        digest = hashlib.sha256(bytes(data)).digest()
        if digest in seen:
            raise InputError(f"{file_name} is the same ride as {seen[digest]}: uploading a "
                             "test ride twice would count its laps twice; remove one (a "
                             "second position needs a ride of its own)")
        seen[digest] = file_name


def run_fieldtest(files: Sequence[tuple[Any, ...]], total_mass: float, conditions: Any,
                  method: str = "loop", rolling_coefficient: float | None = None,
                  drivetrain_efficiency: float = 0.976,
                  bootstrap: int = BOOTSTRAP_DRAWS, wind_given: bool = True) -> FieldTestRun:
    """Read the rides and estimate CdA per position and a shared Crr.

    Parameters
    ----------
    files : sequence of tuple
        (file name, bytes, position label[, lap times [s]]) per ride (see read_tests).
    total_mass : float
        Rider + bike + kit [kg], 20-300.
    conditions : pacing.weather.conditions.Conditions
        The air and wind of the test day.
    method : str
        Key of pacing.fieldtest.methods.FIELD_TEST_METHODS.
    rolling_coefficient : float or None
        Crr to hold [-], or None to fit it.
    drivetrain_efficiency : float
        Drivetrain efficiency [-], 0.5-1.
    bootstrap : int
        Draws for the intervals [-], 0 to pacing.fieldtest.checks.MAX_BOOTSTRAP_DRAWS.
    wind_given : bool
        True: the wind of `conditions` is the day's (calm at 0), used as given and checked
        against the laps; False: the wind is estimated from the laps
        (pacing.fieldtest.wind_estimate).

    Returns
    -------
    FieldTestRun
        The result, the tests, the mean air density [kg/m³] and the rides' notes.
    """
    from pacing.fieldtest.checks import check_bootstrap_draws
    from pacing.fieldtest.wind_estimate import estimate_drag_in_wind
    from pacing.physics.cycling import Rider

    check_bootstrap_draws(bootstrap)
    if not (np.isfinite(total_mass) and 20.0 <= total_mass <= 300.0):
        raise InputError(f"rider + bike mass must be 20-300 kg, got {total_mass:g}")
    if not 0.5 <= drivetrain_efficiency <= 1.0:
        raise InputError(f"drivetrain efficiency must be 0.5-1, got {drivetrain_efficiency:g}")
    tests, notes = read_tests(files, conditions)
    rider = Rider(mass=float(total_mass), drivetrain_efficiency=float(drivetrain_efficiency))
    result = estimate_drag_in_wind(tests, rider, method=method,
                                   wind=conditions if wind_given else None,
                                   rolling_coefficient=rolling_coefficient, bootstrap=bootstrap)
    for position in result.positions:
        if not np.isfinite(position.drag_area):
            raise InputError(f"no finite CdA for {position.label!r}: check the laps")
    if not np.isfinite(result.rolling_coefficient):
        raise InputError("no finite Crr: check the laps")
    density = float(np.mean([np.mean(t.air_density) for t in tests]))
    return FieldTestRun(result=result, tests=tuple(tests), air_density=density,
                        notes=tuple(notes))


# ------------------------------------------------------------------------------ tables

def _interval(values: Sequence[float] | None, digits: int, unit: str = "") -> str:
    """A 95 % interval as "low to high", or why there is none."""
    if values is None:
        return "no interval (fewer than 3 laps)"
    return f"{values[0]:.{digits}f} to {values[1]:.{digits}f}{unit}"


def position_table(result: Any) -> pd.DataFrame:
    """CdA per position with its 95 % interval, lap count and lap-to-lap spread.

    Parameters
    ----------
    result : pacing.fieldtest.estimate.FieldTestResult
        The field test's result.

    Returns
    -------
    pandas.DataFrame
        One row per position: CdA [m²], interval [m²], laps, lap-to-lap spread [%].
    """
    rows = []
    for p in result.positions:
        laps = np.asarray(p.lap_drag_area, dtype=float)
        spread = (float(np.std(laps, ddof=1) / abs(np.mean(laps)) * 100.0)
                  if laps.size >= 2 and np.all(np.isfinite(laps)) else None)
        rows.append({
            "Position": p.label,
            "CdA [m²]": round(p.drag_area, 4),
            "95 % interval [m²]": _interval(p.drag_area_ci95, 4),
            "Laps": p.laps,
            "Lap-to-lap spread [%]": "–" if spread is None else f"{spread:.1f}",
        })
    return pd.DataFrame(rows)


def rolling_line(result: Any) -> str:
    """Crr in words, with its interval or "held".

    Parameters
    ----------
    result : pacing.fieldtest.estimate.FieldTestResult
        The field test's result.

    Returns
    -------
    str
        One line.
    """
    if result.rolling_fixed:
        return f"Crr {result.rolling_coefficient:.5f} (held at the value given)"
    if result.rolling_held:
        return (f"Crr {result.rolling_coefficient:.5f} (held at a typical value: the laps "
                "cannot separate CdA from Crr, see the warning)")
    return (f"Crr {result.rolling_coefficient:.5f} (95 % interval "
            f"{_interval(result.rolling_coefficient_ci95, 5)}), shared by all positions")


def wind_line(result: Any, system: str) -> str | None:
    """The wind estimated from the laps in words (10 m and rider height, FROM), or None.

    Parameters
    ----------
    result : pacing.fieldtest.estimate.FieldTestResult
        The field test's result (its `wind`).
    system : str
        "metric" or "imperial".

    Returns
    -------
    str or None
        One line, or None when no wind was estimated.
    """
    wind = result.wind
    if wind is None:
        return None
    unit = unit_label("wind_speed", system)

    def speed(value: float) -> str:
        return f"{float(to_display(value, 'wind_speed', system)):.1f}"

    interval = "" if wind.speed_ci95 is None else \
        f" (95 % interval {speed(wind.speed_ci95[0])} to {speed(wind.speed_ci95[1])} {unit})"
    return (f"Wind estimated from the laps: {speed(wind.speed)} {unit} at 10 m{interval}, "
            f"{speed(wind.speed_at_rider)} {unit} at rider height, from "
            f"{wind.wind_from:.0f}°")


def difference_lines(result: Any) -> list[str]:
    """Each position against the first: the CdA difference, its interval, and whether it is
    significant (the 95 % bootstrap interval excludes 0).

    Parameters
    ----------
    result : pacing.fieldtest.estimate.FieldTestResult
        The field test's result.

    Returns
    -------
    list of str
        One line per position after the first (differences in m²).
    """
    lines = []
    for d in result.differences:
        word = ("a real difference (the 95 % interval excludes 0)" if d.significant
                else "not a clear difference (the 95 % interval includes 0)"
                if d.ci95 is not None else "no interval: ride at least 3 laps per position")
        interval = "" if d.ci95 is None else f" (95 %: {_interval(d.ci95, 4, ' m²')})"
        lines.append(f"{d.label} − {d.baseline}: {d.difference:+.4f} m²{interval}: {word}")
    return lines


# ------------------------------------------------------------------------------ figures

def lap_figure(estimate: Any, system: str) -> go.Figure:
    """Virtual elevation of every lap of one position against what it should follow.

    The reference is the measured heights, or the laps' mean trace for loop closure; the
    residuals are drawn below.

    Parameters
    ----------
    estimate : pacing.fieldtest.estimate.PositionEstimate
        One position's CdA [m²] and lap traces.
    system : str
        "metric" or "imperial" (distance in km or mi, elevation in m or ft).

    Returns
    -------
    plotly.graph_objects.Figure
        Two rows sharing the distance axis.
    """
    figure = make_subplots(rows=2, cols=1, shared_xaxes=True, row_heights=[0.68, 0.32],
                           vertical_spacing=0.06)
    for index, trace in enumerate(estimate.traces):
        color = LAP_COLORS[index % len(LAP_COLORS)]
        x = to_display(np.asarray(trace.distance, dtype=float), "distance", system)
        name = f"lap {index + 1}"
        figure.add_trace(go.Scatter(
            x=x, y=to_display(np.asarray(trace.virtual_elevation), "elevation", system),
            mode="lines", line=dict(color=color, width=1.6), name=f"{name}, virtual",
            legendgroup=name, hovertemplate="%{x:.2f}: %{y:.1f}<extra>" + name + "</extra>"),
            row=1, col=1)
        reference = (trace.measured_elevation if trace.measured_elevation is not None
                     else trace.reference_elevation)
        figure.add_trace(go.Scatter(
            x=x, y=to_display(np.asarray(reference), "elevation", system), mode="lines",
            line=dict(color=REFERENCE_COLOR, width=1, dash="dot"),
            name=f"{name}, {'measured' if trace.measured_elevation is not None else 'mean'}",
            legendgroup=name, showlegend=index == 0, hoverinfo="skip"), row=1, col=1)
        figure.add_trace(go.Scatter(
            x=x, y=to_display(np.asarray(trace.residual), "elevation", system), mode="lines",
            line=dict(color=color, width=1.2), legendgroup=name, showlegend=False,
            hovertemplate="%{x:.2f}: %{y:+.2f}<extra>" + name + "</extra>"), row=2, col=1)
    elev = unit_label("elevation", system)
    figure.update_yaxes(title_text=f"elevation [{elev}]", row=1, col=1)
    figure.update_yaxes(title_text=f"virtual − reference [{elev}]", row=2, col=1,
                        zeroline=True, zerolinecolor=INK)
    figure.update_xaxes(title_text=f"distance from the lap start "
                                   f"[{unit_label('distance', system)}]", row=2, col=1)
    figure.update_layout(height=460, margin=dict(l=10, r=10, t=40, b=10),
                         plot_bgcolor="white", paper_bgcolor="white", font=dict(color=INK),
                         title=dict(text=f"{estimate.label}: CdA {estimate.drag_area:.4f} m²",
                                    x=0, font=dict(size=14)),
                         legend=dict(orientation="h", yanchor="bottom", y=1.02, x=0.4))
    figure.update_xaxes(showgrid=True, gridcolor="#e7ebef")
    figure.update_yaxes(showgrid=True, gridcolor="#e7ebef")
    return figure


# ------------------------------------------------------------------------------ Streamlit

def road_test_cda_note() -> str:
    """What the measured CdA leaves out.

    The rotating-wheel area F_w and the bearing friction of Martin et al. (1998), which the
    fit takes off and the race model adds back.

    Returns
    -------
    str
        The note, with F_w in m².

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    from pacing.physics.cycling import MARTIN_1998
    from ui.text import ROAD_TEST_CDA_NOTE

    return ROAD_TEST_CDA_NOTE.format(wheel=MARTIN_1998["wheel_drag_area"])




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
                      help="95 % interval " + _interval(position.drag_area_ci95, 4, " m²"))
    cols[-1].metric("Crr", f"{result.rolling_coefficient:.4f}",
                    help="held at the value given" if result.rolling_fixed else
                    "held at a typical value (laps lack speed variety)"
                    if result.rolling_held else
                    "95 % interval " + _interval(result.rolling_coefficient_ci95, 5))
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
