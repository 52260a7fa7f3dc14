"""A road test's results as the web app shows them (no Streamlit here): CdA per position
with its 95 % interval, Crr, the wind estimated from the laps, whether the positions really
differ, what the measured CdA leaves out, and the plot of every lap's virtual elevation
against what it should follow, with the residuals below.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from pacing.display.units import to_display, unit_label

LAP_COLORS = ("#0f6e8c", "#b5542c", "#6a3d9a", "#5a6b2f", "#c28f1a", "#1b7f79", "#8c2d5a",
              "#3d5a80")
"""Line colours of the laps (our own palette)."""
INK = "#1d2b3a"
REFERENCE_COLOR = "rgba(29,43,58,0.55)"


# ------------------------------------------------------------------------------ tables

def interval_words(values: Sequence[float] | None, digits: int, unit: str = "") -> str:
    """A 95 % interval as "low to high", or why there is none."""
    if values is None:
        return "no interval (fewer than 3 laps)"
    return f"{values[0]:.{digits}f} to {values[1]:.{digits}f}{unit}"


def position_table(result: Any) -> pd.DataFrame:
    """CdA per position with its 95 % interval, lap count and lap-to-lap spread.

    Parameters
    ----------
    result : pacing.fieldtest.estimate_result.FieldTestResult
        The field test's result.

    Returns
    -------
    pandas.DataFrame
        One row per position: CdA [m²], interval [m²], laps, lap-to-lap spread [%].
    """
    rows = []
    for p in result.positions:
        laps = np.asarray(p.lap_drag_area, dtype=float)
        spread = (float(np.std(laps, ddof=1) / abs(np.mean(laps)) * 100.0)
                  if laps.size >= 2 and np.all(np.isfinite(laps)) else None)
        rows.append({
            "Position": p.label,
            "CdA [m²]": round(p.drag_area, 4),
            "95 % interval [m²]": interval_words(p.drag_area_ci95, 4),
            "Laps": p.laps,
            "Lap-to-lap spread [%]": "–" if spread is None else f"{spread:.1f}",
        })
    return pd.DataFrame(rows)


def rolling_line(result: Any) -> str:
    """Crr in words, with its interval or "held".

    Parameters
    ----------
    result : pacing.fieldtest.estimate_result.FieldTestResult
        The field test's result.

    Returns
    -------
    str
        One line.
    """
    if result.rolling_fixed:
        return f"Crr {result.rolling_coefficient:.5f} (held at the value given)"
    if result.rolling_held:
        return (f"Crr {result.rolling_coefficient:.5f} (held at a typical value: the laps "
                "cannot separate CdA from Crr, see the warning)")
    return (f"Crr {result.rolling_coefficient:.5f} (95 % interval "
            f"{interval_words(result.rolling_coefficient_ci95, 5)}), shared by all positions")


def wind_line(result: Any, system: str) -> str | None:
    """The wind estimated from the laps in words (10 m and rider height, FROM), or None.

    Parameters
    ----------
    result : pacing.fieldtest.estimate_result.FieldTestResult
        The field test's result (its `wind`).
    system : str
        "metric" or "imperial".

    Returns
    -------
    str or None
        One line, or None when no wind was estimated.
    """
    wind = result.wind
    if wind is None:
        return None
    unit = unit_label("wind_speed", system)

    def speed(value: float) -> str:
        return f"{float(to_display(value, 'wind_speed', system)):.1f}"

    interval = "" if wind.speed_ci95 is None else \
        f" (95 % interval {speed(wind.speed_ci95[0])} to {speed(wind.speed_ci95[1])} {unit})"
    return (f"Wind estimated from the laps: {speed(wind.speed)} {unit} at 10 m{interval}, "
            f"{speed(wind.speed_at_rider)} {unit} at rider height, from "
            f"{wind.wind_from:.0f}°")


def difference_lines(result: Any) -> list[str]:
    """Each position against the first: the CdA difference, its interval, and whether it is
    significant (the 95 % bootstrap interval excludes 0).

    Parameters
    ----------
    result : pacing.fieldtest.estimate_result.FieldTestResult
        The field test's result.

    Returns
    -------
    list of str
        One line per position after the first (differences in m²).
    """
    lines = []
    for d in result.differences:
        word = ("a real difference (the 95 % interval excludes 0)" if d.significant
                else "not a clear difference (the 95 % interval includes 0)"
                if d.ci95 is not None else "no interval: ride at least 3 laps per position")
        interval = "" if d.ci95 is None else f" (95 %: {interval_words(d.ci95, 4, ' m²')})"
        lines.append(f"{d.label} − {d.baseline}: {d.difference:+.4f} m²{interval}: {word}")
    return lines


# ------------------------------------------------------------------------------ figures

def lap_figure(estimate: Any, system: str) -> go.Figure:
    """Virtual elevation of every lap of one position against what it should follow.

    The reference is the measured heights, or the laps' mean trace for loop closure; the
    residuals are drawn below.

    Parameters
    ----------
    estimate : pacing.fieldtest.estimate_result.PositionEstimate
        One position's CdA [m²] and lap traces.
    system : str
        "metric" or "imperial" (distance in km or mi, elevation in m or ft).

    Returns
    -------
    plotly.graph_objects.Figure
        Two rows sharing the distance axis.
    """
    figure = make_subplots(rows=2, cols=1, shared_xaxes=True, row_heights=[0.68, 0.32],
                           vertical_spacing=0.06)
    for index, trace in enumerate(estimate.traces):
        color = LAP_COLORS[index % len(LAP_COLORS)]
        x = to_display(np.asarray(trace.distance, dtype=float), "distance", system)
        name = f"lap {index + 1}"
        figure.add_trace(go.Scatter(
            x=x, y=to_display(np.asarray(trace.virtual_elevation), "elevation", system),
            mode="lines", line=dict(color=color, width=1.6), name=f"{name}, virtual",
            legendgroup=name, hovertemplate="%{x:.2f}: %{y:.1f}<extra>" + name + "</extra>"),
            row=1, col=1)
        reference = (trace.measured_elevation if trace.measured_elevation is not None
                     else trace.reference_elevation)
        figure.add_trace(go.Scatter(
            x=x, y=to_display(np.asarray(reference), "elevation", system), mode="lines",
            line=dict(color=REFERENCE_COLOR, width=1, dash="dot"),
            name=f"{name}, {'measured' if trace.measured_elevation is not None else 'mean'}",
            legendgroup=name, showlegend=index == 0, hoverinfo="skip"), row=1, col=1)
        figure.add_trace(go.Scatter(
            x=x, y=to_display(np.asarray(trace.residual), "elevation", system), mode="lines",
            line=dict(color=color, width=1.2), legendgroup=name, showlegend=False,
            hovertemplate="%{x:.2f}: %{y:+.2f}<extra>" + name + "</extra>"), row=2, col=1)
    elev = unit_label("elevation", system)
    figure.update_yaxes(title_text=f"elevation [{elev}]", row=1, col=1)
    figure.update_yaxes(title_text=f"virtual − reference [{elev}]", row=2, col=1,
                        zeroline=True, zerolinecolor=INK)
    figure.update_xaxes(title_text=f"distance from the lap start "
                                   f"[{unit_label('distance', system)}]", row=2, col=1)
    figure.update_layout(height=460, margin=dict(l=10, r=10, t=40, b=10),
                         plot_bgcolor="white", paper_bgcolor="white", font=dict(color=INK),
                         title=dict(text=f"{estimate.label}: CdA {estimate.drag_area:.4f} m²",
                                    x=0, font=dict(size=14)),
                         legend=dict(orientation="h", yanchor="bottom", y=1.02, x=0.4))
    figure.update_xaxes(showgrid=True, gridcolor="#e7ebef")
    figure.update_yaxes(showgrid=True, gridcolor="#e7ebef")
    return figure


def road_test_cda_note() -> str:
    """What the measured CdA leaves out.

    The rotating-wheel area F_w and the bearing friction of Martin et al. (1998), which the
    fit takes off and the race model adds back.

    Returns
    -------
    str
        The note, with F_w in m².

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    from pacing.physics.cycling import MARTIN_1998
    from ui.text import ROAD_TEST_CDA_NOTE

    return ROAD_TEST_CDA_NOTE.format(wheel=MARTIN_1998["wheel_drag_area"])
