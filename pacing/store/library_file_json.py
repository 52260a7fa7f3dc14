"""The library file's JSON (pacing.store.library_file defines the format): the limits met
before and while it is read (size, nesting, times), parsing the text, and the small checks
every entry's reader shares (objects with their fields, lists, times, ids, values built into
records), each refusal one line naming the place in the file.

The readers of the entries are pacing.store.library_file (athletes, setups, courses, plans),
pacing.store.library_reviews (a plan's reviews) and pacing.store.library_teams (teams).
"""

from __future__ import annotations

import datetime
import json
from collections.abc import Callable, Mapping
from typing import Any

from pacing.errors import InputError
from pacing.store.rows import check_id

#: Largest library file read [bytes] (as GPX files, pacing.io.safe_xml): checked before the
#: file is read whole, so a larger one is refused at once with little memory.
FILE_SIZE_LIMIT = 50 * 2**20
#: Deepest nesting of JSON lists and objects read [-]: a library file needs about 7 (plans'
#: inputs and targets hold small records); Python's own parser fails near 1000.
DEPTH_LIMIT = 32
#: Times a file may give, naive UTC: from 1970 to 9998 (year 1 or 9999 overflow once a time
#: zone is applied).
TIME_RANGE = (datetime.datetime(1970, 1, 1), datetime.datetime(9998, 12, 31))


# ---------------------------------------------------------------------------------------------
# entries: small checks


def json_object(value: Any, where: str, allowed: set[str], required: set[str]
                ) -> Mapping[str, Any]:
    """`value` as a JSON object with only `allowed` fields and every `required` one."""
    if not isinstance(value, Mapping):
        raise InputError(f"{where} must be a JSON object")
    unknown = sorted(set(value) - allowed)
    if unknown:
        raise InputError(f"{where} has unknown fields {unknown}")
    missing = sorted(required - set(value))
    if missing:
        raise InputError(f"{where} lacks fields {missing}")
    return value


def json_list(value: Any, where: str) -> list[Any]:
    """`value` as a JSON list."""
    if not isinstance(value, list):
        raise InputError(f"{where} must be a JSON list")
    return value


def file_time(value: Any, where: str) -> datetime.datetime:
    """An ISO 8601 time as the library stores it (naive UTC; no offset means UTC), within
    TIME_RANGE."""
    if not isinstance(value, str) or len(value) > 64:
        raise InputError(f"{where} must be an ISO 8601 time")
    try:
        parsed = datetime.datetime.fromisoformat(value)
        if parsed.tzinfo is None:
            parsed = parsed.replace(tzinfo=datetime.UTC)
        stored = parsed.astimezone(datetime.UTC).replace(tzinfo=None)
    except (ValueError, OverflowError):
        raise InputError(f"{where} is not an ISO 8601 time from 1970 to 9998: "
                         f"{value!r}") from None
    low, high = TIME_RANGE
    if not low <= stored <= high:
        raise InputError(f"{where} is not an ISO 8601 time from 1970 to 9998: {value!r}")
    return stored


def entry_stamps(entry: Mapping[str, Any], where: str
                 ) -> tuple[datetime.datetime, datetime.datetime]:
    """An entry's creation and last-change times."""
    return file_time(entry["created_at"], f"{where} created_at"), \
        file_time(entry["updated_at"], f"{where} updated_at")


def new_id(entry: Mapping[str, Any], where: str, seen: set[int]) -> int:
    """An entry's id, refused if `seen` already holds it (which it is added to)."""
    entry_id = check_id(entry["id"], f"{where} id")
    if entry_id in seen:
        raise InputError(f"{where}: id {entry_id} appears twice")
    seen.add(entry_id)
    return entry_id


def build_entry(kind: type, values: dict[str, Any], where: str) -> Any:
    """``kind(**values)``, its refusal as a one-line InputError naming `where`."""
    try:
        return kind(**values)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None
    except (TypeError, ValueError) as error:
        raise InputError(f"{where}: {str(error).splitlines()[0]}") from None


def checked_at(function: Callable[..., Any], where: str, *args: Any) -> Any:
    """``function(*args)``, its InputError prefixed with `where`."""
    try:
        return function(*args)
    except InputError as error:
        raise InputError(f"{where}: {error}") from None


def _refuse_constant(name: str) -> Any:
    """Refuse NaN and Infinity, which Python's json reads but JSON does not have (RFC 8259
    section 6)."""
    raise InputError(f"the library file holds {name}, which is not a number")


# ---------------------------------------------------------------------------------------------
# the text: size, JSON, nesting


def check_file_size(size: int, exact: bool = True) -> None:
    """Refuse a library file larger than FILE_SIZE_LIMIT before it is read whole.

    Parameters
    ----------
    size : int
        The file's size, or how much of it was read [bytes].
    exact : bool
        `size` is the whole file's (shown in the message); False when only a part was read.

    Raises
    ------
    InputError
        The file is larger than FILE_SIZE_LIMIT, in one line.
    """
    if size > FILE_SIZE_LIMIT:
        shown = f" ({size / 2**20:.1f} MiB)" if exact else ""
        raise InputError(f"the library file is larger than {FILE_SIZE_LIMIT // 2**20} MiB"
                         f"{shown}; split it by athlete (export --athlete)")


def _check_depth(document: Any) -> None:
    """Refuse JSON nested deeper than DEPTH_LIMIT (walked without recursion)."""
    stack = [(document, 1)]
    while stack:
        value, depth = stack.pop()
        if depth > DEPTH_LIMIT:
            raise InputError(f"the library file nests lists and objects deeper than "
                             f"{DEPTH_LIMIT} levels")
        if isinstance(value, dict):
            stack.extend((item, depth + 1) for item in value.values()
                         if isinstance(item, (dict, list)))
        elif isinstance(value, list):
            stack.extend((item, depth + 1) for item in value if isinstance(item, (dict, list)))


def parse_json_text(source: str | bytes) -> Any:
    """A library file's JSON value (UTF-8, a byte order mark allowed), within FILE_SIZE_LIMIT
    and DEPTH_LIMIT, without NaN or Infinity.

    Parameters
    ----------
    source : str or bytes
        The file's text, or its bytes.

    Returns
    -------
    Any
        The parsed JSON value (pacing.store.library_file checks it is a library file).

    Raises
    ------
    InputError
        Too large, not UTF-8, not JSON, nested too deep, or a number too long, in one line.
    """
    if isinstance(source, (bytes, bytearray)):
        check_file_size(len(source))
        try:
            source = bytes(source).decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError("the library file is not UTF-8 text") from None
    if not isinstance(source, str):
        raise InputError("a library file is text (JSON)")
    check_file_size(len(source))
    try:
        document = json.loads(source, parse_constant=_refuse_constant)
    except json.JSONDecodeError as error:
        raise InputError(f"the library file is not valid JSON (line {error.lineno}, column "
                         f"{error.colno}: {error.msg})") from None
    except InputError:  # NaN or Infinity (_refuse_constant; InputError is a ValueError)
        raise
    except RecursionError:
        raise InputError(f"the library file nests lists and objects deeper than "
                         f"{DEPTH_LIMIT} levels") from None
    except ValueError:  # an integer of more than sys.get_int_max_str_digits() digits
        raise InputError("the library file holds a number too long to read") from None
    _check_depth(document)
    return document
