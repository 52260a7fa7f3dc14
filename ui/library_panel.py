"""The coach's library in the web app: athletes and setups to fill the page from, the current
plan saved with its course, saved plans reopened and worked out again, deletes that ask first,
and the whole library as a JSON file to take away or bring in.

All storage goes through pacing.store (SQLAlchemy; SQLite file by default, any URL through
PACING_DATABASE_URL). Pure helpers build the plan inputs and results, the tables and the page
values; `render_library` draws the panel with Streamlit.

Plan inputs saved by this panel (`page_plan_inputs`, all SI)::

    {"course_id": int, "course_name": str, "course_distance": m, "course_ascent": m,
     "smoothing": {"window": m, "max_grade": -, "allow_flat": bool}, "bounds": [int, ...],
     "athlete": {...ui.sections.athlete_inputs...}, "weather": {...Conditions fields...},
     "approach": {...ui.sections.approach_inputs...}, "athlete_id"?: int, "setup_id"?: int,
     "split"?: {"mode": str, "length": m or None, "marks": [m, ...]}}

The course's GPX file is stored once in the library (a file already stored is reused) and
the plan names it by ``course_id``; `recompute_plan` reads it back to work the plan out again.
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
from collections.abc import Callable, Mapping
from typing import Any

import pandas as pd
import streamlit as st

from pacing.errors import ConflictError, InputError
from pacing.units import format_duration, to_display, unit_label

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


def _first_line(error: Exception) -> str:
    text = str(error).strip()
    return text.splitlines()[0] if text else type(error).__name__


def error_message(error: Exception) -> str:
    """One line for the page; a conflict says plainly that another window changed it."""
    if isinstance(error, ConflictError):
        return f"{CONFLICT_MESSAGE}: {_first_line(error)}"
    return _first_line(error)


# ------------------------------------------------------------------------ plan inputs, result

def page_plan_inputs(course_gpx: bytes, course_name: str, course, bounds, athlete: dict,
                     weather: dict, approach: dict, smoothing: dict,
                     allow_flat: bool = False, split: dict | None = None) -> dict:
    """The `current_inputs` of render_library from the page's values.

    Parameters
    ----------
    course_gpx : the course file's bytes; course_name : its label; course : the Course made
    from it (for its distance [m] and ascent [m]); bounds : segment boundary point indices;
    athlete, weather, approach : ui.sections dicts (SI); smoothing : {"window" [m],
    "max_grade" [-]}; allow_flat : a file without heights was read as flat; split : how
    the page cut the course (ui.sections.split_inputs: "mode", "length" [m], "marks" [m]),
    kept so "Show in the page" can set the same choice again.
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
    """The `current_result` of render_library from a ui.pipeline.Outcome: the keys of
    pacing.store.PLAN_RESULT_KEYS (finish_time [s], time_saved [s] or None, targets as one
    dict of SI numbers per segment, strategy and weather as given)."""
    targets = [dataclasses.asdict(row) if dataclasses.is_dataclass(row) else dict(row)
               for row in outcome.rows]
    return {
        "strategy": None if approach is None else dict(approach),
        "weather": None if weather is None else dict(weather),
        "targets": targets,
        "time_saved": outcome.time_saved,
        "finish_time": float(outcome.finish_time),
    }


def recompute_plan(inputs: Mapping[str, Any], gpx: bytes) -> dict:
    """Work a saved plan out again from its inputs (as page_plan_inputs made them) and its
    course file, through the same calls as the page (ui.pipeline)."""
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
    runner = pipeline.running_outcome if athlete.get("sport") == "running" \
        else pipeline.cycling_outcome
    outcome = runner(course, bounds, dict(athlete), dict(weather), dict(approach))
    return plan_result(outcome, weather, approach)


def library_compute(library) -> Callable[[dict], dict]:
    """compute(inputs) -> result for pacing.store.reproduce_plan, reading the plan's course
    file from `library`."""
    def compute(inputs: dict) -> dict:
        course_id = inputs.get("course_id")
        if course_id is None:
            raise InputError("this saved plan names no stored course")
        return recompute_plan(inputs, library.course(int(course_id)).gpx)

    return compute


def store_course(library, name: str, gpx: bytes, distance: float, ascent: float) -> int:
    """Id of the stored course with exactly this GPX file, storing it first if new."""
    found = library.find_courses(gpx)
    if found:
        return found[0].id
    return library.add_course(name, gpx, distance, ascent).id


