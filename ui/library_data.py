"""Pure helpers of the library panel (ui.library_panel): the plan inputs and results saved
with a plan and worked out again, the page's values of a stored athlete and setup, the widget
states that show a saved plan in the page, and the panel's tables. No Streamlit here.

Plan inputs (`page_plan_inputs`, all SI) are described in ui.library_panel.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from typing import Any

import pandas as pd

from pacing.display.units import format_duration, to_display, unit_label
from pacing.errors import ConflictError, InputError, first_line

CONFLICT_MESSAGE = "changed in another window — reload"
"""What a stale save or delete says (pacing.errors.ConflictError), before the details."""

ATHLETE_KEYS = ("body_mass", "critical_power", "w_prime", "height", "flat_pace",
                "critical_speed", "d_prime")
SETUP_KEYS = ("bike_mass", "drag_area", "power_share", "rolling_coefficient",
              "drivetrain_efficiency")

PAGE_WIDGETS = {
    # page value → (ui.widgets store key, factor from SI to the stored number)
    "body_mass": ("body_mass", 1.0),
    "bike_mass": ("bike_mass", 1.0),
    "critical_power": ("critical_power", 1.0),
    "w_prime": ("w_prime_kj", 0.001),
    "drag_area": ("cda", 1.0),
    "rolling_coefficient": ("crr", 1.0),
    "drivetrain_efficiency": ("efficiency_pct", 100.0),
    "height": ("height", 1.0),
    "critical_speed": ("critical_speed", 1.0),
    "d_prime": ("d_prime", 1.0),
    "flat_pace": ("flat_pace", 1.0),
    "temperature": ("temperature", 1.0),
    "relative_humidity": ("humidity_pct", 100.0),
    "sea_level_pressure": ("pressure_hpa", 0.01),
    "wind_speed": ("wind_speed", 1.0),
    "wind_from": ("wind_from", 1.0),
    "wind_height": ("wind_height", 1.0),
    "mean_power": ("mean_power", 1.0),
    "max_power_ratio": ("max_power_ratio", 1.0),
    "w_prime_reserve": ("w_prime_reserve", 0.001),
}
"""How the page's inputs (ui.sections, ui.widgets.unit_number) keep their values: page value
(SI) → (the widget's store key "si:<key>" and widget keys "<key>:<system>", factor from SI to
the stored number)."""




def error_message(error: Exception) -> str:
    """One line for the page; a conflict says plainly that another window changed it.

    Parameters
    ----------
    error : Exception
        A refusal (InputError, ConflictError) or a file's decoding error.

    Returns
    -------
    str
        The first line of its message; for a ConflictError, CONFLICT_MESSAGE before it.
    """
    if isinstance(error, ConflictError):
        return f"{CONFLICT_MESSAGE}: {first_line(error)}"
    return first_line(error)


# ------------------------------------------------------------------------ plan inputs, result

def page_plan_inputs(course_gpx: bytes, course_name: str, course, bounds, athlete: dict,
                     weather: dict, approach: dict, smoothing: dict,
                     allow_flat: bool = False, split: dict | None = None) -> dict:
    """The `current_inputs` of render_library from the page's values.

    Parameters
    ----------
    course_gpx : bytes
        The course file as uploaded or read [bytes].
    course_name : str
        Its label.
    course : pacing.course.geometry.Course
        The course made from it (for its distance [m] and ascent [m]).
    bounds : sequence of int
        Segment boundary point indices [-].
    athlete : dict
        ui.sections athlete and equipment inputs (SI).
    weather : dict
        ui.sections weather inputs (SI; Conditions fields).
    approach : dict
        ui.sections approach inputs (SI).
    smoothing : dict
        ``{"window": [m], "max_grade": [-]}``: how the elevation was cleaned.
    allow_flat : bool
        A file without heights was read as flat.
    split : dict or None
        How the page cut the course (ui.sections.split_inputs: ``"mode"``, ``"length"`` [m],
        ``"marks"`` [m]), kept so "Show in the page" can set the same choice again.

    Returns
    -------
    dict
        The plan inputs described in ui.library_panel (SI).
    """
    return {
        "course_gpx": bytes(course_gpx),
        "course_name": str(course_name),
        "course_distance": float(course.total_distance),
        "course_ascent": float(course.ascent),
        "smoothing": {"window": float(smoothing["window"]),
                      "max_grade": float(smoothing["max_grade"]),
                      "allow_flat": bool(allow_flat)},
        "bounds": [int(b) for b in bounds],
        "athlete": dict(athlete),
        "weather": dict(weather),
        "approach": dict(approach),
        **({} if split is None else {"split": {
            "mode": str(split["mode"]),
            "length": None if split.get("length") is None else float(split["length"]),
            "marks": [float(m) for m in split.get("marks") or ()]}}),
    }


def plan_result(outcome, weather: dict | None = None, approach: dict | None = None) -> dict:
    """The `current_result` of render_library from a ui.pipeline.Outcome.

    Parameters
    ----------
    outcome : ui.pipeline.Outcome
        The page's predicted race (finish_time [s], time_saved [s] or None, rows).
    weather : dict or None
        The weather inputs it used (SI), saved as the plan's weather.
    approach : dict or None
        The approach inputs it used (SI), saved as the plan's strategy.

    Returns
    -------
    dict
        The keys of pacing.store.records.PLAN_RESULT_KEYS: finish_time [s], time_saved [s]
        or None, targets as one dict of SI numbers per segment, strategy and weather as
        given.
    """
    targets = [dataclasses.asdict(row)
               if dataclasses.is_dataclass(row) and not isinstance(row, type) else dict(row)
               for row in outcome.rows]
    return {
        "strategy": None if approach is None else dict(approach),
        "weather": None if weather is None else dict(weather),
        "targets": targets,
        "time_saved": outcome.time_saved,
        "finish_time": float(outcome.finish_time),
    }


def recompute_plan(inputs: Mapping[str, Any], gpx: bytes) -> dict:
    """Work a saved plan out again from its inputs and its course file, through the same
    calls as the page (ui.pipeline).

    Parameters
    ----------
    inputs : Mapping
        The saved plan's inputs, as page_plan_inputs made them (SI).
    gpx : bytes
        Its stored course file [bytes].

    Returns
    -------
    dict
        The result as plan_result gives it.

    Raises
    ------
    InputError
        Inputs not made by the page, or a course or plan the page would refuse.
    """
    from ui import pipeline

    try:
        smoothing = inputs["smoothing"]
        athlete, weather, approach = inputs["athlete"], inputs["weather"], inputs["approach"]
        bounds = inputs["bounds"]
    except (KeyError, TypeError):
        raise InputError("this saved plan was not made by the page: its inputs cannot be "
                         "worked out again here") from None
    course = pipeline.load_course_from_bytes(
        gpx, inputs.get("course_name", "course"), smoothing["window"], smoothing["max_grade"],
        smoothing.get("allow_flat", False))
    outcome = pipeline.race_outcome(course, bounds, dict(athlete), dict(weather), dict(approach))
    return plan_result(outcome, weather, approach)


def library_compute(library) -> Callable[[dict], dict]:
    """The computation that works saved plans out again, for
    pacing.store.reproduce.reproduce_plan.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library, which holds the plans' course files.

    Returns
    -------
    callable
        ``compute(inputs) -> result``: recompute_plan on the course named by the inputs'
        ``course_id`` (InputError when they name none).
    """
    def compute(inputs: dict) -> dict:
        course_id = inputs.get("course_id")
        if course_id is None:
            raise InputError("this saved plan names no stored course")
        return recompute_plan(inputs, library.course(int(course_id)).gpx)

    return compute


def store_course(library, name: str, gpx: bytes, distance: float, ascent: float) -> int:
    """Id of the stored course with exactly this GPX file, storing it first if new.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library.
    name : str
        Label, if the course is new.
    gpx : bytes
        The course file [bytes].
    distance : float
        Course length, if the course is new [m].
    ascent : float
        Total climbing, if the course is new [m].

    Returns
    -------
    int
        The course's library id (the oldest one holding this file).
    """
    found = library.find_courses(gpx)
    if found:
        return found[0].id
    return library.add_course(name, gpx, distance, ascent).id


def save_current_plan(library, name: str, notes: str, current_inputs: Mapping[str, Any],
                      current_result: Mapping[str, Any], athlete_id: int | None = None,
                      setup_id: int | None = None):
    """Save the page's plan, its course file stored once (store_course).

    The library records the version of pacing that made the plan.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library.
    name : str
        The plan's label.
    notes : str
        The coach's free text.
    current_inputs : Mapping
        The page's plan inputs (page_plan_inputs); ``course_gpx`` is stored as a course and
        replaced by its ``course_id``.
    current_result : Mapping
        The page's plan result (plan_result).
    athlete_id : int or None
        Library id of the athlete to file it under, or None.
    setup_id : int or None
        Library id of the setup to file it under, or None.

    Returns
    -------
    pacing.store.records.PlanRecord
        The saved plan.
    """
    inputs = {k: v for k, v in current_inputs.items() if k != "course_gpx"}
    gpx = current_inputs.get("course_gpx")
    if gpx:
        inputs["course_id"] = store_course(
            library, current_inputs.get("course_name") or "course", gpx,
            current_inputs.get("course_distance", 0.0),
            current_inputs.get("course_ascent", 0.0))
    if athlete_id is not None:
        inputs["athlete_id"] = int(athlete_id)
    if setup_id is not None:
        inputs["setup_id"] = int(setup_id)
    return library.save_plan(name, inputs, dict(current_result), notes=notes)


# ------------------------------------------------------------------------ page values

def page_values(athlete, setup=None) -> dict:
    """SI values of a stored athlete (and setup) under the page's keys (ui.sections).

    Parameters
    ----------
    athlete : pacing.athlete.Athlete
        The stored athlete (SI).
    setup : pacing.athlete.Setup or None
        The stored setup (SI), or None for the athlete alone.

    Returns
    -------
    dict
        body_mass [kg], critical_power [W], w_prime [J], height [m], flat_pace [s/km],
        critical_speed [m/s], d_prime [m], and with a setup bike_mass [kg], drag_area [m²],
        power_share [-], rolling_coefficient [-], drivetrain_efficiency [-]. Unknown values
        (None) are left out.
    """
    values = {key: getattr(athlete, key) for key in ATHLETE_KEYS
              if getattr(athlete, key) is not None}
    if setup is not None:
        values.update({key: getattr(setup, key) for key in SETUP_KEYS})
    return values


def athlete_from_page(name: str, values: Mapping[str, Any]):
    """An Athlete from the page's athlete dict.

    Parameters
    ----------
    name : str
        The athlete's name.
    values : Mapping
        The page's athlete inputs (SI, keys of ATHLETE_KEYS; None or missing values take the
        Athlete defaults).

    Returns
    -------
    pacing.athlete.Athlete
        The athlete (InputError if a value is out of range).
    """
    from pacing.athlete import Athlete

    return Athlete(name=name, **{k: values[k] for k in ATHLETE_KEYS if values.get(k) is not None})


def setup_from_page(name: str, values: Mapping[str, Any]):
    """A Setup from the page's athlete dict.

    Parameters
    ----------
    name : str
        The setup's name.
    values : Mapping
        The page's athlete and equipment inputs (SI, keys of SETUP_KEYS; None or missing
        values take the Setup defaults).

    Returns
    -------
    pacing.athlete.Setup
        The setup (InputError if a value is out of range).
    """
    from pacing.athlete import Setup

    return Setup(name=name, **{k: values[k] for k in SETUP_KEYS if values.get(k) is not None})

LIBRARY_COURSE = "library:course"
"""Session key of the course file the page shows instead of its demo or upload after "Show
in the page": {"gpx": bytes, "name": str, "plan": the saved plan's name}."""


