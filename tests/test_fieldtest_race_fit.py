"""Drag area on the day from a race over a known course (pacing.fieldtest.race_fit).

Races come from the independent forward model of tests/test_fieldtest_wind_fit.py (Martin et
al. 1998 power balance written in the test, RK4): a rider of 80 kg with CdA 0.30 m² and Crr
0.004 at 250 W plus 1500 W per unit grade (harder on climbs), power read with the published
power-meter noise (coefficient of variation 1.2 %, Maier et al. 2017, Int J Sports Med
38:456-461). Courses: an out-and-back of 2 × 15 km whose road wanders ±5° about its axis, a
loop of 4 × 7.5 km, and a straight road (one heading). Winds are set at rider height; the 10 m
wind follows from the log profile (Stull 1988, ch. 9).

Tolerances: CdA within 1 %, Crr within 5 %, the truth inside the 95 % moving-block bootstrap
intervals (Künsch 1989), the wind speed within 0.15 m/s and 5° on the loop; on the
out-and-back the wind along the road within 0.15 m/s.
"""

from __future__ import annotations

import functools
import math

import numpy as np
import pytest
from test_fieldtest_wind_fit import profile_factor, ride_on_course

from pacing.display.notices import describe
from pacing.errors import InputError
from pacing.fieldtest.race_fit import fit_race_drag
from pacing.physics.cycling import Rider
from pacing.weather.conditions import Conditions

TRUE_AREA, TRUE_ROLLING, MASS = 0.30, 0.004, 80.0
POWER_CV = 0.012  # Maier et al. 2017
DRAWS = 200


def _height(s):
    return 30.0 * math.sin(2 * math.pi * s / 8000.0) + 10.0 * math.sin(2 * math.pi * s / 2300.0
                                                                         + 1.0)


def _power(t, s):
    grade = (_height(s + 1.0) - _height(s - 1.0)) / 2.0
    return 250.0 + 1500.0 * grade


def _out_and_back(s):
    wander = 5.0 * math.sin(2 * math.pi * s / 5000.0)
    return (20.0 if s < 15000.0 else 200.0) + wander


def _loop(s):
    return (360.0 * s / 7500.0) % 360.0


def _straight(s):
    return 75.0 + 5.0 * math.sin(2 * math.pi * s / 3000.0)


COURSES = {"out-and-back": _out_and_back, "loop": _loop, "straight": _straight}


@functools.lru_cache(maxsize=8)
def race(course: str, wind: float = 0.0, wind_from: float = 250.0, seed: int = 3):
    """A simulated race: the forward model's samples with noisy power."""
    data = ride_on_course(_height, COURSES[course], 30000.0, _power, mass=MASS,
                          drag_area=TRUE_AREA, rolling=TRUE_ROLLING, wind=wind,
                          wind_from=wind_from)
    rng = np.random.default_rng(seed)
    data["power"] = data["power"] * (1 + POWER_CV * rng.standard_normal(data["power"].size))
    return data


def fit(data, **options):
    options.setdefault("bootstrap", DRAWS)
    return fit_race_drag(data["distance"], data["time"], data["speed"], data["power"],
                         data["heading"], data["elevation"], 1.2, Rider(mass=MASS), **options)


def inside(interval, value):
    return interval is not None and interval[0] <= value <= interval[1]


def codes(result):
    return [n.code for n in result.warnings]


# ---------------------------------------------------------------------------------------------
# Recovering CdA, Crr and the wind
# ---------------------------------------------------------------------------------------------


