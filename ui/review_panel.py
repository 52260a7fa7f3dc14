"""Review a race in the web app: upload the ride, compare it with the page's plan, see where
time was won or lost and why, and the drag area on the day.

The review is pacing.review.race.review_race on the page's plan (made by the one planning
chain from the page's inputs, ui.pipeline.race_request); the ride is read by
pacing.io.rides.read_race. Pure helpers build the tables and plotly figures (`gap_figure`,
`power_figure`, `split_table`, `segment_frame`), the review's JSON (`review_json`) and the
day's CdA to keep (`day_drag_area`); `render` draws the panel. The CdA on the day can be kept
on a setup of the library with its 95 % interval and the race it came from (Library.update_setup
with a DragAreaOrigin) when the library panel has an athlete chosen, and then put in the page's
CdA box to plan the next race (ui.library_panel.fill_page_inputs). The review is kept with its
plan in the library: with the saved plan the page shows when it was opened from the library
and the page still plans as it did (Library.add_plan_review); otherwise with the page's own
plan, saved together with the review in one step (one transaction, never replacing a saved
plan: ui.library_data.save_current_plan_with_review). A race file's review already kept with
a plan of the same finish time is named instead of offered again (`kept_with`).
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
    """The segment table (pacing.io.review_file.review_table) in the page's units, narrower
    so it fits the page: "From" left out (it is the row above's "To") and "Stopped" only when
    the rider stopped somewhere. The downloads keep the full table."""
    from pacing.io.review_file import review_table

    table = review_table(review, system)
    narrow = table.drop(columns=[c for c in table.columns if str(c).startswith("From [")])
    if "Stopped [s]" in narrow.columns and not (narrow["Stopped [s]"] > 0).any():
        narrow = narrow.drop(columns=["Stopped [s]"])
    return narrow


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


def kept_with(reviews: Any, digest: str, planned_time: float, finish_times: dict[int, float]
              ) -> Any:
    """The review of this race file already kept with a saved plan of this finish time, or
    None (so a second click keeps no copy).

    Parameters
    ----------
    reviews : sequence of pacing.store.records.PlanReviewRecord
        The kept reviews (Library.plan_reviews()).
    digest : str
        SHA-256 of the race file.
    planned_time : float
        The reviewed plan's finish time [s].
    finish_times : dict
        Saved plan id → its finish time [s].

    Returns
    -------
    pacing.store.records.PlanReviewRecord or None
    """
    from pacing.store.library_reviews import same_plan_time

    return next((r for r in reviews if r.ride_sha256 == digest and r.plan_id in finish_times
                 and same_plan_time(finish_times[r.plan_id], planned_time)), None)


def _keep_review(review: Any, ride_name: str, digest: str) -> None:
    """Offer to keep the review with its plan in the library: the saved plan the page shows
    (opened from the library) when the page still plans as it did, else the page's plan saved
    together with the review in one step."""
    from pacing.store.library_reviews import same_plan_time
    from ui.library_data import LIBRARY_COURSE

    message = st.session_state.pop("review:message", None)
    if message:
        st.success(message)
    library = _library_or_none()
    if library is None:
        st.caption("Open the coach's library to keep this review with its plan (a saved plan "
                   "shown in the page, or the page's plan saved with it).")
        return
    plans = {p.id: p for p in library.plans()}
    kept = kept_with(library.plan_reviews(), digest, review.planned_time,
                     {i: p.finish_time for i, p in plans.items()})
    if kept is not None:
        st.caption(f"This race's review is kept with the saved plan "
                   f"{plans[kept.plan_id].name!r} (race review {kept.id}).")
        return
    shown = st.session_state.get(LIBRARY_COURSE) or {}
    saved = plans.get(shown.get("plan_id"))
    if saved is not None and same_plan_time(saved.finish_time, review.planned_time):
        _keep_with_saved_plan(library, review, ride_name, digest, saved)
        return
    if saved is not None:
        st.caption(f"The page no longer plans as the saved plan {saved.name!r} did (finish "
                   f"{_clock(saved.finish_time)}, now {_clock(review.planned_time)}): the "
                   "review is of the page's plan.")
    saved = _saved_page_plan(library, plans, review.planned_time)
    if saved is not None:
        st.caption(f"The page's plan is saved in the library as {saved.name!r}.")
        _keep_with_saved_plan(library, review, ride_name, digest, saved)
        return
    _save_plan_with_review(library, review, ride_name, digest)


def _saved_page_plan(library: Any, plans: dict[int, Any], planned_time: float) -> Any:
    """The newest saved plan whose inputs are the page's plan (ui.library_data.PAGE_PLAN),
    e.g. saved before the race without being reopened since; None when there is none."""
    from pacing.store.library_reviews import same_plan_time
    from ui.library_data import PAGE_PLAN, same_page_plan

    page_plan = st.session_state.get(PAGE_PLAN)
    if not page_plan:
        return None
    for summary in plans.values():  # newest first
        if not same_plan_time(summary.finish_time, planned_time):
            continue
        try:
            if same_page_plan(library.plan(summary.id).inputs, page_plan["inputs"]):
                return summary
        except (InputError, ConflictError):
            continue
    return None


def _keep_with_saved_plan(library: Any, review: Any, ride_name: str, digest: str,
                          saved: Any) -> None:
    """"Keep this review with the saved plan …" (the plan the page shows)."""
    if st.button(f"Keep this review with the saved plan {saved.name!r}",
                 key="review_keep_review"):
        try:
            kept = library.add_plan_review(saved.id, review_json(review),
                                           ride_name=ride_name, ride_sha256=digest)
        except (InputError, ConflictError) as error:
            st.error(first_line(error), icon="⚠️")
            return
        st.session_state["review:message"] = (
            f"Kept the review of {ride_name} with the saved plan {saved.name!r} "
            f"(race review {kept.id}).")
        st.rerun()


def _save_plan_with_review(library: Any, review: Any, ride_name: str, digest: str) -> None:
    """"Save the page's plan with this review": the plan the page made (left by the library
    panel, ui.library_data.PAGE_PLAN) and the review in one transaction; a name already
    stored is asked about (keep both or cancel: a saved plan is never replaced)."""
    from pacing.store.library_reviews import same_plan_time
    from pacing.store.statements import NameTaken
    from ui.library_data import PAGE_PLAN, save_current_plan_with_review

    page_plan = st.session_state.get(PAGE_PLAN)
    if not page_plan or not same_plan_time(page_plan["result"]["finish_time"],
                                           review.planned_time):
        st.caption("Show a saved plan of the library in the page (Library → Saved plans → "
                   "Show in the page), or open the library with the page's plan, to keep "
                   "this review with it.")
        return
    name = st.text_input("Save the plan as", value=ride_name.rsplit(".", 1)[0][:200],
                         key=f"review_plan_name:{digest[:16]}",
                         help="the page's plan is saved in the library with this review")
    owner = st.session_state.get("library:athlete_id")
    filed = owner is not None and st.checkbox(
        f"File it under {st.session_state.get('library:filed_under') or 'the chosen athlete'}",
        value=True, key="review_plan_link")
    pressed = st.button("Save the page's plan with this review", key="review_save_plan",
                        type="primary")
    asking = st.session_state.get("review:asking") == name
    if asking:
        st.warning(f"A saved plan {name!r} is already in the library. Keep both (this one "
                   "gets a number) or cancel?")
        cols = st.columns(2)
        if cols[1].button("Cancel", key="review_save_plan_cancel"):
            st.session_state.pop("review:asking", None)
            st.rerun()
        if not cols[0].button("Keep both", key="review_save_plan_keep_both"):
            return
    elif not pressed:
        return
    try:
        plan, kept = save_current_plan_with_review(
            library, name, page_plan["inputs"], page_plan["result"], review_json(review),
            ride_name, digest, owner if filed else None,
            st.session_state.get("library:setup_id") if filed else None,
            "keep-both" if asking else "refuse")
    except NameTaken:
        st.session_state["review:asking"] = name
        st.rerun()
    except (InputError, ConflictError) as error:
        st.error(first_line(error), icon="⚠️")
        return
    st.session_state.pop("review:asking", None)
    st.session_state["review:message"] = (
        f"Saved the plan {plan.name!r} with the review of {ride_name} (race review "
        f"{kept.id}).")
    st.rerun()


def _pick_saved_plan() -> None:
    """"Review a saved plan instead": a saved plan of the open library shown in the page (the
    library's own "Show in the page", ui.library_panel.open_plan_in_page), so the page's plan,
    the plan reviewed, becomes it."""
    from ui.library_data import LIBRARY_COURSE

    library = _library_or_none()
    if library is None:
        return
    shown = st.session_state.get(LIBRARY_COURSE) or {}
    if shown.get("plan"):
        st.caption(f"The page shows the saved plan {shown['plan']!r} of the library.")
    try:
        plans = [p for p in library.plans() if p.course_id is not None]
    except (InputError, ConflictError):
        return
    if not plans:
        return
    labels = {f"{p.name} · {_clock(p.finish_time)}": p for p in plans}
    cols = st.columns([3, 1], vertical_alignment="bottom")
    label = cols[0].selectbox("Review a saved plan instead", list(labels), index=None,
                              placeholder="the page's plan", key="review_pick_plan",
                              help="the saved plan is shown in the page, as the library's "
                                   "\"Show in the page\" does")
    if label is None:
        return
    from ui.library_panel import open_plan_in_page

    try:
        record = library.plan(labels[label].id)
    except (InputError, ConflictError) as error:
        st.error(first_line(error), icon="⚠️")
        return
    cols[1].button("Show it in the page", key="review_show_plan", on_click=open_plan_in_page,
                   args=(library, record.inputs, record.name, record.id))


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
    from pacing.io.review_file import review_to_csv, review_to_xlsx

    cols = st.columns(2)
    cols[0].download_button("Download the review table (CSV)", review_to_csv(review, system),
                            file_name="race_review.csv", mime="text/csv", key="review_csv")
    cols[1].download_button(
        "Download the review table (Excel)", review_to_xlsx(review, system),
        file_name="race_review.xlsx", key="review_xlsx",
        mime="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet")
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
    _pick_saved_plan()
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