def _split_marks_text(marks, system: str) -> str:
    """Split marks [m] as the page's text input shows them (km or mi, 4 decimals: 0.1 m)."""
    shown = (to_display(float(m), "distance", system) for m in marks)
    return ", ".join(f"{v:.4f}".rstrip("0").rstrip(".") for v in shown)


def _number_states(inputs: Mapping[str, Any]) -> dict:
    """The ui.widgets number stores ("si:<key>") of the athlete, weather, approach and
    smoothing, and the "file without heights" box."""
    state: dict = {}
    smoothing = inputs.get("smoothing") or {}
    values = {**(inputs.get("athlete") or {}), **(inputs.get("weather") or {}),
              **(inputs.get("approach") or {})}
    for key, value in values.items():
        if key in PAGE_WIDGETS and value is not None:
            store, factor = PAGE_WIDGETS[key]
            state[f"si:{store}"] = float(value) * factor
    if "window" in smoothing:
        state["si:smooth_window"] = float(smoothing["window"])
    if "max_grade" in smoothing:
        state["si:max_grade_pct"] = float(smoothing["max_grade"]) * 100.0
    if "allow_flat" in smoothing:
        state["allow_flat"] = bool(smoothing["allow_flat"])
    return state


def _approach_states(athlete: Mapping[str, Any], approach: Mapping[str, Any]) -> dict:
    """The sport, the approach radio (cycling or running labels), the target time and the
    "coast on descents" box."""
    from ui import text

    state: dict = {}
    sport = athlete.get("sport")
    if sport in ("cycling", "running"):
        state["sport"] = sport
    strategy = approach.get("strategy")
    choices = text.RUNNING_APPROACHES if sport == "running" else text.APPROACHES
    label = next((k for k, v in choices.items() if v == strategy), None)
    if label is not None:
        state["running_approach" if sport == "running" else "approach"] = label
    if approach.get("target_time") is not None:
        state["target_time"] = format_duration(float(approach["target_time"]))
    if "allow_zero_on_descents" in approach:
        state["coast_descents"] = bool(approach["allow_zero_on_descents"])
    return state


