"""Sample values for the sentences of the display modules: every key a sentence may read, with
a plausible SI value, so a test can speak every code in both unit systems."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from typing import Any

SPECIAL: dict[str, Any] = {"label": "hoods", "labels": ["hoods", "aero"], "reason": "singular",
                           "times_s": [12.0, 40.0], "count": 3, "limits": ["mean-power"],
                           "drag_area_at_high_rolling_m2": [0.29, 0.25],
                           "drag_area_at_low_rolling_m2": [0.31, 0.27]}


class SampleValues(Mapping[str, Any]):
    """Any key: its SPECIAL value, else `number` (a float, the same for every key)."""

    def __init__(self, number: float = 0.42) -> None:
        self.number = number

    def __getitem__(self, key: str) -> Any:
        return SPECIAL.get(key, self.number)

    def __iter__(self) -> Iterator[str]:
        return iter(SPECIAL)

    def __len__(self) -> int:
        return len(SPECIAL)
