"""Plotly figures of the "setups side by side" view (ui.comparison): ranked differences, the
gap along the course, the position chosen on each segment.

Pure helpers over a pacing.compare.analysis.SetupsAnalysis (no Streamlit).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
import plotly.graph_objects as go

from pacing.display.units import to_display, unit_label
from ui.comparison_tables import signed_time
from ui.figures import extremes

if TYPE_CHECKING:
    from pacing.compare.analysis import SetupsAnalysis

FASTER_COLOR = "#1b7f79"
SLOWER_COLOR = "#b5542c"
BASELINE_COLOR = "#7a8794"
INK = "#1d2b3a"
TERRAIN_FILL = "rgba(29,43,58,0.08)"
SETUP_COLORS = ("#1d2b3a", "#0f6e8c", "#b5542c", "#6a3d9a", "#5a6b2f", "#c28f1a")
"""Line colours of the setups, in table order (our own palette; dark, distinct hues)."""


def _layout(figure: go.Figure, height: int, legend: bool = False) -> go.Figure:
    figure.update_layout(height=height, margin=dict(l=10, r=10, t=36, b=10),
                         plot_bgcolor="white", paper_bgcolor="white", font=dict(color=INK),
                         showlegend=legend,
                         legend=dict(orientation="h", yanchor="bottom", y=1.02, x=0))
    figure.update_xaxes(showgrid=True, gridcolor="#e7ebef", zeroline=False)
    figure.update_yaxes(showgrid=True, gridcolor="#e7ebef", zeroline=False)
    return figure


def difference_figure(report: SetupsAnalysis) -> go.Figure:
    """Ranked horizontal bars of each setup's finish-time difference to the baseline [s],
    fastest on top, with ± 1σ whiskers (difference_spread); teal = faster, rust = slower.

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.

    Returns
    -------
    plotly.graph_objects.Figure
    """
    comparison = report.comparison
    base = comparison.baseline_result
    ranked = sorted(comparison.results, key=lambda r: r.finish_time)
    names = [f"{r.name} · baseline" if r is base else f"{r.name} · {signed_time(r.delta)}"
             for r in ranked]
    deltas = np.array([r.delta for r in ranked])
    errors = np.array([0.0 if r is base else report.spread(r.name).standard_deviation
                       for r in ranked])
    colors = [BASELINE_COLOR if r is base else FASTER_COLOR if r.delta < 0 else SLOWER_COLOR
              for r in ranked]
    figure = go.Figure(go.Bar(
        x=deltas, y=names, orientation="h", marker=dict(color=colors),
        error_x=dict(type="data", array=errors, color=INK, thickness=1.2, width=5),
        hovertemplate="%{y}: %{x:+.1f} s<extra></extra>"))
    figure.add_vline(x=0, line=dict(color=INK, width=1))
    figure.update_yaxes(autorange="reversed")
    figure.update_xaxes(title_text=f"finish time vs {base.name} [s]  (− quicker, + slower; "
                                   "whiskers ± 1σ)")
    return _layout(figure, 90 + 46 * len(ranked))


def gap_along_figure(report: SetupsAnalysis, course, system: str) -> go.Figure:
    """Cumulative time won (−) or lost (+) against the baseline along the course [s], one
    line per setup, over the elevation profile (shaded, right axis).

    Parameters
    ----------
    report : SetupsAnalysis
        The comparison's analysis.
    course : pacing.course.geometry.Course
        The course (elevation per point [m]).
    system : str
        "metric" or "imperial" [-].

    Returns
    -------
    plotly.graph_objects.Figure
    """
    from plotly.subplots import make_subplots

    comparison = report.comparison
    distance = to_display(np.asarray(comparison.distance, dtype=float), "distance", system)
    figure = make_subplots(specs=[[{"secondary_y": True}]])
    elevation = to_display(np.asarray(course.elevation, dtype=float), "elevation", system)
    keep = extremes(elevation)
    figure.add_trace(go.Scatter(x=distance[keep], y=elevation[keep], mode="lines",
                                line=dict(color="rgba(29,43,58,0.25)", width=1),
                                fill="tozeroy", fillcolor=TERRAIN_FILL, name="terrain",
                                hoverinfo="skip", showlegend=False), secondary_y=True)
    for index, r in enumerate(comparison.results):
        is_base = r is comparison.baseline_result
        gap = np.asarray(r.delta_along, dtype=float)
        keep = extremes(gap)
        figure.add_trace(go.Scatter(
            x=distance[keep], y=gap[keep], mode="lines", name=r.name,
            line=dict(color=SETUP_COLORS[index % len(SETUP_COLORS)], width=1 if is_base else 2,
                      dash="dot" if is_base else "solid"),
            hovertemplate=f"{r.name}: " + "%{y:+.1f} s at %{x:.2f}<extra></extra>"),
            secondary_y=False)
    low, high = float(np.min(elevation)), float(np.max(elevation))
    span = max(high - low, 1.0)
    figure.update_yaxes(title_text="time vs baseline [s]  (− ahead)", secondary_y=False)
    figure.update_yaxes(title_text=f"elevation [{unit_label('elevation', system)}]",
                        range=[low - 0.1 * span, high + 1.5 * span], showgrid=False,
                        secondary_y=True)
    figure.update_xaxes(title_text=f"distance [{unit_label('distance', system)}]")
    return _layout(figure, 340, legend=True)


def mixed_figure(report: SetupsAnalysis, course, system: str) -> go.Figure | None:
    """The position chosen on each segment as coloured bands over the elevation profile.

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
    plotly.graph_objects.Figure or None
        None without a mixed plan.
    """
    mixed = report.mixed
    if mixed is None:
        return None
    bounds = report.comparison.bounds
    distance = to_display(np.asarray(course.distance, dtype=float), "distance", system)
    elevation = to_display(np.asarray(course.elevation, dtype=float), "elevation", system)
    names = list(report.comparison.results)
    color_of = {r.name: SETUP_COLORS[i % len(SETUP_COLORS)] for i, r in enumerate(names)}
    figure = go.Figure()
    shown = set()
    keep = extremes(elevation)  # the points drawn, whichever segment they fall in
    for k, name in enumerate(mixed.names):
        a, b = int(bounds[k]), int(bounds[k + 1])
        part = np.union1d(keep[(keep > a) & (keep < b)], [a, b])
        figure.add_trace(go.Scatter(
            x=distance[part], y=elevation[part], mode="lines", fill="tozeroy",
            line=dict(color=color_of[name], width=2), name=name,
            legendgroup=name, showlegend=name not in shown,
            hovertemplate=f"segment {k + 1}: {name}<extra></extra>"))
        shown.add(name)
    low, high = float(np.min(elevation)), float(np.max(elevation))
    span = max(high - low, 1.0)
    figure.update_yaxes(title_text=f"elevation [{unit_label('elevation', system)}]",
                        range=[low - 0.15 * span, high + 0.15 * span])
    figure.update_xaxes(title_text=f"distance [{unit_label('distance', system)}]")
    return _layout(figure, 240, legend=True)