def _preset_states(athlete: Mapping[str, Any]) -> dict:
    """The CdA and Crr choices switched to "my own value" where the plan has its own."""
    from ui import text

    state: dict = {}
    if athlete.get("drag_area") is not None:
        own = next((k for k, v in text.DRAG_AREA_PRESETS.items() if v is None), None)
        if own is not None:
            state["cda_preset"] = own
    if athlete.get("rolling_coefficient") is not None:
        own = next((k for k, v in text.ROLLING_PRESETS.items() if v is None), None)
        if own is not None:
            state["crr_preset"] = own
    return state


def _terrain_state(weather: Mapping[str, Any]) -> dict:
    """The terrain choice whose roughness length [m] is the plan's (to 1e-12 m)."""
    from pacing.physics.wind import ROUGHNESS_LENGTHS

    roughness = weather.get("roughness_length")
    terrain = next((k for k, v in ROUGHNESS_LENGTHS.items() if roughness is not None
                    and abs(v - float(roughness)) <= 1e-12), None)
    return {} if terrain is None else {"terrain": terrain}


def _split_states(inputs: Mapping[str, Any], system: str, course) -> dict:
    """The segment choice: the saved one, or for plans saved without it their bounds as
    "my own marks" (needs the course)."""
    state: dict = {}
    split = inputs.get("split")
    if split:
        state["split_mode"] = split["mode"]
        if split.get("length") is not None:
            state["si:split_length"] = float(split["length"])
        if split.get("marks"):
            state["split_marks"] = _split_marks_text(split["marks"], system)
    elif course is not None and inputs.get("bounds"):
        inner = [int(b) for b in inputs["bounds"][1:-1]]
        distance = course.distance
        state["split_mode"] = "my own marks"
        state["split_marks"] = _split_marks_text(
            [float(distance[b] - distance[0]) for b in inner], system)
    return state


