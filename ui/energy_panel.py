"""Where the watts go: the energy of the predicted race (the athlete's work and what gravity
gives back) split by what it pays for, per segment and for the whole race (a chart and a
table), the places where the rider eases off,
and one line on why air drag grows with the square of speed at this race's speed.

Numbers come from pacing.plan.energy through ui.pipeline.Outcome; the frames and the figure
are built by pure functions (no Streamlit here); ui.sections.where_the_watts_go draws them.
"""

from __future__ import annotations

import numpy as np

from pacing.display.units import to_display, unit_label
from ui.text import EASING_WORDS

SINK_LABELS = {
    "flat running": "Running on the flat",
    "air": "Air drag",
    "rolling": "Rolling resistance",
    "height": "Climbing (height gained)",
    "bearings": "Wheel bearings",
    "drivetrain": "Chain and gears",
    "speed": "Speed gained",
    "braking": "Thrown away braking",
}
"""How the page names where the energy goes (the sinks of EnergyBudget.flows)."""
SHORT_SINK_LABELS = {"Air drag": "Air", "Rolling resistance": "Rolling",
                     "Climbing (height gained)": "Climbing", "Wheel bearings": "Bearings",
                     "Chain and gears": "Chain", "Speed gained": "Speed gained",
                     "Thrown away braking": "Braking", "Athlete's work": "Athlete",
                     "From gravity": "Gravity", "Running on the flat": "Flat running",
                     "Athlete's energy": "Athlete", "Saved running downhill": "Downhill"}
"""The table's headers as the page shows them (short enough for every column to fit)."""
SINK_COLORS = {
    "flat running": "#3d7a5c", "air": "#0f6e8c", "rolling": "#5a6b2f", "height": "#b5542c",
    "bearings": "#9c8f5c",
    "drivetrain": "#6a3d9a", "speed": "#7f8c8d", "braking": "#c0392b",
}
"""One colour a sink (our own palette)."""
ENERGY_NOTE = (
    "Energy spent = the athlete's work + what gravity gives back on the way down (+ speed "
    "carried in): each bar shares it out, so a descent's air drag is paid mostly by gravity. "
    "The race's bar adds up its segments."
)
"""The caption under the cycling chart."""
RUNNING_ENERGY_NOTE = (
    "The runner's metabolic energy (the grade's cost by Minetti et al. 2002, the air's by "
    "the runner's drag area) + what running downhill saves against the flat: each bar shares "
    "it out. The race's bar adds up its segments."
)
"""The caption under the running chart."""
SOURCE_LABELS = {"athlete": "Athlete's work", "gravity": "From gravity"}
RUNNING_SOURCE_LABELS = {"athlete": "Athlete's energy", "downhill": "Saved running downhill"}
"""The table's columns of where the energy comes from [kJ], cycling and running."""


def energy_note(budget) -> str:
    """The caption under the chart for this budget's sport."""
    return RUNNING_ENERGY_NOTE if "downhill" in budget.flows()[0] else ENERGY_NOTE


SUPERSCRIPTS = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")
"""Digits written as exponents."""


def _with_race(values: np.ndarray) -> np.ndarray:
    """Per-segment values [J] and their sum over the race as a last value."""
    return np.append(values, values.sum())


def energy_frame(budget, system: str = "metric"):
    """The table of where the energy goes: one row per segment and a last row for the race;
    where the energy comes from [kJ] (the athlete's work and gravity's part; a runner's
    metabolic energy and what running downhill saves), then each sink's share of the energy
    spent [%] (EnergyBudget.flows or RunningBudget.flows; a row's shares add up to 100 %).

    Parameters
    ----------
    budget : pacing.plan.energy.EnergyBudget or RunningBudget
        Per-segment energy and its terms [J].
    system : str
        "metric" or "imperial" (the table is in kJ and % either way) [-].

    Returns
    -------
    pandas.DataFrame
    """
    import pandas as pd

    sources, sinks = budget.flows()
    spent = _with_race(sum(sources.values()))
    count = budget.work.size
    frame = {"Segment": [str(i + 1) for i in range(count)] + ["whole race"]}
    labels = RUNNING_SOURCE_LABELS if "downhill" in sources else SOURCE_LABELS
    for key, label in labels.items():
        frame[f"{label} [kJ]"] = np.round(_with_race(sources[key]) / 1000.0, 1)
    for key, label in SINK_LABELS.items():
        if key not in sinks:
            continue
        share = np.divide(100.0 * _with_race(sinks[key]), spent,
                          out=np.zeros_like(spent), where=spent > 0)
        frame[f"{label} [%]"] = np.round(share, 1)
    return pd.DataFrame(frame)


