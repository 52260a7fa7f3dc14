"""Sentences for the notices of team time trials and team pursuits (pacing.team).

WORDS[code](values, system) gives one line (pacing.display.notices merges them).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

Values = Mapping[str, Any]

WORDS: dict[str, Callable[[Values, str], str]] = {}
"""Each notice code of this area and the function that writes it in words."""
