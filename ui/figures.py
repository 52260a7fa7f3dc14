"""Plotly figures of the web app. Display only: every number comes from the library, already
computed in SI units; these functions convert to the chosen unit system and draw.

The page's own figures are written as plotly's plain data (`profile_spec`, `route_map_spec`,
`along_course_spec`): the page caches that data with st.cache_data and draws it with
`drawable`, without building and validating plotly objects on every new plan (tests check the
data against plotly's own validation and subplot layout). `profile_figure`, `route_map_figure`
and `along_course_figure` return the same as plotly figures. Lines are thinned to at most
MAX_LINE_POINTS points by `extremes`, which keeps every peak and dip.

Palette: grade is drawn with cmocean "balance" (Thyng et al. 2016, Oceanography 29(3):9-13,
doi:10.5670/oceanog.2016.66), a perceptually uniform diverging map centred on 0 % grade: blue
downhill, red uphill, pale on the flat. Lines use a small palette of our own.
"""

from __future__ import annotations

import math

import numpy as np
import plotly.graph_objects as go

from pacing.display.units import to_display, unit_label

GRADE_COLORSCALE = "balance"
"""cmocean "balance", built into plotly."""
GRADE_COLOR_LIMIT = 0.12
"""Grades beyond ±12 % get the end colours of the scale [-]."""
MAX_PROFILE_BARS = 500
"""The shaded profile is drawn with at most this many bars (display only)."""
MAX_LINE_POINTS = 2000
"""Lines along the course are drawn with at most this many points (display only): a screen is
narrower than that, and `extremes` keeps the lowest and highest point of every stretch, so
peaks, dips and the braking before a corner stay visible."""

INK = "#1d2b3a"
"""Text and the course's line; the other colours mark one quantity each."""
SPEED_COLOR = "#0f6e8c"
POWER_COLOR = "#b5542c"
WIND_COLOR = "#5a6b2f"
RESERVE_COLOR = "#6a3d9a"
BOUNDARY_COLOR = "rgba(29,43,58,0.35)"
GAP_COLOR = "rgba(181,84,44,0.15)"
"""Band over a stretch the recording has no points for, joined by a straight line."""


