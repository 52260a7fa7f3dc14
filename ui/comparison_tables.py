"""Words and tables of the "setups side by side" view (ui.comparison): finish times and
differences, sensitivities, break-even figures, per-segment gaps, the position-by-segment plan.

Pure helpers over a pacing.compare.analysis.SetupsAnalysis (no Streamlit), testable on their
own. Sign convention (as in pacing.compare.setups): a time difference is setup − baseline [s];
positive = slower.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from pacing.display.units import MILE_PER_HOUR, POUND, format_duration, to_display, unit_label

if TYPE_CHECKING:
    from pacing.compare.analysis import SetupsAnalysis


def signed_time(seconds: float) -> str:
    """+12.3 s / −1:05.2 min style text of a time difference (− = faster).

    Parameters
    ----------
    seconds : float
        The difference [s].

    Returns
    -------
    str
        Signed text; "–" for a number that is not finite.
    """
    if not math.isfinite(seconds):
        return "–"
    sign = "+" if seconds > 0.05 else "−" if seconds < -0.05 else "±"
    size = abs(seconds)
    if size < 60:
        return f"{sign}{size:.1f} s"
    minutes, rest = divmod(size, 60.0)
    return f"{sign}{int(minutes)}:{rest:04.1f} min"


def verdict(delta: float, spread: float) -> str:
    """Whether a difference stands out from its 1 σ spread: beyond 2σ "clear", else "within
    the uncertainty" (a two-sided ≈95 % rule, common practice).

    Parameters
    ----------
    delta : float
        The difference [s].
    spread : float
        Its 1 σ [s]; 0 when no uncertainty was given.

    Returns
    -------
    str
    """
    if spread <= 0:
        return "no uncertainty given"
    return "clear" if abs(delta) > 2.0 * spread else "within the uncertainty"


def results_table(report: SetupsAnalysis, system: str) -> pd.DataFrame:
    """One row per setup, fastest first: finish time, difference, ± 1σ, mean power, speed.

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    pandas.DataFrame
    """
    comparison = report.comparison
    base = comparison.baseline_result
    rows = []
    for r in sorted(comparison.results, key=lambda result: result.finish_time):
        spread = report.spread(r.name).standard_deviation
        distance = float(comparison.distance[-1] - comparison.distance[0])
        rows.append({
            "Setup": r.name + (" (baseline)" if r is base else ""),
            "Finish [h:mm:ss]": format_duration(r.finish_time),
            f"vs {base.name}": "—" if r is base else signed_time(r.delta),
            "± 1σ [s]": round(spread, 1),
            "Difference": "baseline" if r is base else verdict(r.delta, spread),
            "Mean power [W]": round(r.mean_power),
            f"Average speed [{unit_label('speed', system)}]": round(
                float(to_display(distance / r.finish_time, "speed", system)), 1),
        })
    return pd.DataFrame(rows)


SENSITIVITY_ROWS = ("drag_area", "mass", "power", "rolling_coefficient", "wind")


def sensitivity_table(report: SetupsAnalysis, system: str) -> pd.DataFrame:
    """Seconds of finish time per step of each parameter, one column per setup (+ = slower).

    Steps: +0.01 m² CdA, +1 kg (imperial: +1 lb), +10 W, +0.001 Crr, +1 m/s wind from the
    forecast direction (imperial: +1 mph). The per-lb and per-mph figures are the per-kg and
    per-m/s ones times 0.45359237 and 0.44704 (the sensitivity is linear at this scale).

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    pandas.DataFrame
        A "Change" column and one column per setup [s].
    """
    first = next(iter(report.sensitivities.values()))
    labels = {
        "drag_area": "CdA +0.01 m²",
        "mass": "mass +1 lb" if system == "imperial" else "mass +1 kg",
        "power": "mean power +10 W",
        "rolling_coefficient": "Crr +0.001",
        "wind": (f"wind +1 mph from {first.wind_direction:.0f}°" if system == "imperial"
                 else f"wind +1 m/s (3.6 km/h) from {first.wind_direction:.0f}°"),
    }
    scale = {"mass": POUND if system == "imperial" else 1.0,
             "wind": MILE_PER_HOUR if system == "imperial" else 1.0}
    frame: dict[str, list[str] | list[float]] = {
        "Change": [labels[name] for name in SENSITIVITY_ROWS]}
    for name, sens in report.sensitivities.items():
        frame[f"{name} [s]"] = [round(float(getattr(sens, key)) * scale.get(key, 1.0), 1)
                                for key in SENSITIVITY_ROWS]
    return pd.DataFrame(frame)


def break_even_sentences(report: SetupsAnalysis, system: str) -> list[str]:
    """Break-even figures in words, one sentence per setup (each figure alone, the rest of
    the setup held).

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.
    system : str
        "metric" or "imperial" (the mass unit) [-].

    Returns
    -------
    list of str
        Markdown sentences.
    """
    comparison = report.comparison
    base = comparison.baseline_result.name
    lines = []
    for name, be in report.break_evens.items():
        result = comparison.result(name)
        faster = result.delta < 0
        parts = []
        if be.power_margin is not None:
            if be.power_margin >= 0:
                parts.append(f"may lose up to {be.power_margin:.1f} W of mean power "
                             f"(down to {be.power:.0f} W)")
            else:
                parts.append(f"needs {-be.power_margin:.1f} W more mean power "
                             f"({be.power:.0f} W)")
        if be.drag_area_margin is not None:
            if be.drag_area_margin >= 0:
                parts.append(f"may add up to {be.drag_area_margin:.4f} m² of CdA")
            else:
                parts.append(f"must save {-be.drag_area_margin:.4f} m² of CdA")
        if be.mass_margin is not None:
            shown = abs(float(to_display(be.mass_margin, "mass", system)))
            mass_unit = unit_label("mass", system)
            if be.mass_margin >= 0:
                parts.append(f"may carry up to {shown:.1f} {mass_unit} more")
            else:
                parts.append(f"must shed {shown:.1f} {mass_unit}")
        if not parts:
            lines.append(f"**{name}**: no power, CdA or mass in the searched range ties it "
                         f"with {base}.")
            continue
        ending = f"and still be faster than {base}" if faster else f"to catch {base}"
        lines.append(f"**{name}** ({signed_time(result.delta)}) " + "; or ".join(parts)
                     + f" {ending}.")
    return lines


def segment_table(report: SetupsAnalysis, course, system: str) -> pd.DataFrame:
    """Time won (−) or lost (+) on each segment against the baseline [s], one column per
    other setup.

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.
    course : pacing.course.geometry.Course
        The course (distance and elevation per point [m]).
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    pandas.DataFrame
    """
    comparison = report.comparison
    bounds = comparison.bounds
    distance = np.asarray(course.distance, dtype=float)
    elevation = np.asarray(course.elevation, dtype=float)
    start, end = distance[bounds[:-1]], distance[bounds[1:]]
    grade = (elevation[bounds[1:]] - elevation[bounds[:-1]]) / np.where(end > start,
                                                                        end - start, 1.0)
    dist = unit_label("distance", system)
    frame = {
        "Segment": np.arange(1, bounds.size),
        f"From [{dist}]": np.round(to_display(start, "distance", system), 2),
        f"To [{dist}]": np.round(to_display(end, "distance", system), 2),
        "Grade [%]": np.round(100 * grade, 1),
    }
    for r in comparison.results:
        if r is not comparison.baseline_result:
            frame[f"{r.name} [s]"] = np.round(r.segment_delta, 1)
    return pd.DataFrame(frame)


def mixed_summary(report: SetupsAnalysis) -> str:
    """The position-by-segment plan in one sentence.

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.

    Returns
    -------
    str
    """
    mixed = report.mixed
    if mixed is None:
        return ("Changing position by segment needs at least two setups of the same bike "
                "(same bike and kit mass and Crr as the fastest setup).")
    used = sorted(set(mixed.names), key=mixed.names.index)
    if len(used) == 1:
        return (f"{used[0]} is the quicker position on every segment: changing position "
                "does not pay on this course.")
    counts = ", ".join(f"{name} on {mixed.names.count(name)} segments" for name in used)
    if mixed.faster:
        return (f"Changing position by segment ({counts}) finishes in "
                f"{format_duration(mixed.finish_time)}, {mixed.gain:.1f} s quicker than "
                f"{mixed.best_single} throughout.")
    return (f"Changing position by segment ({counts}) is not quicker than "
            f"{mixed.best_single} throughout ({signed_time(-mixed.gain)}).")
