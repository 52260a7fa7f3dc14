"""Page sections of the web app. Each draws its inputs and returns plain SI values (dicts),
or draws results handed to it. No physics: numbers come from ui.pipeline (the library)."""

from __future__ import annotations

import functools

import streamlit as st

from pacing.course.elevation import ElevationSmoothing
from pacing.display.units import (
    format_duration,
    format_pace,
    from_display,
    pace_per_km_to_display,
    parse_clock,
    to_display,
    unit_label,
)
from pacing.errors import InputError
from ui import text
from ui.widgets import take_pending, unit_number

# ------------------------------------------------------------------------------------ route

def route_facts(course, system: str) -> None:
    """Show distance [km or mi], climbing as recorded and cleaned, lowest and highest point
    [m or ft] of the course (SI inside)."""
    cols = st.columns(4)
    cols[0].metric("Distance", f"{to_display(course.total_distance, 'distance', system):.2f} "
                   f"{unit_label('distance', system)}")
    elev = unit_label("elevation", system)
    cols[1].metric("Climbing, cleaned", f"{to_display(course.ascent, 'elevation', system):.0f} "
                   f"{elev}")
    raw = course.raw_ascent
    cols[2].metric("Climbing, as recorded",
                   f"{to_display(raw, 'elevation', system):.0f} {elev}" if raw == raw else "–")
    cols[3].metric("Lowest / highest",
                   f"{to_display(float(course.elevation.min()), 'elevation', system):.0f} / "
                   f"{to_display(float(course.elevation.max()), 'elevation', system):.0f} {elev}")


def segment_overview(course, bounds, system: str) -> None:
    """Show the segments as a small table, folded away: kind, start and length [km or mi],
    mean and steepest grade [%], climbing [m or ft]. The table is worked out and drawn only
    while the fold is open (pandas and the table are not on the first page)."""
    fold = st.expander(f"The {len(bounds) - 1} segments", expanded=False, key="segments_open",
                       on_change="rerun")
    if not fold.open:
        return
    import pandas as pd

    from pacing.course.segments import describe_segments

    segments = describe_segments(course, bounds)
    dist, elev = unit_label("distance", system), unit_label("elevation", system)
    with fold:
        st.dataframe(pd.DataFrame({
            "Segment": [s.index + 1 for s in segments],
            "Terrain": [s.kind for s in segments],
            f"From [{dist}]": [round(to_display(s.start, "distance", system), 2)
                               for s in segments],
            f"Length [{dist}]": [round(to_display(s.length, "distance", system), 2)
                                 for s in segments],
            "Mean grade [%]": [round(100 * s.mean_grade, 1) for s in segments],
            "Steepest [%]": [round(100 * s.max_grade, 1) for s in segments],
            f"Climbing [{elev}]": [round(to_display(s.ascent, "elevation", system))
                                   for s in segments],
        }), hide_index=True, key="segment_overview")


def split_inputs(system: str, total_distance: float | None = None) -> dict:
    """How to cut the course into segments; returns {"mode", "length" [m], "marks" [m]}.

    `total_distance` [m], when given, refuses marks beyond the course (InputError)."""
    from ui.pipeline import SPLIT_MODES, parse_marks

    cols = st.columns([2, 2, 3])
    mode = cols[0].radio("Segments", SPLIT_MODES, key="split_mode", horizontal=False,
                         help="by terrain: climbs, flats and descents; fixed length: every "
                              "so many km or miles; my own marks: where you say")
    result = {"mode": mode, "length": None, "marks": ()}
    dist = unit_label("distance", system)
    if mode == "fixed length":
        with cols[1]:
            result["length"] = unit_number("Segment length", "distance", system, "split_length",
                                           5000.0, 200.0, 100000.0, 0.5)
    elif mode == "my own marks":
        typed = cols[2].text_input(f"Split at [{dist} from the start, comma separated]",
                                   value="5, 10, 20", key="split_marks")
        shown = parse_marks(typed)
        if total_distance is not None:
            longest = to_display(total_distance, "distance", system)
            outside = [v for v in shown if not 0 <= v <= longest]
            if outside:
                raise InputError(f"split mark {outside[0]:g} {dist} is outside the course "
                                 f"(0 to {longest:.2f} {dist})")
        result["marks"] = tuple(float(from_display(v, "distance", system)) for v in shown)
    return result


