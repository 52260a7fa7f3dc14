"""The library file's JSON (pacing.store.library_file_json): limits met before and while the
text is read, parsing, and the small checks every entry's reader shares; each refusal one line
naming its place. JSON rules from RFC 8259 (no NaN or Infinity, section 6); ISO 8601 times as
Python's datetime.fromisoformat reads them (common practice: an offset given is converted to
UTC, none means UTC).
"""

from __future__ import annotations

import datetime
import json

import pytest

from pacing.errors import InputError
from pacing.store.library_file_json import (
    DEPTH_LIMIT,
    FILE_SIZE_LIMIT,
    build_entry,
    check_file_size,
    checked_at,
    entry_stamps,
    file_time,
    json_list,
    json_object,
    new_id,
    parse_json_text,
)


def test_text_and_bytes_with_a_byte_order_mark_read_alike():
    document = {"format": "pacing library", "plans": [1.5, None, "Été"]}
    text = json.dumps(document, ensure_ascii=False)
    assert parse_json_text(text) == document
    assert parse_json_text(text.encode("utf-8-sig")) == document


@pytest.mark.parametrize("source, match", [
    (b"\xff\xfe{", "not UTF-8"),
    ("{\"a\": NaN}", "NaN, which is not a number"),  # RFC 8259 section 6
    ("{\"a\": -Infinity}", "-Infinity, which is not a number"),
    ("{\"a\": 1,}", "not valid JSON \\(line 1, column"),
    ("[" * (DEPTH_LIMIT + 1) + "]" * (DEPTH_LIMIT + 1), f"deeper than {DEPTH_LIMIT}"),
    ("[" * 100_000 + "]" * 100_000, f"deeper than {DEPTH_LIMIT}"),
    ("1" * 5000, "number too long"),
    (12, "is text"),
])
def test_bad_text_is_refused_in_one_line(source, match):
    with pytest.raises(InputError, match=match) as caught:
        parse_json_text(source)
    assert "\n" not in str(caught.value)


def test_nesting_up_to_the_limit_reads():
    depth = DEPTH_LIMIT
    assert parse_json_text("[" * depth + "]" * depth) is not None


def test_the_size_is_checked_before_the_file_is_read():
    check_file_size(FILE_SIZE_LIMIT)
    with pytest.raises(InputError, match=r"larger than 50 MiB \(50\.0 MiB\)"):
        check_file_size(FILE_SIZE_LIMIT + 1)
    with pytest.raises(InputError, match="larger than 50 MiB; split it"):
        check_file_size(FILE_SIZE_LIMIT + 1, exact=False)


def test_times_are_naive_utc_and_within_their_range():
    assert file_time("2026-12-01T22:30:00+01:00", "t") == datetime.datetime(2026, 12, 1, 21, 30)
    assert file_time("2026-12-01T22:30:00", "t") == datetime.datetime(2026, 12, 1, 22, 30)
    assert entry_stamps({"created_at": "2026-01-01T00:00:00Z",
                         "updated_at": "2026-01-02T00:00:00+00:00"}, "e") == (
        datetime.datetime(2026, 1, 1), datetime.datetime(2026, 1, 2))
    for bad in ("0001-01-01T00:00:00", "9999-12-31T23:59:59", "yesterday", 5, "1" * 65):
        with pytest.raises(InputError, match="^plans\\[0\\] created_at"):
            file_time(bad, "plans[0] created_at")


def test_objects_name_unknown_and_missing_fields_and_their_place():
    assert json_object({"a": 1}, "x", {"a", "b"}, {"a"}) == {"a": 1}
    with pytest.raises(InputError, match=r"^athletes\[2\] has unknown fields \['c'\]"):
        json_object({"a": 1, "c": 2}, "athletes[2]", {"a", "b"}, {"a"})
    with pytest.raises(InputError, match=r"lacks fields \['a'\]"):
        json_object({"b": 1}, "x", {"a", "b"}, {"a"})
    with pytest.raises(InputError, match="must be a JSON object"):
        json_object([1], "x", {"a"}, set())
    with pytest.raises(InputError, match="^plans must be a JSON list"):
        json_list({"a": 1}, "plans")


def test_ids_appear_once_and_refusals_name_their_place():
    seen: set[int] = set()
    assert new_id({"id": 3}, "courses[0]", seen) == 3
    with pytest.raises(InputError, match=r"^courses\[1\]: id 3 appears twice"):
        new_id({"id": 3}, "courses[1]", seen)
    with pytest.raises(InputError, match=r"^teams\[0\]: "):
        build_entry(datetime.date, {"year": 2026, "month": 13, "day": 1}, "teams[0]")

    def refuse(value):
        raise InputError(f"bad {value}")

    with pytest.raises(InputError, match=r"^plans\[4\]: bad 7$"):
        checked_at(refuse, "plans[4]", 7)
