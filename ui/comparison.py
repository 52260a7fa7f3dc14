"""The "setups side by side" view: positions and equipment ridden on the current course.

A coach lists up to six setups (name, CdA, power share, bike and kit mass, Crr), picks the one
to measure against, and reads at a glance which is fastest, by how much, how sure that is,
where on the course the time is won or lost, what each setup may give away before it stops
paying, what each parameter is worth, and whether changing position by segment pays.

The page's race request (ui.pipeline.race_request, the one the predicted race uses) is ridden
by every setup; every number comes from one library call,
pacing.compare.analysis.analyse_setups, the command line's too. ui.comparison_tables and
ui.comparison_figures turn its result into tables, sentences and plotly figures (pure helpers,
testable without Streamlit), and this module draws them (`render_comparison`,
`render_comparison_for_page`). The analysis is worked out once per change of its inputs
(st.cache_data keyed on their fingerprint, `_report_key`), and its figures and tables once
per analysis and unit system (`_cached_view`): a rerun that changes nothing they depend on
recomputes nothing.

Sign convention (as in pacing.compare.setups): a time difference is setup − baseline [s];
positive = slower.
"""

from __future__ import annotations

import dataclasses
import hashlib
import math
from collections.abc import Iterable, Mapping
from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd
import streamlit as st

from pacing.compare.analysis import DEFAULT_UNCERTAINTY
from pacing.display.units import format_duration, to_display, unit_label
from pacing.errors import InputError, first_line
from ui.comparison_figures import (
    difference_figure,
    gap_along_figure,
    mixed_figure,
)
from ui.comparison_tables import (
    break_even_sentences,
    mixed_summary,
    results_table,
    segment_table,
    sensitivity_table,
    signed_time,
    verdict,
)

if TYPE_CHECKING:
    from pacing.compare.analysis import SetupsAnalysis
    from pacing.compare.sensitivity import Uncertainty
    from pacing.compare.setups import RiderSetup
    from pacing.physics.cycling import Rider
    from pacing.plan.race import RaceRequest

MAX_SHOWN_SETUPS = 6
"""Most setups the view compares at once (the library allows more; six stay readable)."""

COLUMNS = {
    "name": "Setup",
    "drag_area": "CdA [m²]",
    "power_share": "Power held in this position [%]",
    "bike_mass": "Bike and kit",  # the unit is appended per unit system
    "rolling_coefficient": "Crr [-]",
}
"""Editor column labels (our own words)."""

RIDE_WITH = {"Even power": "constant", "Quickest within the limits": "fastest"}
"""The view's choice of the strategy every setup rides (one of
pacing.compare.setups.COMPARE_STRATEGIES)."""


# ------------------------------------------------------------------------------ the setups

def mass_column(system: str) -> str:
    """Label of the editor's mass column.

    Parameters
    ----------
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    str
        E.g. "Bike and kit [kg]".
    """
    return f"{COLUMNS['bike_mass']} [{unit_label('mass', system)}]"


def default_setup_rows(base_rider: Rider, body_mass: float, system: str) -> pd.DataFrame:
    """Starting rows of the editor: the setup as entered, a lower position (CdA −12 % at
    95 % of the power, a common starting guess, not a measurement) and a lighter bike
    (−1.5 kg, the same CdA: one change a row, so its worth reads off alone).

    Parameters
    ----------
    base_rider : Rider
        pacing.physics.cycling.Rider of the page (mass = rider + bike + kit [kg]).
    body_mass : float
        The athlete's body mass [kg].
    system : str
        "metric" or "imperial" (the mass column's unit) [-].

    Returns
    -------
    pandas.DataFrame
        One row per setup, columns of COLUMNS and `mass_column(system)`.
    """
    bike = max(float(base_rider.mass) - float(body_mass), 0.0)
    cda = float(base_rider.drag_area)
    crr = float(np.mean(base_rider.rolling_coefficient))
    rows = [
        ("as entered", cda, 100.0, bike, crr),
        ("lower position", round(cda * 0.88, 3), 95.0, bike, crr),
        ("lighter bike", round(cda, 3), 100.0, max(bike - 1.5, 0.0), crr),
    ]
    return pd.DataFrame({
        COLUMNS["name"]: [r[0] for r in rows],
        COLUMNS["drag_area"]: [r[1] for r in rows],
        COLUMNS["power_share"]: [r[2] for r in rows],
        mass_column(system): [round(float(to_display(r[3], "mass", system)), 2) for r in rows],
        COLUMNS["rolling_coefficient"]: [r[4] for r in rows],
    })