def smoothing_inputs(system: str) -> dict:
    """Elevation cleaning controls; returns {"window" [m], "max_grade" [-]}.

    The defaults are the library's (pacing.course.elevation.ElevationSmoothing()), the same the
    command line uses, so the app and `pacing course` show the same cleaned ascent.
    """
    defaults = ElevationSmoothing()
    with st.expander("Elevation cleaning (GPS heights are noisy)", expanded=False):
        cols = st.columns(2)
        with cols[0]:
            window = unit_number("Smoothing window", "elevation", system, "smooth_window",
                                 defaults.window, 0.0, 1000.0, 10.0,
                                 help="heights are averaged over this stretch of road; 0 = off")
        with cols[1]:
            grade = unit_number("Steepest grade kept [%]", None, system, "max_grade_pct",
                                defaults.max_grade * 100.0, 1.0, 100.0, 1.0,
                                help="steeper stretches after smoothing are flattened to this")
    return {"window": window, "max_grade": grade / 100.0}


# --------------------------------------------------------------------------- athlete, setup

DEFAULT_CRITICAL_SPEED = 4.0
"""The page's first critical speed [m/s] (14.4 km/h, 4:10 per km)."""
DEFAULT_FLAT_PACE = 1000.0 / DEFAULT_CRITICAL_SPEED
"""The page's first flat pace [s/km]: the pace of the first critical speed, so the two
defaults describe the same runner (equal effort and the quickest plan within critical speed
then finish about a minute apart on the default course, not half an hour)."""

FLAT_PACE_RANGE = (120.0, 900.0)
"""Flat pace the page accepts [s/km]: 2:00 to 15:00 per km."""


def flat_pace_range_message(system: str) -> str:
    """The flat-pace refusal in the unit system's own words: "… between 2:00 and 15:00 per
    km" in metric, "… between 3:13 and 24:08 per mile" in imperial (1 mi = 1.609344 km)."""
    low, high = (format_pace(float(pace_per_km_to_display(v, system))) for v in FLAT_PACE_RANGE)
    per = "per mile" if system == "imperial" else "per km"
    return f"flat pace must be between {low} and {high} {per}"


def athlete_inputs(system: str) -> dict:
    """Sport, athlete and equipment; returns a dict of SI values (keys by pacing.athlete):
    body_mass [kg], then the rider's or the runner's own (see `_rider_inputs`,
    `_runner_inputs`)."""
    sport = st.radio("Sport", ("cycling", "running"), key="sport", horizontal=True)
    values: dict = {"sport": sport}
    cols = st.columns(3)
    with cols[0]:
        values["body_mass"] = unit_number("Athlete mass", "mass", system, "body_mass", 72.0,
                                          30.0, 200.0, 0.5)
    if sport == "cycling":
        values.update(_rider_inputs(cols, system))
    else:
        values.update(_runner_inputs(cols, system))
    return values


