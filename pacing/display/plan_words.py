"""Sentences for the notices of the plans (pacing.plan; see pacing.display.notices).

Each function takes a notice's values (SI, keys ending with the unit) and the unit system
("metric" or "imperial") and returns one line.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from pacing.display.units import (
    format_pace,
    format_quantity,
    pace_from_speed,
    unit_label,
)
from pacing.physics.cycling import WALKING_SPEED

Values = Mapping[str, Any]


def pace(speed: float, system: str) -> str:
    """"4:35 /km" or "7:23 /mi" of a ground speed [m/s]."""
    label = "/" + unit_label("pace", system).split("/")[-1]
    return f"{format_pace(float(pace_from_speed(speed, system)))} {label}"


def distance(metres: float, system: str, digits: int = 2) -> str:
    """"3.80 km" or "2.36 mi"."""
    return format_quantity(metres, "distance", system, digits)


def _grade_beyond_cost_model(values: Values, system: str) -> str:
    return (f"{values['count']} piece(s) steeper than the cost model's range "
            f"{values['lowest_grade']:+.0%}..{values['highest_grade']:+.0%} were costed at "
            "its edge")


def _descent_capped(values: Values, system: str) -> str:
    return (f"descent speed capped at {values['ratio']:g} × flat speed on "
            f"{values['share']:.0%} of the course: the cost model's downhill speeds are "
            "unrealistic")


def _descent_capped_at_level(values: Values, system: str) -> str:
    return (f"descent speed capped at {values['ratio']:g} × flat-equivalent speed on "
            f"{values['share']:.0%} of the course")


def _even_pace_at_same_effort(values: Values, system: str) -> str:
    later = values["later_s"]
    overdraw = ("" if values.get("overdrawn_balance_m") is None else
                f" and overdrawing D′ (lowest balance {values['overdrawn_balance_m']:.0f} m)")
    return (f"even pace at the same mean effort ({pace(values['speed_mps'], system)}) would "
            f"finish {abs(later):.0f} s {'later' if later > 0 else 'sooner'} in this model, "
            f"running up to {values['peak_effort_ratio']:.0%} of the flat effort on the "
            f"hardest piece{overdraw}; this plan never goes above its target effort")


def _even_pace_effort_on_average(values: Values, system: str) -> str:
    return (f"even pace meets the target effort on average ({values['mean_effort_ratio']:.0%} "
            "time-weighted), not on every piece: it costs up to "
            f"{values['peak_effort_ratio']:.0%} of the flat effort on the hardest piece")


def _even_pace_within_limits(values: Values, system: str) -> str:
    return (f"the fastest even pace within the same critical speed and D′ "
            f"({pace(values['speed_mps'], system)}) would finish {values['later_s']:.0f} s "
            "later: its climbs spend D′ faster")


def _d_prime_recovery_by_analogy(values: Values, system: str) -> str:
    return "D′ recovery below critical speed uses Skiba's constants from cycling"


def _limits_reached(values: Values, system: str) -> str:
    return "limits reached: " + ", ".join(str(b) for b in values["limits"])


def _w_prime_exhausted(values: Values, system: str) -> str:
    return (f"W′ runs out at {distance(values['distance_m'], system, 1)}: this plan asks more "
            "than the athlete's critical power and W′ allow (lowest balance "
            f"{values['lowest_balance_j'] / 1000:.1f} kJ). Lower the power or plan the fastest "
            "race within the limits.")


def _d_prime_exhausted(values: Values, system: str) -> str:
    return (f"D′ runs out at {distance(values['distance_m'], system)}: the plan asks for more "
            f"than the runner's D′ (lowest balance {values['lowest_balance_m']:.0f} m)")


def _walking(values: Values, system: str) -> str:
    walking_pace = format_quantity(WALKING_SPEED, "speed", system, 1)
    walked, total = values["walking_distance_m"], values["distance_m"]
    if walked >= 0.999 * total:
        return (f"the power cannot keep the bike at walking pace ({walking_pace}) on this "
                "course: the rider walks it all the way (pushing the bike counts as rider work)")
    return (f"below walking pace ({walking_pace}) on {distance(walked, system)} of "
            f"{distance(total, system)}; where the power cannot hold that pace the rider walks "
            "the bike (pushing counts as rider work)")


def _target_time_unchecked(values: Values, system: str) -> str:
    return (f"the {values['power_w']:.0f} W this target time needs is not checked against the "
            "athlete's limits: no critical power and W′ given")


WORDS: dict[str, Callable[[Values, str], str]] = {
    "running-grade-beyond-cost-model": _grade_beyond_cost_model,
    "running-descent-capped": _descent_capped,
    "running-descent-capped-at-level": _descent_capped_at_level,
    "even-pace-at-same-effort": _even_pace_at_same_effort,
    "even-pace-effort-on-average": _even_pace_effort_on_average,
    "even-pace-within-limits": _even_pace_within_limits,
    "d-prime-recovery-by-analogy": _d_prime_recovery_by_analogy,
    "limits-reached": _limits_reached,
    "w-prime-exhausted": _w_prime_exhausted,
    "d-prime-exhausted": _d_prime_exhausted,
    "walking": _walking,
    "target-time-unchecked": _target_time_unchecked,
}
