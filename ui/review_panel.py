"""Review a race in the web app: upload the ride, compare it with the page's plan, see where
time was won or lost and why, and the drag area on the day.

The review is pacing.review.race.review_race on the page's plan (made by the one planning
chain from the page's inputs, ui.pipeline.race_request); the ride is read by
pacing.io.rides.read_race. Pure helpers build the tables and plotly figures (`gap_figure`,
`power_figure`, `split_table`, `segment_frame`), the review's JSON (`review_json`) and the
day's CdA to keep (`day_drag_area`); `render` draws the panel. The CdA on the day can be kept
on a setup of the library with its 95 % interval and the race it came from (Library.update_setup
with a DragAreaOrigin) when the library panel has an athlete chosen, and then put in the page's
CdA box to plan the next race (ui.library_panel.fill_page_inputs). The review can be kept with
the saved plan the page shows when it was opened from the library (Library.add_plan_review).
"""

from __future__ import annotations

import dataclasses
import datetime
import hashlib
from typing import Any

import numpy as np
import pandas as pd
import plotly.graph_objects as go
import streamlit as st

from pacing.display.notices import describe
from pacing.display.units import to_display, unit_label
from pacing.errors import ConflictError, InputError, first_line

PLAN_COLOR = "#3d5a80"
"""Planned lines (our own palette)."""

RIDE_COLOR = "#b5542c"
"""Ridden lines."""

GAP_COLOR = "#1b7f79"
"""The time-gap line."""

SPLIT_LABELS = {"power_s": "rider's power", "drag_s": "drag area (position)",
                "rolling_s": "rolling resistance", "wind_s": "wind and air",
                "stops_s": "stops and braking", "other_s": "other (not in the model)"}
"""Rows of the split table, by JSON key."""

CAUTION = ("Speeds and times are estimates from a model and a recording, not safe limits: ride "
           "within your skills and the road, obey traffic law and race rules, and consult a "
           "physician before hard efforts.")


def split_table(review: Any) -> pd.DataFrame:
    """Where the time went: one row per cause, seconds (positive: slower than planned).

    Parameters
    ----------
    review : pacing.review.race.RaceReview

    Returns
    -------
    pandas.DataFrame
        Columns "Cause" and "Time [s]", the last row the total.
    """
    parts = review.attribution.parts()
    rows = [{"Cause": SPLIT_LABELS[key], "Time [s]": round(value, 1)}
            for key, value in parts.items()]
    rows.append({"Cause": "total (ridden − planned)",
                 "Time [s]": round(review.actual_time - review.planned_time, 1)})
    return pd.DataFrame(rows)


def segment_frame(review: Any, system: str) -> pd.DataFrame:
    """The segment table (pacing.io.review_file.review_table) in the page's units."""
    from pacing.io.review_file import review_table

    return review_table(review, system)


def gap_figure(review: Any, system: str) -> go.Figure:
    """The time gap to the plan along the course (positive: behind the plan).

    Parameters
    ----------
    review : pacing.review.race.RaceReview
    system : str
        "metric" or "imperial".

    Returns
    -------
    plotly.graph_objects.Figure
    """
    x = np.asarray(to_display(review.distance, "distance", system))
    figure = go.Figure(go.Scatter(x=x, y=review.gap_along, mode="lines",
                                  line={"color": GAP_COLOR, "width": 2},
                                  name="ridden − planned",
                                  hovertemplate="%{x:.2f}: %{y:+.1f} s<extra></extra>"))
    figure.add_hline(y=0.0, line={"color": "rgba(29,43,58,0.4)", "width": 1})
    figure.update_layout(height=300, margin={"l": 10, "r": 10, "t": 30, "b": 10},
                         title="Time behind (+) or ahead of (−) the plan",
                         xaxis_title=f"distance [{unit_label('distance', system)}]",
                         yaxis_title="gap [s]", showlegend=False)
    return figure


def power_figure(review: Any, system: str, window: float = 200.0) -> go.Figure:
    """Planned and ridden power along the course, the ridden one averaged over `window` [m].

    Parameters
    ----------
    review : pacing.review.race.RaceReview
    system : str
        "metric" or "imperial".
    window : float
        Length of the moving mean of the ridden power [m].

    Returns
    -------
    plotly.graph_objects.Figure
    """
    middle = 0.5 * (review.distance[1:] + review.distance[:-1])
    x = np.asarray(to_display(middle, "distance", system))
    step = float(np.median(np.diff(review.distance))) if review.distance.size > 1 else 1.0
    width = max(int(round(window / step)), 1)
    ridden = np.convolve(review.actual_power, np.ones(width) / width, mode="same")
    figure = go.Figure()
    figure.add_trace(go.Scatter(x=x, y=review.planned_power, mode="lines", name="planned",
                                line={"color": PLAN_COLOR, "width": 2, "shape": "hv"}))
    figure.add_trace(go.Scatter(x=x, y=ridden, mode="lines", name="ridden",
                                line={"color": RIDE_COLOR, "width": 1.5}))
    figure.update_layout(height=300, margin={"l": 10, "r": 10, "t": 30, "b": 10},
                         title="Power, planned and ridden",
                         xaxis_title=f"distance [{unit_label('distance', system)}]",
                         yaxis_title="power [W]", legend={"orientation": "h"})
    return figure


