"""Sentences for the notices of the race review (pacing.review).

WORDS[code](values, system) gives one line (pacing.display.notices merges them). Course
positions are shown in km or mi, short lengths (distance from the course) in m or ft, times in
seconds or H:MM:SS, energy in kJ in both systems. A value that is not a finite number reads
"–", never "nan".
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from typing import Any

from pacing.display.units import format_duration, format_quantity

Values = Mapping[str, Any]

UNKNOWN = "–"
"""What a sentence shows for a value that is not a finite number."""


def _number(value: Any) -> float | None:
    """The value as a finite float, or None."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def _at(value: Any, system: str) -> str:
    """A position along the course: "12.3 km" or "7.6 mi"."""
    return format_quantity(_number(value), "distance", system, digits=2)


def _short(value: Any, system: str) -> str:
    """A short length: "50 m" or "164 ft"."""
    return format_quantity(_number(value), "elevation", system, digits=0)


def _clock(value: Any) -> str:
    """A duration as H:MM:SS."""
    seconds = _number(value)
    return UNKNOWN if seconds is None else format_duration(abs(seconds))


def _seconds(value: Any, spec: str = ".0f") -> str:
    """A number of seconds, "12 s"."""
    seconds = _number(value)
    return UNKNOWN if seconds is None else f"{seconds:{spec}} s"


def _count(value: Any) -> str:
    number = _number(value)
    return UNKNOWN if number is None else f"{number:.0f}"


def _counted(value: Any, one: str, many: str) -> str:
    """A count with its noun in the singular or plural, "1 stop", "3 stops"."""
    number = _number(value)
    if number is None:
        return f"{UNKNOWN} {many}"
    return f"{number:.0f} {one if round(number) == 1 else many}"


def _filled(values: Values, system: str) -> str:
    return (f"{_count(values['count'])} blank {values['label']} reading(s) were interpolated in "
            f"time (longest gap {_seconds(values['longest_s'])})")


def _speed_from_positions(values: Values, system: str) -> str:
    return ("the race file has no speed or distance: speed is taken from the positions "
            "(GNSS speed is noisier than a wheel sensor)")


def _positions_missing(values: Values, system: str) -> str:
    return (f"{_count(values['count'])} sample(s) have no position (a tunnel or a lost fix): "
            "they are placed on the course by the distance ridden")


def _detour(values: Values, system: str) -> str:
    return (f"off the course for {_clock(values['duration_s'])} after "
            f"{_at(values['distance_m'], system)} ({_at(values['ridden_m'], system)} ridden, "
            f"back on the course at {_at(values['rejoined_m'], system)}): that time is counted "
            "where the rider left the course")


def _more(what: str) -> Callable[[Values, str], str]:
    def words(values: Values, system: str) -> str:
        return f"{_count(values['count'])} more {what} not listed"
    return words


def _spikes(values: Values, system: str) -> str:
    return (f"{_count(values['count'])} position(s) farther than "
            f"{_short(values['distance_limit_m'], system)} from the course for a few seconds "
            "(GNSS spikes) were held at the course distance before them")


def _dropout(values: Values, system: str) -> str:
    return (f"the recording missed {_clock(values['duration_s'])} from "
            f"{_at(values['start_m'], system)} to {_at(values['end_m'], system)}: time and power "
            "there are interpolated")


def _scaled(values: Values, system: str) -> str:
    scale = _number(values["scale"])
    shown = UNKNOWN if scale is None else f"{100 * (scale - 1):+.1f} %"
    return (f"no positions in the race file: its distance ({_at(values['ridden_m'], system)}) "
            f"was scaled to the course ({_at(values['course_m'], system)}), {shown}")


def _fit_failed(values: Values, system: str) -> str:
    message = values.get("message")
    why = f" ({message})" if isinstance(message, str) and message else ""
    return f"the drag area on the day could not be fitted{why}; the planned CdA and Crr are kept"


def _crr_held(values: Values, system: str) -> str:
    crr = _number(values["rolling_coefficient"])
    shown = UNKNOWN if crr is None else f"{crr:.4f}"
    return (f"the race cannot separate the drag area from rolling resistance (too little "
            f"variety of speed): Crr is held at the plan's {shown} and only CdA is fitted")


def _stops(values: Values, system: str) -> str:
    speed = format_quantity(_number(values["speed_mps"]), "speed", system)
    return (f"{_counted(values['count'], 'stop', 'stops')} (below {speed}), "
            f"{_clock(values['duration_s'])} stationary in all")


def _braking(values: Values, system: str) -> str:
    return (f"{_counted(values['count'], 'stretch', 'stretches')} of braking: the model is "
            "made to slow down there as the rider did, and that time counts with the stops")


def _not_reached(values: Values, system: str) -> str:
    return (f"the race file ends {_at(values['reached_m'], system)} along a "
            f"{_at(values['course_m'], system)} course: the finish was not reached and times "
            "after that point are not known")


def _unexplained(values: Values, system: str) -> str:
    share = _number(values["share"])
    shown = UNKNOWN if share is None else f"{100 * abs(share):.1f} %"
    other = _number(values["other_s"])
    if other is None:
        gap = f"{UNKNOWN} off what the model explains"
    elif other < 0:
        gap = f"{_seconds(-other)} faster than the model explains"
    else:
        gap = f"{_seconds(other)} slower than the model explains"
    return (f"with the day's power, drag, rolling, wind and stops the race is still {gap} "
            f"({shown} of the race time): drafting, position changes or a course that "
            "differs from the plan's may explain it")


WORDS: dict[str, Callable[[Values, str], str]] = {
    "review-ride-filled": _filled,
    "review-ride-speed-from-positions": _speed_from_positions,
    "review-ride-positions-missing": _positions_missing,
    "review-detour": _detour,
    "review-detours-more": _more("detours"),
    "review-gnss-spikes": _spikes,
    "review-dropout": _dropout,
    "review-dropouts-more": _more("missed stretches"),
    "review-distance-scaled": _scaled,
    "review-fit-failed": _fit_failed,
    "review-crr-held-planned": _crr_held,
    "review-stops": _stops,
    "review-braking": _braking,
    "review-finish-not-reached": _not_reached,
    "review-unexplained": _unexplained,
}
"""Each notice code of this area and the function that writes it in words."""
