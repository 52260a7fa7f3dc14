"""Sentences for the notices of team time trials and team pursuits (pacing.team).

WORDS[code](values, system) gives one line (pacing.display.notices merges them).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from pacing.display.units import format_duration, format_quantity

Values = Mapping[str, Any]


def _reserve_unreachable(values: Values, system: str) -> str:
    speed = format_quantity(values["speed_mps"], "speed", system, 1)
    return (f"even at {speed} with equal turns some rider's W′ falls below the reserve of "
            f"{values['reserve_j'] / 1000:.1f} kJ: lower the reserve or check the riders' "
            "critical power and W′")


def _equal_turns_kept(values: Values, system: str) -> str:
    return (f"the search found nothing faster than equal turns at constant speed "
            f"({format_duration(values['time_s'])}): the plan is the equal turns")


def _rider_drops(values: Values, system: str) -> str:
    where = format_quantity(values["distance_m"], "distance", system, 2)
    return f"{values['name']} does a last long turn and drops out at {where}"


def _last_turn_short(values: Values, system: str) -> str:
    where = format_quantity(values["distance_m"], "elevation", system, 0)
    return (f"the last change of lead is {where} before the finish ({values['name']} leads "
            "that last turn): the rider before could not ride on to the finish within his W′ "
            "reserve and cap without losing more than half a second")


WORDS: dict[str, Callable[[Values, str], str]] = {
    "team-reserve-unreachable": _reserve_unreachable,
    "team-equal-turns-kept": _equal_turns_kept,
    "team-rider-drops": _rider_drops,
    "team-last-turn-short": _last_turn_short,
}
"""Each notice code of this area and the function that writes it in words."""