def energy_spec(budget, height: int = 320) -> dict:
    """A stacked bar per segment and one for the race: each sink's share of the energy spent
    [%] (they stack to 100 %). Plotly's plain data, drawn by ui.figures.drawable."""
    sources, sinks = budget.flows()
    spent = _with_race(sum(sources.values()))
    names = [str(i + 1) for i in range(budget.work.size)] + ["race"]
    data = []
    for key, label in SINK_LABELS.items():
        if key not in sinks:
            continue
        share = np.divide(100.0 * _with_race(sinks[key]), spent, out=np.zeros_like(spent),
                          where=spent > 0)
        data.append({"type": "bar", "x": names, "y": share.tolist(), "name": label,
                     "marker": {"color": SINK_COLORS[key]},
                     "hovertemplate": f"{label}: %{{y:.1f}} %<extra></extra>"})
    layout = {"barmode": "stack", "height": height,
              "margin": {"l": 10, "r": 10, "t": 30, "b": 10}, "plot_bgcolor": "white",
              "paper_bgcolor": "white", "legend": {"orientation": "h", "y": -0.25},
              "xaxis": {"title": {"text": "segment"}, "type": "category"},
              "yaxis": {"title": {"text": "share of the energy spent [%]"},
                        "range": [0, 100], "gridcolor": "#e7ebef"}}
    return {"data": data, "layout": layout}


def short_labels(columns) -> dict[str, str]:
    """Column → its short header for the page ("Air drag [%]" → "Air [%]")."""
    shown = {}
    for column in columns:
        name, bracket, unit = str(column).partition(" [")
        shown[column] = SHORT_SINK_LABELS.get(name, name) + (f" [{unit}" if bracket else "")
    return shown


def easing_per_segment(rows, events) -> list[str]:
    """For each segment row (start, end [m]), what the rider does below the plan there:
    "brakes ×2", "coasts", "" (display only; an event belongs to the segment it starts in)."""
    shown = []
    for row in rows:
        inside = [e for e in events if row.start <= e.start < row.end]
        counts = {kind: sum(e.kind == kind for e in inside)
                  for kind in ("braking", "coasting", "start")}
        words = {"braking": "brakes", "coasting": "coasts", "start": "start"}
        shown.append(", ".join(f"{words[k]}" + (f" ×{n}" if n > 1 else "")
                               for k, n in counts.items() if n))
    return shown


def easing_frame(events, system: str = "metric"):
    """The places where the rider eases off below the plan: where, what, lowest speed, the
    tightest corner radius, and the energy the brakes take [kJ]."""
    import pandas as pd

    dist, speed = unit_label("distance", system), unit_label("speed", system)
    return pd.DataFrame([{
        f"At [{dist}]": round(float(to_display(e.start, "distance", system)), 2),
        "What": EASING_WORDS.get(e.kind, e.kind),
        f"Down to [{speed}]": round(float(to_display(e.lowest_speed, "speed", system)), 1),
        f"Tightest bend [{unit_label('elevation', system)}]":
            round(float(to_display(e.tightest_radius, "elevation", system)))
            if np.isfinite(e.tightest_radius) else "straight",
        "Braked away [kJ]": round(e.braking_work / 1000.0, 2),
    } for e in events])


def reynolds_line(outcome, system: str) -> str | None:
    """Why drag grows with the square of speed here, in one line with this race's numbers;
    None without them."""
    from pacing.plan.energy import RIDER_LENGTH_SCALE, STOKES_LIMIT, drag_growth

    if outcome.reynolds is None or outcome.air_speed is None:
        return None
    force, power = drag_growth(1.2)
    who = "runner" if outcome.sport == "running" else "rider"
    speed = to_display(outcome.air_speed, "speed", system)
    exponent = int(np.floor(np.log10(outcome.reynolds)))
    mantissa = outcome.reynolds / 10 ** exponent
    power_of_ten = "10" + str(exponent).translate(SUPERSCRIPTS)
    return (f"Why air drag grows with the square of speed: at this race's mean air speed of "
            f"{speed:.0f} {unit_label('speed', system)} the {who}'s Reynolds number "
            f"Re = ρ·v·L/μ is about {mantissa:.1f} × {power_of_ten} (L = {RIDER_LENGTH_SCALE:g} m, "
            f"air viscosity μ by Sutherland's law), far above Re ≈ {STOKES_LIMIT:g} below "
            f"which drag grows in proportion to speed; so riding 20 % faster costs about "
            f"{force:.2f} times the drag force and {power:.2f} times the power against the "
            f"air (still air).").replace("riding 20", "running 20" if who == "runner"
                                         else "riding 20")
