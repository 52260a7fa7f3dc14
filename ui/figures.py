"""Plotly figures of the web app. Display only: every number comes from the library, already
computed in SI units; these functions convert to the chosen unit system and draw.

Palette: grade is drawn with cmocean "balance" (Thyng et al. 2016, Oceanography 29(3):9-13,
doi:10.5670/oceanog.2016.66), a perceptually uniform diverging map centred on 0 % grade: blue
downhill, red uphill, pale on the flat. Lines use a small palette of our own.
"""

from __future__ import annotations

import math

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from pacing.display.units import to_display, unit_label

GRADE_COLORSCALE = "balance"
"""cmocean "balance", built into plotly."""
GRADE_COLOR_LIMIT = 0.12
"""Grades beyond ±12 % get the end colours of the scale [-]."""
MAX_PROFILE_BARS = 500
"""The shaded profile is drawn with at most this many bars (display only)."""
MAX_LINE_POINTS = 2500
"""Lines along the course are thinned to at most this many points (display only)."""

INK = "#1d2b3a"
"""Text and the course's line; the other colours mark one quantity each."""
SPEED_COLOR = "#0f6e8c"
POWER_COLOR = "#b5542c"
WIND_COLOR = "#5a6b2f"
RESERVE_COLOR = "#6a3d9a"
BOUNDARY_COLOR = "rgba(29,43,58,0.35)"
GAP_COLOR = "rgba(181,84,44,0.15)"
"""Band over a stretch the recording has no points for, joined by a straight line."""


def _layout(figure: go.Figure, height: int) -> go.Figure:
    """The figure on white with light grid lines and no legend, `height` tall [px]."""
    figure.update_layout(
        height=height,
        margin=dict(l=10, r=10, t=30, b=10),
        plot_bgcolor="white",
        paper_bgcolor="white",
        font=dict(color=INK),
        showlegend=False,
    )
    figure.update_xaxes(showgrid=True, gridcolor="#e7ebef", zeroline=False)
    figure.update_yaxes(showgrid=True, gridcolor="#e7ebef", zeroline=False)
    return figure


def _thin(count: int, limit: int = MAX_LINE_POINTS) -> np.ndarray:
    """Indices of at most about `limit` evenly spread samples out of `count` (keeps the last)."""
    if count <= limit:
        return np.arange(count)
    index = np.unique(np.linspace(0, count - 1, limit).round().astype(int))
    return index


def profile_figure(course, system: str, bounds=None, height: int = 300) -> go.Figure:
    """Elevation along the course shaded by grade, the raw profile as a thin line, and the
    segment boundaries (point indices) as dotted lines, and a band over each gap in the
    recording joined by a straight line (course.gaps); distance in km or mi, elevation in m
    or ft, grade colours in %, `height` [px]."""
    distance = np.asarray(course.distance, dtype=float)
    elevation = np.asarray(course.elevation, dtype=float)
    edges = np.unique(np.linspace(0, distance.size - 1, min(MAX_PROFILE_BARS, distance.size - 1)
                                  + 1).round().astype(int))
    start, end = edges[:-1], edges[1:]
    run = distance[end] - distance[start]
    grade = (elevation[end] - elevation[start]) / np.where(run > 0, run, 1.0)
    x0 = to_display(distance[start], "distance", system)
    x1 = to_display(distance[end], "distance", system)
    top = to_display(np.maximum(elevation[start], elevation[end]), "elevation", system)
    floor = to_display(elevation.min(), "elevation", system)
    span = max(to_display(np.ptp(elevation), "elevation", system), 1.0)
    base = floor - 0.15 * span
    limit = min(GRADE_COLOR_LIMIT, max(0.02, float(np.max(np.abs(grade)))))
    figure = go.Figure()
    figure.add_trace(go.Bar(
        x=(x0 + x1) / 2, y=top - base, base=base, width=x1 - x0,
        marker=dict(color=100 * grade, colorscale=GRADE_COLORSCALE, cmin=-100 * limit,
                    cmax=100 * limit, cmid=0, line=dict(width=0),
                    colorbar=dict(title=dict(text="grade [%]"), thickness=12, len=0.9)),
        customdata=100 * grade,
        hovertemplate="%{x:.2f}: grade %{customdata:.1f} %<extra></extra>",
    ))
    shown = _thin(distance.size)
    x = to_display(distance[shown], "distance", system)
    figure.add_trace(go.Scatter(
        x=x, y=to_display(np.asarray(course.raw_elevation)[shown], "elevation", system),
        mode="lines", line=dict(color="rgba(29,43,58,0.45)", width=1), name="as recorded",
        hoverinfo="skip"))
    figure.add_trace(go.Scatter(
        x=x, y=to_display(elevation[shown], "elevation", system), mode="lines",
        line=dict(color=INK, width=1.6), name="cleaned",
        hovertemplate="%{x:.2f}, %{y:.0f}<extra></extra>"))
    if bounds is not None and len(bounds) > 2:
        inner = to_display(distance[np.asarray(bounds)[1:-1]], "distance", system)
        low, high = base, floor + 1.1 * span
        figure.add_trace(go.Scatter(
            x=np.repeat(inner, 3), y=np.tile([low, high, np.nan], inner.size), mode="lines",
            line=dict(color=BOUNDARY_COLOR, width=1, dash="dot"), hoverinfo="skip",
            connectgaps=False, name="segment boundaries"))
    _mark_gaps(figure, course, system)
    figure.update_layout(bargap=0)
    figure.update_xaxes(title_text=f"distance [{unit_label('distance', system)}]")
    figure.update_yaxes(title_text=f"elevation [{unit_label('elevation', system)}]",
                        range=[base, floor + 1.1 * span])
    return _layout(figure, height)


