"""The library panel's "Backup" tab (ui.library_panel): the whole library as a JSON file to
take away (pacing.store.library_export), or a library file brought in
(pacing.store.library_import): checked whole first, added all or nothing, asking before it
keeps both of a name already stored, never merging silently.

The tab draws with the Streamlit module it is given (``render_backup(st, library)``), so this
module imports no Streamlit itself and stays a pure UI module (tests/test_import_contracts.py),
as ui.team_panel does.
"""

from __future__ import annotations

import functools
import hashlib
from typing import Any

from pacing.errors import ConflictError, InputError
from pacing.store.statements import NameTaken
from ui.library_data import error_message


def render_backup(st: Any, library: Any) -> None:
    """Draw the "Backup" tab with the Streamlit module `st`: download the library file, or
    bring one in (all or nothing; names already stored asked about first).

    Parameters
    ----------
    st : module
        streamlit (ui.library_panel passes its own) [-].
    library : pacing.store.library.Library
        The open library [-].
    """
    from pacing.store.library_export import dump_library_file
    from pacing.store.library_file_json import check_file_size
    from pacing.store.library_import import import_library

    st.download_button("Download the library (JSON)",
                       functools.partial(dump_library_file, library),
                       file_name="pacing-library.json", mime="application/json",
                       key="library_export", on_click="ignore")
    upload = st.file_uploader("Add a library file (JSON)", type=["json"],
                              key="library_import_file")
    if upload is None:
        return
    try:
        check_file_size(upload.size)
    except InputError as error:
        st.error(f"The file was refused, nothing changed: {error_message(error)}", icon="⚠️")
        return
    data = upload.getvalue()
    digest = hashlib.sha256(data).hexdigest()
    if st.session_state.get("library:imported") == digest:
        st.caption("This file has been brought in.")
        return
    pressed = st.button("Add the file's athletes, setups and plans", key="library_import")
    on_existing = "refuse"
    if st.session_state.get("library:import_asking") == digest:
        st.warning("Some names of the file are already in the library. Add the file keeping "
                   "both (the file's entries get a number, e.g. \"Ann (2)\")?")
        if st.button("Add them, keeping both", key="library_import_keep_both"):
            pressed, on_existing = True, "keep-both"
    if pressed:
        try:
            summary = import_library(library, data, on_existing=on_existing)
        except NameTaken:
            st.session_state["library:import_asking"] = digest
            st.rerun()
        except (InputError, ConflictError, UnicodeDecodeError, ValueError) as error:
            st.error(f"The file was refused, nothing changed: {error_message(error)}",
                     icon="⚠️")
            return
        st.session_state["library:imported"] = digest
        st.session_state.pop("library:import_asking", None)
        st.session_state["library:message"] = summary.message().capitalize() + "."
        st.rerun()
