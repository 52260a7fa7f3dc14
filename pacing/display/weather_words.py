"""Sentences for the notices of the race day: weather, heat and altitude.

WORDS[code](values, system) gives one line (pacing.display.notices merges them).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

Values = Mapping[str, Any]

WORDS: dict[str, Callable[[Values, str], str]] = {}
"""Each notice code of this area and the function that writes it in words."""


# ---------------------------------------------------------- weather through the race (weather-)

def _weather_number(value: Any, spec: str) -> str:
    """format(value, spec) of a finite number, else "–"."""
    import math

    try:
        number = float(value)
    except (TypeError, ValueError):
        return "–"
    return format(number, spec) if math.isfinite(number) else "–"


def _weather_speed(value: Any, system: str) -> str:
    """A speed [m/s] as a pace per km or per mile."""
    from pacing.display.plan_words import pace

    try:
        return pace(float(value), system)
    except (TypeError, ValueError):
        return "–"


def _weather_fixed_point_not_converged(values: Values, system: str) -> str:
    """iterations_count [-] and change_s [s] of the last iteration."""
    return (f"the passing times and the weather did not settle after "
            f"{_weather_number(values['iterations_count'], '.0f')} plans (the finish still "
            f"moved {_weather_number(values['change_s'], '.1f')} s): the weather met may be "
            "off by that much; check the weather table for sudden jumps.")


def _weather_start_assumed(values: Values, system: str) -> str:
    """start_clock [ISO 8601] taken as the start."""
    return (f"no start time given: the race starts at the weather table's first row, "
            f"{values['start_clock']}.")


def _weather_power_above_reduced_cp(values: Values, system: str) -> str:
    """power_w, critical_power_w and reduced_critical_power_w [W]."""
    return (f"the set power {_weather_number(values['power_w'], '.0f')} W is within the "
            f"critical power {_weather_number(values['critical_power_w'], '.0f')} W but above "
            f"the {_weather_number(values['reduced_critical_power_w'], '.0f')} W heat and "
            "altitude leave today: expect to fade, or lower the power.")


def _weather_pace_above_reduced_cs(values: Values, system: str) -> str:
    """speed_mps, critical_speed_mps and reduced_critical_speed_mps [m/s]."""
    return (f"the set pace {_weather_speed(values['speed_mps'], system)} is within the critical "
            f"speed ({_weather_speed(values['critical_speed_mps'], system)}) but faster than "
            f"the {_weather_speed(values['reduced_critical_speed_mps'], system)} heat and "
            "altitude leave today: expect to fade, or run slower.")


WORDS.update({
    "weather-fixed-point-not-converged": _weather_fixed_point_not_converged,
    "weather-start-assumed": _weather_start_assumed,
    "weather-power-above-reduced-cp": _weather_power_above_reduced_cp,
    "weather-pace-above-reduced-cs": _weather_pace_above_reduced_cs,
})


# ------------------------------------------- heat, WBGT, altitude, pressure (heat-, wbgt-, ...)

HEAT_CAUTION = ("drink to a plan, cool down (shade, ice, cold water), know the signs of heat "
                "illness, and follow the organiser's heat policy and the medical staff first")
"""The usual cautions that go with every heat-risk sentence."""

HEAT_RISK_WORDS = {
    "moderate": "moderate risk of heat illness (amber flag)",
    "high": "high risk of heat illness (red flag): anyone sensitive to heat should not race hard",
    "extreme": "extreme risk of heat illness (black flag): the organiser may delay or cancel",
}
"""How each cautioned band of pacing.weather.heat_risk reads (ACSM 1996 flags)."""


def _heat_temperature(value: Any, system: str) -> str:
    """A temperature [°C] in °C or °F, "–" when not a finite number."""
    from pacing.display.units import format_quantity

    try:
        number = float(value)
    except (TypeError, ValueError):
        return "–"
    return format_quantity(number, "temperature", system, 1)


def _heat_elevation(value: Any, system: str) -> str:
    """An elevation [m] in m or ft, "–" when not a finite number."""
    from pacing.display.units import format_quantity

    try:
        number = float(value)
    except (TypeError, ValueError):
        return "–"
    return format_quantity(number, "elevation", system, 0)


def _heat_loss(factor: Any) -> str:
    """1 − factor as a percentage, "–" when not a finite number."""
    return _weather_number(100.0 * (1.0 - float(factor)) if _is_number(factor) else None, ".1f")


def _model_name(key: Any) -> str:
    """A heat or altitude model's key as a reader knows it: its authors and year from the
    registry's source ("racinais-2015" → "Racinais et al. 2015"); the key when unknown."""
    import re

    from pacing.physiology.altitude import ALTITUDE_MODELS
    from pacing.physiology.heat import HEAT_MODELS

    for registry in (HEAT_MODELS, ALTITUDE_MODELS):
        if key in registry:
            source = registry[key].source
            name = source.split("),")[0] + ")" if ")," in source else source
            return re.sub(r" \((\d{4})\)$", r" \1", name)
    return str(key)


