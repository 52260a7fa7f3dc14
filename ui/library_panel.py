"""The coach's library in the web app: athletes and setups to fill the page from, the current
plan saved with its course, saved plans reopened and worked out again, deletes that ask first,
and the whole library as a JSON file to take away or bring in.

All storage goes through pacing.store (SQLAlchemy; SQLite file by default, any URL through
PACING_DATABASE_URL). Pure helpers build the plan inputs and results (ui.library_data), the
page's widget states of a saved plan (ui.library_page_state) and the tables
(ui.library_tables); the "Backup" tab is ui.library_backup, a saved plan's race reviews
ui.library_reviews; `render_library` draws the panel with Streamlit.
`render_library_for_page` also leaves the page's plan (its inputs and result) in the session
(ui.library_data.PAGE_PLAN) for the race review, which can save it together with a review.

Plan inputs saved by this panel (`page_plan_inputs`, all SI)::

    {"course_id": int, "course_name": str, "course_distance": m, "course_ascent": m,
     "smoothing": {"window": m, "max_grade": -, "allow_flat": bool}, "bounds": [int, ...],
     "athlete": {...ui.sections.athlete_inputs...}, "weather": {...Conditions fields...},
     "approach": {...ui.sections.approach_inputs...}, "athlete_id"?: int, "setup_id"?: int,
     "split"?: {"mode": str, "length": m or None, "marks": [m, ...]}}

The course's GPX file is stored once in the library (a file already stored is reused) and
the plan names it by ``course_id``; `recompute_plan` reads it back to work the plan out again.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

import pandas as pd
import streamlit as st

from pacing.display.units import format_duration
from pacing.errors import ConflictError, InputError
from pacing.store.statements import NameTaken
from ui.library_data import (
    LIBRARY_COURSE,
    PAGE_PLAN,
    athlete_from_page,
    error_message,
    library_compute,
    page_plan_inputs,
    page_values,
    plan_result,
    save_current_plan,
    setup_from_page,
)
from ui.library_page_state import PAGE_WIDGETS, plan_page_state
from ui.library_tables import inputs_summary, plans_table, targets_frame, version_caption

# ------------------------------------------------------------------------ page inputs

def fill_page_inputs(values: Mapping[str, Any]) -> None:
    """Put library values into the page's inputs (use as a button's on_click, which runs
    before the page is drawn again): the SI stores of ui.widgets.unit_number are set, their
    widgets re-made, and the CdA and Crr choices switched to "my own value".

    Parameters
    ----------
    values : Mapping
        Page values (SI) under the page's keys, as library_data.page_values gives them;
        keys the page does not keep as numbers, and None values, are skipped.
    """
    from ui import text
    from ui.widgets import set_inputs

    numbers = {}
    for key, value in values.items():
        if key in PAGE_WIDGETS and value is not None:
            store, factor = PAGE_WIDGETS[key]
            numbers[store] = float(value) * factor
    choices = {}
    own = next((label for label, v in text.DRAG_AREA_PRESETS.items() if v is None), None)
    if "drag_area" in values and own is not None:
        choices["cda_preset"] = own
    own = next((label for label, v in text.ROLLING_PRESETS.items() if v is None), None)
    if "rolling_coefficient" in values and own is not None:
        choices["crr_preset"] = own
    set_inputs(numbers, choices)


def open_plan_in_page(library, inputs: Mapping[str, Any], plan_name: str = "",
                      plan_id: int | None = None) -> None:
    """Show a saved plan in the page (a button's on_click, run before the page is drawn
    again): its stored course file (LIBRARY_COURSE), then every input plan_page_state gives.
    A plan that cannot be shown leaves the page as it was and says why.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library (for the plan's course file).
    inputs : Mapping
        The saved plan's inputs (library_data.page_plan_inputs, SI).
    plan_name : str
        The saved plan's name, for the page's message.
    plan_id : int or None
        The saved plan's id, kept with its course (the review panel keeps reviews with it).
    """
    try:
        course = None
        gpx = None
        course_id = inputs.get("course_id")
        if course_id is not None:
            gpx = library.course(int(course_id)).gpx
            if not inputs.get("split") and inputs.get("bounds"):
                from ui import pipeline

                smoothing = inputs.get("smoothing") or {}
                course = pipeline.load_course_from_bytes(
                    gpx, inputs.get("course_name") or "course",
                    smoothing.get("window", 200.0), smoothing.get("max_grade", 0.25),
                    smoothing.get("allow_flat", False))
        state = plan_page_state(inputs, st.session_state.get("units", "metric"), course)
    except (InputError, ConflictError, KeyError, TypeError, ValueError) as error:
        st.session_state["library:open_error"] = (
            f"The saved plan cannot be shown in the page: {error_message(error)}")
        return
    if gpx is not None:
        st.session_state[LIBRARY_COURSE] = {"gpx": bytes(gpx),
                                            "name": inputs.get("course_name") or "course",
                                            "plan": plan_name, "plan_id": plan_id}
    from ui.widgets import set_inputs

    set_inputs({key[3:]: value for key, value in state.items() if key.startswith("si:")},
               {key: value for key, value in state.items() if not key.startswith("si:")})
    st.session_state["library:message"] = (
        f"The page now shows the saved plan {plan_name!r}." if plan_name else
        "The page now shows the saved plan.")


# ------------------------------------------------------------------------ Streamlit

@st.cache_resource(max_entries=4, show_spinner=False)
def _open(location_key: str, _location):
    """The library at `_location`, opened once per `location_key` and kept (Streamlit's
    resource cache)."""
    from pacing.store.library import open_library

    return open_library(_location)


def _library(location):
    """The open library at `location` (None: PACING_DATABASE_URL, else the default file)."""
    import os

    key = (os.environ.get("PACING_DATABASE_URL", "") if location is None else str(location))
    return _open(key, location)


def _report(action: Callable[[], Any], success: str | Callable[[Any], str],
            asking: str | None = None) -> None:
    """Run a library write. A refusal shows one clear line (a conflict: reload); a name
    already stored, with `asking` (a session key), is kept there for _ask_on_existing to
    ask about; success is noted and the panel drawn again, so every list shows the change."""
    try:
        value = action()
    except NameTaken as taken:
        if asking is None:
            st.error(error_message(taken), icon="⚠️")
        else:
            st.session_state[asking] = f"{taken.kind.capitalize()} {taken.name!r} is already " \
                                       "in the library."
        return
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return
    st.session_state["library:message"] = success(value) if callable(success) else success
    st.rerun()


def save_asking(key: str, pressed: bool, action: Callable[[str], Any],
                 success: str | Callable[[Any], str]) -> None:
    """Run a save when its button was `pressed`, refusing a name already stored; then ask:
    "Replace it", "Keep both" (saved as "name (2)") or "Cancel", and save again with the
    answer. Nothing is ever overwritten without the coach's say.

    Parameters
    ----------
    key : str
        The save's own key, for its question and buttons [-].
    pressed : bool
        The save's button was pressed in this run [-].
    action : callable
        ``action(on_existing)`` saves with "refuse", "replace" or "keep-both" [-].
    success : str or callable
        The message after saving, or a function of what the save returned [-].
    """
    asking = f"library:asking:{key}"
    if pressed:
        st.session_state.pop(asking, None)
        _report(lambda: action("refuse"), success, asking)
    question = st.session_state.get(asking)
    if question is None:
        return
    st.warning(f"{question} Replace it, or keep both (the new one gets a number)?")
    cols = st.columns(3)
    if cols[0].button("Replace it", key=f"{key}:replace"):
        st.session_state.pop(asking, None)
        _report(lambda: action("replace"), success)
    if cols[1].button("Keep both", key=f"{key}:keep-both"):
        st.session_state.pop(asking, None)
        _report(lambda: action("keep-both"), success)
    if cols[2].button("Cancel", key=f"{key}:cancel"):
        st.session_state.pop(asking, None)
        st.rerun()


def render_library(current_inputs: dict | None, current_result: dict | None, system: str,
                   location=None, compute: Callable[[dict], dict] | None = None) -> dict | None:
    """Draw the library panel.

    Parameters
    ----------
    current_inputs : dict or None
        The page's plan inputs (`page_plan_inputs`, SI), or None.
    current_result : dict or None
        The page's plan result (`plan_result`), or None when there is none.
    system : str
        "metric" or "imperial".
    location : str or os.PathLike or None
        Database path or SQLAlchemy URL; None for PACING_DATABASE_URL, else the user's data
        directory (pacing.store.library.open_library).
    compute : callable or None
        ``compute(inputs) -> result`` for working a saved plan out again; None uses
        `library_compute` (plans saved from the page).

    Returns
    -------
    dict or None
        None, or in the run where the user asks for it:
        ``{"action": "use", "athlete_id", "athlete": Athlete, "setup_id" (or None),
        "setup": Setup or None, "values": page_values(...)}`` (the page's inputs are also
        filled by fill_page_inputs before the page is drawn again), or
        ``{"action": "open", "plan_id", "plan": PlanRecord, "inputs": dict}`` (a saved plan
        to show).
    """
    try:
        library = _library(location)
    except (InputError, ConflictError, OSError) as error:
        st.error(f"The library cannot be opened: {error_message(error)}", icon="⚠️")
        return None
    st.session_state["library:location"] = location
    message = st.session_state.pop("library:message", None)
    if message:
        st.success(message)
    failure = st.session_state.pop("library:open_error", None)
    if failure:
        st.error(failure, icon="⚠️")
    chosen: dict | None = None
    # the open tab is kept across reruns (a message after storing or saving does not send
    # the coach back to the first tab)
    tabs = st.tabs(["Athletes and setups", "Save this plan", "Saved plans", "Backup"],
                   key="library_tab", on_change="rerun")
    with tabs[0]:
        chosen = _athletes_tab(library, current_inputs, system) or chosen
    with tabs[1]:
        _save_tab(library, current_inputs, current_result)
    with tabs[2]:
        chosen = _plans_tab(library, system, compute or library_compute(library)) or chosen
    with tabs[3]:
        from ui.library_backup import render_backup

        render_backup(st, library)
    return chosen


def _athletes_tab(library, current_inputs, system) -> dict | None:
    """The "Athletes and setups" tab: choose a stored athlete and setup to fill the page,
    delete them, or store the page's athlete and equipment. Returns the "use" action."""
    try:
        athletes = library.athletes()
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return None
    page_athlete = (current_inputs or {}).get("athlete") or {}
    result = None
    record = None
    if athletes:
        record, result = _choose_athlete(library, athletes)
    else:
        st.caption("No athletes stored yet.")
    _store_page_athlete(library, page_athlete, record, expanded=not athletes)
    return result


SELECT_ATHLETE = "library:select_athlete"
SELECT_SETUP = "library:select_setup"
"""Session keys: the id of an athlete or setup just stored, to be chosen in its selector
the next time it is drawn (a selector drawn already cannot change in the same run)."""


def _select_stored(pending: str, widget: str, labels: Mapping[str, Any]) -> None:
    """Choose the record stored under `pending` (an id) in the selector `widget` whose
    choices are `labels` (label → record with .id), before the selector is drawn."""
    wanted = st.session_state.pop(pending, None)
    if wanted is None:
        return
    label = next((k for k, v in labels.items() if v is not None and v.id == wanted), None)
    if label is not None:
        st.session_state[widget] = label


def _choose_athlete(library, athletes) -> tuple[Any, dict | None]:
    """Athlete and setup choices, "Use in the page" and "Delete…"; returns the chosen
    athlete's record and, when "Use in the page" was pressed, the "use" action."""
    labels = {f"{a.athlete.name} · {a.athlete.body_mass:.1f} kg": a for a in athletes}
    if len(labels) < len(athletes):  # a library from before names were unique
        labels = {f"{a.athlete.name} · {a.athlete.body_mass:.1f} kg (#{a.id})": a
                  for a in athletes}
    _select_stored(SELECT_ATHLETE, "library_athlete", labels)
    label = st.selectbox("Athlete", list(labels), key="library_athlete")
    record = labels[label]
    st.session_state["library:athlete_id"] = record.id
    setups = library.setups(record.id)
    setup_labels = {f"{s.setup.name} · CdA {s.setup.drag_area:.3f} m²": s for s in setups}
    setup_labels["(the athlete only, no setup)"] = None
    _select_stored(SELECT_SETUP, "library_setup", setup_labels)
    setup_label = st.selectbox("Setup", list(setup_labels), key="library_setup")
    setup_record = setup_labels[setup_label]
    st.session_state["library:setup_id"] = None if setup_record is None else setup_record.id
    from ui.library_tables import setup_origin_caption

    origin = None if setup_record is None else setup_origin_caption(setup_record)
    if origin:
        st.caption(origin)
    st.session_state["library:filed_under"] = (
        record.athlete.name if setup_record is None
        else f"{record.athlete.name}, setup {setup_record.setup.name}")
    values = page_values(record.athlete, None if setup_record is None
                         else setup_record.setup)
    result = None
    if st.button("Use in the page", key="library_use", on_click=fill_page_inputs,
                 args=(values,), help="fills the athlete and equipment inputs"):
        result = {"action": "use", "athlete_id": record.id, "athlete": record.athlete,
                  "setup_id": None if setup_record is None else setup_record.id,
                  "setup": None if setup_record is None else setup_record.setup,
                  "values": values}
    _delete_athlete_or_setup(library, record, setup_record)
    return record, result


def _delete_athlete_or_setup(library, record, setup_record) -> None:
    """"Delete…": the chosen setup, or with no setup chosen the athlete with their setups and
    saved plans, once the box is ticked."""
    with st.expander("Delete…", expanded=False):
        target = setup_record or record
        what = (f"setup {setup_record.setup.name!r}" if setup_record is not None
                else f"athlete {record.athlete.name!r} with their setups and saved plans")
        sure = st.checkbox(f"Yes, delete {what}", key=(
            "library_delete_sure:" + ("setup" if setup_record is not None else "athlete")
            + f":{target.id}"))
        if st.button("Delete", key="library_delete_person", disabled=not sure):
            if setup_record is not None:
                _report(lambda: library.delete_setup(target.id, confirm=True,
                                                     revision=target.revision),
                        f"Deleted {what}.")
            else:
                _report(lambda: library.delete_athlete(target.id, confirm=True,
                                                       revision=target.revision),
                        f"Deleted {what}.")


def _store_page_athlete(library, page_athlete: dict, record, expanded: bool) -> None:
    """"Store the page's athlete and equipment": as a new athlete (with a setup when
    cycling), or as a new setup of the chosen athlete `record`."""
    with st.expander("Store the page's athlete and equipment", expanded=expanded):
        cols = st.columns(2)
        name = cols[0].text_input("Athlete name", key="library_new_athlete")
        setup_name = cols[1].text_input("Setup name", value="race bike",
                                        key="library_new_setup")
        cols = st.columns(2)
        pressed = cols[0].button("Store as a new athlete", key="library_add_athlete",
                                 disabled=not page_athlete)

        def add(on_existing: str):
            added = library.add_athlete(athlete_from_page(name, page_athlete),
                                        on_existing=on_existing)
            st.session_state[SELECT_ATHLETE] = added.id
            if page_athlete.get("sport", "cycling") == "cycling":
                setup = library.add_setup(added.id, setup_from_page(setup_name, page_athlete),
                                          on_existing="replace" if on_existing == "replace"
                                          else "keep-both")
                st.session_state[SELECT_SETUP] = setup.id
            return added
        save_asking("athlete", pressed, add, lambda added: f"Stored {added.athlete.name!r}.")
        pressed = cols[1].button("Add the setup to the chosen athlete", key="library_add_setup",
                                 disabled=record is None or not page_athlete)
        def add_setup(on_existing: str):
            added = library.add_setup(record.id, setup_from_page(setup_name, page_athlete),
                                      on_existing=on_existing)
            st.session_state[SELECT_SETUP] = added.id
            return added
        save_asking("setup", pressed and record is not None, add_setup,
                     lambda added: f"Stored setup {added.setup.name!r} for "
                                   f"{record.athlete.name!r}.")


def _save_tab(library, current_inputs, current_result) -> None:
    """The "Save this plan" tab: name, notes, filed under the chosen athlete and setup."""
    if not current_result or not current_inputs:
        st.caption("There is no plan to save yet: the page needs a predicted race.")
        return
    name = st.text_input("Plan name", key="library_plan_name",
                         placeholder="e.g. club hill climb, June")
    notes = st.text_area("Notes", key="library_plan_notes", height=80)
    athlete_id = st.session_state.get("library:athlete_id")
    link = False
    if athlete_id is not None:
        under = st.session_state.get("library:filed_under") or "the chosen athlete"
        link = st.checkbox(f"File it under {under}", value=True, key="library_plan_link",
                           help="choose another athlete or setup in the first tab")
    else:
        st.caption("Not filed under an athlete: store one in the first tab to file plans "
                   "under them.")
    pressed = st.button("Save this plan", key="library_save", type="primary")
    save_asking("plan", pressed, lambda on_existing: save_current_plan(
        library, name, notes, current_inputs, current_result,
        athlete_id if link else None,
        st.session_state.get("library:setup_id") if link else None, on_existing),
        lambda saved: f"Saved {saved.name!r} "
                      f"({format_duration(saved.summary.finish_time)}).")


def _plans_tab(library, system: str, compute) -> dict | None:
    """The "Saved plans" tab: the list, one plan's details, "Work it out again", "Show in
    the page" (returns the "open" action) and "Delete this plan…"."""
    try:
        plans = library.plans()
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return None
    if not plans:
        st.caption("No saved plans yet.")
        return None
    names = {a.id: a.athlete.name for a in library.athletes()}
    st.dataframe(plans_table(plans, names, library.review_counts()), hide_index=True,
                 key="library_plans")
    labels = {f"{p.name} · {format_duration(p.finish_time)}"
              + (f" · {names[p.athlete_id]}" if p.athlete_id in names else ""): p
              for p in plans}
    label = st.selectbox("Open a saved plan", list(labels), key="library_plan")
    summary = labels[label]
    try:
        record = library.plan(summary.id)
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return None
    _plan_details(library, record, system)
    result = None
    cols = st.columns(2)
    if cols[0].button("Work it out again", key="library_reproduce",
                      help="recompute the plan from its inputs and compare the numbers"):
        _work_out_again(record, compute)
    if cols[1].button("Show in the page", key="library_open", on_click=open_plan_in_page,
                      args=(library, record.inputs, record.name, record.id),
                      help="the page takes the plan's stored course, segments, athlete, "
                           "equipment, weather and pacing approach"):
        result = {"action": "open", "plan_id": record.id, "plan": record,
                  "inputs": record.inputs}
    _delete_plan(library, record)
    return result


def _plan_details(library, record, system: str) -> None:
    """A saved plan's main inputs, notes, the version of pacing that made it, the race
    reviews kept with it and its target table."""
    for line in inputs_summary(record.inputs, system):
        st.caption(line)
    if record.summary.notes:
        st.caption(f"notes: {record.summary.notes}")
    st.caption(version_caption(record.summary))
    from ui.library_reviews import render_plan_reviews

    render_plan_reviews(st, library, record.id)
    try:
        st.dataframe(targets_frame(record.targets, system), hide_index=True,
                     key="library_plan_targets")
    except InputError as error:
        st.error(f"Its target table cannot be shown: {error_message(error)}", icon="⚠️")


def _work_out_again(record, compute) -> None:
    """Recompute a saved plan and say whether its numbers hold; if not, a table of every
    value that differs."""
    from pacing.store.reproduce import reproduce_plan

    try:
        report = reproduce_plan(record, compute)
    except (InputError, ConflictError) as error:
        st.error(f"It cannot be worked out again: {error_message(error)}", icon="⚠️")
        return
    if report.same:
        st.success(report.message().capitalize() + ".")
        return
    st.warning(report.message().capitalize() + ".")
    st.dataframe(pd.DataFrame({
        "Where": [d.where for d in report.differences],
        "Saved": [str(d.saved) for d in report.differences],
        "Now": [str(d.recomputed) for d in report.differences],
    }), hide_index=True, key="library_differences")


def _delete_plan(library, record) -> None:
    """"Delete this plan…", once the box is ticked."""
    with st.expander("Delete this plan…", expanded=False):
        sure = st.checkbox(f"Yes, delete the saved plan {record.name!r}",
                           key=f"library_delete_plan_sure:{record.id}")
        if st.button("Delete the plan", key="library_delete_plan", disabled=not sure):
            _report(lambda: library.delete_plan(record.id, confirm=True,
                                                revision=record.revision),
                    f"Deleted {record.name!r}.")


def render_library_for_page(course_gpx: bytes | None, course_name: str | None, course, bounds,
                            athlete: dict | None, weather: dict | None, approach: dict | None,
                            smoothing: dict, allow_flat: bool, outcome, system: str,
                            location=None, split: dict | None = None) -> dict | None:
    """`render_library` from app.py's own variables: the plan inputs and result are built
    here (page_plan_inputs, plan_result) when the page has a course, inputs and a predicted
    race; otherwise the panel still offers the athletes, saved plans and backup.

    Parameters
    ----------
    course_gpx : bytes or None
        The page's course file [bytes], or None.
    course_name : str or None
        Its label.
    course : pacing.course.geometry.Course or None
        The course made from it.
    bounds : sequence of int or None
        Segment boundary point indices [-].
    athlete : dict or None
        ui.sections athlete and equipment inputs (SI).
    weather : dict or None
        ui.sections weather inputs (SI).
    approach : dict or None
        ui.sections approach inputs (SI).
    smoothing : dict
        ``{"window": [m], "max_grade": [-]}``.
    allow_flat : bool
        A file without heights was read as flat.
    outcome : ui.pipeline.Outcome or None
        The page's predicted race, or None.
    system : str
        "metric" or "imperial".
    location : str or os.PathLike or None
        Database path or SQLAlchemy URL; None for PACING_DATABASE_URL, else the default file.
    split : dict or None
        How the page cut the course (ui.sections.split_inputs).

    Returns
    -------
    dict or None
        As render_library.
    """
    inputs = None
    if (course_gpx and course is not None and bounds is not None and athlete
            and approach is not None):
        inputs = page_plan_inputs(course_gpx, course_name or "course", course, bounds,
                                  athlete, weather or {}, approach, smoothing, allow_flat,
                                  split)
    result = None if outcome is None or inputs is None else plan_result(outcome, weather,
                                                                         approach)
    if result is None:
        st.session_state.pop(PAGE_PLAN, None)
    else:
        st.session_state[PAGE_PLAN] = {"inputs": inputs, "result": result}
    return render_library(inputs, result, system, location=location)
