"""Sentences for the notices of pacing.compare (see pacing.display.notices).

Each function takes a notice's values (SI, keys ending with the unit) and the unit system
("metric" or "imperial") and returns one line.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from pacing.display.units import format_quantity

Values = Mapping[str, Any]

INPUT_NAMES = {"drag_area": "CdA", "rolling_coefficient": "Crr", "mass": "total mass",
               "wind": "wind speed"}
"""How the uncertain inputs (pacing.compare.analysis.DRAW_FLOORS) read in a sentence."""

FLOOR_WORDS = {"drag_area": "0.01 m²", "rolling_coefficient": "zero", "mass": "20 kg",
               "wind": "calm"}
"""What a cut draw is taken as, per input (pacing.compare.analysis.DRAW_FLOORS)."""


def _distance(metres: float, system: str) -> str:
    return format_quantity(metres, "distance", system, 1)


def _setup_w_prime_exhausted(values: Values, system: str) -> str:
    return (f"setup {values['label']}: W′ runs out at {_distance(values['distance_m'], system)} "
            f"(lowest balance {values['lowest_balance_j'] / 1000:.1f} kJ): its plan asks more "
            "than the athlete's critical power and W′ allow, so its time cannot be held")


def _setup_walking(values: Values, system: str) -> str:
    walked, total = values["walking_distance_m"], values["distance_m"]
    return (f"setup {values['label']}: below walking pace on {_distance(walked, system)} of "
            f"{_distance(total, system)}; there the rider walks the bike")


def _uncertainty_clipped(values: Values, system: str) -> str:
    name = str(values["label"])
    return (f"about {values['share']:.0%} of the {values['count']} Monte Carlo draws of the "
            f"{INPUT_NAMES.get(name, name)} fall below {FLOOR_WORDS.get(name, 'its floor')} "
            "and are taken as that: the sampled spread stands for a narrower input than the "
            "1σ given")


WORDS: dict[str, Callable[[Values, str], str]] = {
    "setup-w-prime-exhausted": _setup_w_prime_exhausted,
    "setup-walking": _setup_walking,
    "uncertainty-clipped": _uncertainty_clipped,
}
