"""Sentences for the notices of pacing.fieldtest (see pacing.display.notices).

Each function takes a notice's values (SI, keys ending with the unit) and the unit system
("metric" or "imperial") and returns one line. Codes "fieldtest-…" come from
pacing.fieldtest.estimate.estimate_drag (warnings about a fit) and, for the wind,
pacing.fieldtest.wind_estimate and pacing.fieldtest.race_fit; codes "race-fit-…" from
pacing.fieldtest.race_fit (the drag area of a race day); codes "test-ride-…" from
pacing.fieldtest.ride.make_ride and pacing.io.rides (notes of reading and cleaning a ride).

In metric the sentences keep the units the field test has always printed: wind and stop speeds
in m/s (a test rider reads them off an anemometer and a wheel sensor), CdA in m² in both
systems (the unit every wind tunnel and field-test report uses).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from pacing.display.units import to_display, unit_label

Values = Mapping[str, Any]


def _speed(metres_per_second: float, system: str, metric_format: str) -> str:
    """A speed in m/s (metric, as `metric_format`) or in mph with one decimal (imperial)."""
    if system == "imperial":
        return f"{to_display(metres_per_second, 'speed', system):.1f} " \
               f"{unit_label('speed', system)}"
    return f"{metres_per_second:{metric_format}} m/s"


def _separation_reason(values: Values) -> str:
    """Why CdA and Crr cannot be separated, in a few words."""
    reason = values["reason"]
    if reason == "singular":
        return "the fit is singular"
    if reason == "crr-interval":
        return (f"correlation {values['correlation']:.3f}; the 95 % interval of Crr, "
                f"{values['rolling_ci95_low']:.4f} to {values['rolling_ci95_high']:.4f}, is "
                f"wider than the {values['rolling_spread']:g} spread of road tyres")
    return f"correlation {values['correlation']:.3f}"


def _crr_held(values: Values, system: str) -> str:
    held, low, high = (values["held_rolling_coefficient"], values["rolling_low"],
                       values["rolling_high"])
    spans = ", ".join(
        f"{label!r} {at_high:.3f}-{at_low:.3f} m²"
        for label, at_high, at_low in zip(values["labels"],
                                          values["drag_area_at_high_rolling_m2"],
                                          values["drag_area_at_low_rolling_m2"], strict=True))
    return (f"laps lack speed variety: CdA and Crr cannot be separated "
            f"({_separation_reason(values)}), so Crr is held at {held:g} (a typical road value, "
            f"Martin et al. 1998) and only CdA is fitted; its interval counts no Crr error: for "
            f"Crr {low:g}-{high:g} CdA would be {spans}; ride laps at clearly different speeds "
            "or give the Crr of your tyres")


def _inseparable(values: Values, system: str) -> str:
    return (f"laps lack speed variety: CdA and Crr cannot be separated "
            f"({_separation_reason(values)}); ride laps at clearly different speeds or give Crr")


def _few_laps(values: Values, system: str) -> str:
    return f"fewer than {values['count']} laps for {', '.join(values['labels'])}: no interval"


def _bootstrap_failed(values: Values, system: str) -> str:
    return "too many bootstrap draws could not be fitted: no interval"


def _lap_spread(values: Values, system: str) -> str:
    return (f"CdA of {values['label']!r} varies by {100 * values['share']:.0f} % between laps: "
            "wind gusts, braking, drafting or a changing position spoil the data")


def _unsteady_runs(values: Values, system: str) -> str:
    return (f"speed varies by {100 * values['share']:.0f} % within the laps of "
            f"{values['label']!r}: the regression assumes steady runs (Lim et al. 2011); "
            "prefer method 'loop'")


def _windy(values: Values, system: str) -> str:
    return (f"wind of {_speed(values['speed_mps'], system, '.1f')} at rider height on "
            f"{values['label']!r}: test rides want calm air (under "
            f"{_speed(values['limit_mps'], system, 'g')}, Lim et al. 2011); the result is only "
            "as good as the wind it was fitted in (given or estimated)")


def _braking(values: Values, system: str) -> str:
    times = values["times_s"]
    shown = ", ".join(f"{t:.0f}" for t in times)
    more = " …" if values["count"] > len(times) else ""
    return (f"braking suspected in {values['label']!r} at {values['count']} samples "
            f"(t = {shown} s{more}): brake-free laps give better estimates")


def _cda_not_physical(values: Values, system: str) -> str:
    return (f"CdA of {values['label']!r} came out {values['drag_area_m2']:.3f} m², which is not "
            "physical: check mass, power, speed and wind")


def _cda_unusual(values: Values, system: str) -> str:
    return (f"CdA of {values['label']!r} ({values['drag_area_m2']:.3f} m²) is outside the usual "
            f"{values['low_m2']:g}-{values['high_m2']:g} m²: check mass, power and wind")


def _cda_interval_below_zero(values: Values, system: str) -> str:
    return (f"the 95 % interval of CdA of {values['label']!r} reaches {values['low_m2']:.3f} m² "
            "(below 0): these laps do not pin CdA down")


def _crr_negative(values: Values, system: str) -> str:
    return (f"Crr came out {values['rolling_coefficient']:.4f}, below 0, which no tyre has: "
            "something the model lacks went into it (a power-meter offset, wind, braking, a "
            "wrong mass); zero the power meter before the test, or give the Crr of your tyres")


def _crr_unusual(values: Values, system: str) -> str:
    return (f"Crr ({values['rolling_coefficient']:.4f}) is outside the usual "
            f"{values['rolling_low']:g}-{values['rolling_high']:g}: check the laps")


def _crr_interval_below_zero(values: Values, system: str) -> str:
    return (f"the 95 % interval of Crr reaches {values['rolling_ci95_low']:.4f} (below 0): the "
            "laps determine Crr poorly")


def _wind_span(values: Values, system: str) -> str:
    """"a to b" of the 95 % interval of the 10 m wind speed."""
    low = _speed(values["speed_ci95_low_mps"], system, ".1f")
    high = _speed(values["speed_ci95_high_mps"], system, ".1f")
    return f"{low} to {high}"


def _wind_interval(values: Values, system: str) -> str:
    """" (95 % interval a to b)" of the 10 m wind speed, or nothing."""
    if "speed_ci95_low_mps" not in values:
        return ""
    return f" (95 % interval {_wind_span(values, system)})"


def _wind_estimated(values: Values, system: str) -> str:
    axis = (": only the part along the road, ridden both ways, could be told; the part across "
            "it is taken as 0" if values.get("along_axis_only") is True else "")
    return (f"wind estimated from the ride: {_speed(values['speed_mps'], system, '.1f')} at 10 m"
            f"{_wind_interval(values, system)}, "
            f"{_speed(values['speed_at_rider_mps'], system, '.1f')} at rider height, from "
            f"{values['from_deg']:.0f}°; CdA and Crr are fitted in that wind{axis}")


_WIND_REASONS = {
    "no-heading": "the ride has no headings or positions to tell the direction of travel",
    "one-heading": "the ride goes one way only, where a steady wind is just more drag",
    "correlation": "the wind estimate is too strongly tied to CdA and Crr",
}


def _wind_inseparable(values: Values, system: str) -> str:
    reason = _WIND_REASONS.get(values["reason"], "the fit cannot tell them apart")
    if values["reason"] == "interval":
        reason = (f"the 95 % interval of the wind at 10 m, {_wind_span(values, system)}, "
                  f"is wider than {_speed(values['limit_mps'], system, 'g')}")
    elif values["reason"] == "bound":
        reason = (f"the fit runs off to a wind of {_speed(values['speed_mps'], system, '.0f')},"
                  " which no test is ridden in")
    correlation = values.get("correlation")
    tail = f" (correlation {correlation:.3f})" if values["reason"] == "correlation" else ""
    return (f"the wind cannot be told from drag: {reason}{tail}; CdA and Crr are fitted in the "
            "wind given (calm if none), so an untold wind biases them: ride a loop at several "
            "speeds or an out-and-back, or give the wind")


def _wind_undeclared(values: Values, system: str) -> str:
    return (f"the ride shows a wind of {_speed(values['speed_mps'], system, '.1f')} at 10 m from "
            f"{values['from_deg']:.0f}°, but the wind given was "
            f"{_speed(values['given_speed_mps'], system, '.1f')} from "
            f"{values['given_from_deg']:.0f}°: check the wind, or let it be estimated")


def _race_excluded(values: Values, system: str) -> str:
    return (f"left out of the drag fit: {values['braking_s']:.0f} s braking, "
            f"{values['stops_s']:.0f} s stopped or not recorded, {values['coasting_s']:.0f} s "
            f"coasting ({100 * values['share']:.0f} % of the race)")


def _race_short(values: Values, system: str) -> str:
    return (f"only {values['used_s']:.0f} s of the race could be used for the drag fit (under "
            f"{values['limit_s']:.0f} s): the CdA and Crr of the day are rough")


def _race_crr_held(values: Values, system: str) -> str:
    return (f"the race cannot separate CdA from Crr (too little speed variety): Crr held at "
            f"{values['held_rolling_coefficient']:g}; for Crr {values['rolling_low']:g}-"
            f"{values['rolling_high']:g} the CdA would differ")


def _speed_filled(values: Values, system: str) -> str:
    return "filled short gaps in speed by interpolation"


def _power_dropouts(values: Values, system: str) -> str:
    zeros = values["zero_count"]
    logged = (f", {zeros:g} of them logged as 0 W while pedalling faster than "
              f"{_speed(values['speed_mps'], system, 'g')}" if zeros else "")
    return (f"power dropouts: {values['count']} samples without a real power reading "
            f"({100 * values['share']:.0f} % of the ride{logged}), the longest gap between "
            f"readings {values['longest_s']:g} s; left out of the energy balance and bridged "
            "from the readings on either side: check the power meter's battery and pairing")


def _zero_power(values: Values, system: str) -> str:
    return (f"power reads 0 W for {values['duration_s']:g} s from t = {values['start_s']:g} s "
            "while the speed holds: a power-meter dropout? Leave that stretch out of the laps")


def _column_empty(values: Values, system: str) -> str:
    return f"{values['label']} column is empty: ignored"


def _column_filled(values: Values, system: str) -> str:
    return f"filled {values['count']} missing {values['label']} values by interpolation"


def _stops_dropped(values: Values, system: str) -> str:
    stops, times = values["stretch_count"], values["times_s"]
    at = ", ".join(f"{t:.0f}" for t in times) + (", …" if stops > len(times) else "")
    how_long = (f"{values['duration_s']:.0f} s long" if stops == 1 else
                f"{values['duration_s']:.0f} s in all, the longest {values['longest_s']:.0f} s")
    return (f"dropped {values['count']} samples slower than "
            f"{_speed(values['speed_mps'], system, 'g')}: {stops:g} "
            f"stop{'' if stops == 1 else 's'} at t = {at} s ({how_long}); the energy balance "
            "restarts after each")


def _speed_from_distance(values: Values, system: str) -> str:
    return "speed taken from the distance column"


def _speed_from_positions(values: Values, system: str) -> str:
    return "speed taken from GNSS positions (noisier than a wheel sensor)"


WORDS: dict[str, Callable[[Mapping[str, Any], str], str]] = {
    "fieldtest-crr-held": _crr_held,
    "fieldtest-inseparable": _inseparable,
    "fieldtest-few-laps": _few_laps,
    "fieldtest-bootstrap-failed": _bootstrap_failed,
    "fieldtest-lap-spread": _lap_spread,
    "fieldtest-unsteady-runs": _unsteady_runs,
    "fieldtest-windy": _windy,
    "fieldtest-braking": _braking,
    "fieldtest-cda-not-physical": _cda_not_physical,
    "fieldtest-cda-unusual": _cda_unusual,
    "fieldtest-cda-interval-below-zero": _cda_interval_below_zero,
    "fieldtest-crr-negative": _crr_negative,
    "fieldtest-crr-unusual": _crr_unusual,
    "fieldtest-crr-interval-below-zero": _crr_interval_below_zero,
    "fieldtest-wind-estimated": _wind_estimated,
    "fieldtest-wind-inseparable": _wind_inseparable,
    "fieldtest-wind-undeclared": _wind_undeclared,
    "race-fit-excluded": _race_excluded,
    "race-fit-short": _race_short,
    "race-fit-crr-held": _race_crr_held,
    "test-ride-speed-filled": _speed_filled,
    "test-ride-power-dropouts": _power_dropouts,
    "test-ride-zero-power": _zero_power,
    "test-ride-column-empty": _column_empty,
    "test-ride-column-filled": _column_filled,
    "test-ride-stops-dropped": _stops_dropped,
    "test-ride-speed-from-distance": _speed_from_distance,
    "test-ride-speed-from-positions": _speed_from_positions,
}