def _mark_gaps(figure: go.Figure, course, system: str) -> None:
    """A shaded band, labelled "joined gap", over each gap of the recording the course crosses
    on a straight line (course.gaps with handling "join"; none on a course without gaps)."""
    for gap in getattr(course, "gaps", ()):
        if gap.handling != "join":
            continue
        figure.add_vrect(
            x0=to_display(gap.at, "distance", system),
            x1=to_display(gap.at + gap.length, "distance", system),
            fillcolor=GAP_COLOR, line_width=0, layer="below",
            annotation_text="joined gap", annotation_position="top left")


def route_map_figure(course, system: str, wind_speed: float = 0.0, wind_from: float = 0.0,
                     height: int = 360) -> go.Figure:
    """The route on plain longitude/latitude axes (no map tiles, works offline), start and
    finish marked, and an arrow showing where the wind blows to.

    Parameters
    ----------
    wind_speed : at the measurement height [m/s]; no arrow when 0.
    wind_from : direction the wind blows FROM [deg clockwise from north].
    """
    latitude = np.asarray(course.latitude, dtype=float)
    longitude = np.asarray(course.longitude, dtype=float)
    shown = _thin(latitude.size)
    figure = go.Figure()
    figure.add_trace(go.Scatter(x=longitude[shown], y=latitude[shown], mode="lines",
                                line=dict(color=INK, width=2.5), hoverinfo="skip"))
    figure.add_trace(go.Scatter(
        x=[longitude[0], longitude[-1]], y=[latitude[0], latitude[-1]], mode="markers+text",
        marker=dict(size=[13, 10], color=["#2e8b57", "#b22222"], symbol=["circle", "square"]),
        text=["start", "finish"], textposition=["top right", "bottom left"], hoverinfo="skip"))
    mean_latitude = float(np.mean(latitude))
    figure.update_yaxes(scaleanchor="x",
                        scaleratio=1.0 / max(math.cos(math.radians(mean_latitude)), 0.05),
                        title_text="latitude [°]")
    figure.update_xaxes(title_text="longitude [°]")
    if wind_speed > 0:
        blows_to = math.radians((wind_from + 180.0) % 360.0)
        length = 55.0
        figure.add_annotation(
            x=0.93, y=0.88, xref="paper", yref="paper", axref="pixel", ayref="pixel",
            ax=-length * math.sin(blows_to), ay=length * math.cos(blows_to),
            showarrow=True, arrowhead=3, arrowsize=1.4, arrowwidth=3, arrowcolor=WIND_COLOR,
            text="", standoff=0)
        figure.add_annotation(
            x=0.93, y=0.99, xref="paper", yref="paper", showarrow=False,
            text=(f"wind {to_display(wind_speed, 'wind_speed', system):.0f} "
                  f"{unit_label('wind_speed', system)} from {wind_from:.0f}°"),
            font=dict(color=WIND_COLOR, size=12), xanchor="right")
    return _layout(figure, height)