def _rider_inputs(cols, system: str) -> dict:
    """Bike, physiology and position of a rider (the first row's last two columns, then a row
    of their own): bike_mass [kg], critical_power [W], w_prime [J], drag_area [m²],
    rolling_coefficient [-], drivetrain_efficiency [-]."""
    values: dict = {}
    with cols[1]:
        values["bike_mass"] = unit_number("Bike and kit", "mass", system, "bike_mass", 8.0,
                                          3.0, 40.0, 0.1,
                                          help="bike, bottles, shoes, helmet")
    with cols[2]:
        values["critical_power"] = unit_number(
            "Critical power [W]", None, system, "critical_power", 280.0, 50.0, 600.0, 5.0,
            help="the power you can hold for about half an hour to an hour")
        values["w_prime"] = 1000.0 * unit_number(
            "W′ [kJ]", None, system, "w_prime_kj", 20.0, 1.0, 60.0, 0.5,
            help="work you can do above critical power before you must ease off")
    cols = st.columns(3)
    with cols[0]:
        preset = st.selectbox("Riding position", list(text.DRAG_AREA_PRESETS),
                              key="cda_preset", help=text.DRAG_AREA_GUIDE)
        chosen = text.DRAG_AREA_PRESETS[preset]
        if chosen is None:
            values["drag_area"] = unit_number("CdA [m²]", None, system, "cda", 0.30, 0.10,
                                              0.80, 0.005, help=text.DRAG_AREA_GUIDE)
        else:
            values["drag_area"] = chosen
    with cols[1]:
        preset = st.selectbox("Road surface", list(text.ROLLING_PRESETS), key="crr_preset",
                              help=text.ROLLING_GUIDE)
        chosen = text.ROLLING_PRESETS[preset]
        if chosen is None:
            values["rolling_coefficient"] = unit_number(
                "Crr [-]", None, system, "crr", 0.0032, 0.001, 0.05, 0.0005,
                help=text.ROLLING_GUIDE)
        else:
            values["rolling_coefficient"] = chosen
    with cols[2]:
        values["drivetrain_efficiency"] = unit_number(
            "Drivetrain efficiency [%]", None, system, "efficiency_pct", 97.6, 85.0,
            100.0, 0.1, help="share of crank power reaching the wheel; Martin et al. "
                             "(1998) measured 97.6 %") / 100.0
    with st.expander("What the CdA and Crr values mean"):
        st.markdown(text.DRAG_AREA_GUIDE)
        st.markdown(text.ROLLING_GUIDE)
    return values


def _runner_inputs(cols, system: str) -> dict:
    """Height [m], flat pace [s/km], critical speed [m/s] and D′ [m] of a runner.

    The flat pace is typed as M:SS per km or per mile; InputError outside FLAT_PACE_RANGE."""
    values: dict = {}
    with cols[1]:
        values["height"] = unit_number("Height", "elevation", system, "height", 1.78,
                                       1.2, 2.2, 0.01)
    with cols[2]:
        pace_label = unit_label("pace", system)
        default = st.session_state.get("si:flat_pace", DEFAULT_FLAT_PACE)
        shown = format_pace(float(pace_per_km_to_display(default, system)))
        widget = f"flat_pace:{system}"
        if take_pending("flat_pace", system):
            st.session_state[widget] = shown  # the browser shows the value set
        typed = st.text_input(f"Flat pace, still air [{pace_label}, M:SS]",
                              value=None if widget in st.session_state else shown, key=widget,
                              help="the pace you would hold for this race on flat ground; "
                                   "for races under an hour about the pace of your "
                                   "critical speed")
        seconds = parse_clock(typed or "", "flat pace")
        per_km = seconds / float(pace_per_km_to_display(1.0, system))
        if not FLAT_PACE_RANGE[0] <= per_km <= FLAT_PACE_RANGE[1]:
            raise InputError(flat_pace_range_message(system))
        st.session_state["si:flat_pace"] = per_km
        values["flat_pace"] = per_km
    cols = st.columns(3)
    with cols[0]:
        values["critical_speed"] = unit_number(
            "Critical speed", "speed", system, "critical_speed", DEFAULT_CRITICAL_SPEED, 1.5,
            7.0, 0.1, help="the speed you can hold for about half an hour; the quickest plan "
                           "keeps to it and to D′")
    with cols[1]:
        values["d_prime"] = unit_number("D′ [m]", None, system, "d_prime", 150.0, 10.0,
                                        600.0, 5.0,
                                        help="distance you can run beyond critical speed")
    return values


# -------------------------------------------------------------------------------- weather

