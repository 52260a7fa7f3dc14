"""Sentences for the notices of pacing.course (see pacing.display.notices).

Each function takes a notice's values (SI, keys ending with the unit) and the unit system
("metric" or "imperial") and returns one line.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

WORDS: dict[str, Callable[[Mapping[str, Any], str], str]] = {}
