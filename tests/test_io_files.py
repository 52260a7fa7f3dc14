"""Reading a user's file with its limits checked before the work (pacing.io.files)."""

from __future__ import annotations

import io
import os

import pytest

from pacing.errors import InputError
from pacing.io.files import read_bounded, shown


def test_bytes_paths_and_open_files_give_the_same_bytes_and_a_name(tmp_path):
    path = tmp_path / "evening loop.csv"
    path.write_bytes(b"time_s,power_w\n")
    assert read_bounded(b"abc", "ride file", 10) == (b"abc", "")
    assert read_bounded(path, "ride file", 100) == (b"time_s,power_w\n", "evening loop")
    assert read_bounded(io.StringIO("é"), "ride file", 10) == ("é".encode(), "")


def test_too_large_is_refused_by_the_file_s_size_before_reading(tmp_path):
    path = tmp_path / "big.gpx"
    path.write_bytes(b"x" * 3 * 2**20)
    with pytest.raises(InputError, match=r"GPX file is too large: 3 MiB \(limit 2 MiB\)"):
        read_bounded(path, "GPX file", 2 * 2**20)
    with pytest.raises(InputError, match="too large"):
        read_bounded(io.BytesIO(b"x" * 11), "GPX file", 10)


def test_folders_devices_pipes_and_odd_sources_are_refused_in_one_line(tmp_path):
    with pytest.raises(InputError, match="ride file not found"):
        read_bounded(tmp_path / "missing.csv", "ride file", 10)
    with pytest.raises(InputError, match="is a folder, not a ride file"):
        read_bounded(tmp_path, "ride file", 10)
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)  # opening it would wait for a writer: it must be refused by its type
    with pytest.raises(InputError, match="not a regular file"):
        read_bounded(fifo, "GPX file", 10)
    with pytest.raises(InputError, match="cannot read a GPX file from int"):
        read_bounded(12345, "GPX file", 10)


def test_a_path_in_a_message_is_one_short_line():
    assert shown("a\nb") == "a b"
    assert len(shown("x" * 500)) == 200