EXHAUSTED_COLOR = "#c0392b"
"""The marker where a reserve (W′, D′) runs out."""


def _mark_exhausted(figure: go.Figure, row: int, x: np.ndarray, balance: np.ndarray,
                    reserve: str, system: str) -> None:
    """A marker at zero where the reserve first falls below zero, if it does (display only)."""
    below = np.flatnonzero(np.asarray(balance) < 0)
    if below.size == 0:
        return
    where = float(to_display(float(x[below[0]]), "distance", system))
    figure.add_trace(go.Scatter(
        x=[where], y=[0.0], mode="markers+text", text=[f"{reserve} runs out"],
        textposition="top right", marker=dict(color=EXHAUSTED_COLOR, size=10, symbol="x"),
        textfont=dict(color=EXHAUSTED_COLOR),
        hovertemplate=f"{reserve} runs out at %{{x:.2f}}<extra></extra>"), row=row, col=1)


def along_course_figure(distance, speed, power=None, headwind=None, w_prime_balance=None,
                        system: str = "metric", height_per_panel: int = 170,
                        reserve: str = "W′") -> go.Figure:
    """Speed, power, headwind component and W′ balance along the course, sharing one x axis.

    Parameters
    ----------
    distance : point distances [m] (N); speed : per point (N) or per piece (N-1) [m/s];
    power : crank power per piece [W] (N-1) or None; headwind : per piece [m/s] (N-1) or None;
    w_prime_balance : W′ balance per point [J] (N) or None; with reserve="D′" the D′ balance
        of a runner per piece end [m] (N-1).
    reserve : "W′" (cycling, shown in kJ) or "D′" (running, shown in m).
    """
    distance = np.asarray(distance, dtype=float)
    middle = 0.5 * (distance[1:] + distance[:-1])
    speed = np.asarray(speed, dtype=float)
    panels = [("speed", f"speed [{unit_label('speed', system)}]",
               distance if speed.size == distance.size else middle,
               to_display(speed, "speed", system), SPEED_COLOR)]
    if power is not None:
        panels.append(("power", "power [W]", middle, np.asarray(power, dtype=float),
                       POWER_COLOR))
    if headwind is not None:
        panels.append(("headwind", f"headwind [{unit_label('wind_speed', system)}]", middle,
                       to_display(np.asarray(headwind), "wind_speed", system), WIND_COLOR))
    if w_prime_balance is not None:
        w_prime_balance = np.asarray(w_prime_balance, dtype=float)
        x = distance if w_prime_balance.size == distance.size else middle
        shown_reserve = w_prime_balance if reserve == "D′" else w_prime_balance / 1000.0
        title = "D′ left [m]" if reserve == "D′" else "W′ left [kJ]"
        # a reserve is never below zero: the line stops at zero and a marker says where it
        # runs out (the warning says by how much)
        panels.append(("reserve", title, x, np.maximum(shown_reserve, 0.0), RESERVE_COLOR))
    figure = make_subplots(rows=len(panels), cols=1, shared_xaxes=True, vertical_spacing=0.04)
    for row, (_, title, x, y, color) in enumerate(panels, start=1):
        shown = _thin(len(x))
        figure.add_trace(go.Scatter(
            x=to_display(x[shown], "distance", system), y=np.asarray(y)[shown], mode="lines",
            line=dict(color=color, width=1.5), hovertemplate="%{x:.2f}: %{y:.1f}<extra></extra>",
            fill="tozeroy" if title.startswith("headwind") else None,
            fillcolor="rgba(90,107,47,0.15)"), row=row, col=1)
        figure.update_yaxes(title_text=title, row=row, col=1)
    if w_prime_balance is not None:
        _mark_exhausted(figure, len(panels), panels[-1][2], w_prime_balance, reserve, system)
    figure.update_xaxes(title_text=f"distance [{unit_label('distance', system)}]",
                        row=len(panels), col=1)
    return _layout(figure, height_per_panel * len(panels) + 40)