def fitted_line(review: Any) -> str | None:
    """The drag area on the day in one line, None when it was not fitted."""
    if review.fitted is None:
        return None
    fit = review.fitted.as_json()
    interval = fit["cda_ci95"]
    shown = f" (95 % interval {interval[0]:.3f}-{interval[1]:.3f})" if interval else ""
    crr = fit["crr_ci95"]
    crr_shown = f" ({crr[0]:.4f}-{crr[1]:.4f})" if crr else ""
    wind = "estimated" if review.fitted.wind_estimated else "given"
    return (f"CdA on the day {fit['cda_m2']:.3f} m²{shown}; Crr {fit['crr']:.4f}{crr_shown}; "
            f"wind {wind}: {fit['wind_speed_mps']:.1f} m/s at 10 m from "
            f"{fit['wind_from_deg']:.0f}°")


def review_for_page(ride: bytes, name: str, arguments: tuple, fit: bool = True) -> Any:
    """The page's plan (ui.pipeline.race_request → pacing.plan.race.plan_race) and the review
    of the uploaded ride against it.

    Parameters
    ----------
    ride : bytes
        The race file.
    name : str
        Its file name (its extension tells CSV from GPX).
    arguments : tuple
        (course, bounds, athlete, weather, approach) as the page gives them to
        ui.pipeline.race_outcome.
    fit : bool
        Fit the drag area on the day.

    Returns
    -------
    pacing.review.race.RaceReview
    """
    from pacing.io.rides import read_race
    from pacing.plan.race import plan_race
    from pacing.review.race import review_race
    from ui.pipeline import race_request

    kind = name.rsplit(".", 1)[-1].lower() if "." in name else None
    recording = read_race(ride, name=name.rsplit(".", 1)[0],
                          kind=kind if kind in ("csv", "gpx") else None)
    result = plan_race(race_request(*arguments))
    return review_race(result, recording, fit=fit, bootstrap=200)


def review_json(review: Any) -> dict[str, Any]:
    """The review as JSON, as ``pacing review --json`` prints it (notices with metric words):
    what the library keeps with a saved plan."""
    return review.as_json(lambda notices: [{**n.as_dict(), "text": describe(n, "metric")}
                                           for n in notices])


def day_drag_area(review: Any, ride_name: str, day: datetime.date | None = None
                  ) -> tuple[float, Any]:
    """The day's CdA to keep on a setup, and its origin (interval and source).

    Parameters
    ----------
    review : pacing.review.race.RaceReview
        A review with a fit (``review.fitted`` not None).
    ride_name : str
        The race file's name, for the source.
    day : datetime.date or None
        The day of the review; None for today (UTC).

    Returns
    -------
    tuple
        (CdA rounded to 0.0001 m² [m²], pacing.store.records.DragAreaOrigin with the 95 %
        interval widened outward to 0.0001 m², or None when the fit has no interval).
    """
    from pacing.store.drag_origin import fitted_drag_area, race_review_source

    fit = review.fitted.as_json()
    return fitted_drag_area(fit["cda_m2"], fit["cda_ci95"], race_review_source(ride_name, day))


def _library_or_none() -> Any:
    """The library the library panel has open, or None."""
    if "library:location" not in st.session_state:
        return None
    from ui.library_panel import _library

    return _library(st.session_state.get("library:location"))


def _keep_cda(review: Any, ride_name: str) -> None:
    """Offer to keep the day's CdA (with its interval and the race) on a setup of the library
    panel's athlete, then to put it in the page's CdA box for the next plan."""
    owner = st.session_state.get("library:athlete_id")
    library = _library_or_none()
    if review.fitted is None or owner is None or library is None:
        st.caption("Open the library and choose an athlete to keep this CdA on a setup.")
        return
    records = library.setups(int(owner))
    if not records:
        st.caption("The athlete has no setup in the library yet.")
        return
    labels = {f"{r.setup.name} (CdA {r.setup.drag_area:.3f} m²)": r for r in records}
    chosen = labels[st.selectbox("Setup", list(labels), key="review_setup")]
    cda, origin = day_drag_area(review, ride_name)
    if st.button("Keep this CdA on the setup", key="review_keep_cda"):
        try:
            stored = library.update_setup(
                chosen.id, dataclasses.replace(chosen.setup, drag_area=cda),
                revision=chosen.revision, drag_area_origin=origin)
        except (InputError, ConflictError) as error:
            st.error(first_line(error), icon="⚠️")
            return
        st.session_state["review:kept_cda"] = cda
        shown = (f" (95 % interval {origin.low_m2:.4f}-{origin.high_m2:.4f} m², "
                 f"{origin.source})" if origin is not None else " (the fit gave no interval)")
        st.success(f"Setup {stored.setup.name!r} now has CdA {cda:.4f} m²{shown}.")
    kept = st.session_state.get("review:kept_cda")
    if kept is not None:
        from ui.library_panel import fill_page_inputs

        st.button(f"Plan the next race with CdA {kept:.4f} m²", key="review_use_cda",
                  on_click=fill_page_inputs, args=({"drag_area": kept},),
                  help="puts the day's CdA in the page's CdA box (my own value)")


