"""The "setups side by side" view: positions and equipment ridden on the current course.

A coach lists up to six setups (name, CdA, power share, bike and kit mass, Crr), picks the one
to measure against, and reads at a glance which is fastest, by how much, how sure that is,
where on the course the time is won or lost, what each setup may give away before it stops
paying, what each parameter is worth, and whether changing position by segment pays.

Every number comes from the library (pacing.compare.setups, pacing.compare.sensitivity);
ui.comparison_tables and ui.comparison_figures turn them into tables, sentences and plotly figures
(pure helpers, testable without Streamlit), and this module draws them (`render_comparison`,
`render_comparison_for_page`).

Sign convention (as in pacing.compare.setups): a time difference is setup − baseline [s]; positive =
slower.
"""

from __future__ import annotations

import hashlib
import math
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd
import streamlit as st

from pacing.display.units import format_duration, to_display, unit_label
from pacing.errors import InputError
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

MAX_SHOWN_SETUPS = 6
"""Most setups the view compares at once (the library allows more; six stay readable)."""

DEFAULT_SPREAD = {"drag_area": 0.005, "rolling_coefficient": 0.0003, "mass": 0.5, "wind": 1.0}
"""Default 1 σ of the inputs, the command line's (pacing.cli.compare.DEFAULT_SD): CdA 0.005 m²
(wind-tunnel repeatability, García-López et al. 2008), Crr 0.0003, mass 0.5 kg, forecast wind
1 m/s (round defaults of our own judgement, meant to be replaced)."""

COLUMNS = {
    "name": "Setup",
    "drag_area": "CdA [m²]",
    "power_share": "Power share [%]",
    "bike_mass": "Bike and kit",  # the unit is appended per unit system
    "rolling_coefficient": "Crr [-]",
}
"""Editor column labels (our own words)."""


# ------------------------------------------------------------------------------ the setups

def mass_column(system: str) -> str:
    """Label of the editor's mass column in `system`."""
    return f"{COLUMNS['bike_mass']} [{unit_label('mass', system)}]"


def default_setup_rows(base_rider, body_mass: float, system: str) -> pd.DataFrame:
    """Starting rows of the editor: the setup as entered, a lower position (CdA −12 % at
    95 % of the power, a common starting guess, not a measurement) and a lighter bike
    (−1.5 kg, CdA +0.005 m²).

    Parameters
    ----------
    base_rider : pacing.physics.cycling.Rider of the page (mass = rider + bike + kit [kg]).
    body_mass : the athlete's body mass [kg].
    """
    bike = max(float(base_rider.mass) - float(body_mass), 0.0)
    cda = float(base_rider.drag_area)
    crr = float(np.mean(base_rider.rolling_coefficient))
    rows = [
        ("as entered", cda, 100.0, bike, crr),
        ("lower position", round(cda * 0.88, 3), 95.0, bike, crr),
        ("lighter bike", round(cda + 0.005, 3), 100.0, max(bike - 1.5, 0.0), crr),
    ]
    return pd.DataFrame({
        COLUMNS["name"]: [r[0] for r in rows],
        COLUMNS["drag_area"]: [r[1] for r in rows],
        COLUMNS["power_share"]: [r[2] for r in rows],
        mass_column(system): [round(float(to_display(r[3], "mass", system)), 2) for r in rows],
        COLUMNS["rolling_coefficient"]: [r[4] for r in rows],
    })


def _cell(row, column: str, name: str, low: float, high: float, unit: str) -> float:
    value = row.get(column)
    try:
        value = float(value)
    except (TypeError, ValueError):
        raise InputError(f"setup {name!r}: {column} must be a number") from None
    if not math.isfinite(value):
        raise InputError(f"setup {name!r}: {column} is empty")
    if not low <= value <= high:
        raise InputError(f"setup {name!r}: {column} must be {low:g}-{high:g}{unit}, "
                         f"got {value:g}")
    return value


