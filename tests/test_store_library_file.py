"""Reading the library file (pacing.store.library_file): a file is checked completely without a
database, a version 1 file gives its format version and exporter, text that is not UTF-8 is
refused. (Bad files refused at import: tests/test_store_library_import.py.)
"""

from __future__ import annotations

import datetime
import json

import pytest
from store_fixtures import VERSION_1_FILE

from pacing.errors import InputError
from pacing.store.library_file import read_library_file


def test_read_library_file_checks_without_a_database():
    document = {"format": "pacing library", "format_version": 1, "athletes": [],
                "courses": [], "plans": []}
    empty = read_library_file(json.dumps(document).encode("utf-8-sig"))
    assert empty.athletes == () and empty.plans == ()
    with pytest.raises(InputError, match="UTF-8"):
        read_library_file(b"\xff\xfe{")


def test_reading_a_file_gives_its_format_version_and_exporter():
    read = read_library_file(VERSION_1_FILE)
    assert read.format_version == 1  # not the last plan's library_version
    assert read.exported_by == "pacing 0.1.0"
    assert read.exported_at == datetime.datetime(2026, 12, 1, 22, 30)  # naive UTC
