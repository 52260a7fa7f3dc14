"""Showing a saved plan in the page (pure; ui.library_panel.open_plan_in_page applies it):
the widget states of the page's inputs that give back the plan's sport, approach and its
limits, numbers, smoothing, terrain, segment choice and race day. No Streamlit here.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from pacing.display.units import format_duration, to_display

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
    "start_speed": ("start_speed", 1.0),
    "max_descent_speed": ("max_descent_speed", 1.0),
    "drafting_reduction": ("drafting_pct", 100.0),
}
"""How the page's inputs (ui.sections, ui.widgets.unit_number) keep their values: page value
(SI) → (the widget's store key "si:<key>" and widget keys "<key>:<system>", factor from SI to
the stored number)."""


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
    """The sport, the approach radio (cycling or running labels), the target time, the
    "coast on descents" box, and for cycling the descent-limit box and the W′ model."""
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
    if sport == "cycling":  # a plan saved before these were asked had neither
        state["descent_cap_on"] = approach.get("max_descent_speed") is not None
        state["w_prime_model"] = approach.get("w_prime_model") or "differential"
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


def _race_day_states(weather: Mapping[str, Any]) -> dict:
    """The race-day panel's states (ui.race_day_data.panel_state) of the saved race day."""
    from ui.race_day_data import panel_state

    return panel_state(weather.get("race_day"))


def plan_page_state(inputs: Mapping[str, Any], system: str, course=None) -> dict:
    """The page's widget states that show a saved plan (pure; `open_plan_in_page` applies
    them): sport, plan radio and its limits, smoothing, "file without heights", terrain,
    the segment choice and the race-day panel (start, weather table, acclimatisation, test
    conditions, forecast spread: ui.race_day_data.panel_state). Numbers under ui.widgets
    stores are returned as "si:<key>" entries (SI or the stored factor, see PAGE_WIDGETS).

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
            **_split_states(inputs, system, course),
            **_race_day_states(inputs.get("weather") or {})}

