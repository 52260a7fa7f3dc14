"""The race day (pacing.plan.race_day): weather through the race solved to a fixed point with
the passing times, the best start, and the single-weather path unchanged.

The time-varying wind is checked against an independent integration written here: scipy's
solve_ivp of the Martin et al. (1998) power balance in time, with the headwind at time t
interpolated as a vector between the table's rows (the component along a north heading of a
vector interpolated linearly is itself linear in time) and reduced to rider height by the log
wind profile (Wieringa 1992; Stull 1988 ch. 9) — not the project's simulation.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_every
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.physics.running import Runner
from pacing.plan.best_start import best_start
from pacing.plan.prediction import SimulationOptions
from pacing.plan.race import RaceRequest, RunningRequest, plan_race, plan_race_in_air
from pacing.plan.race_day import (
    FIXED_POINT_TOLERANCE,
    RaceDay,
    plan_race_day,
)
from pacing.plan.request import PlanRequest
from pacing.weather.conditions import Conditions
from pacing.weather.timeline import WeatherTable

RIDER = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.004)
LENGTH = 20000.0
POWER = 250.0
START_SPEED = 8.0


def flat_north(length=LENGTH, step=10.0):
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, np.zeros_like(distance), heading=0.0)


def turning_wind(turn_from=900.0, turn_to=1500.0, speed=5.0):
    """5 m/s from the north (a headwind going north) turning to 5 m/s from the south."""
    return WeatherTable(time=np.array([0.0, turn_from, turn_to, 6000.0]),
                        temperature=np.full(4, 20.0), relative_humidity=np.full(4, 0.5),
                        wind_speed=np.full(4, speed),
                        wind_from=np.array([0.0, 0.0, 180.0, 180.0]))


def cycling_request(course, day=None, **asked):
    asked = {"mean_power": POWER, **asked}
    return RaceRequest(course=course, bounds=split_every(course, 2000.0),
                       conditions=Conditions(), sport="cycling", strategy="constant",
                       rider=RIDER, cycling=PlanRequest(**asked),
                       options=SimulationOptions(start_speed=START_SPEED), race_day=day)


def independent_finish_time(density, turn_from=900.0, turn_to=1500.0, speed=5.0):
    """solve_ivp of m_eff·dv/dt = η·P/v − k·(v + w(t))·|v + w(t)| − F0 − b·v, dx/dt = v, to
    x = LENGTH; w(t) the headwind at 1 m: linear from +speed to −speed over the turn, times
    the log-profile factor ln(1/z0)/ln(10/z0), z0 = 0.03 m (Martin et al. 1998; Wieringa
    1992)."""
    profile = math.log(1.0 / 0.03) / math.log(10.0 / 0.03)
    k = 0.5 * density * (RIDER.drag_area + RIDER.wheel_drag_area)
    constant = RIDER.rolling_coefficient * RIDER.mass * STANDARD_GRAVITY \
        + RIDER.bearing_force_constant
    drive = RIDER.drivetrain_efficiency * POWER

    def headwind(t):
        share = min(max((t - turn_from) / (turn_to - turn_from), 0.0), 1.0)
        return speed * (1.0 - 2.0 * share) * profile

    def rates(t, y):
        v = y[1]
        along = v + headwind(t)
        force = k * abs(along) * along + constant + RIDER.bearing_force_per_speed * v
        return [v, (drive / v - force) / RIDER.effective_mass]

    def finished(t, y):
        return y[0] - LENGTH

    finished.terminal = True
    solution = solve_ivp(rates, (0.0, 10000.0), [0.0, START_SPEED], method="DOP853",
                         rtol=1e-10, atol=1e-9, events=finished, max_step=5.0)
    return float(solution.t_events[0][0])


def test_a_headwind_turning_to_a_tailwind_matches_an_independent_integration():
    course = flat_north()
    result = plan_race(cycling_request(course, RaceDay(start=0.0, weather=turning_wind(),
                                                       environment=False)))
    density = float(np.mean(result.air.density))
    assert np.ptp(result.air.density) < 1e-12  # one temperature and pressure all race
    expected = independent_finish_time(density)
    # within the fixed point's tolerance (measured: 0.003 s on 1979 s)
    assert result.finish_time == pytest.approx(expected, abs=FIXED_POINT_TOLERANCE)
    # the turn matters: a headwind all race is minutes slower, so the check has teeth
    headwind_all_day = independent_finish_time(density, turn_from=9000.0, turn_to=9500.0)
    assert headwind_all_day - expected > 60.0
    # the headwind met on the first segments, the tailwind on the last
    assert result.race_day.weather.wind_from[0] == pytest.approx(0.0, abs=1e-9)
    assert result.race_day.weather.wind_from[-1] == pytest.approx(180.0, abs=1e-9)


def test_the_fixed_point_converges_to_a_finish_that_no_longer_moves():
    course = flat_north()
    day = RaceDay(start=0.0, weather=turning_wind(), environment=False)
    result = plan_race_day(cycling_request(course, day))
    assert 2 <= result.race_day.iterations < 8
    assert result.race_day.change < FIXED_POINT_TOLERANCE
    assert not [n for n in result.notices if n.code == "weather-fixed-point-not-converged"]
    # planning again in the weather met at the converged passing times changes nothing
    again = plan_race_day(cycling_request(course, day))
    assert again.finish_time == result.finish_time


def test_a_fixed_point_that_cannot_settle_in_one_plan_says_so(monkeypatch):
    import pacing.plan.race_day as race_day

    monkeypatch.setattr(race_day, "FIXED_POINT_ITERATIONS", 1)
    course = flat_north()
    result = plan_race_day(cycling_request(course, RaceDay(start=0.0, weather=turning_wind(),
                                                           environment=False)))
    assert "weather-fixed-point-not-converged" in [n.code for n in result.notices]


def test_one_weather_all_day_gives_the_single_weather_numbers_exactly():
    course = flat_north()
    plain = plan_race(cycling_request(course, critical_power=300.0, w_prime=20000.0))
    day = plan_race(cycling_request(course, RaceDay(start=36000.0, environment=False),
                                    critical_power=300.0, w_prime=20000.0))
    assert day.finish_time == plain.finish_time
    np.testing.assert_array_equal(day.air.density, plain.air.density)
    assert day.race_day.iterations == 1
    assert day.targets[0].clock_time == "1970-01-01T10:00:00"
    assert day.targets[0].temperature == 20.0


def test_a_race_outside_the_weather_table_is_refused_in_one_line():
    course = flat_north()
    table = turning_wind()
    short = replace(table, time=np.array([0.0, 300.0, 600.0, 900.0]))
    with pytest.raises(InputError, match="after the weather table's last row") as error:
        plan_race(cycling_request(course, RaceDay(start=0.0, weather=short,
                                                  environment=False)))
    assert "\n" not in str(error.value)
    with pytest.raises(InputError, match="before the weather table's first row"):
        plan_race(cycling_request(course, RaceDay(start=-60.0, weather=table,
                                                  environment=False)))


def test_segments_carry_their_clock_time_and_the_weather_met():
    course = flat_north()
    result = plan_race(cycling_request(course, RaceDay(start=0.0, weather=turning_wind(),
                                                       environment=False)))
    first, last = result.targets[0], result.targets[-1]
    assert first.clock_time == "1970-01-01T00:00:00"
    assert first.wind_from == pytest.approx(0.0, abs=1e-6)
    assert first.wind_speed == pytest.approx(5.0)
    assert last.wind_from == pytest.approx(180.0, abs=1e-6)
    cumulative = result.targets[3].cumulative_time - result.targets[3].time
    hours, minutes, seconds = (int(x) for x in result.targets[3].clock_time[11:19].split(":"))
    assert 3600 * hours + 60 * minutes + seconds == pytest.approx(cumulative, abs=0.51)


def test_a_running_plan_goes_through_the_same_fixed_point():
    course = flat_north(10000.0)
    runner = Runner.from_body(64.0, height=1.75)
    request = RaceRequest(course=course, bounds=split_every(course, 2000.0),
                          conditions=Conditions(), sport="running", strategy="equal-effort",
                          runner=runner, running=RunningRequest(flat_speed=4.0),
                          race_day=RaceDay(start=0.0, weather=turning_wind(speed=8.0),
                                           environment=False))
    result = plan_race(request)
    assert result.race_day.change < FIXED_POINT_TOLERANCE
    still = plan_race(replace(request, race_day=None))
    # into the wind first, then with it: not the still-air time
    assert result.finish_time != pytest.approx(still.finish_time, abs=1.0)
    assert result.targets[0].wind_from == pytest.approx(0.0, abs=1e-6)


def test_the_best_start_is_the_shortest_finish_of_the_window():
    course = flat_north()
    table = turning_wind()
    request = cycling_request(course, RaceDay(weather=table, environment=False))
    best = best_start(request, 0.0, 3000.0)
    finishes = dict(best.grid)
    assert best.finish_time == min(finishes.values())
    assert best.start in finishes
    # starting later rides more of the race in the tailwind, until the table's end
    assert finishes[600.0] < finishes[0.0]
    # every start on the 10-minute grid the table covers is there
    assert {0.0, 600.0, 1200.0, 1800.0, 2400.0, 3000.0} <= set(finishes)


def test_a_best_start_needs_a_weather_table():
    course = flat_north()
    with pytest.raises(InputError, match="needs a weather table"):
        best_start(cycling_request(course, RaceDay(environment=False)), 0.0, 600.0)


# ------------------------------------------------------------------ heat and altitude

def hot_table():
    return WeatherTable(time=np.array([0.0, 7200.0]), temperature=np.array([32.0, 34.0]),
                        relative_humidity=np.array([0.45, 0.4]), wind_speed=np.zeros(2),
                        wind_from=np.zeros(2))


def test_heat_and_altitude_lower_the_limits_not_the_set_power():
    course = flat_north()
    day = RaceDay(start=0.0, weather=hot_table())
    result = plan_race(cycling_request(course, day, critical_power=260.0, w_prime=20000.0))
    environment = result.race_day.environment
    factor = result.race_day.limit_factor
    assert factor == pytest.approx(environment.heat_power_factor
                                   * environment.altitude_power_factor)
    assert factor < 1.0
    # the same plan with the lowered CP given directly, in the same air
    lowered = plan_race_in_air(cycling_request(course, critical_power=260.0 * factor,
                                               w_prime=20000.0), result.air)
    assert result.finish_time == lowered.finish_time
    assert result.plan.min_w_prime_balance == lowered.plan.min_w_prime_balance
    assert result.plan.request.mean_power == POWER  # the coach's power stays as set
    codes = [n.code for n in result.notices]
    assert "weather-power-above-reduced-cp" in codes  # 250 W ≤ 260 W but > 260·factor


def test_the_size_of_heat_and_altitude_is_shown_in_watts_and_seconds():
    course = flat_north()
    result = plan_race(cycling_request(course, RaceDay(start=0.0, weather=hot_table())))
    costs = result.race_day.costs
    heat = result.race_day.environment.heat_power_factor
    assert costs.heat_power == pytest.approx(POWER * (1.0 - heat))
    slower = plan_race_in_air(cycling_request(course, mean_power=POWER * heat), result.air)
    assert costs.heat_time == pytest.approx(slower.finish_time - result.finish_time)
    assert costs.heat_time > 0


def test_at_altitude_thinner_air_gains_and_lower_power_loses():
    distance = np.arange(0.0, 10001.0, 10.0)
    course = synthetic_course(distance, np.full(distance.size, 2000.0), heading=0.0)
    day = RaceDay(start=0.0, weather=replace(hot_table(), temperature=np.array([12.0, 12.0])))
    costs = plan_race(cycling_request(course, day)).race_day.costs
    # about 20 % less air at 2000 m (ICAO: 79.5 kPa against 101.3 kPa) is worth minutes
    assert costs.altitude_air_gain > 30.0
    assert costs.altitude_power_loss > 0.0


def test_a_running_plan_lowers_critical_speed_in_the_heat():
    course = flat_north(10000.0)
    runner = Runner.from_body(64.0, height=1.75)
    request = RaceRequest(course=course, bounds=split_every(course, 2000.0),
                          conditions=Conditions(), sport="running", strategy="fastest",
                          runner=runner,
                          running=RunningRequest(critical_speed=4.5, d_prime=200.0),
                          race_day=RaceDay(start=0.0, weather=hot_table()))
    hot = plan_race(request)
    cool = plan_race(replace(request, race_day=RaceDay(start=0.0, weather=hot_table(),
                                                       environment=False)))
    assert hot.race_day.limit_factor < 1.0
    assert hot.finish_time > cool.finish_time


def test_places_along_a_long_course_give_each_piece_its_nearest_weather():
    course = flat_north()
    north_end = float(course.latitude[-1])
    table = WeatherTable(time=np.array([0.0, 7200.0, 0.0, 7200.0]),
                         temperature=np.array([10.0, 10.0, 30.0, 30.0]),
                         relative_humidity=np.full(4, 0.5), wind_speed=np.zeros(4),
                         wind_from=np.zeros(4), latitude=np.array([0.0, 0.0, north_end,
                                                                   north_end]),
                         longitude=np.zeros(4))
    result = plan_race(cycling_request(course, RaceDay(start=0.0, weather=table,
                                                       environment=False)))
    temperatures = [row.temperature for row in result.targets]
    assert temperatures == sorted(temperatures)
    assert temperatures[0] < 12.0 and temperatures[-1] > 28.0
    # the midpoint of the course is as far from each place: the mean of the two
    middle = result.race_day.weather.temperature[course.distance.size // 2 - 1]
    assert middle == pytest.approx(20.0, abs=0.1)


# ------------------------------------------- always on, relative to where the limits were measured

def bom_wbgt(temperature, humidity):
    """The Bureau of Meteorology's approximation written again here (ACSM 1984; BoM, "About
    the WBGT and apparent temperature indices"): 0.567·T + 0.393·e + 3.94, e in hPa by the
    Magnus form 6.105·exp(17.27·T/(237.7 + T))."""
    vapour = humidity * 6.105 * math.exp(17.27 * temperature / (237.7 + temperature))
    return 0.567 * temperature + 0.393 * vapour + 3.94


def test_every_plan_gets_the_race_day_even_without_one():
    result = plan_race(cycling_request(flat_north(), critical_power=300.0, w_prime=20000.0))
    assert result.race_day is not None and result.race_day.environment is not None
    assert result.race_day.iterations == 1  # one weather all day: one pass, no fixed point
    # the WBGT is always worked out and its band always cautioned
    assert result.race_day.environment.wbgt_max_c == pytest.approx(bom_wbgt(20.0, 0.5),
                                                                   abs=1e-9)


def test_a_race_in_the_tests_weather_costs_nothing():
    """20 °C, 50 %, a sea-level course against the default test (20 °C, 50 %, sea level):
    the heat and altitude factors are exactly 1 and no note says the test was assumed."""
    result = plan_race(cycling_request(flat_north(), critical_power=300.0, w_prime=20000.0))
    day = result.race_day
    assert day.environment.heat_power_factor == 1.0
    assert day.environment.altitude_power_factor == 1.0
    assert day.limit_factor == 1.0
    assert "limits-test-conditions-assumed" not in [n.code for n in result.notices]


def test_a_hot_race_costs_power_and_says_which_test_was_assumed():
    course = flat_north()
    hot = replace(cycling_request(course, critical_power=260.0, w_prime=20000.0),
                  conditions=Conditions(temperature=33.0, relative_humidity=0.5))
    result = plan_race(hot)
    heat = result.race_day.environment.heat_power_factor
    assert heat < 0.9  # WBGT ≈ 32.5 °C against ≈ 19.9 °C at the test: a clear loss
    codes = [n.code for n in result.notices]
    assert "heat-risk" in codes and "limits-test-conditions-assumed" in codes
    # 250 W set, within CP 260 W but above it once heat lowers it: the coach is told
    assert "weather-power-above-reduced-cp" in codes
    assert result.finish_time == plan_race_in_air(
        replace(hot, race_day=None), result.air).finish_time  # the set power stays as set


def test_the_heat_factor_is_the_races_over_the_tests():
    """f(WBGT_race) / f(WBGT_test) with the same model and the WBGTs of the approximation
    written here: a test in the heat keeps more of the limit at a hot race."""
    from pacing.physiology.heat import heat_factor

    course = flat_north()
    hot = replace(cycling_request(course), conditions=Conditions(temperature=30.0,
                                                                 relative_humidity=0.4))
    warm_test = replace(hot, race_day=RaceDay(limits_temperature=26.0,
                                              limits_relative_humidity=0.6))
    result = plan_race(warm_test)
    expected = (heat_factor(bom_wbgt(30.0, 0.4), "cycling").factor
                / heat_factor(bom_wbgt(26.0, 0.6), "cycling").factor)
    assert result.race_day.environment.heat_power_factor == pytest.approx(float(expected),
                                                                          rel=1e-12)
    assert "limits-test-conditions-assumed" not in [n.code for n in result.notices]
    # a test hotter than the race: capped at 1, heat takes nothing
    cooler = plan_race(replace(hot, race_day=RaceDay(limits_temperature=35.0)))
    assert cooler.race_day.environment.heat_power_factor == 1.0


def test_altitude_counts_from_the_tests_elevation():
    from pacing.physiology.altitude import altitude_factor

    distance = np.arange(0.0, 10000.0 + 5.0, 10.0)
    plateau = synthetic_course(distance, np.full(distance.size, 2000.0), heading=0.0)
    at_sea_level = plan_race(cycling_request(plateau))
    assert at_sea_level.race_day.environment.altitude_power_factor == pytest.approx(
        float(altitude_factor(2000.0).factor), rel=1e-12)
    tested_there = plan_race(cycling_request(plateau, RaceDay(limits_elevation=2000.0)))
    assert tested_there.race_day.environment.altitude_power_factor == 1.0
