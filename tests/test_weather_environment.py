"""Specification of pacing.weather.environment: the race's heat and altitude in one summary for
the planning chain (factors on the athlete's limits, WBGT, heat category, notices)."""

import json

import numpy as np
import pytest

from pacing.display.notices import describe
from pacing.errors import InputError
from pacing.physiology.altitude import altitude_factor
from pacing.physiology.heat import heat_factor
from pacing.weather.environment import Environment, race_environment
from pacing.weather.sun import irradiance_from_cloud_cover
from pacing.weather.wbgt import wbgt_bom_approximation, wbgt_liljegren

HOT_SUNNY = {"solar_irradiance": 850.0, "sun_elevation": 65.0}


def codes(environment):
    return [notice.code for notice in environment.notices]


def test_race_factors_are_time_weighted_means_of_the_pieces():
    # Σ tᵢ·fᵢ / Σ tᵢ, with the pieces' factors from the models themselves.
    temperature = np.array([18.0, 26.0, 33.0])
    elevation = np.array([300.0, 1200.0, 2100.0])
    time = np.array([600.0, 1800.0, 1200.0])
    env = race_environment(temperature, 0.5, 2.0, 95000.0, elevation, time, "cycling",
                           **HOT_SUNNY)
    wbgt = wbgt_liljegren(temperature, 0.5, 2.0, 95000.0, 850.0, 65.0)
    np.testing.assert_allclose(env.wbgt, wbgt, rtol=1e-12)
    heat = heat_factor(wbgt, "cycling").factor
    altitude = altitude_factor(elevation).factor
    assert env.heat_power_factor == pytest.approx(np.sum(time * heat) / np.sum(time), rel=1e-12)
    assert env.altitude_power_factor == pytest.approx(np.sum(time * altitude) / np.sum(time),
                                                      rel=1e-12)
    np.testing.assert_allclose(env.altitude_power_factor_per_piece, altitude, rtol=1e-12)
    assert env.wbgt_max_c == pytest.approx(float(np.max(wbgt)))


def test_a_cool_sea_level_race_costs_nothing_and_warns_of_nothing():
    env = race_environment(8.0, 0.6, 3.0, 101325.0, 0.0, [3600.0], "running",
                           solar_irradiance=200.0, sun_elevation=30.0)
    assert env.heat_power_factor == 1.0 and env.altitude_power_factor == 1.0
    assert env.heat_category in ("cool", "low")
    assert env.notices == ()


def test_a_hot_afternoon_warns_of_heat_with_the_usual_cautions():
    env = race_environment(34.0, 0.45, 1.5, 101000.0, 50.0, [1800.0, 1800.0], "cycling",
                           **HOT_SUNNY)
    assert env.heat_category == "extreme"
    assert codes(env)[:2] == ["heat-risk", "heat-model-outside-validity"]
    risk = env.notices[0]
    assert risk.level == "warning" and risk.values["category"] == "extreme"
    words = describe(risk, "metric").lower()
    for caution in ("drink", "cool", "heat policy", "medical staff"):
        assert caution in words
    assert "°F" in describe(risk, "imperial")
    assert "heat-power-loss" in codes(env)


def test_running_acclimatised_is_told_the_model_cannot_tell():
    env = race_environment(24.0, 0.6, 2.0, 101325.0, 0.0, [3600.0], "running",
                           heat_acclimatised=True, **HOT_SUNNY)
    assert env.heat_model == "ely-2007"
    assert "heat-acclimatisation-not-modelled" in codes(env)


def test_altitude_is_reported_with_its_model_and_range():
    env = race_environment(10.0, 0.5, 2.0, 65000.0, [2900.0, 3300.0], [600.0, 600.0],
                           "cycling", altitude_acclimatised=True, **HOT_SUNNY)
    assert "altitude-model-outside-validity" in codes(env)
    loss = next(n for n in env.notices if n.code == "altitude-power-loss")
    assert loss.values["acclimatised"] is True
    assert loss.values["factor"] == pytest.approx(env.altitude_power_factor)