def extremes(values, limit: int = MAX_LINE_POINTS) -> np.ndarray:
    """Indices of at most `limit` points of a line that keep its shape on screen (display
    only): the first and the last point, and in each of (limit - 2) // 2 equal stretches the
    lowest and the highest point, in order along the line (min-max decimation, common
    practice in plotting long series).

    Parameters
    ----------
    values : array_like
        The line's values, one per point [any unit].
    limit : int
        Most points kept [-].

    Returns
    -------
    numpy.ndarray
        Increasing indices into `values`; every index when there are at most `limit`.
    """
    values = np.asarray(values, dtype=float)
    count = values.size
    if count <= limit:
        return np.arange(count)
    stretches = max((limit - 2) // 2, 1)
    width = -(-count // stretches)
    padded = np.pad(values, (0, stretches * width - count), mode="edge")
    padded = padded.reshape(stretches, width)
    start = np.arange(stretches) * width
    lowest = start + np.argmin(np.where(np.isnan(padded), np.inf, padded), axis=1)
    highest = start + np.argmax(np.where(np.isnan(padded), -np.inf, padded), axis=1)
    chosen = np.concatenate(([0, count - 1], lowest, highest))
    return np.unique(np.minimum(chosen, count - 1))


def figure_spec(figure: go.Figure) -> dict:
    """The figure as plain data (plotly's own dict, arrays packed as typed arrays): what the
    page caches with st.cache_data, which hands every session its own copy.

    Parameters
    ----------
    figure : plotly.graph_objects.Figure
        A figure made by this module.

    Returns
    -------
    dict
        ``{"data": [...], "layout": {...}}``.
    """
    return figure.to_dict()


def drawable(spec: dict) -> go.Figure:
    """A figure again from `figure_spec`, without validating every property a second time
    (it was validated when it was made; validation costs more than the drawing's data).

    Parameters
    ----------
    spec : dict
        What `figure_spec` returned.

    Returns
    -------
    plotly.graph_objects.Figure
    """
    try:
        return go.Figure(spec, _validate=False)
    except TypeError:  # a plotly without the private switch: validate again
        return go.Figure(spec)


def _styled(layout: dict, height: int, axes: tuple[str, ...] = ("xaxis", "yaxis")) -> dict:
    """`layout` on white with light grid lines on `axes` and no legend, `height` tall [px]
    (the spec form of `_layout`)."""
    for axis in axes:
        layout[axis] = {**layout.get(axis, {}), "showgrid": True, "gridcolor": "#e7ebef",
                        "zeroline": False}
    layout.update(height=height, margin={"l": 10, "r": 10, "t": 30, "b": 10},
                  plot_bgcolor="white", paper_bgcolor="white", font={"color": INK},
                  showlegend=False)
    return layout


def _grade_colorscale() -> list[list]:
    """GRADE_COLORSCALE as plotly's validation spells a named scale out: evenly spaced
    [position, colour] pairs."""
    import plotly.colors

    colors = getattr(plotly.colors.cmocean, GRADE_COLORSCALE)
    return [[i / (len(colors) - 1), color] for i, color in enumerate(colors)]


def grade_colors(grade, limit: float) -> list[str]:
    """The colour of each grade [-] on GRADE_COLORSCALE from -limit to +limit [-] (beyond:
    the end colours), as "rgb(r, g, b)" strings (display only)."""
    import plotly.colors

    position = 0.5 + 0.5 * np.clip(np.asarray(grade, dtype=float) / limit, -1.0, 1.0)
    return plotly.colors.sample_colorscale(_grade_colorscale(),
                                           np.nan_to_num(position, nan=0.5).tolist())


def profile_spec(course, system: str, bounds=None, height: int = 300) -> dict:
    """`profile_figure` as plotly's plain data, written directly (no plotly objects to build
    and validate). Parameters as `profile_figure`.

    Returns
    -------
    dict
        ``{"data": [...], "layout": {...}}`` (`drawable` makes a figure of it).
    """
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
    # the bars get their colours as colour strings, worked out here: numbers mapped through
    # a colour scale on bars make the browser's plotly log one "Invalid color specifier"
    # per bar and property; the colour bar is drawn by an invisible marker of its own
    data: list[dict] = [{
        "type": "bar", "x": (x0 + x1) / 2, "y": top - base, "base": base, "width": x1 - x0,
        "marker": {"color": grade_colors(grade, limit), "line": {"width": 0}},
        "customdata": 100 * grade, "name": "grade", "showlegend": False,
        "hovertemplate": "%{x:.2f}: grade %{customdata:.1f} %<extra></extra>"},
        {"type": "scatter", "x": [None], "y": [None], "mode": "markers", "showlegend": False,
         "hoverinfo": "skip", "name": "grade scale",
         "marker": {"color": [0.0], "colorscale": _grade_colorscale(), "cmin": -100 * limit,
                    "cmax": 100 * limit, "showscale": True,
                    "colorbar": {"title": {"text": "grade [%]"}, "thickness": 12,
                                 "len": 0.9}}}]
    raw = np.asarray(course.raw_elevation, dtype=float)
    shown = extremes(raw)
    data.append({"type": "scatter", "x": to_display(distance[shown], "distance", system),
                 "y": to_display(raw[shown], "elevation", system), "mode": "lines",
                 "line": {"color": "rgba(29,43,58,0.45)", "width": 1},
                 "name": "heights as recorded", "hoverinfo": "skip"})
    shown = extremes(elevation)
    data.append({"type": "scatter", "x": to_display(distance[shown], "distance", system),
                 "y": to_display(elevation[shown], "elevation", system), "mode": "lines",
                 "line": {"color": INK, "width": 1.6}, "name": "heights cleaned",
                 "hovertemplate": "%{x:.2f}, %{y:.0f}<extra></extra>"})
    if bounds is not None and len(bounds) > 2:
        inner = to_display(distance[np.asarray(bounds)[1:-1]], "distance", system)
        low, high = base, floor + 1.1 * span
        data.append({"type": "scatter", "x": np.repeat(inner, 3),
                     "y": np.tile([low, high, np.nan], inner.size), "mode": "lines",
                     "line": {"color": BOUNDARY_COLOR, "width": 1, "dash": "dot"},
                     "hoverinfo": "skip", "connectgaps": False, "name": "segment boundaries"})
    layout = {"bargap": 0,
              "xaxis": {"title": {"text": f"distance [{unit_label('distance', system)}]"}},
              "yaxis": {"title": {"text": f"elevation [{unit_label('elevation', system)}]"},
                        "range": [base, floor + 1.1 * span]}}
    spec = {"data": data, "layout": _styled(layout, height)}
    # a legend for the lines (the grade's colours have their colour bar)
    spec["layout"].update(showlegend=True, legend={"orientation": "h", "x": 0.0, "y": 1.12,
                                                   "bgcolor": "rgba(255,255,255,0)"})
    for trace in data[2:]:
        trace["showlegend"] = True
    if any(gap.handling == "join" for gap in getattr(course, "gaps", ())):
        figure = go.Figure(spec)  # the gaps' bands are placed by plotly's add_vrect
        _mark_gaps(figure, course, system)
        return figure.to_dict()
    return spec


def profile_figure(course, system: str, bounds=None, height: int = 300) -> go.Figure:
    """Elevation along the course shaded by grade, the raw profile as a thin line, and the
    segment boundaries (point indices) as dotted lines, and a band over each gap in the
    recording joined by a straight line (course.gaps).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (distance, elevation and raw elevation per point [m], gaps).
    system : str
        "metric" (km, m) or "imperial" (mi, ft) [-].
    bounds : array_like of int or None
        Segment boundary point indices [-].
    height : int
        The figure's height [px].

    Returns
    -------
    plotly.graph_objects.Figure
        Grade colours in %, at most MAX_PROFILE_BARS bars and MAX_LINE_POINTS points a line.
    """
    return drawable(profile_spec(course, system, bounds, height))


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


def route_map_spec(course, system: str, wind_speed: float = 0.0, wind_from: float = 0.0,
                   height: int = 360) -> dict:
    """`route_map_figure` as plotly's plain data, written directly. Parameters as
    `route_map_figure`.

    Returns
    -------
    dict
        ``{"data": [...], "layout": {...}}`` (`drawable` makes a figure of it).
    """
    latitude = np.asarray(course.latitude, dtype=float)
    longitude = np.asarray(course.longitude, dtype=float)
    # a path, not a series: the northmost, southmost, eastmost and westmost point of every
    # stretch keep its corners and turnarounds
    shown = np.union1d(extremes(latitude, MAX_LINE_POINTS // 2),
                       extremes(longitude, MAX_LINE_POINTS // 2))
    data = [
        {"type": "scatter", "x": longitude[shown], "y": latitude[shown], "mode": "lines",
         "line": {"color": INK, "width": 2.5}, "hoverinfo": "skip"},
        {"type": "scatter", "x": [float(longitude[0]), float(longitude[-1])],
         "y": [float(latitude[0]), float(latitude[-1])], "mode": "markers+text",
         "marker": {"size": [13, 10], "color": ["#2e8b57", "#b22222"],
                    "symbol": ["circle", "square"]},
         "text": ["start", "finish"], "textposition": ["top right", "bottom left"],
         "hoverinfo": "skip"}]
    mean_latitude = float(np.mean(latitude))
    layout: dict = {
        "yaxis": {"scaleanchor": "x",
                  "scaleratio": 1.0 / max(math.cos(math.radians(mean_latitude)), 0.05),
                  "title": {"text": "latitude [°]"}},
        "xaxis": {"title": {"text": "longitude [°]"}}}
    if wind_speed > 0:
        blows_to = math.radians((wind_from + 180.0) % 360.0)
        length = 55.0
        layout["annotations"] = [
            {"x": 0.93, "y": 0.88, "xref": "paper", "yref": "paper", "axref": "pixel",
             "ayref": "pixel", "ax": -length * math.sin(blows_to),
             "ay": length * math.cos(blows_to), "showarrow": True, "arrowhead": 3,
             "arrowsize": 1.4, "arrowwidth": 3, "arrowcolor": WIND_COLOR, "text": "",
             "standoff": 0},
            {"x": 0.93, "y": 0.99, "xref": "paper", "yref": "paper", "showarrow": False,
             "text": (f"wind {to_display(wind_speed, 'wind_speed', system):.0f} "
                      f"{unit_label('wind_speed', system)} from {wind_from:.0f}°"),
             "font": {"color": WIND_COLOR, "size": 12}, "xanchor": "right"}]
    return {"data": data, "layout": _styled(layout, height)}


def route_map_figure(course, system: str, wind_speed: float = 0.0, wind_from: float = 0.0,
                     height: int = 360) -> go.Figure:
    """The route on plain longitude/latitude axes (no map tiles, works offline), start and
    finish marked, and an arrow showing where the wind blows to.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (latitude and longitude per point [deg]).
    system : str
        "metric" or "imperial" (the wind's unit) [-].
    wind_speed : float
        At the measurement height [m/s]; no arrow when 0.
    wind_from : float
        Direction the wind blows FROM [deg clockwise from north].
    height : int
        The figure's height [px].

    Returns
    -------
    plotly.graph_objects.Figure
        The path drawn with at most MAX_LINE_POINTS points.
    """
    return drawable(route_map_spec(course, system, wind_speed, wind_from, height))


EXHAUSTED_COLOR = "#c0392b"
"""The marker where a reserve (W′, D′) runs out."""


def _exhausted_trace(axis: str, x: np.ndarray, balance: np.ndarray, reserve: str,
                     system: str) -> dict | None:
    """A marker at zero where the reserve first falls below zero, if it does (display only):
    a scatter trace on the axes `axis` ("" for the first, "2", …), or None."""
    below = np.flatnonzero(np.asarray(balance) < 0)
    if below.size == 0:
        return None
    where = float(to_display(float(x[below[0]]), "distance", system))
    return {"type": "scatter", "x": [where], "y": [0.0], "mode": "markers+text",
            "text": [f"{reserve} runs out"], "textposition": "top right",
            "marker": {"color": EXHAUSTED_COLOR, "size": 10, "symbol": "x"},
            "textfont": {"color": EXHAUSTED_COLOR},
            "hovertemplate": f"{reserve} runs out at %{{x:.2f}}<extra></extra>",
            "xaxis": f"x{axis}", "yaxis": f"y{axis}"}


def _along_panels(distance: np.ndarray, speed, power, headwind, w_prime_balance, system: str,
                  reserve: str) -> list[tuple[str, np.ndarray, np.ndarray, str]]:
    """(axis title, x [m], y in display units, colour) of each panel of the along-course
    figure, top to bottom."""
    middle = 0.5 * (distance[1:] + distance[:-1])
    speed = np.asarray(speed, dtype=float)
    panels = [(f"speed [{unit_label('speed', system)}]",
               distance if speed.size == distance.size else middle,
               to_display(speed, "speed", system), SPEED_COLOR)]
    if power is not None:
        panels.append(("power [W]", middle, np.asarray(power, dtype=float), POWER_COLOR))
    if headwind is not None:
        panels.append((f"headwind [{unit_label('wind_speed', system)}]", middle,
                       to_display(np.asarray(headwind), "wind_speed", system), WIND_COLOR))
    if w_prime_balance is not None:
        balance = np.asarray(w_prime_balance, dtype=float)
        x = distance if balance.size == distance.size else middle
        shown_reserve = balance if reserve == "D′" else balance / 1000.0
        title = "D′ left [m]" if reserve == "D′" else "W′ left [kJ]"
        # a reserve is never below zero: the line stops at zero and a marker says where it
        # runs out (the warning says by how much)
        panels.append((title, x, np.maximum(shown_reserve, 0.0), RESERVE_COLOR))
    return panels


EASING_COLOR = "#7f8c8d"
"""Markers where the rider brakes or coasts below the plan."""


def _easing_trace(axis: str, events, system: str) -> dict:
    """Markers on the power panel (axes `axis`) at each stretch where the rider eases off,
    labelled by what happens there (display only)."""
    from ui.text import EASING_WORDS

    x = [float(to_display(0.5 * (e.start + e.end), "distance", system)) for e in events]
    speed = unit_label("speed", system)
    text = [f"{EASING_WORDS.get(e.kind, e.kind)}, down to "
            f"{float(to_display(e.lowest_speed, 'speed', system)):.0f} {speed}" for e in events]
    return {"type": "scatter", "x": x, "y": [0.0] * len(x), "mode": "markers",
            "marker": {"color": EASING_COLOR, "size": 9, "symbol": "triangle-up"},
            "text": text, "hovertemplate": "%{x:.2f}: %{text}<extra></extra>",
            "name": "eases off", "xaxis": f"x{axis}", "yaxis": f"y{axis}"}


def along_course_spec(distance, speed, power=None, headwind=None, w_prime_balance=None,
                      system: str = "metric", height_per_panel: int = 170,
                      reserve: str = "W′", events=()) -> dict:
    """`along_course_figure` as plotly's plain data, written directly: the panels stacked on
    one shared distance axis as plotly's make_subplots(rows=n, shared_xaxes=True,
    vertical_spacing=0.04) lays them out, without building and validating plotly objects (the
    page makes this figure for every new plan). Parameters as `along_course_figure`;
    `events` (pacing.plan.energy.EasingEvent) are marked at the foot of the power panel.

    Returns
    -------
    dict
        ``{"data": [...], "layout": {...}}`` (ui.figures.drawable makes a figure of it).
    """
    distance = np.asarray(distance, dtype=float)
    panels = _along_panels(distance, speed, power, headwind, w_prime_balance, system, reserve)
    count = len(panels)
    spacing = 0.04
    height = (1.0 - spacing * (count - 1)) / count
    grid = {"showgrid": True, "gridcolor": "#e7ebef", "zeroline": False}
    data: list[dict] = []
    layout: dict = {}
    for row, (title, x, y, color) in enumerate(panels, start=1):
        axis = "" if row == 1 else str(row)
        shown = extremes(y)
        trace = {"type": "scatter", "x": to_display(x[shown], "distance", system),
                 "y": np.asarray(y)[shown], "mode": "lines",
                 "line": {"color": color, "width": 1.5},
                 "hovertemplate": "%{x:.2f}: %{y:.1f}<extra></extra>",
                 "fillcolor": "rgba(90,107,47,0.15)", "xaxis": f"x{axis}", "yaxis": f"y{axis}"}
        if title.startswith("headwind"):
            trace["fill"] = "tozeroy"
        data.append(trace)
        below = count - row  # panels under this one; the sums as make_subplots adds them
        bottom = sum([height] * below) + below * spacing
        layout[f"xaxis{axis}"] = {"anchor": f"y{axis}", "domain": [0.0, 1.0], **grid}
        if row < count:
            layout[f"xaxis{axis}"].update(matches=f"x{count}", showticklabels=False)
        layout[f"yaxis{axis}"] = {"anchor": f"x{axis}",
                                  "domain": [max(bottom, 0.0), min(bottom + height, 1.0)],
                                  "title": {"text": title}, **grid}
        if title == "power [W]":  # from zero: a 1 W dip must not fill the panel
            top = float(np.nanmax(y)) if np.size(y) else 1.0
            layout[f"yaxis{axis}"]["range"] = [0.0, 1.1 * max(top, 1.0)]
            if events:
                data.append(_easing_trace(axis, events, system))
    layout[f"xaxis{count if count > 1 else ''}"]["title"] = {
        "text": f"distance [{unit_label('distance', system)}]"}
    if w_prime_balance is not None:
        marker = _exhausted_trace("" if count == 1 else str(count), panels[-1][1],
                                  np.asarray(w_prime_balance, dtype=float), reserve, system)
        if marker is not None:
            data.append(marker)
    layout.update(height=height_per_panel * count + 40,
                  margin={"l": 10, "r": 10, "t": 30, "b": 10}, plot_bgcolor="white",
                  paper_bgcolor="white", font={"color": INK}, showlegend=False)
    return {"data": data, "layout": layout}


def along_course_figure(distance, speed, power=None, headwind=None, w_prime_balance=None,
                        system: str = "metric", height_per_panel: int = 170,
                        reserve: str = "W′") -> go.Figure:
    """Speed, power, headwind component and W′ balance along the course, sharing one x axis.

    Parameters
    ----------
    distance : array_like
        Point distances [m] (N).
    speed : array_like
        Speed per point (N) or per piece (N-1) [m/s].
    power : array_like or None
        Crank power per piece [W] (N-1).
    headwind : array_like or None
        Headwind component per piece [m/s] (N-1).
    w_prime_balance : array_like or None
        W′ balance per point [J] (N); with reserve="D′" the D′ balance of a runner per piece
        end [m] (N-1).
    system : str
        "metric" or "imperial" [-].
    height_per_panel : int
        Height of one panel [px].
    reserve : str
        "W′" (cycling, shown in kJ) or "D′" (running, shown in m) [-].

    Returns
    -------
    plotly.graph_objects.Figure
        One panel per quantity given, lines of at most MAX_LINE_POINTS points (`extremes`).
    """
    return drawable(along_course_spec(distance, speed, power, headwind, w_prime_balance,
                                      system, height_per_panel, reserve))