def _cell(row: Mapping[str, Any], column: str, name: str, low: float, high: float,
          unit: str) -> float:
    value = row.get(column)
    try:
        if value is None:
            raise TypeError(column)
        number = float(value)
    except (TypeError, ValueError):
        raise InputError(f"setup {name!r}: {column} must be a number") from None
    if not math.isfinite(number):
        raise InputError(f"setup {name!r}: {column} is empty")
    if not low <= number <= high:
        raise InputError(f"setup {name!r}: {column} must be {low:g}-{high:g}{unit}, "
                         f"got {number:g}")
    return number


def _filled(value: Any) -> bool:
    return value is not None and not (isinstance(value, float) and math.isnan(value)) \
        and bool(str(value).strip())


def _records(rows: pd.DataFrame | Iterable[Mapping[str, Any]]) -> list[Mapping[str, Any]]:
    """The editor's rows that are not empty, checked for count."""
    every: list[Mapping[str, Any]] = ([{str(k): v for k, v in r.items()}
                                       for r in rows.to_dict("records")]
                                      if isinstance(rows, pd.DataFrame) else list(rows))
    records = [r for r in every if any(_filled(v) for v in r.values())]
    if not records:
        raise InputError("add at least one setup to compare")
    if len(records) > MAX_SHOWN_SETUPS:
        raise InputError(f"compare at most {MAX_SHOWN_SETUPS} setups at once, got "
                         f"{len(records)}")
    return records


def setups_from_rows(rows: pd.DataFrame | Iterable[Mapping[str, Any]], base_rider: Rider,
                     body_mass: float, system: str) -> list[RiderSetup]:
    """RiderSetups (pacing.compare.setups) from the editor's rows.

    Parameters
    ----------
    rows : pandas.DataFrame or iterable of dict
        The columns of `default_setup_rows`.
    base_rider : Rider
        pacing.physics.cycling.Rider whose other parameters (drivetrain, wheels) every setup
        keeps.
    body_mass : float
        The athlete's body mass [kg]; a setup's mass is body_mass + its bike and kit.
    system : str
        "metric" or "imperial" (the mass column's unit) [-].

    Returns
    -------
    list of RiderSetup

    Raises
    ------
    InputError
        One line naming the setup and the column of a bad cell.
    """
    from pacing.compare.setups import RiderSetup

    mass_label = mass_column(system)
    high_mass = round(float(to_display(60.0, "mass", system)), 1)
    setups, seen = [], set()
    for index, row in enumerate(_records(rows), start=1):
        raw_name = row.get(COLUMNS["name"])
        name = str(raw_name).strip() if _filled(raw_name) else ""
        if not name:
            raise InputError(f"setup in row {index} needs a name")
        if name in seen:
            raise InputError(f"two setups are called {name!r}: names must differ")
        seen.add(name)
        cda = _cell(row, COLUMNS["drag_area"], name, 0.05, 1.5, " m²")
        share = _cell(row, COLUMNS["power_share"], name, 30.0, 120.0, " %")
        bike = _cell(row, mass_label, name, 0.0, high_mass, f" {unit_label('mass', system)}")
        crr = _cell(row, COLUMNS["rolling_coefficient"], name, 0.0, 0.1, "")
        rider = replace(base_rider, drag_area=cda, rolling_coefficient=crr,
                        mass=float(body_mass) + _from_display_mass(bike, system))
        setups.append(RiderSetup(name, rider, share / 100.0))
    return setups


def _from_display_mass(value: float, system: str) -> float:
    from pacing.display.units import from_display

    return float(from_display(value, "mass", system))


# ------------------------------------------------------------------------------ the request

def page_race(course: Any, bounds: Any, athlete: dict, weather: dict,
              approach: dict) -> RaceRequest:
    """The race request the setups ride: the page's own (ui.pipeline.race_request), with a
    target-time plan ridden as even power at its mean power (a target time fixes the finish,
    so there is nothing to compare).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The page's course.
    bounds : array of int
        Segment boundary point indices [-].
    athlete : dict
        The page's athlete (ui.sections; SI).
    weather : dict
        pacing.weather.conditions.Conditions fields (SI).
    approach : dict
        The page's plan (strategy, mean_power [W], target_time [s], max_power_ratio [-],
        w_prime_reserve [J], …).

    Returns
    -------
    RaceRequest
        With every limit of the page's request (CP, W′, reserve, power ratio).
    """
    from pacing.athlete import Athlete
    from ui.pipeline import race_request

    values = {k: v for k, v in approach.items() if k != "target_time"}
    if values.get("strategy") not in RIDE_WITH.values():
        values["strategy"] = "constant"
        person = _build(Athlete, athlete)
        values.setdefault("mean_power", round(0.85 * (person.critical_power or 235.0)))
    return race_request(course, bounds, athlete, weather, values)