def setups_from_rows(rows, base_rider, body_mass: float, system: str) -> list:
    """RiderSetups (pacing.compare.setups) from the editor's rows; InputError with one line naming
    the setup and the column for a bad cell.

    Parameters
    ----------
    rows : pandas DataFrame (or list of dicts) with the columns of `default_setup_rows`.
    base_rider : pacing.physics.cycling.Rider whose other parameters (drivetrain, wheels) every
        setup keeps.
    body_mass : [kg]; a setup's mass is body_mass + its bike and kit.
    """
    from pacing.compare.setups import RiderSetup

    records = rows.to_dict("records") if isinstance(rows, pd.DataFrame) else list(rows)
    records = [r for r in records if any(
        v is not None and not (isinstance(v, float) and math.isnan(v)) and str(v).strip()
        for v in r.values())]
    if not records:
        raise InputError("add at least one setup to compare")
    if len(records) > MAX_SHOWN_SETUPS:
        raise InputError(f"compare at most {MAX_SHOWN_SETUPS} setups at once, got "
                         f"{len(records)}")
    mass_label = mass_column(system)
    high_mass = float(to_display(60.0, "mass", system))
    setups, seen = [], set()
    for index, row in enumerate(records, start=1):
        raw_name = row.get(COLUMNS["name"])
        name = "" if raw_name is None or (isinstance(raw_name, float) and math.isnan(raw_name)) \
            else str(raw_name).strip()
        if not name:
            raise InputError(f"setup in row {index} needs a name")
        if name in seen:
            raise InputError(f"two setups are called {name!r}: names must differ")
        seen.add(name)
        cda = _cell(row, COLUMNS["drag_area"], name, 0.05, 1.5, " m²")
        share = _cell(row, COLUMNS["power_share"], name, 30.0, 120.0, " %")
        bike = _cell(row, mass_label, name, 0.0, round(high_mass, 1),
                     f" {unit_label('mass', system)}")
        crr = _cell(row, COLUMNS["rolling_coefficient"], name, 0.0, 0.1, "")
        rider = replace(base_rider, drag_area=cda, rolling_coefficient=crr,
                        mass=float(body_mass) + float(np.asarray(
                            _from_display_mass(bike, system))))
        setups.append(RiderSetup(name, rider, share / 100.0))
    return setups


def _from_display_mass(value: float, system: str) -> float:
    from pacing.display.units import from_display

    return float(from_display(value, "mass", system))


# ------------------------------------------------------------------------------ the analysis

@dataclass(frozen=True, eq=False)
class SetupsReport:
    """Everything the view shows, computed by the library (SI units).

    Attributes
    ----------
    comparison : pacing.compare.setups.Comparison.
    sensitivities : setup name → pacing.compare.sensitivity.Sensitivity.
    spreads : setup name → pacing.compare.sensitivity.Spread: of the difference to the baseline
        (difference_spread), of the finish time for the baseline itself (finish_time_spread).
    break_evens : setup name → pacing.compare.setups.BreakEven (not the baseline; empty when not
        asked for).
    mixed : pacing.compare.setups.MixedPlan, or None (fewer than two positions of one bike).
    """

    comparison: object
    sensitivities: dict
    spreads: dict
    break_evens: dict
    mixed: object | None


def analyse_setups(course, bounds, air, setups, request, conditions, uncertainty,
                   baseline=0, break_even_figures: bool = True, options=None) -> SetupsReport:
    """Ride every setup with the same request and gather what the view shows.

    Parameters
    ----------
    course : pacing.course.geometry.Course; bounds : segment boundary point indices;
    air : pacing.weather.conditions.CourseAir of `conditions` on the course;
    setups : pacing.compare.setups.RiderSetup list; request : pacing.plan.request.PlanRequest
        ("constant" or "fastest"; power figures at power share 1);
    conditions : pacing.weather.conditions.Conditions (sensitivities re-derive the air from it);
    uncertainty : pacing.compare.sensitivity.Uncertainty (1 σ of CdA, Crr, mass, wind);
    baseline : name or index of the setup the others are measured against;
    break_even_figures : also search the break-even power, CdA and mass (a few simulations
        per setup); options : pacing.plan.prediction.SimulationOptions.
    """
    from pacing.compare.sensitivity import difference_spread, finish_time_spread, sensitivity
    from pacing.compare.setups import break_even, compare_setups, mixed_plan

    comparison = compare_setups(course, bounds, setups, air, request, baseline, options)
    base = comparison.baseline_result
    sensitivities = {r.name: sensitivity(course, r.plan.piece_power, r.setup.rider, conditions,
                                         options) for r in comparison.results}
    spreads = {}
    for r in comparison.results:
        if r is base:
            spreads[r.name] = finish_time_spread(sensitivities[r.name], uncertainty)
        else:
            spreads[r.name] = difference_spread(sensitivities[base.name],
                                                sensitivities[r.name], uncertainty)
    breaks = {}
    if break_even_figures:
        breaks = {r.name: break_even(course, r, base, air, options)
                  for r in comparison.results if r is not base}
    return SetupsReport(comparison=comparison, sensitivities=sensitivities, spreads=spreads,
                        break_evens=breaks, mixed=mixed_plan(course, comparison, air, options))



# ------------------------------------------------------------------------------ Streamlit

def _build(cls, values: dict):
    """cls(**values) keeping only the fields cls has and values that are not None."""
    from dataclasses import fields

    names = {f.name for f in fields(cls)}
    return cls(**{k: v for k, v in values.items() if k in names and v is not None})