def save_current_plan(library, name: str, notes: str, current_inputs: Mapping[str, Any],
                      current_result: Mapping[str, Any], athlete_id: int | None = None,
                      setup_id: int | None = None):
    """Save the page's plan (its course file stored once); returns the PlanRecord."""
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
    """SI values of a stored athlete (and setup) under the page's keys (ui.sections):
    body_mass, critical_power, w_prime, height, flat_pace, critical_speed, d_prime, and
    with a setup bike_mass, drag_area, power_share, rolling_coefficient,
    drivetrain_efficiency. Unknown values (None) are left out."""
    values = {key: getattr(athlete, key) for key in ATHLETE_KEYS
              if getattr(athlete, key) is not None}
    if setup is not None:
        values.update({key: getattr(setup, key) for key in SETUP_KEYS})
    return values


def athlete_from_page(name: str, values: Mapping[str, Any]):
    """pacing.athlete.Athlete from the page's athlete dict (SI)."""
    from pacing.athlete import Athlete

    return Athlete(name=name, **{k: values[k] for k in ATHLETE_KEYS if values.get(k) is not None})


def setup_from_page(name: str, values: Mapping[str, Any]):
    """pacing.athlete.Setup from the page's athlete dict (SI)."""
    from pacing.athlete import Setup

    return Setup(name=name, **{k: values[k] for k in SETUP_KEYS if values.get(k) is not None})


def fill_page_inputs(values: Mapping[str, Any]) -> None:
    """Put library values into the page's inputs (use as a button's on_click, which runs
    before the page is drawn again): the SI stores of ui.widgets.unit_number are set, their
    widgets re-made, and the CdA and Crr choices switched to "my own value"."""
    from ui import text

    for key, value in values.items():
        if key not in PAGE_WIDGETS or value is None:
            continue
        store, factor = PAGE_WIDGETS[key]
        st.session_state[f"si:{store}"] = float(value) * factor
        for system in ("metric", "imperial"):
            st.session_state.pop(f"{store}:{system}", None)
    own = next((label for label, v in text.DRAG_AREA_PRESETS.items() if v is None), None)
    if "drag_area" in values and own is not None:
        st.session_state["cda_preset"] = own
    own = next((label for label, v in text.ROLLING_PRESETS.items() if v is None), None)
    if "rolling_coefficient" in values and own is not None:
        st.session_state["crr_preset"] = own


LIBRARY_COURSE = "library:course"
"""Session key of the course file the page shows instead of its demo or upload after "Show
in the page": {"gpx": bytes, "name": str, "plan": the saved plan's name}."""


def _split_marks_text(marks, system: str) -> str:
    """Split marks [m] as the page's text input shows them (km or mi, 4 decimals: 0.1 m)."""
    shown = (to_display(float(m), "distance", system) for m in marks)
    return ", ".join(f"{v:.4f}".rstrip("0").rstrip(".") for v in shown)


def plan_page_state(inputs: Mapping[str, Any], system: str, course=None) -> dict:
    """The page's widget states that show a saved plan (pure; `open_plan_in_page` applies
    them): sport, plan radio and its limits, smoothing, "file without heights", terrain and
    the segment choice. Numbers under ui.widgets stores are returned as "si:<key>" entries
    (SI or the stored factor, see PAGE_WIDGETS).

    Parameters
    ----------
    inputs : the saved plan inputs (page_plan_inputs).
    system : "metric" or "imperial": the page's units, for the split marks' text.
    course : the Course of the saved file; only needed for plans saved without their segment
        choice, whose saved bounds then become "my own marks" at those points' distances.
    """
    from pacing.units import format_duration
    from pacing.wind import ROUGHNESS_LENGTHS
    from ui import text

    state: dict = {}
    athlete = inputs.get("athlete") or {}
    weather = inputs.get("weather") or {}
    approach = inputs.get("approach") or {}
    smoothing = inputs.get("smoothing") or {}
    values = {**athlete, **weather, **approach}
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
    if athlete.get("drag_area") is not None:
        own = next((k for k, v in text.DRAG_AREA_PRESETS.items() if v is None), None)
        if own is not None:
            state["cda_preset"] = own
    if athlete.get("rolling_coefficient") is not None:
        own = next((k for k, v in text.ROLLING_PRESETS.items() if v is None), None)
        if own is not None:
            state["crr_preset"] = own
    roughness = weather.get("roughness_length")
    terrain = next((k for k, v in ROUGHNESS_LENGTHS.items() if roughness is not None
                    and abs(v - float(roughness)) <= 1e-12), None)
    if terrain is not None:
        state["terrain"] = terrain
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


