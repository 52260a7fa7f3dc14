"""Sentences for the notices of the course (pacing.course, pacing.io.gpx; see
pacing.display.notices).

Each function takes a notice's values (SI, keys ending with the unit) and the unit system
("metric" or "imperial") and returns one line. Distances along the course read in km or mi,
heights in m or ft; a value that is not a finite number reads "–".
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from pacing.display.units import format_duration, format_quantity

Values = Mapping[str, Any]


def _number(value: Any) -> float | None:
    """The value as a float, or None when it is not a number."""
    try:
        return float(value)
    except (TypeError, ValueError):
        return None


def _count(value: Any) -> str:
    """A whole number, or "–" when the value is not a finite number."""
    number = _number(value)
    if number is None or number != number or abs(number) == float("inf"):
        return "–"
    return f"{number:.0f}"


def _distance(metres: Any, system: str) -> str:
    return format_quantity(_number(metres), "distance", system, 1)


def _height(metres: Any, system: str) -> str:
    return format_quantity(_number(metres), "elevation", system, 0)


def _short(metres: Any, system: str) -> str:
    """A short length along the course in m or ft (read like a height: metres, not km)."""
    return format_quantity(_number(metres), "elevation", system, 0)


def _percent(share: Any) -> str:
    number = _number(share)
    return "–" if number is None or number != number or abs(number) == float("inf") \
        else f"{number * 100:.0f} %"


def _lasting(values: Values) -> str:
    """" over 0:12:30" when the gap's duration is known, else ""."""
    seconds = _number(values.get("duration_s"))
    if seconds is None or seconds != seconds or abs(seconds) == float("inf"):
        return ""
    if seconds <= 0:
        return " and no time passing (a jump)"
    return f" over {format_duration(seconds)}"


def _gap_joined(values: Values, system: str) -> str:
    return (f"gap in the recording at {_distance(values['at_m'], system)}: "
            f"{_distance(values['length_m'], system)} with no points{_lasting(values)}; "
            "joined by a straight line (drop the gap or choose the tracks if it was not "
            "ridden)")


def _gap_dropped(values: Values, system: str) -> str:
    return (f"gap in the recording at {_distance(values['at_m'], system)}: "
            f"{_distance(values['length_m'], system)} with no points{_lasting(values)}; "
            "left out of the course (its distance and the climbing across it are not "
            "counted)")


def _spikes_removed(values: Values, system: str) -> str:
    count = _count(values['count'])
    return (f"{count} point{'' if count == '1' else 's'} jumping off the road and back "
            f"(recording spikes) left out: {_short(values['distance_m'], system)} of false "
            "distance removed")


def _elevation_missing(values: Values, system: str) -> str:
    return "GPX file has no elevation data: the course is treated as flat"


def _elevation_constant(values: Values, system: str) -> str:
    return (f"all {_count(values['count'])} elevations in the file are "
            f"{_height(values['elevation_m'], system)}: the file most likely has no heights, "
            "and the course is planned as flat")


def _elevation_points_missing(values: Values, system: str) -> str:
    return (f"{_count(values['count'])} of {_count(values['total'])} track points had no "
            "elevation; their heights were interpolated from the neighbouring points")


def _elevation_cleaned(values: Values, system: str) -> str:
    return (f"climbing {_height(values['ascent_m'], system)} after cleaning, "
            f"{_height(values['raw_ascent_m'], system)} in the raw track: smoothing removed "
            f"{_height(values['smoothing_removed_m'], system)} (recording noise), the grade "
            f"limit {_height(values['limit_removed_m'], system)}")


def _grade_limit_cut(values: Values, system: str) -> str:
    return (f"the grade limit of {_percent(values['max_grade'])} changed the profile by up to "
            f"{_height(values['height_m'], system)} from {_distance(values['at_m'], system)} "
            f"(steepest grade in the smoothed profile {_percent(values['steepest_grade'])}): "
            "a step or spike in the recorded heights, or a short climb steeper than the limit")


def _steep_grade_kept(values: Values, system: str) -> str:
    return (f"{_distance(values['length_m'], system)} steeper than the grade limit of "
            f"{_percent(values['max_grade'])}, from {_distance(values['at_m'], system)} "
            f"(up to {_percent(values['steepest_grade'])}), kept as real climbing: too long "
            "to be recording noise")


WORDS: dict[str, Callable[[Values, str], str]] = {
    "course-gap-joined": _gap_joined,
    "course-gap-dropped": _gap_dropped,
    "course-spikes-removed": _spikes_removed,
    "elevation-missing": _elevation_missing,
    "elevation-constant": _elevation_constant,
    "elevation-points-missing": _elevation_points_missing,
    "elevation-cleaned": _elevation_cleaned,
    "grade-limit-cut": _grade_limit_cut,
    "steep-grade-kept": _steep_grade_kept,
}