def _fingerprint(*arrays) -> str:
    digest = hashlib.sha1()
    for array in arrays:
        digest.update(np.ascontiguousarray(np.asarray(array, dtype=float)).tobytes())
    return digest.hexdigest()


@st.cache_resource(max_entries=16, show_spinner="Riding every setup on the course…")
def _cached_report(key: str, _course, _bounds, _air, _setups, _request, _conditions,
                   _uncertainty, baseline: str, break_even_figures: bool):
    """(report, None) or (None, one-line refusal); keyed on `key` (inputs' fingerprint)."""
    try:
        return analyse_setups(_course, _bounds, _air, _setups, _request, _conditions,
                              _uncertainty, baseline, break_even_figures), None
    except InputError as error:
        return None, _first_line(error)
    except (ValueError, ArithmeticError, RuntimeError) as error:
        return None, f"the comparison could not be worked out: {_first_line(error)}"


def _first_line(error: Exception) -> str:
    text = str(error).strip()
    return text.splitlines()[0] if text else type(error).__name__


def _uncertainty_inputs(system: str):
    from pacing.compare.sensitivity import Uncertainty
    from ui.widgets import unit_number

    with st.expander("How sure are the inputs? (1 standard deviation)", expanded=False):
        cols = st.columns(4)
        with cols[0]:
            cda = unit_number("CdA ± [m²]", None, system, "cmp_sd_cda",
                              DEFAULT_SPREAD["drag_area"], 0.0, 0.1, 0.001,
                              help="of each setup's CdA; each position measured on its own")
        with cols[1]:
            crr = unit_number("Crr ± [-]", None, system, "cmp_sd_crr",
                              DEFAULT_SPREAD["rolling_coefficient"], 0.0, 0.01, 0.0001)
        with cols[2]:
            mass = unit_number("Mass ±", "mass", system, "cmp_sd_mass",
                               DEFAULT_SPREAD["mass"], 0.0, 20.0, 0.1)
        with cols[3]:
            wind = unit_number("Wind ±", "wind_speed", system, "cmp_sd_wind",
                               DEFAULT_SPREAD["wind"], 0.0, 20.0, 0.5,
                               help="of the forecast wind speed")
        st.caption("Crr, mass and wind are shared by all setups (same tyres, rider and day), "
                   "so their errors mostly cancel in a difference; CdA errors do not.")
    return Uncertainty(drag_area=cda, rolling_coefficient=crr, mass=mass, wind=wind)