def open_plan_in_page(library, inputs: Mapping[str, Any], plan_name: str = "") -> None:
    """Show a saved plan in the page (a button's on_click, run before the page is drawn
    again): its stored course file (LIBRARY_COURSE), then every input plan_page_state gives.
    A plan that cannot be shown leaves the page as it was and says why."""
    try:
        course = None
        gpx = None
        course_id = inputs.get("course_id")
        if course_id is not None:
            gpx = library.course(int(course_id)).gpx
            if not inputs.get("split") and inputs.get("bounds"):
                from ui import pipeline

                smoothing = inputs.get("smoothing") or {}
                course = pipeline.load_course_from_bytes(
                    gpx, inputs.get("course_name") or "course",
                    smoothing.get("window", 200.0), smoothing.get("max_grade", 0.25),
                    smoothing.get("allow_flat", False))
        state = plan_page_state(inputs, st.session_state.get("units", "metric"), course)
    except (InputError, ConflictError, KeyError, TypeError, ValueError) as error:
        st.session_state["library:open_error"] = (
            f"The saved plan cannot be shown in the page: {error_message(error)}")
        return
    if gpx is not None:
        st.session_state[LIBRARY_COURSE] = {"gpx": bytes(gpx),
                                            "name": inputs.get("course_name") or "course",
                                            "plan": plan_name}
    for key, value in state.items():
        st.session_state[key] = value
        if key.startswith("si:"):
            for system in ("metric", "imperial"):
                st.session_state.pop(f"{key[3:]}:{system}", None)
    st.session_state["library:message"] = (
        f"The page now shows the saved plan {plan_name!r}." if plan_name else
        "The page now shows the saved plan.")


# ------------------------------------------------------------------------ tables

def _stamp(value) -> str:
    return value.strftime("%Y-%m-%d %H:%M UTC") if value is not None else ""


def plans_table(plans) -> pd.DataFrame:
    """Saved plans (PlanSummary) as a table, newest first."""
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


def targets_frame(targets: list, system: str) -> pd.DataFrame:
    """A saved target table (dicts of SI numbers) with units on every column."""
    from pacing.io.exports import segment_table

    return segment_table(targets, system)


def inputs_summary(inputs: Mapping[str, Any], system: str) -> list[str]:
    """A saved plan's main inputs as short lines with units."""
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


# ------------------------------------------------------------------------ Streamlit

@st.cache_resource(max_entries=4, show_spinner=False)
def _open(location_key: str, _location):
    from pacing.store import open_library

    return open_library(_location)


def _library(location):
    import os

    key = (os.environ.get("PACING_DATABASE_URL", "") if location is None else str(location))
    return _open(key, location)


def _report(action: Callable[[], Any], success: str | Callable[[Any], str]) -> None:
    """Run a library write. A refusal shows one clear line (a conflict: reload); success is
    noted and the panel drawn again, so every list shows the change."""
    try:
        value = action()
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return
    st.session_state["library:message"] = success(value) if callable(success) else success
    st.rerun()


def render_library(current_inputs: dict | None, current_result: dict | None, system: str,
                   location=None, compute: Callable[[dict], dict] | None = None) -> dict | None:
    """Draw the library panel.

    Parameters
    ----------
    current_inputs : the page's plan inputs (`page_plan_inputs`), or None.
    current_result : the page's plan result (`plan_result`), or None when there is none.
    system : "metric" or "imperial".
    location : database path or SQLAlchemy URL; None for PACING_DATABASE_URL, else the
        user's data directory (pacing.store.open_library).
    compute : compute(inputs) -> result for working a saved plan out again; None uses
        `library_compute` (plans saved from the page).

    Returns
    -------
    None, or in the run where the user asks for it a dict:
    {"action": "use", "athlete_id", "athlete": Athlete, "setup_id" (or None),
     "setup": Setup or None, "values": page_values(...)}  — the page's inputs are also filled
     (fill_page_inputs) before the page is drawn again;
    {"action": "open", "plan_id", "plan": PlanRecord, "inputs": dict} — a saved plan to show.
    """
    st.subheader("Library")
    try:
        library = _library(location)
    except (InputError, ConflictError, OSError) as error:
        st.error(f"The library cannot be opened: {error_message(error)}", icon="⚠️")
        return None
    st.session_state["library:location"] = location
    st.caption(f"Stored in {library.location}")
    message = st.session_state.pop("library:message", None)
    if message:
        st.success(message)
    failure = st.session_state.pop("library:open_error", None)
    if failure:
        st.error(failure, icon="⚠️")
    chosen: dict | None = None
    tabs = st.tabs(["Athletes and setups", "Save this plan", "Saved plans", "Backup"])
    with tabs[0]:
        chosen = _athletes_tab(library, current_inputs, system) or chosen
    with tabs[1]:
        _save_tab(library, current_inputs, current_result)
    with tabs[2]:
        chosen = _plans_tab(library, system, compute or library_compute(library)) or chosen
    with tabs[3]:
        _backup_tab(library)
    return chosen