def weather_inputs(system: str, roughness_classes: dict[str, float] | None) -> dict:
    """Conditions on the day; returns pacing.weather.conditions.Conditions fields in SI:
    temperature [°C], relative_humidity [-], sea_level_pressure [Pa], wind_speed [m/s],
    wind_from [deg], wind_height [m], roughness_length [m] (from the terrain classes [m])."""
    values: dict = {}
    cols = st.columns(3)
    with cols[0]:
        values["temperature"] = unit_number("Air temperature", "temperature", system,
                                            "temperature", 20.0, -30.0, 50.0, 0.5)
        values["relative_humidity"] = unit_number("Relative humidity [%]", None, system,
                                                  "humidity_pct", 50.0, 0.0, 100.0, 1.0) / 100
        values["sea_level_pressure"] = 100.0 * unit_number(
            "Sea-level pressure [hPa]", None, system, "pressure_hpa", 1013.25, 870.0, 1085.0,
            0.25, help="the pressure weather reports give (reduced to sea level)")
    with cols[1]:
        values["wind_speed"] = unit_number("Wind speed", "wind_speed", system, "wind_speed",
                                           0.0, 0.0, 40.0, 1.0,
                                           help="as the forecast gives it, at its height")
        values["wind_from"] = unit_number("Wind comes from [° from north]", None, system,
                                          "wind_from", 270.0, 0.0, 360.0, 5.0,
                                          help="0 = from the north, 90 = from the east")
        values["wind_height"] = unit_number("Wind measured at", "elevation", system,
                                            "wind_height", 10.0, 1.0, 100.0, 1.0,
                                            help="weather stations measure at 10 m")
    with cols[2]:
        if roughness_classes:
            names = list(roughness_classes)
            default = names.index("open grassland") if "open grassland" in names else 0
            # a reopened plan sets the choice in the session state: no default beside it
            terrain = st.selectbox("Terrain around the road", names,
                                   index=None if "terrain" in st.session_state else default,
                                   key="terrain",
                                   help="how rough the land is slows the wind near the ground "
                                        "(Davenport-Wieringa classes)")
            values["roughness_length"] = roughness_classes[terrain]
            st.caption(f"roughness length z0 = {values['roughness_length']:g} m")
    return values


# ------------------------------------------------------------------------------ approach

def approach_inputs(sport: str, athlete: dict, system: str = "metric") -> dict:
    """The pacing plan and its limits; returns SI values: strategy (a key of
    pacing.plan.strategies.STRATEGIES[sport]); cycling: mean_power [W] or target_time [s],
    max_power_ratio [-], w_prime_reserve [J], allow_zero_on_descents, and the race details
    of `race_details_inputs`."""
    values: dict = {}
    if sport == "cycling":
        label = st.radio("Plan", list(text.APPROACHES), key="approach", horizontal=True)
        values["strategy"] = text.APPROACHES[label]
        cols = st.columns(3)
        if values["strategy"] in ("constant", "fastest"):
            with cols[0]:
                default = round(0.85 * athlete.get("critical_power", 280.0) / 5) * 5
                values["mean_power"] = unit_number(
                    "Average power [W]", None, "metric", "mean_power", default, 30.0, 800.0,
                    5.0, help="time-weighted mean of the crank power over the race")
        else:
            with cols[0]:
                typed = st.text_input("Finish time to reach [H:MM:SS]", value="1:05:00",
                                      key="target_time")
                values["target_time"] = parse_clock(typed, "finish time")
        # the limits are asked whatever the plan: the fastest plan keeps to them, and so does
        # the setups panel's quickest plan, which must not change with this page's approach
        limits = "used by the fastest plan here and in the setups comparison"
        with cols[1]:
            values["max_power_ratio"] = unit_number(
                "Highest segment power [× critical power]", None, "metric",
                "max_power_ratio", 1.15, 0.5, 2.0, 0.05, help=limits)
        with cols[2]:
            values["w_prime_reserve"] = 1000.0 * unit_number(
                "W′ never spent, at least [kJ]", None, "metric", "w_prime_reserve", 2.0, 0.0,
                50.0, 0.5, help=limits)
        values["allow_zero_on_descents"] = st.checkbox(
            "Freewheeling allowed on descents", value=False, key="coast_descents",
            help="descending segments may go down to 0 W (" + limits + ")")
        values.update(race_details_inputs(system))
    else:
        label = st.radio("Plan", list(text.RUNNING_APPROACHES), key="running_approach",
                         horizontal=True)
        values["strategy"] = text.RUNNING_APPROACHES[label]
    return values


