"""The forecast's spread as a finish-time band (pacing.plan.forecast_band).

The band is checked against an independent sampling written here: on a flat course ridden
north at constant power the ride is steady, so each sampled weather's finish time is the course
length over the steady speed of the Martin et al. (1998) power balance with the apparent wind
(along-track air speed v + w_h, crosswind w_c; drag along the track ½ρ(CdA + F_w)·V·v_a, V the
apparent speed), the wind reduced from 10 m to 1 m by the log wind profile (Wieringa 1992) and
the air density of humid air as an ideal-gas mixture with the Magnus vapour pressure (WMO-No. 8,
2008, annex 4.B) — not the project's simulation, air or wind code. Different random numbers,
many more of them: the band's width must agree within the Monte Carlo error.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_every
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.physics.running import Runner
from pacing.plan.forecast_band import WeatherSpread, sampled_offsets
from pacing.plan.prediction import SimulationOptions
from pacing.plan.race import RaceRequest, RunningRequest, plan_race
from pacing.plan.race_day import RaceDay
from pacing.plan.request import PlanRequest
from pacing.weather.conditions import Conditions

RIDER = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.004)
LENGTH = 20000.0
POWER = 250.0
WIND, WIND_FROM, TEMPERATURE, HUMIDITY = 4.0, 20.0, 20.0, 0.5
SPREAD = WeatherSpread(wind_speed=1.5, wind_from=25.0, temperature=4.0, samples=400, seed=3)


def flat_north():
    distance = np.arange(0.0, LENGTH + 5.0, 10.0)
    return synthetic_course(distance, np.zeros_like(distance), heading=0.0)


def request(spread=SPREAD):
    course = flat_north()
    return RaceRequest(course=course, bounds=split_every(course, 5000.0),
                       conditions=Conditions(temperature=TEMPERATURE, relative_humidity=HUMIDITY,
                                             wind_speed=WIND, wind_from=WIND_FROM),
                       sport="cycling", strategy="constant", rider=RIDER,
                       cycling=PlanRequest(mean_power=POWER),
                       options=SimulationOptions(start_speed=9.0),
                       race_day=RaceDay(spread=spread))


def humid_air_density(temperature, humidity, pressure=101325.0):
    """Ideal-gas mixture of dry air and water vapour; vapour pressure by Magnus,
    6.112·exp(17.62·T/(243.12 + T)) hPa (WMO-No. 8, 2008, annex 4.B) [kg/m³]."""
    vapour = humidity * 611.2 * np.exp(17.62 * temperature / (243.12 + temperature))
    kelvin = temperature + 273.15
    return ((pressure - vapour) * 0.0289652 + vapour * 0.018016) / (8.314462618 * kelvin)


def steady_finish_times(wind, wind_from, temperature):
    """LENGTH / v of the steady balance η·P = v·(½ρ(CdA + F_w)·V·v_a + Crr·m·g + a + b·v),
    solved by bisection for every sample at once [s]."""
    profile = math.log(1.0 / 0.03) / math.log(10.0 / 0.03)
    angle = np.radians(wind_from)  # heading north: headwind w·cos(from), crosswind w·sin(from)
    head, cross = wind * np.cos(angle) * profile, wind * np.sin(angle) * profile
    k = 0.5 * humid_air_density(temperature, HUMIDITY) * (RIDER.drag_area + RIDER.wheel_drag_area)
    constant = RIDER.rolling_coefficient * RIDER.mass * STANDARD_GRAVITY \
        + RIDER.bearing_force_constant

    def surplus(v):
        along = v + head
        drag = k * np.sqrt(along**2 + cross**2) * along
        return RIDER.drivetrain_efficiency * POWER - v * (drag + constant
                                                          + RIDER.bearing_force_per_speed * v)

    low, high = np.full(head.shape, 0.5), np.full(head.shape, 30.0)
    for _ in range(60):
        middle = 0.5 * (low + high)
        faster = surplus(middle) > 0
        low, high = np.where(faster, middle, low), np.where(faster, high, middle)
    return LENGTH / (0.5 * (low + high))


def independent_band(draws=40000, seed=12345):
    generator = np.random.default_rng(seed)
    wind = np.maximum(WIND + SPREAD.wind_speed * generator.standard_normal(draws), 0.0)
    wind_from = WIND_FROM + SPREAD.wind_from * generator.standard_normal(draws)
    temperature = TEMPERATURE + SPREAD.temperature * generator.standard_normal(draws)
    return np.percentile(steady_finish_times(wind, wind_from, temperature), [5.0, 50.0, 95.0])


@pytest.fixture(scope="module")
def planned():
    return plan_race(request())


def test_the_band_matches_an_independent_sampling_of_a_steady_ride(planned):
    band = planned.race_day.band
    low, middle, high = independent_band()
    # the inertial ride starts at 9 m/s, a few tenths of a second off the steady one
    assert band.p50 == pytest.approx(middle, rel=0.002)
    # width: 400 samples against 40 000; the 5th and 95th percentiles of 400 draws carry
    # about 4 % of the width each (binomial standard error, JCGM 101:2008 7.7): 10 % allowed
    assert band.p95 - band.p5 == pytest.approx(high - low, rel=0.10)
    assert band.p5 < planned.finish_time < band.p95


def test_the_band_is_seeded_and_says_how_it_was_drawn(planned):
    band = planned.race_day.band
    assert (band.samples, band.seed) == (400, 3)
    again = plan_race(request())
    assert again.race_day.band == band
    other = plan_race(request(WeatherSpread(wind_speed=1.5, wind_from=25.0, temperature=4.0,
                                            samples=400, seed=4)))
    assert other.race_day.band.p95 != band.p95
    assert set(band.as_dict()) >= {"p5_s", "p50_s", "p95_s", "samples", "seed"}


def test_no_spread_no_band_and_a_spread_of_nothing_is_the_plan():
    assert plan_race(request(None)).race_day.band is None
    still = plan_race(request(WeatherSpread(samples=10)))
    band = still.race_day.band
    assert band.p5 == pytest.approx(still.finish_time, rel=1e-9)
    assert band.p95 == pytest.approx(still.finish_time, rel=1e-9)


def test_offsets_are_normal_with_the_spreads_deviations():
    offsets = sampled_offsets(WeatherSpread(wind_speed=2.0, wind_from=30.0, temperature=3.0,
                                            samples=5000, seed=1))
    assert np.std(offsets, axis=0) == pytest.approx([2.0, 30.0, 3.0], rel=0.05)
    assert np.mean(offsets, axis=0) == pytest.approx([0.0, 0.0, 0.0], abs=1.0)


def test_a_running_plan_gets_a_band_too():
    course = flat_north()
    race = RaceRequest(course=course, bounds=split_every(course, 5000.0),
                       conditions=Conditions(wind_speed=3.0, wind_from=0.0), sport="running",
                       strategy="equal-effort", runner=Runner(),
                       running=RunningRequest(flat_speed=4.5),
                       race_day=RaceDay(spread=WeatherSpread(wind_speed=1.0, samples=50)))
    result = plan_race(race)
    band = result.race_day.band
    assert band.p5 < band.p50 < band.p95
    assert band.p50 == pytest.approx(result.finish_time, rel=0.01)


@pytest.mark.parametrize(("spread", "words"), [
    ({"wind_speed": -1.0}, "wind speed must be a number ≥ 0"),
    ({"temperature": float("nan")}, "temperature must be a number ≥ 0"),
    ({"samples": 1}, "needs 2-5000 samples"),
])
def test_a_bad_spread_is_refused_in_one_line(spread, words):
    with pytest.raises(InputError, match=words):
        WeatherSpread(**spread)


def test_a_running_plan_replayed_in_its_own_air_finishes_as_planned():
    course = flat_north()
    race = RaceRequest(course=course, bounds=split_every(course, 5000.0),
                       conditions=Conditions(wind_speed=3.0, wind_from=30.0), sport="running",
                       strategy="equal-effort", runner=Runner(),
                       running=RunningRequest(flat_speed=4.5),
                       race_day=RaceDay(spread=WeatherSpread(samples=4)))
    result = plan_race(race)
    assert result.race_day.band.p50 == pytest.approx(result.finish_time, rel=1e-9)