def plan_page_state(inputs: Mapping[str, Any], system: str, course=None) -> dict:
    """The page's widget states that show a saved plan (pure; `open_plan_in_page` applies
    them): sport, plan radio and its limits, smoothing, "file without heights", terrain and
    the segment choice. Numbers under ui.widgets stores are returned as "si:<key>" entries
    (SI or the stored factor, see PAGE_WIDGETS).

    Parameters
    ----------
    inputs : Mapping
        The saved plan inputs (page_plan_inputs, SI).
    system : str
        "metric" or "imperial": the page's units, for the split marks' text.
    course : pacing.course.geometry.Course or None
        The course of the saved file; only needed for plans saved without their segment
        choice, whose saved bounds then become "my own marks" at those points' distances.

    Returns
    -------
    dict
        Session-state key → value for every widget the plan sets.
    """
    athlete = inputs.get("athlete") or {}
    return {**_number_states(inputs),
            **_approach_states(athlete, inputs.get("approach") or {}),
            **_preset_states(athlete),
            **_terrain_state(inputs.get("weather") or {}),
            **_split_states(inputs, system, course)}


# ------------------------------------------------------------------------ tables

def _stamp(value) -> str:
    """A stored time (UTC) to the minute, "" for None."""
    return value.strftime("%Y-%m-%d %H:%M UTC") if value is not None else ""