def _keep_review(review: Any, ride_name: str, digest: str) -> None:
    """Offer to keep the review with the saved plan the page shows (opened from the
    library)."""
    from ui.library_data import LIBRARY_COURSE

    shown = st.session_state.get(LIBRARY_COURSE) or {}
    library = _library_or_none()
    if library is None or shown.get("plan_id") is None:
        st.caption("Show a saved plan of the library in the page (Library → Saved plans → "
                   "Show in the page) to keep this review with it.")
        return
    if st.button(f"Keep this review with the saved plan {shown.get('plan')!r}",
                 key="review_keep_review"):
        try:
            kept = library.add_plan_review(int(shown["plan_id"]), review_json(review),
                                           ride_name=ride_name, ride_sha256=digest)
        except (InputError, ConflictError) as error:
            st.error(first_line(error), icon="⚠️")
            return
        st.success(f"Kept the review of {ride_name} with the saved plan {shown.get('plan')!r} "
                   f"(race review {kept.id}).")


def _show(review: Any, system: str) -> None:
    """The review's numbers, charts, tables and notices."""
    cols = st.columns(3)
    cols[0].metric("Planned", _clock(review.planned_time))
    cols[1].metric("Ridden", _clock(review.actual_time),
                   delta=f"{review.actual_time - review.planned_time:+.0f} s",
                   delta_color="inverse")
    line = fitted_line(review)
    if line:
        cols[2].metric("CdA on the day", f"{review.fitted.drag_area:.3f} m²")
    for notice in review.notices:
        if notice.level == "warning":
            st.warning(describe(notice, system), icon="⚠️")
    st.plotly_chart(gap_figure(review, system), use_container_width=True)
    st.plotly_chart(power_figure(review, system), use_container_width=True)
    st.markdown("**Where the time went** (positive: slower than planned; the parts add up)")
    st.dataframe(split_table(review), hide_index=True)
    st.dataframe(segment_frame(review, system), hide_index=True)
    if line:
        st.caption(line)
    for notice in review.notices:
        if notice.level != "warning":
            st.caption(describe(notice, system))
    from pacing.io.review_file import review_to_csv

    st.download_button("Download the review table (CSV)", review_to_csv(review, system),
                       file_name="race_review.csv", mime="text/csv", key="review_csv")
    st.caption(CAUTION)


def _clock(seconds: float) -> str:
    from pacing.display.units import format_duration

    return format_duration(seconds)


def render(course: Any, bounds: Any, athlete: dict, weather: dict, approach: dict,
           system: str) -> Any:
    """Draw the race-review panel against the page's plan.

    Parameters
    ----------
    course, bounds, athlete, weather, approach
        The page's inputs, as given to ui.pipeline.race_outcome.
    system : str
        "metric" or "imperial".

    Returns
    -------
    pacing.review.race.RaceReview or None
        The review shown, None when there is none.
    """
    st.caption("Upload the ride of the race (CSV with time_s, power_w and speed_mps or "
               "distance_m, latitude and longitude when recorded; or GPX with power in the "
               "track-point extensions). The page's plan is the plan reviewed.")
    upload = st.file_uploader("Race file", type=["csv", "gpx"], key="review_file")
    fit = st.checkbox("Fit the drag area (and the wind) on the day", value=True,
                      key="review_fit")
    if upload is None:
        st.info("Upload the race's ride to review it against the plan.")
        return None
    data = upload.getvalue()
    key = hashlib.sha256(data + repr((upload.name, athlete, weather, approach, fit,
                                      np.asarray(bounds).tolist(), course.name,
                                      float(course.distance[-1]))).encode()).hexdigest()
    cache = st.session_state.setdefault("review:cache", {})
    if key not in cache:
        try:
            with st.spinner("Reviewing the race…"):
                cache.clear()
                st.session_state.pop("review:kept_cda", None)
                cache[key] = review_for_page(data, upload.name,
                                             (course, bounds, athlete, weather, approach), fit)
        except InputError as error:
            st.error(first_line(error), icon="⚠️")
            return None
    review = cache[key]
    _show(review, system)
    _keep_cda(review, upload.name)
    _keep_review(review, upload.name, hashlib.sha256(data).hexdigest())
    return review
