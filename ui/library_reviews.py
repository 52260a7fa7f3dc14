"""The race reviews kept with a saved plan, in the library panel (ui.library_panel): listed
(ui.library_tables.reviews_frame), each one downloadable as the JSON ``pacing review --json``
prints, and deleted once the coach has ticked that they mean it (a review kept with the wrong
plan, or of the wrong file, goes without the plan going too).

The part draws with the Streamlit module it is given (``render_plan_reviews(st, …)``), so
this module imports no Streamlit itself and stays a pure UI module
(tests/test_import_contracts.py), as ui.team_panel does.
"""

from __future__ import annotations

import json
from typing import Any

from pacing.errors import ConflictError, InputError
from ui.library_data import error_message
from ui.library_tables import reviews_frame


def review_label(record: Any) -> str:
    """How a kept review is named in the panel: id, race file and when it was kept (UTC).

    Parameters
    ----------
    record : pacing.store.records.PlanReviewRecord

    Returns
    -------
    str
        E.g. "race review 3 · Hill TT.csv · 2026-12-05 13:07 UTC".
    """
    return (f"race review {record.id} · {record.ride_name} · "
            f"{record.created_at.strftime('%Y-%m-%d %H:%M')} UTC")


def review_file_json(record: Any) -> bytes:
    """A kept review as a JSON file: the review as ``pacing review --json`` prints it
    (UTF-8, indented, no NaN).

    Parameters
    ----------
    record : pacing.store.records.PlanReviewRecord

    Returns
    -------
    bytes
    """
    return (json.dumps(record.review, indent=2, ensure_ascii=False, allow_nan=False)
            + "\n").encode("utf-8")


def render_plan_reviews(st: Any, library: Any, plan_id: int) -> None:
    """Draw the race reviews kept with the saved plan `plan_id` (nothing when it has none).

    Parameters
    ----------
    st : module
        streamlit (ui.library_panel passes its own) [-].
    library : pacing.store.library.Library
        The open library [-].
    plan_id : int
        Library id of the saved plan [-].
    """
    try:
        reviews = library.plan_reviews(plan_id)
    except (InputError, ConflictError) as error:
        st.error(error_message(error), icon="⚠️")
        return
    if not reviews:
        return
    st.markdown(f"**Race reviews kept with this plan** ({len(reviews)})")
    st.dataframe(reviews_frame(reviews), hide_index=True, key="library_plan_reviews")
    labels = {review_label(r): r for r in reviews}
    cols = st.columns([3, 1], vertical_alignment="bottom")
    chosen = labels[cols[0].selectbox("Race review", list(labels),
                                      key=f"library_review:{plan_id}")]
    cols[1].download_button("Download it (JSON)", review_file_json(chosen),
                            file_name=f"race_review_{chosen.id}.json",
                            mime="application/json", key="library_review_json",
                            on_click="ignore")
    with st.expander("Delete this race review…", expanded=False):
        sure = st.checkbox(f"Yes, delete the review of {chosen.ride_name!r} (race review "
                           f"{chosen.id}); the plan stays",
                           key=f"library_delete_review_sure:{chosen.id}")
        if st.button("Delete the review", key="library_delete_review", disabled=not sure):
            try:
                library.delete_plan_review(chosen.id, confirm=True, revision=chosen.revision)
            except (InputError, ConflictError) as error:
                st.error(error_message(error), icon="⚠️")
                return
            st.session_state["library:message"] = (
                f"Deleted race review {chosen.id} ({chosen.ride_name}).")
            st.rerun()
