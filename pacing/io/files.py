"""Reading a user's file with its limits checked before the work: one place for GPX courses,
ride files and anything else read from a path, bytes or an open file.

A path must name a regular file: a device (/dev/zero), a FIFO or a socket is refused by its
type without opening it (a FIFO would wait for a writer, a device never end), a folder
likewise; the size is checked from the file's status before reading and again while reading
(a file that grows is cut at the limit + 1 byte and refused). Messages are one line.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path
from typing import Any

from pacing.errors import InputError


def shown(path: Path | str) -> str:
    """A path fit for a one-line message (no line breaks, at most 200 characters)."""
    text = " ".join(str(path).split())
    return text if len(text) <= 200 else text[:197] + "..."


def read_bounded(source: Any, kind: str, limit: int) -> tuple[bytes, str]:
    """The bytes of a file and a name for it (the file's stem, "" when unknown).

    Parameters
    ----------
    source : bytes, bytearray, memoryview, str, os.PathLike or file-like
        The content itself, a path, or an object with ``read``.
    kind : str
        What the file is, for messages ("GPX file", "ride file") [-].
    limit : int
        Largest size accepted [bytes].

    Returns
    -------
    tuple of (bytes, str)

    Raises
    ------
    InputError
        Not found, a folder, not a regular file, too large, unreadable, or a source of
        another type.
    """
    if isinstance(source, bytes | bytearray | memoryview):
        data, name = bytes(source), ""
    elif isinstance(source, str | os.PathLike):
        path = Path(source)
        data, name = _read_regular_file(path, kind, limit), path.stem
    elif hasattr(source, "read"):
        data = source.read(limit + 1)
        if isinstance(data, str):
            data = data.encode("utf-8")
        name = Path(str(getattr(source, "name", ""))).stem if hasattr(source, "name") else ""
    else:
        raise InputError(f"cannot read a {kind} from {type(source).__name__}")
    if len(data) > limit:
        raise InputError(f"{kind} is too large (limit {limit // 2**20} MiB)")
    return data, name


def _read_regular_file(path: Path, kind: str, limit: int) -> bytes:
    """The bytes of a regular file of at most `limit` bytes, refused before reading otherwise."""
    try:
        status = path.stat()
    except FileNotFoundError:
        raise InputError(f"{kind} not found: {shown(path)}") from None
    except OSError as error:
        raise InputError(f"cannot read {shown(path)}: {error.strerror}") from None
    if stat.S_ISDIR(status.st_mode):
        raise InputError(f"{shown(path)} is a folder, not a {kind}")
    if not stat.S_ISREG(status.st_mode):
        raise InputError(f"{shown(path)} is not a regular file (a device, pipe or socket); "
                         f"give a {kind}")
    if status.st_size > limit:
        raise InputError(f"{kind} is too large: {status.st_size / 2**20:.0f} MiB "
                         f"(limit {limit // 2**20} MiB)")
    try:
        with open(path, "rb") as file:
            return file.read(limit + 1)
    except OSError as error:
        raise InputError(f"cannot read {shown(path)}: {error.strerror}") from None