def _athletes_tab(library, current_inputs, system) -> dict | None:
    try:
        athletes = library.athletes()
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return None
    page_athlete = (current_inputs or {}).get("athlete") or {}
    result = None
    record = None
    if athletes:
        labels = {f"{a.athlete.name} · {a.athlete.body_mass:.1f} kg (#{a.id})": a
                  for a in athletes}
        label = st.selectbox("Athlete", list(labels), key="library_athlete")
        record = labels[label]
        st.session_state["library:athlete_id"] = record.id
        setups = library.setups(record.id)
        setup_labels = {f"{s.setup.name} · CdA {s.setup.drag_area:.3f} m² (#{s.id})": s
                        for s in setups}
        setup_labels["(the athlete only, no setup)"] = None
        setup_label = st.selectbox("Setup", list(setup_labels), key="library_setup")
        setup_record = setup_labels[setup_label]
        st.session_state["library:setup_id"] = None if setup_record is None else setup_record.id
        values = page_values(record.athlete, None if setup_record is None
                             else setup_record.setup)
        if st.button("Use in the page", key="library_use", on_click=fill_page_inputs,
                     args=(values,), help="fills the athlete and equipment inputs"):
            result = {"action": "use", "athlete_id": record.id, "athlete": record.athlete,
                      "setup_id": None if setup_record is None else setup_record.id,
                      "setup": None if setup_record is None else setup_record.setup,
                      "values": values}
        with st.expander("Delete…", expanded=False):
            target = setup_record or record
            what = (f"setup {setup_record.setup.name!r}" if setup_record is not None
                    else f"athlete {record.athlete.name!r} with their setups and saved plans")
            sure = st.checkbox(f"Yes, delete {what}", key=(
                "library_delete_sure:" + ("setup" if setup_record is not None else "athlete")
                + f":{target.id}"))
            if st.button("Delete", key="library_delete_person", disabled=not sure):
                if setup_record is not None:
                    _report(lambda: library.delete_setup(target.id, confirm=True,
                                                         revision=target.revision),
                            f"Deleted {what}.")
                else:
                    _report(lambda: library.delete_athlete(target.id, confirm=True,
                                                           revision=target.revision),
                            f"Deleted {what}.")
    else:
        st.caption("No athletes stored yet.")
    with st.expander("Store the page's athlete and equipment", expanded=not athletes):
        cols = st.columns(2)
        name = cols[0].text_input("Athlete name", key="library_new_athlete")
        setup_name = cols[1].text_input("Setup name", value="race bike",
                                        key="library_new_setup")
        cols = st.columns(2)
        if cols[0].button("Store as a new athlete", key="library_add_athlete",
                          disabled=not page_athlete):
            def add():
                added = library.add_athlete(athlete_from_page(name, page_athlete))
                if page_athlete.get("sport", "cycling") == "cycling":
                    library.add_setup(added.id, setup_from_page(setup_name, page_athlete))
                return added
            _report(add, f"Stored {name!r}.")
        if cols[1].button("Add the setup to the chosen athlete", key="library_add_setup",
                          disabled=record is None or not page_athlete):
            _report(lambda: library.add_setup(record.id,
                                              setup_from_page(setup_name, page_athlete)),
                    f"Stored setup {setup_name!r}.")
    return result


def _save_tab(library, current_inputs, current_result) -> None:
    if not current_result or not current_inputs:
        st.caption("There is no plan to save yet: the page needs a predicted race.")
        return
    name = st.text_input("Plan name", key="library_plan_name",
                         placeholder="e.g. club hill climb, June")
    notes = st.text_area("Notes", key="library_plan_notes", height=80)
    athlete_id = st.session_state.get("library:athlete_id")
    link = False
    if athlete_id is not None:
        link = st.checkbox("File it under the chosen athlete and setup", value=True,
                           key="library_plan_link")
    if st.button("Save this plan", key="library_save", type="primary"):
        _report(lambda: save_current_plan(
            library, name, notes, current_inputs, current_result,
            athlete_id if link else None,
            st.session_state.get("library:setup_id") if link else None),
            lambda saved: f"Saved {saved.name!r} "
                          f"({format_duration(saved.summary.finish_time)}).")