def comparison_race(race: RaceRequest, strategy: str, mean_power: float) -> RaceRequest:
    """The page's race request as every setup rides it: the view's strategy and mean power,
    and nothing else changed (the same limits whatever the page's own plan).

    Parameters
    ----------
    race : RaceRequest
        The page's request (`page_race`).
    strategy : str
        "constant" or "fastest" [-].
    mean_power : float
        The athlete's mean power at power share 1 [W].

    Returns
    -------
    RaceRequest

    Raises
    ------
    InputError
        For the quickest plan without the athlete's critical power.
    """
    if strategy == "fastest" and race.cycling.critical_power is None:
        raise InputError("the quickest plan needs the athlete's critical power and W′")
    cycling = replace(race.cycling, strategy=strategy, mean_power=float(mean_power),
                      target_time=None)
    return replace(race, strategy=strategy, cycling=cycling)


# ------------------------------------------------------------------------------ Streamlit

def _build(cls: Any, values: dict) -> Any:
    """cls(**values) keeping only the fields cls has and values that are not None."""
    names = {f.name for f in dataclasses.fields(cls)}
    return cls(**{k: v for k, v in values.items() if k in names and v is not None})


def _fingerprint(*arrays: Any) -> str:
    digest = hashlib.sha1()
    for array in arrays:
        digest.update(np.ascontiguousarray(np.asarray(array, dtype=np.float64)).tobytes())
    return digest.hexdigest()


def _report_key(race: RaceRequest, setups: list[RiderSetup], uncertainty: Uncertainty) -> str:
    """What the comparison depends on, as one hash."""
    course = race.course
    arrays = [getattr(course, f.name) for f in dataclasses.fields(course)
              if isinstance(getattr(course, f.name), np.ndarray)]
    key = "|".join([
        _fingerprint(*arrays, race.bounds),
        repr([(s.name, repr(s.rider), s.power_share) for s in setups]),
        race.strategy, repr(race.cycling), repr(race.conditions), repr(race.options),
        repr(uncertainty),
    ])
    return hashlib.sha1(key.encode()).hexdigest()


@st.cache_data(max_entries=16, show_spinner="Riding every setup on the course…")
def _cached_report(key: str, _race: RaceRequest, _setups: list[RiderSetup],
                   _uncertainty: Uncertainty, baseline: str,
                   break_even_figures: bool) -> tuple[SetupsAnalysis | None, str | None]:
    """(analysis, None) or (None, one-line refusal); keyed on `key` (inputs' fingerprint),
    the baseline and whether break-even figures are asked for: worked out once per change of
    its inputs, every session getting its own copy (st.cache_data)."""
    from pacing.compare.analysis import analyse_setups

    try:
        return analyse_setups(_race, _setups, baseline, _uncertainty,
                              break_even_figures=break_even_figures), None
    except InputError as error:
        return None, first_line(error)
    except (ValueError, ArithmeticError, RuntimeError) as error:
        return None, f"the comparison could not be worked out: {first_line(error)}"


@st.cache_data(max_entries=16, show_spinner=False)
def _cached_view(key: str, baseline: str, break_even_figures: bool, system: str,
                 _report: SetupsAnalysis) -> dict[str, Any]:
    """The figures (plotly data, ui.figures.figure_spec), tables and sentences of one
    analysis in one unit system, made once per analysis (the same key as `_cached_report`)
    and system, not on every rerun."""
    from ui.figures import figure_spec

    course = _report.comparison.race.course
    mixed = mixed_figure(_report, course, system)
    several = _report.mixed is not None and len(set(_report.mixed.names)) > 1
    return {
        "bars": figure_spec(difference_figure(_report)),
        "results": results_table(_report, system),
        "along": figure_spec(gap_along_figure(_report, course, system)),
        "segments": segment_table(_report, course, system),
        "break_even": break_even_sentences(_report, system) if _report.break_evens else [],
        "sensitivity": sensitivity_table(_report, system),
        "mixed_summary": mixed_summary(_report),
        "mixed": figure_spec(mixed) if mixed is not None and several else None,
    }


