"""JSON values as stored text: strict (finite numbers only), deterministic, with clear errors.

Plans keep their inputs and results as JSON text so that SQLite and PostgreSQL return exactly
what was saved (a float is written by `repr`, which reads back to the same float).
"""

from __future__ import annotations

import dataclasses
import json
import math
from typing import Any

from pacing.errors import InputError

#: Deepest nesting of lists and dicts stored [-] (plan inputs and results need about 4).
DEPTH_LIMIT = 32


def to_json_value(value: Any, where: str, depth: int = 0) -> Any:
    """A plain JSON value (dict with str keys, list, str, int, float, bool, None) from `value`.

    Tuples become lists; dataclasses (Athlete, Setup) become dicts of their fields; numpy
    scalars and arrays become Python numbers and lists.

    Parameters
    ----------
    value : Any
        The value to store (numbers in whatever units the caller uses; they are kept as
        given).
    where : str
        Its place, for error messages (e.g. ``"targets"``); nested places are appended
        (``targets[3].power``).
    depth : int
        How deep `value` sits in what is stored (0 at the top) [-].

    Returns
    -------
    Any
        The plain JSON value.

    Raises
    ------
    InputError
        Naming the place of a NaN, an infinity, a dict key that is not text, a value that
        JSON cannot hold, or lists and dicts nested deeper than DEPTH_LIMIT.
    """
    if depth > DEPTH_LIMIT:
        raise InputError(f"{where[:80]} nests lists and dicts deeper than {DEPTH_LIMIT} levels")
    if value is None or isinstance(value, (bool, str)):
        return value
    if isinstance(value, int):
        return int(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise InputError(f"{where} is not a finite number ({value}); use None for a "
                             "missing value")
        return float(value)
    if isinstance(value, dict):
        out = {}
        for key, item in value.items():
            if not isinstance(key, str):
                raise InputError(f"{where} has a key that is not text: {key!r}")
            out[key] = to_json_value(item, f"{where}.{key}", depth + 1)
        return out
    if isinstance(value, (list, tuple)):
        return [to_json_value(item, f"{where}[{i}]", depth + 1) for i, item in enumerate(value)]
    if dataclasses.is_dataclass(value) and not isinstance(value, type):  # Athlete, Setup, ...
        return to_json_value(dataclasses.asdict(value), where, depth)
    tolist = getattr(value, "tolist", None)  # numpy scalars and arrays
    if callable(tolist):
        return to_json_value(tolist(), where, depth)
    raise InputError(f"{where} holds a {type(value).__name__}, which cannot be saved "
                     "(use numbers, text, lists and dicts)")


def dumps(value: Any, where: str) -> str:
    """Stored text of a JSON value: compact, non-ASCII kept, floats written by `repr`.

    Parameters
    ----------
    value : Any
        The value to store (checked and converted by to_json_value).
    where : str
        Its place, for error messages.

    Returns
    -------
    str
        The JSON text.

    Raises
    ------
    InputError
        As to_json_value.
    """
    return json.dumps(to_json_value(value, where), ensure_ascii=False, allow_nan=False,
                      separators=(",", ":"))


def loads(text: str) -> Any:
    """The JSON value stored as `text`.

    Parameters
    ----------
    text : str
        JSON text as `dumps` wrote it.

    Returns
    -------
    Any
        The value (dict, list, str, int, float, bool or None).
    """
    return json.loads(text)
