"""Sentences for the notices of the plans (pacing.plan; see pacing.display.notices).

Each function takes a notice's values (SI, keys ending with the unit) and the unit system
("metric" or "imperial") and returns one line. A value that is not a finite number (never made
by the core, but a saved plan may carry one) reads "–", never "nan" or "inf".
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any

import numpy as np

from pacing.display.units import (
    format_pace,
    format_quantity,
    pace_from_speed,
    unit_label,
)
from pacing.physics.cycling import WALKING_SPEED

Values = Mapping[str, Any]

UNKNOWN = "–"
"""What a sentence shows for a value that is not a finite number."""


def _finite(value: Any) -> float | None:
    """The value as a finite float, or None."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def _shown(value: Any, spec: str) -> str:
    """format(value, spec) of a finite number, else UNKNOWN."""
    number = _finite(value)
    return UNKNOWN if number is None else format(number, spec)


def pace(speed: float, system: str) -> str:
    """A ground speed as a pace per km or per mile.

    Parameters
    ----------
    speed : float
        Ground speed, > 0 [m/s].
    system : {"metric", "imperial"}
        The unit system [-].

    Returns
    -------
    str
        "4:35 /km" or "7:23 /mi" (1 mi = 1609.344 m), whole seconds; "– /km" for a speed
        that is not a positive finite number [-].

    Examples
    --------
    >>> pace(1000.0 / 275.0, "metric")
    '4:35 /km'
    """
    label = "/" + unit_label("pace", system).split("/")[-1]
    number = _finite(speed)
    if number is None or number <= 0:
        return f"{UNKNOWN} {label}"
    with np.errstate(over="ignore"):  # a speed near 1e-308 m/s has no finite pace
        seconds = float(pace_from_speed(number, system))
    return f"{format_pace(seconds) if math.isfinite(seconds) else UNKNOWN} {label}"


def distance(metres: float, system: str, digits: int = 2) -> str:
    """A distance in km or miles.

    Parameters
    ----------
    metres : float
        Distance [m].
    system : {"metric", "imperial"}
        The unit system [-].
    digits : int, optional
        Decimals shown [-].

    Returns
    -------
    str
        "3.80 km" or "2.36 mi"; "–" for a value that is not a finite number [-].

    Examples
    --------
    >>> distance(3800.0, "metric")
    '3.80 km'
    """
    return format_quantity(_finite(metres), "distance", system, digits)


def _grade_beyond_cost_model(values: Values, system: str) -> str:
    """count, lowest_grade and highest_grade [-] of the running cost model."""
    return (f"{_shown(values['count'], '.0f')} piece(s) steeper than the cost model's range "
            f"{_shown(values['lowest_grade'], '+.0%')}..{_shown(values['highest_grade'], '+.0%')}"
            " were costed at its edge")


def _descent_capped(values: Values, system: str) -> str:
    """ratio [-] of the cap to the flat speed and share [-] of the course capped."""
    return (f"descent speed capped at {_shown(values['ratio'], 'g')} × flat speed on "
            f"{_shown(values['share'], '.0%')} of the course: the cost model's downhill speeds "
            "are unrealistic")


def _descent_capped_at_level(values: Values, system: str) -> str:
    """ratio [-] of the cap to the flat-equivalent speed and share [-] of the course capped."""
    return (f"descent speed capped at {_shown(values['ratio'], 'g')} × the speed of the same "
            f"effort on the flat, on {_shown(values['share'], '.0%')} of the course")


def _even_pace_at_same_effort(values: Values, system: str) -> str:
    """speed_mps [m/s], later_s [s], peak_effort_ratio [-], overdrawn_balance_m [m] or None."""
    later = _finite(values["later_s"])
    overdrawn = values.get("overdrawn_balance_m")
    overdraw = ("" if overdrawn is None else
                f" and spending more than D′ (its balance falls to {_shown(overdrawn, '.0f')} "
                "m)")
    when = "later" if later is not None and later > 0 else "sooner"
    return (f"even pace at the same mean effort ({pace(values['speed_mps'], system)}) would "
            f"finish {_shown(None if later is None else abs(later), '.0f')} s {when} in this "
            f"model, running up to {_shown(values['peak_effort_ratio'], '.0%')} of the flat "
            f"effort on the hardest piece{overdraw}; this plan never goes above its target "
            "effort")