def render_comparison(course, bounds, air, base_rider, request, conditions, system: str,
                      body_mass: float | None = None) -> object | None:
    """Draw the setups-side-by-side view; returns the SetupsReport shown (or None).

    Parameters
    ----------
    course : pacing.course.geometry.Course; bounds : segment boundary point indices;
    air : pacing.weather.conditions.CourseAir of `conditions` on the course;
    base_rider : pacing.physics.cycling.Rider of the page's athlete and setup (mass = rider + bike +
        kit [kg]); request : pacing.plan.request.PlanRequest of the page (a "target-time" request
        is ridden as even power at its mean power, asked for here when missing);
    conditions : pacing.weather.conditions.Conditions; system : "metric" or "imperial";
    body_mass : the athlete's body mass [kg], to show bike-and-kit mass per setup; None
        takes 8 kg of base_rider.mass as bike and kit (pacing.athlete.Setup's default).
    """
    from pacing.plan.request import PlanRequest

    st.subheader("Setups side by side")
    st.caption("Each setup is ridden with the same pacing on this course and this weather. "
               "Power share: the share of the athlete's power the setup allows (e.g. 95 % in "
               "a low position). Differences are setup minus baseline: − quicker, + slower.")
    if body_mass is None:
        from pacing.athlete import Setup

        body_mass = float(base_rider.mass) - Setup().bike_mass
    try:
        strategies = {"Even power": "constant", "Quickest within the limits": "fastest"}
        current = getattr(request, "strategy", "constant")
        cols = st.columns([2, 2])
        label = cols[0].radio("Ride every setup with", list(strategies), horizontal=True,
                              index=1 if current == "fastest" else 0, key="cmp_strategy")
        mean_power = getattr(request, "mean_power", None)
        if mean_power is None:
            mean_power = cols[1].number_input("Average power at 100 % share [W]", 30.0, 800.0,
                                              200.0, 5.0, key="cmp_mean_power")
        else:
            cols[1].metric("Average power at 100 % share", f"{mean_power:.0f} W")
        base_request = request if isinstance(request, PlanRequest) else PlanRequest()
        if strategies[label] == "fastest" and base_request.critical_power is None:
            raise InputError("the quickest plan needs the athlete's critical power and W′")
        ride_request = replace(base_request, strategy=strategies[label],
                               mean_power=float(mean_power), target_time=None)
    except InputError as error:
        st.error(_first_line(error), icon="⚠️")
        return None

    rows = st.data_editor(
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
    try:
        setups = setups_from_rows(rows, base_rider, body_mass, system)
    except InputError as error:
        st.error(_first_line(error), icon="⚠️")
        return None
    names = [s.name for s in setups]
    cols = st.columns([2, 3])
    baseline = cols[0].selectbox("Measure against", names, key="cmp_baseline")
    with_break_even = cols[1].checkbox(
        "Work out break-even figures", value=True, key="cmp_break_even",
        help="what each setup may give away before it stops paying (a few seconds per setup)")
    uncertainty = _uncertainty_inputs(system)

    key = "|".join([
        _fingerprint(course.distance, course.elevation, course.grade, bounds,
                     air.density, air.headwind, air.crosswind),
        repr([(s.name, repr(s.rider), s.power_share) for s in setups]),
        repr(ride_request), repr(conditions), repr(uncertainty),
    ])
    report, refusal = _cached_report(hashlib.sha1(key.encode()).hexdigest(), course,
                                     np.asarray(bounds), air, setups, ride_request, conditions,
                                     uncertainty, baseline, with_break_even)
    if refusal:
        st.error(refusal, icon="⚠️")
        return None

    comparison = report.comparison
    best = comparison.fastest
    base = comparison.baseline_result
    cols = st.columns(3)
    cols[0].metric("Quickest setup", best.name, help="shortest predicted finish time")
    cols[1].metric("Its finish time", format_duration(best.finish_time))
    if best is base:
        cols[2].metric(f"vs {base.name}", "it is the baseline")
    else:
        spread = report.spreads[best.name].standard_deviation
        cols[2].metric(f"vs {base.name}", signed_time(best.delta),
                       help=f"± {spread:.1f} s (1σ): {verdict(best.delta, spread)}")
    st.plotly_chart(difference_figure(report), key="cmp_bars")
    st.dataframe(results_table(report, system), hide_index=True, key="cmp_table")
    st.markdown("**Where the time is won or lost**")
    st.plotly_chart(gap_along_figure(report, course, system), key="cmp_along")
    with st.expander("Per segment [s]", expanded=False):
        st.dataframe(segment_table(report, course, system), hide_index=True,
                     key="cmp_segments")
    if report.break_evens:
        st.markdown("**Break-even figures** (each on its own, everything else held)")
        for line in break_even_sentences(report, system):
            st.markdown(f"- {line}")
    st.markdown("**What each change is worth** (seconds of finish time; + slower, − quicker)")
    st.dataframe(sensitivity_table(report, system), hide_index=True, key="cmp_sensitivity")
    st.markdown("**Position by segment**")
    st.markdown(mixed_summary(report))
    figure = mixed_figure(report, course, system)
    if figure is not None and len(set(report.mixed.names)) > 1:
        st.plotly_chart(figure, key="cmp_mixed")
    st.caption("Predicted times are model estimates on this course and forecast; a position "
               "is only worth its time if it can be held safely on the road.")
    return report


def render_comparison_for_page(course, bounds, athlete: dict, weather: dict, approach: dict,
                               system: str) -> object | None:
    """The comparison view from the page's plain inputs (ui.sections dicts, SI values):
    builds the rider, air, request and conditions as ui.pipeline does, then
    `render_comparison`. Running: a short note instead (setups are a cycling matter)."""
    from pacing.athlete import Athlete, Setup, rider_for
    from pacing.plan.request import PlanRequest
    from pacing.weather.conditions import air_along_course
    from ui.pipeline import conditions_from

    if course is None or bounds is None or athlete is None or approach is None:
        st.info("Fix the inputs above to compare setups.")
        return None
    if athlete.get("sport", "cycling") != "cycling":
        st.info("Setups are compared for cycling; switch the sport to cycling.")
        return None
    try:
        person = _build(Athlete, athlete)
        rider = rider_for(person, _build(Setup, athlete))
        conditions = conditions_from(weather)
        air = air_along_course(course, conditions)
        values = {k: v for k, v in approach.items() if k != "target_time"}
        if values.get("strategy") not in ("constant", "fastest"):
            values["strategy"] = "constant"
            values.setdefault("mean_power", round(0.85 * (person.critical_power or 235.0)))
        request = _build(PlanRequest, {**values, "critical_power": person.critical_power,
                                       "w_prime": person.w_prime})
    except InputError as error:
        st.error(_first_line(error), icon="⚠️")
        return None
    return render_comparison(course, bounds, air, rider, request, conditions, system,
                             body_mass=person.body_mass)