def _plans_tab(library, system: str, compute) -> dict | None:
    try:
        plans = library.plans()
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return None
    if not plans:
        st.caption("No saved plans yet.")
        return None
    st.dataframe(plans_table(plans), hide_index=True, key="library_plans")
    labels = {f"{p.name} · {format_duration(p.finish_time)} (#{p.id})": p for p in plans}
    label = st.selectbox("Open a saved plan", list(labels), key="library_plan")
    summary = labels[label]
    try:
        record = library.plan(summary.id)
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return None
    for line in inputs_summary(record.inputs, system):
        st.caption(line)
    if record.summary.notes:
        st.caption(f"notes: {record.summary.notes}")
    try:
        st.dataframe(targets_frame(record.targets, system), hide_index=True,
                     key="library_plan_targets")
    except InputError as error:
        st.error(f"Its target table cannot be shown: {error_message(error)}", icon="⚠️")
    result = None
    cols = st.columns(2)
    if cols[0].button("Work it out again", key="library_reproduce",
                      help="recompute the plan from its inputs and compare the numbers"):
        from pacing.store import reproduce_plan

        try:
            report = reproduce_plan(record, compute)
        except (InputError, ConflictError) as error:
            st.error(f"It cannot be worked out again: {error_message(error)}", icon="⚠️")
        else:
            if report.same:
                st.success(report.message().capitalize() + ".")
            else:
                st.warning(report.message().capitalize() + ".")
                st.dataframe(pd.DataFrame({
                    "Where": [d.where for d in report.differences],
                    "Saved": [str(d.saved) for d in report.differences],
                    "Now": [str(d.recomputed) for d in report.differences],
                }), hide_index=True, key="library_differences")
    if cols[1].button("Show in the page", key="library_open", on_click=open_plan_in_page,
                      args=(library, record.inputs, record.name),
                      help="the page takes the plan's stored course, segments, athlete, "
                           "equipment, weather and pacing approach"):
        result = {"action": "open", "plan_id": record.id, "plan": record,
                  "inputs": record.inputs}
    with st.expander("Delete this plan…", expanded=False):
        sure = st.checkbox(f"Yes, delete the saved plan {record.name!r}",
                           key=f"library_delete_plan_sure:{record.id}")
        if st.button("Delete the plan", key="library_delete_plan", disabled=not sure):
            _report(lambda: library.delete_plan(record.id, confirm=True,
                                                revision=record.revision),
                    f"Deleted {record.name!r}.")
    return result


def _backup_tab(library) -> None:
    from pacing.store import dump_library_file, import_library

    st.download_button("Download the library (JSON)",
                       functools.partial(dump_library_file, library),
                       file_name="pacing-library.json", mime="application/json",
                       key="library_export", on_click="ignore")
    upload = st.file_uploader("Bring in a library file (JSON)", type=["json"],
                              key="library_import_file")
    if upload is None:
        return
    data = upload.getvalue()
    digest = hashlib.sha256(data).hexdigest()
    if st.session_state.get("library:imported") == digest:
        st.caption("This file has been brought in.")
        return
    if st.button("Bring it in", key="library_import"):
        try:
            summary = import_library(library, data)
        except (InputError, ConflictError) as error:
            st.error(f"The file was refused, nothing changed: {error_message(error)}",
                     icon="⚠️")
            return
        except (UnicodeDecodeError, ValueError) as error:
            st.error(f"The file was refused, nothing changed: {_first_line(error)}",
                     icon="⚠️")
            return
        st.session_state["library:imported"] = digest
        st.session_state["library:message"] = summary.message().capitalize() + "."
        st.rerun()



def render_library_for_page(course_gpx: bytes | None, course_name: str | None, course, bounds,
                            athlete: dict | None, weather: dict | None, approach: dict | None,
                            smoothing: dict, allow_flat: bool, outcome, system: str,
                            location=None, split: dict | None = None) -> dict | None:
    """`render_library` from app.py's own variables: the plan inputs and result are built
    here (page_plan_inputs, plan_result) when the page has a course, inputs and a predicted
    race; otherwise the panel still offers the athletes, saved plans and backup."""
    inputs = None
    if (course_gpx and course is not None and bounds is not None and athlete
            and approach is not None):
        inputs = page_plan_inputs(course_gpx, course_name or "course", course, bounds,
                                  athlete, weather or {}, approach, smoothing, allow_flat,
                                  split)
    result = None if outcome is None or inputs is None else plan_result(outcome, weather,
                                                                         approach)
    return render_library(inputs, result, system, location=location)