def test_a_calm_race_gives_back_cda_and_crr_within_their_intervals():
    result = fit(race("loop"), wind=Conditions())
    assert result.drag_area == pytest.approx(TRUE_AREA, rel=0.01)
    assert result.rolling_coefficient == pytest.approx(TRUE_ROLLING, rel=0.05)
    assert inside(result.drag_area_ci95, TRUE_AREA)
    assert inside(result.rolling_coefficient_ci95, TRUE_ROLLING)
    assert not result.wind_estimated and result.wind_speed == 0.0
    assert result.as_json()["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.01)


def test_the_wind_of_a_loop_race_is_estimated_with_cda_and_crr():
    result = fit(race("loop", wind=2.0, wind_from=250.0))
    assert result.wind_estimated
    assert result.wind_speed_at_rider == pytest.approx(2.0, abs=0.15)
    assert result.wind_speed == pytest.approx(2.0 / profile_factor(), abs=0.25)  # at 10 m
    assert result.wind_from == pytest.approx(250.0, abs=5.0)
    assert inside(result.drag_area_ci95, TRUE_AREA)
    assert inside(result.rolling_coefficient_ci95, TRUE_ROLLING)
    assert result.drag_area == pytest.approx(TRUE_AREA, rel=0.01)
    fitted = result.as_json()
    assert set(fitted) == {"cda_m2", "cda_ci95", "crr", "crr_ci95", "wind_speed_mps",
                           "wind_from_deg"}
    assert fitted["wind_from_deg"] == pytest.approx(250.0, abs=5.0)
    (notice,) = [n for n in result.warnings if n.code == "fieldtest-wind-estimated"]
    assert "at 10 m" in describe(notice) and "at rider height" in describe(notice)


def test_an_out_and_back_fits_the_wind_along_the_road():
    # the wind blows from 200°: along the axis (20°-200°) of the out-and-back
    result = fit(race("out-and-back", wind=2.0, wind_from=200.0))
    assert result.wind.along_axis_only
    assert result.wind_speed_at_rider == pytest.approx(2.0, abs=0.15)
    assert result.wind_from == pytest.approx(200.0, abs=1.0)
    assert inside(result.drag_area_ci95, TRUE_AREA)
    assert inside(result.rolling_coefficient_ci95, TRUE_ROLLING)


def test_an_untold_wind_biases_the_calm_fit():
    # the same race fitted as if calm: CdA off by more than its interval allows
    data = race("loop", wind=2.0, wind_from=250.0)
    calm = fit(data, wind=Conditions())
    assert not inside(calm.drag_area_ci95, TRUE_AREA) or calm.rolling_held \
        or not inside(calm.rolling_coefficient_ci95, TRUE_ROLLING)


def test_a_given_wind_that_differs_from_the_race_is_warned_of_when_estimating():
    data = race("loop", wind=2.0, wind_from=250.0)
    result = fit(data, wind=Conditions(wind_speed=0.5, wind_from=90.0), estimate_wind=True)
    (notice,) = [n for n in result.warnings if n.code == "fieldtest-wind-undeclared"]
    assert notice.values["given_from_deg"] == 90.0
    assert "but the wind given was" in describe(notice)


def test_one_heading_cannot_separate_the_wind_from_drag():
    result = fit(race("straight", wind=1.0, wind_from=250.0))
    (notice,) = [n for n in result.warnings if n.code == "fieldtest-wind-inseparable"]
    assert notice.values["reason"] == "one-heading"
    assert not result.wind_estimated
    assert "goes one way only" in describe(notice)


# ---------------------------------------------------------------------------------------------
# What is left out
# ---------------------------------------------------------------------------------------------


def with_a_stop(data, at: int = 1500, length: int = 30):
    """The race with the rider stopped for `length` seconds after sample `at` (speed and
    power 0; the clock runs on)."""
    out = {}
    for key, values in data.items():
        if key == "time":
            out[key] = np.concatenate((values[:at], values[at - 1] + 1 + np.arange(length),
                                       values[at:] + length))
        elif key in ("speed", "power"):
            out[key] = np.concatenate((values[:at], np.zeros(length), values[at:]))
        else:
            out[key] = np.concatenate((values[:at], np.full(length, values[at - 1]),
                                       values[at:]))
    return out


def test_a_stop_is_left_out_and_counted():
    result = fit(with_a_stop(race("loop")), wind=Conditions())
    # the 30 s standing still and the pieces into and out of it
    assert result.excluded_stop_time == pytest.approx(31.0, abs=1.0)
    assert result.drag_area == pytest.approx(TRUE_AREA, rel=0.01)
    (notice,) = [n for n in result.warnings if n.code == "race-fit-excluded"]
    assert notice.values["stops_s"] == pytest.approx(31.0, abs=1.0)
    assert "31 s stopped" in describe(notice)


def test_braking_and_coasting_are_left_out_and_counted():
    def braking(t):
        return 120.0 if 1200.0 <= t < 1206.0 else 0.0

    def power(t, s):
        return 0.0 if 1195.0 <= t < 1215.0 else _power(t, s)

    data = ride_on_course(_height, _loop, 30000.0, power, mass=MASS, drag_area=TRUE_AREA,
                          rolling=TRUE_ROLLING, brake_of=braking)
    result = fit(data, wind=Conditions())
    assert result.excluded_braking_time >= 3.0
    assert result.excluded_braking_time + result.excluded_coasting_time == pytest.approx(
        20.0, abs=2.0)
    assert result.drag_area == pytest.approx(TRUE_AREA, rel=0.01)
    assert 0.98 < result.used_share < 1.0


def test_virtual_elevation_follows_the_course():
    data = race("loop")
    result = fit(data, wind=Conditions(), bootstrap=0)
    assert result.drag_area_ci95 is None
    assert result.virtual_elevation.shape == data["time"].shape
    assert result.residual_rms < 0.5  # m, within the blocks
    assert result.block_length == 300.0


# ---------------------------------------------------------------------------------------------
# Bad input: one line
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("change, words", [
    (lambda d: d.update(speed=d["speed"][:-1]), "speed must be a series"),
    (lambda d: d.update(time=d["time"][::-1]), "time must increase"),
    (lambda d: d.update(power=-d["power"]), "power must not be negative"),
    (lambda d: d.update(speed=np.where(np.arange(d["speed"].size) == 5, np.nan, d["speed"])),
     "speed has missing"),
    (lambda d: d.update(power=np.zeros_like(d["power"])), "at least 60 s"),
])
def test_bad_arrays_are_refused_in_one_line(change, words):
    data = dict(race("loop"))
    change(data)
    with pytest.raises(InputError, match=words) as caught:
        fit(data, wind=Conditions(), bootstrap=0)
    assert "\n" not in str(caught.value)


def test_a_given_calm_on_a_windy_race_is_used_and_warned_of():
    result = fit(race("loop", wind=2.0, wind_from=250.0), wind=Conditions())
    assert not result.wind_estimated and result.wind_speed == 0.0
    (notice,) = [n for n in result.warnings if n.code == "fieldtest-wind-undeclared"]
    assert notice.values["speed_mps"] == pytest.approx(2.0 / profile_factor(), abs=0.25)
    assert notice.values["from_deg"] == pytest.approx(250.0, abs=5.0)


def test_the_right_wind_given_raises_no_warning():
    given = Conditions(wind_speed=2.0 / profile_factor(), wind_from=250.0)
    result = fit(race("loop", wind=2.0, wind_from=250.0), wind=given)
    assert "fieldtest-wind-undeclared" not in codes(result)
    assert result.wind_speed_at_rider == pytest.approx(2.0, rel=1e-9)
    assert inside(result.drag_area_ci95, TRUE_AREA)


def test_headings_per_piece_are_taken_as_they_are():
    data = dict(race("loop", wind=2.0, wind_from=250.0))
    per_piece = np.array([_loop(s) for s in 0.5 * (data["distance"][1:]
                                                   + data["distance"][:-1])])
    result = fit(dict(data, heading=per_piece), bootstrap=0)
    assert result.wind_speed_at_rider == pytest.approx(2.0, abs=0.15)
    with pytest.raises(InputError, match="heading must have"):
        fit(dict(data, heading=per_piece[:-5]), bootstrap=0)


def test_the_10_m_wind_uses_the_heights_given():
    # over rough terrain (z0 = 0.25 m) the same wind at the rider is a stronger 10 m wind
    data = race("loop", wind=2.0, wind_from=250.0)
    rough = fit(data, bootstrap=0, heights=Conditions(roughness_length=0.25))
    assert rough.wind_speed == pytest.approx(rough.wind_speed_at_rider
                                             / profile_factor(1.0, 0.25), rel=1e-9)