def _even_pace_effort_on_average(values: Values, system: str) -> str:
    """mean_effort_ratio and peak_effort_ratio [-] of an even pace."""
    return (f"even pace meets the target effort on average "
            f"({_shown(values['mean_effort_ratio'], '.0%')} time-weighted), not on every "
            f"piece: it costs up to {_shown(values['peak_effort_ratio'], '.0%')} of the flat "
            "effort on the hardest piece")


def _even_pace_within_limits(values: Values, system: str) -> str:
    """speed_mps [m/s] and later_s [s] of the fastest even pace within CS and D′."""
    return (f"the fastest even pace within the same critical speed and D′ "
            f"({pace(values['speed_mps'], system)}) would finish "
            f"{_shown(values['later_s'], '.0f')} s later: its climbs spend D′ faster")


def _d_prime_recovery_by_analogy(values: Values, system: str) -> str:
    """No values."""
    return "D′ recovery below critical speed uses Skiba's constants from cycling"


LIMIT_WORDS = {
    "mean-power": "the mean power asked for",
    "work": "the total work asked for",
    "max-power": "the power cap",
    "min-power": "the lowest power allowed",
    "w-prime-reserve": "the W′ reserve",
    "effort-cap": "the effort cap",
}
"""A binding limit's key (pacing.plan.cycling RacePlan.binding) in words."""


def _limit_words(limit: str) -> str:
    """One binding limit in words: "max-power on 3 segments" → "the power cap on 3
    segments"; a key without words stays as it is."""
    key, _, where = str(limit).partition(" on ")
    words = LIMIT_WORDS.get(key, str(limit) if not where else key)
    return f"{words} on {where}" if where else words


def _limits_reached(values: Values, system: str) -> str:
    """limits: the names of the limits that bind."""
    return "the plan holds to " + ", ".join(_limit_words(b) for b in values["limits"])


def _w_prime_exhausted(values: Values, system: str) -> str:
    """distance_m [m] where W′ runs out and lowest_balance_j [J]."""
    lowest = _finite(values["lowest_balance_j"])
    return (f"W′ runs out at {distance(values['distance_m'], system, 1)}: this plan asks more "
            "than the athlete's critical power and W′ allow (lowest balance "
            f"{_shown(None if lowest is None else lowest / 1000, '.1f')} kJ). Lower the power "
            "or plan the fastest race within the limits.")


def _d_prime_exhausted(values: Values, system: str) -> str:
    """distance_m [m] where D′ runs out and lowest_balance_m [m]."""
    return (f"D′ runs out at {distance(values['distance_m'], system)}: the plan asks for more "
            f"than the runner's D′ (lowest balance {_shown(values['lowest_balance_m'], '.0f')} m)")


def _walking(values: Values, system: str) -> str:
    """walking_distance_m and distance_m [m]: how far below walking pace, of how far."""
    walking_pace = format_quantity(WALKING_SPEED, "speed", system, 1)
    walked, total = values["walking_distance_m"], values["distance_m"]
    if walked >= 0.999 * total:
        return (f"the power cannot keep the bike at walking pace ({walking_pace}) on this "
                "course: the rider walks it all the way (pushing the bike counts as rider work)")
    return (f"below walking pace ({walking_pace}) on {distance(walked, system)} of "
            f"{distance(total, system)}; where the power cannot hold that pace the rider walks "
            "the bike (pushing counts as rider work)")


def _target_time_unchecked(values: Values, system: str) -> str:
    """power_w [W] the target time needs."""
    return (f"the {_shown(values['power_w'], '.0f')} W this target time needs is not checked "
            "against the athlete's limits: no critical power and W′ given")


def _fastest_plan_blended(values: Values, system: str) -> str:
    """No values: the fastest plan is part steady plan, part even power."""
    return ("ridden on the simulated course the fastest plan broke a limit of the athlete, so "
            "it is blended with even power as far as needed to keep every limit: it gains less "
            "than the steady model promised")


WORDS: dict[str, Callable[[Values, str], str]] = {
    "fastest-plan-blended": _fastest_plan_blended,
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
"""The sentence of each notice code of pacing.plan (and of the planning chain,
pacing.plan.race and pacing.plan.strategies)."""
