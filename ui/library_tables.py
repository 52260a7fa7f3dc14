"""The library panel's tables and captions (ui.library_panel): saved plans listed, which
version of pacing made a plan, its target table with units and its main inputs in short
lines. No Streamlit here.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import pandas as pd

from pacing.display.units import format_duration, to_display, unit_label


def _stamp(value) -> str:
    """A stored time (UTC) to the minute, "" for None."""
    return value.strftime("%Y-%m-%d %H:%M UTC") if value is not None else ""


def strategy_label(strategy: str, sport: str | None) -> str:
    """The page's name of a plan's strategy key ("constant" → "Even power"); the key itself
    when the page has no name for it."""
    from ui import text

    choices = text.RUNNING_APPROACHES if sport == "running" else text.APPROACHES
    return next((label for label, key in choices.items() if key == strategy), strategy)


def plans_table(plans, athlete_names: Mapping[int, str] | None = None,
                review_counts: Mapping[int, int] | None = None) -> pd.DataFrame:
    """Saved plans as a table, in the order given (the library lists newest first).

    Parameters
    ----------
    plans : sequence of pacing.store.records.PlanSummary
        The saved plans.
    athlete_names : Mapping or None
        Athlete id → name, for the athlete column ("–" for a plan filed under nobody).
    review_counts : Mapping or None
        Plan id → how many race reviews it keeps (Library.review_counts); None leaves the
        column out.

    Returns
    -------
    pandas.DataFrame
        Plan, athlete, finish [h:mm:ss], time gained on even power [s], race reviews (with
        `review_counts`), when saved (UTC), the version of pacing that made it, notes.
    """
    names = athlete_names or {}
    table = pd.DataFrame({
        "Plan": [p.name for p in plans],
        "Athlete": [names.get(p.athlete_id, "–") if p.athlete_id is not None else "–"
                    for p in plans],
        "Finish [h:mm:ss]": [format_duration(p.finish_time) for p in plans],
        "Gained on even power [s]": [("" if p.time_saved is None else f"{p.time_saved:.0f}")
                                     for p in plans],
        "Saved": [_stamp(p.updated_at) for p in plans],
        "Made with pacing": [p.library_version for p in plans],
        "Notes": [p.notes for p in plans],
    }, columns=["Plan", "Athlete", "Finish [h:mm:ss]", "Gained on even power [s]", "Saved",
                "Made with pacing", "Notes"])
    if review_counts is not None:
        table.insert(4, "Race reviews", [int(review_counts.get(p.id, 0)) for p in plans])
    return table


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
        lines.append(f"pacing: {strategy_label(approach['strategy'], athlete.get('sport'))}"
                     + (f", average {power:.0f} W" if power else ""))
    return [line for line in lines if "nan" not in line]


def setup_origin_caption(record) -> str | None:
    """Where a stored setup's CdA came from, one line; None when it was typed in.

    Parameters
    ----------
    record : pacing.store.records.SetupRecord

    Returns
    -------
    str or None
        E.g. "CdA 0.2360 m², 95 % interval 0.2280-0.2440 m², from race review of a.csv, …".
    """
    origin = record.drag_area_origin
    if origin is None:
        return None
    return (f"CdA {record.setup.drag_area:.4f} m², 95 % interval {origin.low_m2:.4f}-"
            f"{origin.high_m2:.4f} m², from {origin.source}")


def reviews_frame(reviews) -> pd.DataFrame:
    """The race reviews kept with a saved plan, one row each (times as H:MM:SS).

    Parameters
    ----------
    reviews : sequence of pacing.store.records.PlanReviewRecord

    Returns
    -------
    pandas.DataFrame
        Columns "Race file", "Kept", "Planned", "Ridden", "Ridden − planned [s]",
        "CdA on the day [m²]" (None without a fit).
    """
    rows = []
    for record in reviews:
        review = record.review
        fitted = review.get("fitted") or {}
        planned, ridden = review["planned_time_s"], review["actual_time_s"]
        rows.append({"Race file": record.ride_name, "Kept": _stamp(record.created_at),
                     "Planned": format_duration(planned), "Ridden": format_duration(ridden),
                     "Ridden − planned [s]": round(ridden - planned, 1),
                     "CdA on the day [m²]": fitted.get("cda_m2")})
    return pd.DataFrame(rows, columns=["Race file", "Kept", "Planned", "Ridden",
                                       "Ridden − planned [s]", "CdA on the day [m²]"])
