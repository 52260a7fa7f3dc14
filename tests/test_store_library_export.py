"""Writing the library file (pacing.store.library_export): one athlete's part holds only theirs,
the GPX file travels as standard base64. (Export then import: tests/test_store_library_import.py.)

Every test that takes `library` or `database` runs on SQLite and, with the `postgres` marker,
on PostgreSQL (tests/store_fixtures.py).
"""

from __future__ import annotations

import base64

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    fill,
    library_fixture,
)

from pacing.errors import InputError
from pacing.store.library_export import export_library


def test_export_of_one_athlete_holds_only_their_part(library):
    ids = fill(library)
    document = export_library(library, athlete_id=ids["bo"])
    assert [a["name"] for a in document["athletes"]] == ["Bo"]
    assert [p["name"] for p in document["plans"]] == ["Run"]
    assert [c["name"] for c in document["courses"]] == ["Flat out and back"]
    # the file carries the GPX as standard base64 (RFC 4648 section 4)
    assert base64.b64decode(document["courses"][0]["gpx_base64"], validate=True) == b"<gpx/>"
    with pytest.raises(InputError, match="no athlete with id 77"):
        export_library(library, athlete_id=77)