def plans_table(plans) -> pd.DataFrame:
    """Saved plans as a table, in the order given (the library lists newest first).

    Parameters
    ----------
    plans : sequence of pacing.store.records.PlanSummary
        The saved plans.

    Returns
    -------
    pandas.DataFrame
        Plan, finish [h:mm:ss], time gained on even power [s], when saved (UTC), the version
        of pacing that made it, notes.
    """
    return pd.DataFrame({
        "Plan": [p.name for p in plans],
        "Finish [h:mm:ss]": [format_duration(p.finish_time) for p in plans],
        "Gained on even power [s]": [("" if p.time_saved is None else f"{p.time_saved:.0f}")
                                     for p in plans],
        "Saved": [_stamp(p.updated_at) for p in plans],
        "Made with pacing": [p.library_version for p in plans],
        "Notes": [p.notes for p in plans],
    }, columns=["Plan", "Finish [h:mm:ss]", "Gained on even power [s]", "Saved",
                "Made with pacing", "Notes"])


def version_caption(summary) -> str:
    """Which version of pacing made a saved plan, and whether it is another than this one.

    Parameters
    ----------
    summary : pacing.store.records.PlanSummary
        The saved plan's summary (its ``library_version``).

    Returns
    -------
    str
        E.g. "made with pacing 0.1.0"; for another version, a reminder that working the plan
        out again may give other numbers.
    """
    import pacing

    made = f"made with pacing {summary.library_version}"
    if summary.library_version == pacing.__version__:
        return made
    return (f"{made}; this is pacing {pacing.__version__}, so working it out again may give "
            "other numbers")


def targets_frame(targets: list, system: str) -> pd.DataFrame:
    """A saved target table with units on every column.

    Parameters
    ----------
    targets : list of dict
        The saved target table, one dict of SI numbers per segment.
    system : str
        "metric" or "imperial".

    Returns
    -------
    pandas.DataFrame
        As pacing.io.exports.segment_table shows it (InputError if it cannot).
    """
    from pacing.io.exports import segment_table

    return segment_table(targets, system)


def inputs_summary(inputs: Mapping[str, Any], system: str) -> list[str]:
    """A saved plan's main inputs as short lines with units.

    Parameters
    ----------
    inputs : Mapping
        The saved plan inputs (page_plan_inputs, SI).
    system : str
        "metric" or "imperial".

    Returns
    -------
    list of str
        Course, athlete, setup, weather and plan lines, each only when the inputs hold it
        (lines with a missing number left out).
    """
    lines = []
    name = inputs.get("course_name")
    if name:
        distance = inputs.get("course_distance")
        shown = ("" if distance is None else
                 f", {to_display(distance, 'distance', system):.2f} "
                 f"{unit_label('distance', system)}")
        lines.append(f"course: {name}{shown}")
    athlete = inputs.get("athlete") or {}
    if athlete.get("body_mass") is not None:
        lines.append(f"athlete: {to_display(athlete['body_mass'], 'mass', system):.1f} "
                     f"{unit_label('mass', system)}"
                     + (f", critical power {athlete['critical_power']:.0f} W"
                        if athlete.get("critical_power") else ""))
    if athlete.get("drag_area") is not None:
        lines.append(f"setup: CdA {athlete['drag_area']:.3f} m², Crr "
                     f"{athlete.get('rolling_coefficient', float('nan')):.4f}, bike and kit "
                     f"{to_display(athlete.get('bike_mass', 0.0), 'mass', system):.1f} "
                     f"{unit_label('mass', system)}")
    weather = inputs.get("weather") or {}
    if weather:
        lines.append(
            f"weather: {to_display(weather.get('temperature', 20.0), 'temperature', system):.0f}"
            f" {unit_label('temperature', system)}, wind "
            f"{to_display(weather.get('wind_speed', 0.0), 'wind_speed', system):.0f} "
            f"{unit_label('wind_speed', system)} from {weather.get('wind_from', 0.0):.0f}°")
    approach = inputs.get("approach") or {}
    if approach.get("strategy"):
        power = approach.get("mean_power")
        lines.append(f"plan: {approach['strategy']}"
                     + (f", average {power:.0f} W" if power else ""))
    return [line for line in lines if "nan" not in line]