def _uncertainty_inputs(system: str) -> Uncertainty:
    from pacing.compare.sensitivity import Uncertainty
    from ui.widgets import unit_number

    default = DEFAULT_UNCERTAINTY
    with st.expander("How sure are the inputs? (1 standard deviation)", expanded=False):
        cols = st.columns(4)
        with cols[0]:
            cda = unit_number("CdA ± [m²]", None, system, "cmp_sd_cda", default.drag_area,
                              0.0, 0.1, 0.001,
                              help="of each setup's CdA; each position measured on its own")
        with cols[1]:
            crr = unit_number("Crr ± [-]", None, system, "cmp_sd_crr",
                              default.rolling_coefficient, 0.0, 0.01, 0.0001)
        with cols[2]:
            mass = unit_number("Mass ±", "mass", system, "cmp_sd_mass", default.mass, 0.0,
                               20.0, 0.1)
        with cols[3]:
            wind = unit_number("Wind ±", "wind_speed", system, "cmp_sd_wind", default.wind,
                               0.0, 20.0, 0.5, help="of the forecast wind speed")
        st.caption("Crr, mass and wind are shared by all setups (same tyres, rider and day), "
                   "so their errors mostly cancel in a difference; CdA errors do not.")
    return Uncertainty(drag_area=cda, rolling_coefficient=crr, mass=mass, wind=wind)


def _ride_choice(race: RaceRequest) -> RaceRequest:
    """The strategy and mean power every setup rides with, asked in the view."""
    cols = st.columns([2, 2])
    label = cols[0].radio("Ride every setup with", list(RIDE_WITH), horizontal=True,
                          index=1 if race.strategy == "fastest" else 0, key="cmp_strategy")
    mean_power = race.cycling.mean_power
    if mean_power is None:
        mean_power = cols[1].number_input("Average power at 100 % share [W]", 30.0, 800.0,
                                          200.0, 5.0, key="cmp_mean_power")
    else:
        cols[1].metric("Average power at 100 % share", f"{mean_power:.0f} W")
    return comparison_race(race, RIDE_WITH[label], float(mean_power))


def _setup_editor(base_rider: Rider, body_mass: float, system: str) -> pd.DataFrame:
    return st.data_editor(
        default_setup_rows(base_rider, body_mass, system), num_rows="dynamic",
        hide_index=True, key=f"cmp_setups:{system}",
        column_config={
            COLUMNS["name"]: st.column_config.TextColumn(required=True, max_chars=40),
            COLUMNS["drag_area"]: st.column_config.NumberColumn(
                min_value=0.05, max_value=1.5, step=0.001, format="%.3f",
                help="drag area in this position [m²]"),
            COLUMNS["power_share"]: st.column_config.NumberColumn(
                min_value=30.0, max_value=120.0, step=1.0, format="%.0f",
                help="share of the athlete's power this setup allows [%]"),
            mass_column(system): st.column_config.NumberColumn(
                min_value=0.0, step=0.1, format="%.1f",
                help="bike, wheels, bottles, shoes, helmet"),
            COLUMNS["rolling_coefficient"]: st.column_config.NumberColumn(
                min_value=0.0, max_value=0.1, step=0.0001, format="%.4f",
                help="rolling resistance coefficient of the tyres on this road"),
        })


def _headline(report: SetupsAnalysis, system: str) -> None:
    """The quickest setup, its time and its difference; then the analysis's notices."""
    from pacing.display.notices import describe

    comparison = report.comparison
    best = comparison.fastest
    base = comparison.baseline_result
    cols = st.columns(3)
    cols[0].metric("Quickest setup", best.name, help="shortest predicted finish time")
    cols[1].metric("Its finish time", format_duration(best.finish_time))
    if best is base:
        cols[2].metric(f"vs {base.name}", "it is the baseline")
    else:
        spread = report.spread(best.name).standard_deviation
        cols[2].metric(f"vs {base.name}", signed_time(best.delta),
                       help=f"± {spread:.1f} s (1σ): {verdict(best.delta, spread)}")
    course_notices = report.comparison.race.course.notices  # shown beside the course facts
    for notice in report.notices:
        if notice in course_notices:
            continue
        if notice.level == "warning":
            st.warning(describe(notice, system), icon="⚠️")
        else:
            st.caption(f"Note: {describe(notice, system)}")