def _is_number(value: Any) -> bool:
    try:
        float(value)
    except (TypeError, ValueError):
        return False
    return True


def _heat_risk(values: Values, system: str) -> str:
    """wbgt_max_c [°C], category (key of HEAT_RISK_BANDS), flag."""
    risk = HEAT_RISK_WORDS.get(str(values.get("category")), "risk of heat illness")
    return (f"WBGT up to {_heat_temperature(values['wbgt_max_c'], system)} on the course: "
            f"{risk}. {HEAT_CAUTION[0].upper()}{HEAT_CAUTION[1:]}.")


def _heat_power_loss(values: Values, system: str) -> str:
    """factor [-], model, sport, quantity ("power" | "speed"), acclimatised."""
    limit = "critical power" if values.get("quantity") == "power" else "critical speed"
    state = "heat-acclimatised" if values.get("acclimatised") else "not heat-acclimatised"
    return (f"heat lowers the {limit} you can sustain today by about "
            f"{_heat_loss(values['factor'])} % ({state}; {_model_name(values.get('model'))}).")


def _heat_model_outside_validity(values: Values, system: str) -> str:
    """model, wbgt_c, low_c, high_c [°C]."""
    return (f"WBGT {_heat_temperature(values['wbgt_c'], system)} is beyond the heat "
            f"{_model_name(values.get('model'))} measured in (up to "
            f"{_heat_temperature(values['high_c'], system)}): its loss is extended and the "
            "true loss may be larger.")


def _heat_acclimatisation_not_modelled(values: Values, system: str) -> str:
    """model."""
    return (f"the heat model ({_model_name(values.get('model'))}) does not separate "
            "acclimatised runners: "
            "the same loss is used, so the benefit of acclimatisation is not counted.")


def _altitude_power_loss(values: Values, system: str) -> str:
    """factor [-], model, acclimatised, sport."""
    limit = "critical power" if values.get("sport") == "cycling" else "critical speed"
    state = "acclimatised" if values.get("acclimatised") else "not acclimatised"
    return (f"altitude lowers the {limit} you can sustain today by about "
            f"{_heat_loss(values['factor'])} % ({state} to altitude; "
            f"{_model_name(values.get('model'))}); the thinner air lowers drag at the same time.")


def _altitude_model_outside_validity(values: Values, system: str) -> str:
    """model, elevation_m, high_m [m]."""
    return (f"the course reaches {_heat_elevation(values['elevation_m'], system)}, above the "
            f"{_heat_elevation(values['high_m'], system)} the altitude model "
            f"({_model_name(values.get('model'))}) covers: its loss is extended and may be "
            "off.")


def _wbgt_without_sun(values: Values, system: str) -> str:
    """method."""
    return ("no sun in the weather: the WBGT is the Bureau of Meteorology approximation for "
            "moderate sun and light wind; give the sun (irradiance or cloud cover and the "
            "time and place) for a better estimate.")


WORDS.update({
    "heat-risk": _heat_risk,
    "heat-power-loss": _heat_power_loss,
    "heat-model-outside-validity": _heat_model_outside_validity,
    "heat-acclimatisation-not-modelled": _heat_acclimatisation_not_modelled,
    "altitude-power-loss": _altitude_power_loss,
    "altitude-model-outside-validity": _altitude_model_outside_validity,
    "wbgt-without-sun": _wbgt_without_sun,
})


# ------------------------------------------------ where the athlete's limits were measured

def _limits_test_conditions_assumed(values: Values, system: str) -> str:
    """temperature_c [°C], relative_humidity [0..1], elevation_m [m] of the test assumed."""
    humidity = (100.0 * float(values["relative_humidity"])
                if _is_number(values.get("relative_humidity")) else None)
    return (f"heat and altitude are counted against limits measured at "
            f"{_heat_temperature(values['temperature_c'], system)}, "
            f"{_weather_number(humidity, '.0f')} % humidity and "
            f"{_heat_elevation(values['elevation_m'], system)} (assumed): give where the "
            "critical power or speed was measured if it was hotter or higher.")


WORDS.update({
    "limits-test-conditions-assumed": _limits_test_conditions_assumed,
})