W_PRIME_MODEL_LABELS = {
    "differential": "balance changes with the gap to CP (Skiba et al. 2015)",
    "integral": "one recovery time for the whole race (Skiba et al. 2012)",
}
"""The W′ balance models of pacing.physiology.critical_power.W_PRIME_BALANCE_MODELS, in
words (key → label)."""

DESCENT_CAP_DEFAULT = 60.0 / 3.6
"""The descent speed limit first offered when the coach asks for one [m/s] (60 km/h)."""


def race_details_inputs(system: str) -> dict:
    """The race's own details, folded away: speed at the start [m/s], a descent speed limit
    [m/s] or None, the drag saved by drafting [-] and the W′ balance model (a key of
    W_PRIME_MODEL_LABELS). Their first values are the model's defaults (standing start, no
    limit, riding alone, differential balance)."""
    values: dict = {}
    with st.expander("Start, descent speed limit, drafting and W′ model", expanded=False):
        cols = st.columns(4)
        with cols[0]:
            values["start_speed"] = unit_number(
                "Speed at the start", "speed", system, "start_speed", 0.0, 0.0, 20.0, 1.0,
                help="0 for a standing start; a flying start carries its speed over the line")
        with cols[1]:
            capped = st.checkbox("Limit the descent speed", value=False, key="descent_cap_on",
                                 help="the rider never goes faster than this, braking before "
                                      "where the model would go faster")
            if capped:
                values["max_descent_speed"] = unit_number(
                    "Highest speed", "speed", system, "max_descent_speed",
                    DESCENT_CAP_DEFAULT, 5.0, 30.0, 1.0,
                    help="a limit of your own for the road and your skills")
        with cols[2]:
            values["drafting_reduction"] = unit_number(
                "Drag saved by drafting [%]", None, system, "drafting_pct", 0.0, 0.0, 60.0,
                1.0, help="share of your air drag saved riding behind others; 0 when riding "
                          "alone (a time trial)") / 100.0
        with cols[3]:
            model = st.radio("W′ balance model", list(W_PRIME_MODEL_LABELS),
                             format_func=W_PRIME_MODEL_LABELS.get, key="w_prime_model",
                             help="how the reserve above critical power is spent and won back; "
                                  "on stop-and-go efforts the two can differ by several kJ")
            values["w_prime_model"] = model
    return values


# ------------------------------------------------------------------------------ results

def outcome_headline(outcome, system: str) -> None:
    """Show finish time [h:mm:ss] and average speed [km/h or mph] front and centre, then
    average power [W] (cycling) or pace (running), top speed and, for the quickest plan, the
    time gained on even power [s]; under it, why the average power differs from the plan's
    (easing off for corners, limits and the start)."""
    speed_unit = unit_label("speed", system)
    cols = st.columns(5)
    cols[0].metric("Finish time", format_duration(outcome.finish_time))
    cols[1].metric("Average speed",
                   f"{to_display(outcome.average_speed, 'speed', system):.1f} {speed_unit}")
    if outcome.average_power is not None:
        cols[2].metric("Average power", f"{outcome.average_power:.0f} W",
                       help="time-weighted mean of the crank power actually ridden, with "
                            "the easing off for corners, speed limits and the start")
    elif outcome.average_speed > 0:
        pace = format_pace(float(pace_per_km_to_display(1000.0 / outcome.average_speed,
                                                        system)))
        cols[2].metric("Average pace", f"{pace} {unit_label('pace', system)}")
    cols[3].metric("Top speed", f"{to_display(outcome.max_speed, 'speed', system):.1f} "
                   f"{speed_unit}", help=text.speed_caution(outcome.sport))
    if outcome.time_saved is not None and outcome.strategy == "fastest":
        cols[4].metric("Gained on even power", f"{outcome.time_saved:.0f} s",
                       help="finish time of even power at the same average, minus this plan's")
    line = power_explained(outcome)
    if line:
        st.caption(line)
    model = getattr(outcome, "w_prime_model", None)
    if outcome.sport == "cycling" and model in W_PRIME_MODEL_LABELS:
        st.caption(f"W′ balance model: {model}, {W_PRIME_MODEL_LABELS[model]}.")