def _show_report(report: SetupsAnalysis, system: str, view: Mapping[str, Any]) -> None:
    """The headline, then the view's figures, tables and sentences (`_cached_view`)."""
    from ui.figures import drawable

    _headline(report, system)
    st.plotly_chart(drawable(view["bars"]), key="cmp_bars")
    st.dataframe(view["results"], hide_index=True, key="cmp_table")
    st.markdown("**Where the time is won or lost**")
    st.plotly_chart(drawable(view["along"]), key="cmp_along")
    with st.expander("Per segment [s]", expanded=False):
        st.dataframe(view["segments"], hide_index=True, key="cmp_segments")
    if view["break_even"]:
        st.markdown("**Break-even figures** (each on its own, everything else held)")
        for line in view["break_even"]:
            st.markdown(f"- {line}")
    st.markdown("**What each change is worth** (seconds of finish time; + slower, − quicker)")
    st.dataframe(view["sensitivity"], hide_index=True, key="cmp_sensitivity")
    st.markdown("**Position by segment**")
    st.markdown(view["mixed_summary"])
    if view["mixed"] is not None:
        st.plotly_chart(drawable(view["mixed"]), key="cmp_mixed")
    st.caption("Predicted times are model estimates on this course and forecast; a position "
               "is only worth its time if it can be held safely on the road.")


def render_comparison(race: RaceRequest, system: str,
                      body_mass: float | None = None) -> SetupsAnalysis | None:
    """Draw the setups-side-by-side view; returns the analysis shown (or None).

    Parameters
    ----------
    race : RaceRequest
        The page's cycling request (`page_race`): course, bounds, conditions, the rider of the
        page's athlete and setup (mass = rider + bike + kit [kg]) and the plan request with its
        limits; every setup rides it with the view's strategy and mean power.
    system : str
        "metric" or "imperial" [-].
    body_mass : float or None
        The athlete's body mass [kg], to show bike-and-kit mass per setup; None takes 8 kg of
        the rider's mass as bike and kit (pacing.athlete.Setup's default).

    Returns
    -------
    SetupsAnalysis or None
        None when an input is refused (the view shows why in one line).
    """
    st.caption("Each setup is ridden with the same pacing on this course and this weather. "
               "Power held in this position: the share of the athlete's power the setup "
               "allows (e.g. 95 % in a low position). Differences are setup minus baseline: "
               "− quicker, + slower.")
    base_rider = race.rider
    if base_rider is None:
        st.info("Setups are compared for cycling; switch the sport to cycling.")
        return None
    if body_mass is None:
        from pacing.athlete import Setup

        body_mass = float(base_rider.mass) - Setup().bike_mass
    try:
        ride = _ride_choice(race)
    except InputError as error:
        st.error(first_line(error), icon="⚠️")
        return None
    rows = _setup_editor(base_rider, body_mass, system)
    try:
        setups = setups_from_rows(rows, base_rider, body_mass, system)
    except InputError as error:
        st.error(first_line(error), icon="⚠️")
        return None
    cols = st.columns([2, 3])
    baseline = cols[0].selectbox("Measure against", [s.name for s in setups], key="cmp_baseline")
    with_break_even = cols[1].checkbox(
        "Work out break-even figures", value=True, key="cmp_break_even",
        help="what each setup may give away before it stops paying (a few seconds per setup)")
    uncertainty = _uncertainty_inputs(system)
    key = _report_key(ride, setups, uncertainty)
    report, refusal = _cached_report(key, ride, setups, uncertainty, baseline, with_break_even)
    if report is None:
        st.error(refusal or "the comparison could not be worked out", icon="⚠️")
        return None
    _show_report(report, system, _cached_view(key, baseline, with_break_even, system, report))
    return report


def render_comparison_for_page(course: Any, bounds: Any, athlete: dict | None,
                               weather: dict, approach: dict | None,
                               system: str) -> SetupsAnalysis | None:
    """The comparison view from the page's plain inputs (ui.sections dicts, SI values): the
    page's race request (`page_race`), then `render_comparison`. Running: a short note
    instead (setups are a cycling matter).

    Parameters
    ----------
    course : pacing.course.geometry.Course or None
        The page's course.
    bounds : array of int or None
        Segment boundary point indices [-].
    athlete : dict or None
        The page's athlete (SI).
    weather : dict
        Conditions fields (SI).
    approach : dict or None
        The page's plan (SI).
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    SetupsAnalysis or None
    """
    from pacing.athlete import Athlete

    if course is None or bounds is None or athlete is None or approach is None:
        st.info("Fix the inputs above to compare setups.")
        return None
    if athlete.get("sport", "cycling") != "cycling":
        st.info("Setups are compared for cycling; switch the sport to cycling.")
        return None
    try:
        race = page_race(course, bounds, athlete, weather, approach)
        body_mass = _build(Athlete, athlete).body_mass
    except InputError as error:
        st.error(first_line(error), icon="⚠️")
        return None
    return render_comparison(race, system, body_mass=body_mass)
