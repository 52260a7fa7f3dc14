"""Errors the user can fix (pacing.errors): one line each, whatever the surface."""

from __future__ import annotations

from pacing.errors import ConflictError, InputError, first_line


def test_bad_input_is_a_value_error_and_a_conflict_a_runtime_error():
    # callers that catch ValueError (numpy, argparse habits) also catch bad input
    assert issubclass(InputError, ValueError)
    assert issubclass(ConflictError, RuntimeError)


def test_the_first_line_is_what_the_user_reads():
    assert first_line(InputError("  the file is empty  \nTraceback ...")) == "the file is empty"
    assert first_line(KeyError()) == "KeyError"
    assert first_line(ValueError("")) == "ValueError"