def power_explained(outcome) -> str | None:
    """One line on the planned against the ridden average power: "240 W planned; 239 W
    ridden on average, easing off at 7 places (6 corners or speed limits braked for, the
    start)"; None without power."""
    if outcome.average_power is None or outcome.planned_power is None:
        return None
    kinds = [e.kind for e in outcome.easing]
    parts = []
    for kind, words in (("braking", "braking for {n} corners or speed limits"),
                        ("coasting", "coasting at {n} places"),
                        ("start", "the standing start")):
        count = kinds.count(kind)
        if count:
            parts.append(words.format(n=count) if count > 1 or kind == "start" else
                         words.format(n=1).replace("corners or speed limits",
                                                   "corner or speed limit").replace(
                             "places", "place"))
    planned = f"{outcome.planned_power:.0f} W planned"
    if not parts:
        return f"{planned}; ridden as planned everywhere."
    return (f"{planned}; {outcome.average_power:.0f} W ridden on average, with "
            f"{', '.join(parts)} (marked ▲ on the power chart and listed under the table).")


def where_the_watts_go(outcome, system: str) -> None:
    """Draw "Where the watts go" (ui.energy_panel): the chart and the table of what the
    athlete's energy pays for (a rider's crank work, a runner's metabolic energy), and the
    line on why drag grows with the square of speed."""
    from ui import energy_panel
    from ui.figures import drawable

    line = energy_panel.reynolds_line(outcome, system)
    if outcome.budget is not None:
        st.plotly_chart(drawable(energy_panel.energy_spec(outcome.budget)), key="energy_chart")
        st.caption(energy_panel.energy_note(outcome.budget))
        frame = energy_panel.energy_frame(outcome.budget, system)
        st.dataframe(frame, hide_index=True, key="energy_table", column_config={
            column: st.column_config.Column(label=label, help=column)
            for column, label in energy_panel.short_labels(frame.columns).items()})
    if line:
        st.caption(line)


SHORT_HEADERS = {
    "Segment": "#", "From": "From", "To": "To", "Length": "Length", "Grade": "Grade",
    "Target power": "Power", "Range": "Range", "Speed": "Speed",
    "Target pace": "Pace", "Headwind": "Headwind", "Split": "Split", "Elapsed": "Total",
    "W′ left": "W′ left", "D′ left": "D′ left",
}
"""The segment table's headers as the page shows them, short enough for every column to fit
the page (the full header, with its unit, is the column's help; the files keep the full
headers)."""


WEATHER_MET_COLUMNS = ("Air", "Wind", "Wind from")
"""The target table's columns of the weather met (pacing.io.exports.segment_table)."""


def page_targets(table, easing: list[str] | None = None):
    """The segment table as the page shows it, narrower: "From" left out (it is the row
    above's "To"), the power band as one "Range" column ("233–247"), and where the rider
    eases off below the plan (`easing`, one text per row, after the elapsed time) when
    given; the clock as HH:MM and the weather's columns only when the weather changes along
    the race. The files keep the full table."""
    shown = table.drop(columns=[c for c in table.columns if str(c).startswith("From [")])
    low = next((c for c in shown.columns if str(c).startswith("Power low")), None)
    high = next((c for c in shown.columns if str(c).startswith("Power high")), None)
    if low is not None and high is not None:
        band = [f"{a:.0f}–{b:.0f}" if a == a and b == b else "–"
                for a, b in zip(shown[low], shown[high], strict=True)]
        shown = shown.drop(columns=[low, high])
        shown.insert(list(shown.columns).index(next(
            c for c in shown.columns if str(c).startswith("Target power"))) + 1,
            "Range [W]", band)
    # the weather met: the clock as HH:MM (the files' "Clock [hh:mm]"; the ISO text stays in
    # the files); a column the same on every row (one weather all day) says nothing the
    # weather inputs above do not
    for column in list(shown.columns):
        name = str(column)
        if name == "Clock [ISO 8601]":
            shown = shown.drop(columns=[column])
        elif name.split(" [")[0] in WEATHER_MET_COLUMNS and shown[column].nunique() <= 1:
            shown = shown.drop(columns=[column])
    if easing is not None:  # beside the plan's numbers, before the weather's columns
        after = next((c for c in shown.columns if str(c).startswith("Elapsed")), None)
        place = list(shown.columns).index(after) + 1 if after is not None else len(
            shown.columns)
        shown.insert(place, "Eases off", easing)
    return shown