def test_without_sun_the_approximation_is_used_and_said():
    env = race_environment(28.0, 0.5, 2.0, 101325.0, 0.0, [3600.0], "cycling")
    assert env.wbgt_method == "bom-approximation"
    assert float(env.wbgt[0]) == pytest.approx(float(wbgt_bom_approximation(28.0, 0.5)))
    assert codes(env)[-1] == "wbgt-without-sun"


def test_cloud_cover_gives_the_same_as_its_irradiance():
    by_cloud = race_environment(27.0, 0.5, 2.0, 101325.0, 0.0, [600.0, 600.0], "cycling",
                                cloud_cover=[0.2, 0.9], sun_elevation=[55.0, 40.0])
    irradiance = irradiance_from_cloud_cover([55.0, 40.0], [0.2, 0.9])
    by_irradiance = race_environment(27.0, 0.5, 2.0, 101325.0, 0.0, [600.0, 600.0], "cycling",
                                     solar_irradiance=irradiance, sun_elevation=[55.0, 40.0])
    np.testing.assert_allclose(by_cloud.wbgt, by_irradiance.wbgt, rtol=1e-12)
    clear = race_environment(27.0, 0.5, 2.0, 101325.0, 0.0, [600.0, 600.0], "cycling",
                             sun_elevation=[55.0, 40.0])
    assert np.all(clear.wbgt > by_cloud.wbgt)  # the sun's elevation alone means a clear sky


def test_the_summary_is_json_ready():
    env = race_environment(30.0, 0.5, 2.0, 90000.0, 1000.0, [100.0, 200.0], "running",
                           **HOT_SUNNY)
    summary = env.as_dict()
    assert set(summary) == {"heat_power_factor", "altitude_power_factor", "wbgt_max_c",
                            "heat_category", "heat_model", "altitude_model", "wbgt_method",
                            "limits_measured_wbgt_c"}
    json.dumps(summary, allow_nan=False)
    json.dumps([n.as_dict() for n in env.notices], allow_nan=False)
    assert isinstance(env, Environment)


@pytest.mark.parametrize(
    ("keywords", "message"),
    [
        ({"piece_time": [-1.0, 5.0]}, "time on each piece"),
        ({"piece_time": [0.0, 0.0]}, "time on each piece"),
        ({"temperature": [20.0, 21.0, 22.0]}, "temperature must be one value or one per piece"),
        ({"solar_irradiance": 500.0}, "sun's elevation"),
        ({"cloud_cover": 0.5}, "sun's elevation"),
        ({"sport": "rowing"}, "sport"),
        ({"elevation": [0.0, 20000.0]}, "elevation"),
    ],
)
def test_bad_inputs_raise_one_line(keywords, message):
    arguments = {"temperature": 25.0, "relative_humidity": 0.5, "wind_speed": 2.0,
                 "pressure": 100000.0, "elevation": 0.0, "piece_time": [60.0, 60.0],
                 "sport": "cycling"}
    arguments.update(keywords)
    with pytest.raises(InputError, match=message) as raised:
        race_environment(**arguments)
    assert "\n" not in str(raised.value)


@pytest.mark.parametrize("code", ["heat-risk", "heat-power-loss", "heat-model-outside-validity",
                                  "heat-acclimatisation-not-modelled", "altitude-power-loss",
                                  "altitude-model-outside-validity", "wbgt-without-sun"])
def test_every_environment_notice_reads_in_both_systems_without_nan(code):
    # A saved plan may carry values that are not numbers: the words show "–", never "nan".
    from pacing.notices import Notice

    values = {"wbgt_max_c": float("nan"), "category": "high", "flag": "red",
              "factor": float("nan"), "model": "racinais-2015", "sport": "cycling",
              "quantity": "power", "acclimatised": False, "wbgt_c": float("inf"),
              "low_c": 8.0, "high_c": 28.0, "elevation_m": float("nan"), "high_m": 3000.0,
              "method": "bom-approximation"}
    for system in ("metric", "imperial"):
        words = describe(Notice(code, values), system)
        assert words and "nan" not in words.lower() and "inf" not in words.lower()