def target_columns(columns) -> dict:
    """Streamlit column settings for the segment table: each column under its short header
    (SHORT_HEADERS; "Power [W]" for "Target power [W]") with the full header as its help."""
    settings = {}
    for column in columns:
        name, _, unit = str(column).partition(" [")
        short = SHORT_HEADERS.get(name, name)
        shown = f"{short} [{unit}" if unit and not unit.startswith("h:mm") else short
        settings[column] = st.column_config.Column(label=shown, help=str(column))
    return settings


def file_notes(outcome, system: str) -> list[str]:
    """The lines every download carries: the outcome's notices ("warning: …", "note: …"),
    for cycling the W′ balance model the plan used, and the race day's lines (start, where
    the limits were measured, the forecast band: pacing.io.exports.race_day_lines)."""
    from pacing.display.notices import labelled
    from pacing.io.exports import race_day_lines

    said = [labelled(n, system) for n in outcome.notices]
    model = getattr(outcome, "w_prime_model", None)
    if outcome.sport == "cycling" and model in W_PRIME_MODEL_LABELS:
        said.append(f"note: W′ balance model: {model}, {W_PRIME_MODEL_LABELS[model]}")
    return said + list(race_day_lines(getattr(outcome, "race_day", None), system))


def downloads(outcome, course, table, system: str, title: str) -> None:
    """CSV, XLSX, GPX with waypoints, and the printable card, as download buttons.

    CSV is made now (cheap); the others only when their button is pressed. Every file says
    the outcome's notices in the page's unit system; the card prints its warnings.
    """
    from pacing.display.notices import describe
    from pacing.io import exports

    base = "".join(c if c.isalnum() else "-" for c in title.lower()).strip("-") or "race"
    said = file_notes(outcome, system)  # every file says what the page says
    warned = [describe(n, system) for n in outcome.notices if n.level == "warning"]
    cols = st.columns(5)
    cols[0].download_button("Table · CSV", exports.table_to_csv(table, said),
                            file_name=f"{base}-targets.csv", mime="text/csv", key="dl_csv",
                            on_click="ignore")
    cols[1].download_button(
        "Table · Excel", functools.partial(exports.table_to_xlsx, table, title=title, notices=said),
        file_name=f"{base}-targets.xlsx", key="dl_xlsx", on_click="ignore",
        mime="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet")
    cols[2].download_button(
        "Route with targets · GPX",
        functools.partial(exports.course_with_targets_gpx, course, outcome.rows, system,
                          exports.located_warnings(outcome.notices, system), said),
        file_name=f"{base}-targets.gpx", mime="application/gpx+xml", key="dl_gpx",
        on_click="ignore")
    cols[3].download_button(
        "Stem card · PNG",
        functools.partial(exports.target_card_png, outcome.rows, system, title,
                          warnings=warned),
        file_name=f"{base}-card.png", mime="image/png", key="dl_png", on_click="ignore")
    cols[4].download_button(
        "Stem card · PDF",
        functools.partial(exports.target_card_pdf, outcome.rows, system, title, warned),
        file_name=f"{base}-card.pdf", mime="application/pdf", key="dl_pdf", on_click="ignore")
