"""The race as it will be on the day: start time, weather through the race, heat and altitude.

`plan_race_day` is the fixed point the one planning chain (pacing.plan.race.plan_race) runs for a
request with a `RaceDay`: plan → time at each piece → weather there and then
(pacing.weather.timeline) → air (pacing.weather.conditions.air_in_weather), heat and altitude
on the athlete's limits (pacing.weather.environment) → plan …, until the finish time moves
less than 0.1 s (pacing.plan.best_start plans a window of start times).
docs/race_day_weather.md holds the method, the decisions and the check values.

Heat and altitude lower the athlete's *limits* — critical power (cycling), critical speed
(running) — by the time-weighted factors of the models. A power or pace the coach set (a
constant plan, a target time, a flat pace) stays as set: the plan says when it lies above the
lowered limit ("weather-power-above-reduced-cp", "weather-pace-above-reduced-cs"), and the
size of heat and altitude is shown from cheap counterfactual plans (`RaceDayCosts`).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any, cast

import numpy as np

from pacing.errors import InputError
from pacing.notices import Notice, note, warning
from pacing.physics.atmosphere import standard_pressure
from pacing.plan.race import RaceRequest, RaceResult, plan_race_in_air
from pacing.plan.request import PlanRequest
from pacing.weather.conditions import (
    CourseAir,
    air_along_course,
    air_in_weather,
    piece_elevation,
    pressure_in_weather,
)
from pacing.weather.environment import NOTICEABLE_LOSS, Environment
from pacing.weather.environment import race_environment as environment_of_race
from pacing.weather.timeline import (
    WeatherAt,
    WeatherSpanError,
    check_covers,
    clock_text,
    weather_at,
    wind_from_vector,
    wind_vector,
)

if TYPE_CHECKING:
    from pacing.plan.cycling import RacePlan
    from pacing.plan.forecast_band import FinishTimeBand, WeatherSpread
    from pacing.plan.running_plan import RunningPlan
    from pacing.plan.targets import SegmentTarget
    from pacing.weather.timeline import WeatherTable

FIXED_POINT_TOLERANCE = 0.1
"""The fixed point of times and weather stops when the finish time moves less than this [s]."""

FIXED_POINT_ITERATIONS = 8
"""Most plans the fixed point makes before it gives up with a warning [-]."""

LIMITS_MEASURED_DEFAULTS = (20.0, 0.5, 0.0)
"""Where an athlete's critical power / speed is taken as measured unless said: 20 °C, 50 %
relative humidity, sea level (temperature [°C], humidity [0..1], elevation [m])."""


@dataclass(frozen=True, eq=False)
class RaceDay:
    """The race as it will be on the day: start time, weather through the race, heat and
    altitude.

    Attributes
    ----------
    start : clock time of the start in the weather table's frame [s since 1970-01-01]
        (pacing.weather.timeline.clock_seconds); None: the table's first row, or no clock
        without a table.
    utc_offset : the race's offset from UTC without a weather table [s]; None for the local
        wall clock.
    weather : the weather through the race (pacing.weather.timeline.WeatherTable); None for
        the request's single Conditions all day.
    heat_acclimatised : the athlete is acclimatised to heat [-].
    altitude_acclimatised : the athlete is acclimatised to altitude [-].
    environment : heat and altitude lower the athlete's limits (critical power, critical
        speed) [-].
    limits_temperature : air temperature where the athlete's limits were measured [°C];
        None: LIMITS_MEASURED_DEFAULTS (and a note when the factor falls below 1).
    limits_relative_humidity : relative humidity there, 0..1 [-]; None: the default.
    limits_elevation : elevation there [m]; None: the default (sea level).
    spread : the forecast's uncertainty (pacing.plan.forecast_band.WeatherSpread); None for
        no finish-time band.
    """

    start: float | None = None
    utc_offset: float | None = None
    weather: WeatherTable | None = None
    heat_acclimatised: bool = False
    altitude_acclimatised: bool = False
    environment: bool = True
    limits_temperature: float | None = None
    limits_relative_humidity: float | None = None
    limits_elevation: float | None = None
    spread: WeatherSpread | None = None

    @property
    def limits_measured(self) -> tuple[float, float, float]:
        """(temperature [°C], relative humidity [0..1], elevation [m]) where the athlete's
        limits were measured, the defaults filled in."""
        temperature, humidity, elevation = LIMITS_MEASURED_DEFAULTS
        return (temperature if self.limits_temperature is None else self.limits_temperature,
                humidity if self.limits_relative_humidity is None
                else self.limits_relative_humidity,
                elevation if self.limits_elevation is None else self.limits_elevation)

    @property
    def limits_assumed(self) -> bool:
        """None of the test's conditions was given: the defaults are assumed [-]."""
        return (self.limits_temperature is None and self.limits_relative_humidity is None
                and self.limits_elevation is None)

    @property
    def offset(self) -> float | None:
        """The frame's offset from UTC: the table's, else `utc_offset` [s]."""
        return self.weather.utc_offset if self.weather is not None else self.utc_offset


@dataclass(frozen=True, eq=False)
class RaceDayCosts:
    """The size of heat and altitude, from cheap counterfactual plans at constant power
    (cycling) or equal effort (running) in the race's air.

    Attributes
    ----------
    heat_power : power the heat takes, base power × (1 − heat factor) [W]; 0 running.
    heat_time : finish time lost to that power or speed [s].
    altitude_air_gain : time won by the thinner air against sea-level air at the same power
        or effort [s].
    altitude_power_loss : time lost to the lower power or speed at altitude [s].
    """

    heat_power: float
    heat_time: float
    altitude_air_gain: float
    altitude_power_loss: float


@dataclass(frozen=True, eq=False)
class RaceDayResult:
    """What the race day adds to a RaceResult.

    Attributes
    ----------
    start : clock time of the start [s in the frame], None without a clock.
    utc_offset : the frame's offset from UTC [s], None for the local wall clock.
    point_time : time from the start at each course point, length N [s].
    weather : the weather of each piece when it is passed, arrays of length N-1
        (pacing.weather.timeline.WeatherAt).
    limit_factor : factor on the athlete's limits (critical power / critical speed) from heat
        and altitude; 1 without them [-].
    environment : the heat and altitude summary (pacing.weather.environment), None without.
    iterations : plans made by the fixed point [-].
    change : how much the finish time moved in the last iteration [s].
    costs : the size of heat and altitude, None without them.
    limits_measured : (temperature [°C], relative humidity [0..1], elevation [m]) where the
        athlete's limits were taken as measured.
    limits_assumed : those are the defaults, not given [-].
    band : the finish-time band of the forecast's spread
        (pacing.plan.forecast_band.FinishTimeBand), None without a spread.
    """

    start: float | None
    utc_offset: float | None
    point_time: np.ndarray
    weather: WeatherAt
    limit_factor: float
    environment: Environment | None
    iterations: int
    change: float
    costs: RaceDayCosts | None = None
    limits_measured: tuple[float, float, float] = LIMITS_MEASURED_DEFAULTS
    limits_assumed: bool = True
    band: FinishTimeBand | None = None

    def clock(self, point: int) -> float | None:
        """Clock time at a course point [s in the frame]; None without a clock."""
        return None if self.start is None else self.start + float(self.point_time[point])


def plan_race_day(request: RaceRequest, *, first_guess: np.ndarray | None = None,
                  costs: bool = True) -> RaceResult:
    """Plan a race through its day: the fixed point of passing times and weather.

    plan → time at each piece → weather there and then (pacing.weather.timeline.weather_at)
    → air (pacing.weather.conditions.air_in_weather), heat and altitude on the athlete's
    limits → plan …, from the weather at the start everywhere, until the finish time moves
    less than FIXED_POINT_TOLERANCE (at most FIXED_POINT_ITERATIONS plans; else a warning
    "weather-fixed-point-not-converged").

    Parameters
    ----------
    request : RaceRequest
        A request with a race_day.
    first_guess : numpy.ndarray, optional
        Time from the start at each course point to begin from (a neighbouring start's, in a
        best-start search); None begins with the start's weather everywhere [s].
    costs : bool, optional
        Work out the size of heat and altitude (three more cheap plans) [-].

    Returns
    -------
    RaceResult
        The last plan, with `race_day` (clock, weather met, heat and altitude) and the targets'
        clock times and weather.

    Raises
    ------
    InputError
        When the plan cannot be made, or the race runs outside the weather table.
    """
    day = request.race_day
    assert day is not None
    start = _start_of(day)
    distance = np.asarray(request.course.distance, dtype=float)
    if day.weather is not None and start is not None:
        check_covers(day.weather, start, start)  # a start outside the table: refused at once
    point_time = np.zeros(distance.size) if first_guess is None else np.asarray(first_guess)
    previous, change, iterations = None, float("inf"), 0
    while iterations < FIXED_POINT_ITERATIONS:
        iterations += 1
        weather = _piece_weather(request, start, point_time)
        factor, environment = _limit_factor(request, weather, point_time, distance)
        air = _air_in(request, weather)
        result = _plan_within(request, factor, air)
        point_time = _point_times(result)
        finish = float(point_time[-1])
        change = abs(finish - previous) if previous is not None else float("inf")
        previous = finish
        if change < FIXED_POINT_TOLERANCE or not _depends_on_time(day):
            break
    if day.weather is not None and start is not None:  # (until here: the edge rows held)
        check_covers(day.weather, start, start + float(point_time[-1]))
    notices = [*result.notices, *_race_day_notices(request, result, factor, change, iterations)]
    sizes = _costs(request, result, air, environment) \
        if costs and environment is not None else None
    outcome = RaceDayResult(start=start, utc_offset=day.offset, point_time=point_time,
                            weather=weather, limit_factor=factor, environment=environment,
                            iterations=iterations, change=change, costs=sizes,
                            limits_measured=day.limits_measured,
                            limits_assumed=day.limits_assumed)
    if environment is not None:
        notices.extend(environment.notices)
    if day.spread is not None and costs:
        from pacing.plan.forecast_band import finish_time_band

        outcome = replace(outcome, band=finish_time_band(request, result, air, weather,
                                                         day.spread))
    targets = _targets_in_weather(result.targets, request, result.plan, outcome)
    return RaceResult(request=request, air=air, plan=result.plan, targets=targets,
                      notices=tuple(notices), race_day=outcome)


def _plan_within(request: RaceRequest, factor: float, air: CourseAir) -> RaceResult:
    """The plan with the athlete's limits times `factor`; a refusal says how far heat and
    altitude lowered them."""
    try:
        return plan_race_in_air(_with_limits(request, factor), air)
    except WeatherSpanError:
        raise
    except InputError as error:
        if factor >= 1.0:
            raise
        if request.sport == "cycling" and request.cycling.critical_power is not None:
            limit = (f"critical power from {request.cycling.critical_power:.0f} W to "
                     f"{request.cycling.critical_power * factor:.0f} W")
        elif request.sport == "running" and request.running.critical_speed is not None:
            limit = (f"critical speed from {request.running.critical_speed:.2f} m/s to "
                     f"{request.running.critical_speed * factor:.2f} m/s")
        else:
            raise
        raise InputError(f"{error} (heat and altitude lower the {limit} today; lower the "
                         "power or pace)") from None


def _start_of(day: RaceDay) -> float | None:
    if day.start is not None or day.weather is None:
        return day.start
    return day.weather.span[0]


def _depends_on_time(day: RaceDay) -> bool:
    """Whether the air or the limits change with the passing times: only with a weather
    table (one weather all day is planned in one pass, the pieces weighed by their length)."""
    return day.weather is not None


def _piece_weather(request: RaceRequest, start: float | None,
                   point_time: np.ndarray) -> WeatherAt:
    """The weather of each piece at the middle of its passing (the Conditions without a
    table)."""
    day = request.race_day
    assert day is not None
    pieces = point_time.size - 1
    if day.weather is None or start is None:
        conditions = request.conditions
        full = np.full(pieces, 1.0)
        return WeatherAt(temperature=conditions.temperature * full,
                         relative_humidity=conditions.relative_humidity * full,
                         wind_speed=conditions.wind_speed * full,
                         wind_from=conditions.wind_from * full)
    course = request.course
    middle = start + 0.5 * (point_time[:-1] + point_time[1:])
    latitude = np.asarray(course.latitude, dtype=float)
    longitude = np.asarray(course.longitude, dtype=float)
    return weather_at(day.weather, middle, 0.5 * (latitude[:-1] + latitude[1:]),
                      0.5 * (longitude[:-1] + longitude[1:]))


def _air_in(request: RaceRequest, weather: WeatherAt) -> CourseAir:
    day = request.race_day
    assert day is not None
    if day.weather is None:  # one weather all day: the single-weather air, number for number
        return air_along_course(request.course, request.conditions)
    return air_in_weather(request.course, weather, request.conditions, day.weather.pressure_kind)


def _point_times(result: RaceResult) -> np.ndarray:
    """Time from the start at each course point [s]."""
    if result.sport == "cycling":
        return np.asarray(cast("RacePlan", result.plan).prediction.time, dtype=float)
    piece = np.asarray(cast("RunningPlan", result.plan).time, dtype=float)
    return np.concatenate([[0.0], np.cumsum(piece)])


def _limit_factor(request: RaceRequest, weather: WeatherAt, point_time: np.ndarray,
                  distance: np.ndarray) -> tuple[float, Environment | None]:
    """The factor heat and altitude put on the athlete's limits, and their summary.

    Each piece weighs by the time spent on it (by its length before the first plan)."""
    day = request.race_day
    assert day is not None
    if not day.environment:
        return 1.0, None
    spent = np.diff(point_time)
    weights = spent if np.sum(spent) > 0 and _depends_on_time(day) else np.diff(distance)
    environment = race_environment(request, weather, weights)
    return environment_limit_factor(environment, request.sport), environment


def _with_limits(request: RaceRequest, factor: float) -> RaceRequest:
    """The request with critical power (cycling) or critical speed (running) times `factor`;
    powers and paces the coach set stay as set."""
    if factor == 1.0:
        return request
    if request.sport == "cycling":
        asked = request.cycling
        if asked.critical_power is None:
            return request
        return replace(request, cycling=replace(asked,
                                                critical_power=asked.critical_power * factor))
    running = request.running
    if running.critical_speed is None:
        return request
    return replace(request, running=replace(running,
                                            critical_speed=running.critical_speed * factor))


def _race_day_notices(request: RaceRequest, result: RaceResult, factor: float, change: float,
                      iterations: int) -> list[Notice]:
    day = request.race_day
    assert day is not None
    notices = []
    if _depends_on_time(day) and change >= FIXED_POINT_TOLERANCE:
        notices.append(warning("weather-fixed-point-not-converged", iterations_count=iterations,
                               change_s=float(change)))
    if day.start is None and day.weather is not None:
        notices.append(note("weather-start-assumed", start_clock=clock_text(
            day.weather.span[0], day.weather.utc_offset)))
    above = _set_above_reduced_limit(request, result, factor)
    if above is not None:
        notices.append(above)
    return notices


def _set_above_reduced_limit(request: RaceRequest, result: RaceResult,
                             factor: float) -> Notice | None:
    """A warning when the power or pace the coach set is within the athlete's limit as given
    but above it once heat and altitude lower it."""
    if factor >= 1.0:
        return None
    if request.sport == "cycling":
        limit = request.cycling.critical_power
        power = cast("RacePlan", result.plan).request.mean_power
        if limit is None or power is None or not (limit * factor < power <= limit):
            return None
        return warning("weather-power-above-reduced-cp", power_w=float(power),
                       critical_power_w=float(limit), reduced_critical_power_w=limit * factor)
    limit = request.running.critical_speed
    speed = request.running.flat_speed
    if limit is None or speed is None or not (limit * factor < speed <= limit):
        return None
    return warning("weather-pace-above-reduced-cs", speed_mps=float(speed),
                   critical_speed_mps=float(limit), reduced_critical_speed_mps=limit * factor)


def _targets_in_weather(targets: tuple[SegmentTarget, ...], request: RaceRequest, plan: Any,
                        day: RaceDayResult) -> tuple[SegmentTarget, ...]:
    """The target rows with the clock at each segment's start and the weather met on it
    (time-weighted over its pieces; the wind as a vector)."""
    # the cycling plan's own segments (those of its target rows), the request's for running
    bounds = np.asarray(getattr(plan, "bounds", request.bounds))
    spent = np.maximum(np.diff(day.point_time), 1e-9)
    east, north = wind_vector(day.weather.wind_speed, day.weather.wind_from)
    rows = []
    for k, row in enumerate(targets):
        pieces = slice(int(bounds[k]), int(bounds[k + 1]))
        weight = spent[pieces] / np.sum(spent[pieces])
        speed, direction = wind_from_vector(np.sum(weight * east[pieces]),
                                            np.sum(weight * north[pieces]))
        clock = day.clock(int(bounds[k]))
        rows.append(replace(
            row, clock_time=None if clock is None else clock_text(clock, day.utc_offset),
            temperature=float(np.sum(weight * day.weather.temperature[pieces])),
            wind_speed=float(speed), wind_from=float(direction)))
    return tuple(rows)


# ------------------------------------------------------------------ heat and altitude

def race_environment(request: RaceRequest, weather: WeatherAt, weights: np.ndarray) -> Environment:
    """Heat (through WBGT) and altitude of the race: the one place the chain calls the models
    (pacing.weather.environment.race_environment).

    Parameters
    ----------
    request : RaceRequest
        The request with its race_day (sport, acclimatisation).
    weather : pacing.weather.timeline.WeatherAt
        The weather of each piece [-].
    weights : numpy.ndarray
        Time spent on each piece [s] (or its length before the first plan [m]).

    Returns
    -------
    pacing.weather.environment.Environment
    """
    day = request.race_day
    assert day is not None
    kind = day.weather.pressure_kind if day.weather is not None else "sea-level"
    pressure = pressure_in_weather(request.course, weather, request.conditions, kind)
    temperature, humidity, elevation = day.limits_measured
    environment = environment_of_race(
        weather.temperature, weather.relative_humidity, weather.wind_speed, pressure,
        piece_elevation(request.course), weights, request.sport,
        heat_acclimatised=day.heat_acclimatised, altitude_acclimatised=day.altitude_acclimatised,
        reference_elevation=elevation, reference_weather=(temperature, humidity))
    factor = environment.heat_power_factor * environment.altitude_power_factor
    if not day.limits_assumed or factor >= 1.0 - NOTICEABLE_LOSS:
        return environment
    assumed = note("limits-test-conditions-assumed", temperature_c=temperature,
                   relative_humidity=humidity, elevation_m=elevation)
    return replace(environment, notices=(*environment.notices, assumed))


def environment_limit_factor(environment: Environment, sport: str) -> float:
    """The factor heat and altitude put on critical power (cycling) or critical speed
    (running): their product [-]."""
    heat, altitude = environment_factors(environment, sport)
    return heat * altitude


def environment_factors(environment: Environment, sport: str) -> tuple[float, float]:
    """(heat factor, altitude factor) on power (cycling) or speed (running) [-]: the
    time-weighted factors of the Environment (the heat model gives power for cycling, speed
    for running)."""
    del sport
    return float(environment.heat_power_factor), float(environment.altitude_power_factor)


def _costs(request: RaceRequest, result: RaceResult, air: CourseAir,
           environment: Environment) -> RaceDayCosts:
    """Heat and altitude in watts and seconds, from constant-power (cycling) or equal-effort
    (running) plans in the race's air: at the plan's reference power or flat speed, at that
    times the heat factor, times the altitude factor, and in sea-level air (each piece's
    density scaled by the ratio of the standard atmosphere's pressures at 0 m and at the
    piece: the same temperature, humidity and wind)."""
    heat, altitude = environment_factors(environment, request.sport)
    if result.sport == "cycling":
        base = float(cast("RacePlan", result.plan).reference_power)
    else:
        base = float(cast("RunningPlan", result.plan).flat_speed)
    plain = _counterfactual(request, air, base)
    elevation = piece_elevation(request.course)
    sea_level = CourseAir(density=air.density * standard_pressure(0.0)
                          / standard_pressure(elevation),
                          headwind=air.headwind, crosswind=air.crosswind)
    heat_time = _counterfactual(request, air, base * heat) - plain if heat < 1.0 else 0.0
    loss = _counterfactual(request, air, base * altitude) - plain if altitude < 1.0 else 0.0
    return RaceDayCosts(
        heat_power=base * (1.0 - heat) if request.sport == "cycling" else 0.0,
        heat_time=float(heat_time),
        altitude_air_gain=float(_counterfactual(request, sea_level, base) - plain),
        altitude_power_loss=float(loss))


def _counterfactual(request: RaceRequest, air: CourseAir, base: float) -> float:
    """Finish time of a constant power (cycling) or an equal effort at a flat speed (running)
    of `base` [W or m/s] in `air`, without the athlete's limits [s]."""
    if request.sport == "cycling":
        asked = replace(request, strategy="constant", race_day=None,
                        cycling=PlanRequest(strategy="constant", mean_power=base))
    else:
        asked = replace(request, strategy="equal-effort", race_day=None,
                        running=replace(request.running, flat_speed=base, critical_speed=None,
                                        d_prime=None))
    return plan_race_in_air(asked, air).finish_time


def environment_summary(day: RaceDayResult) -> dict[str, Any]:
    """The race's heat and altitude in numbers (SI, unit in each key) for JSON and exports.

    Parameters
    ----------
    day : RaceDayResult
        The race day of a result.

    Returns
    -------
    dict
        heat_power_factor, altitude_power_factor [-], wbgt_max_c [°C], heat_category [-]
        (and the models' keys; null without heat and altitude), limit_factor [-],
        heat_cost_w [W], heat_cost_s, altitude_air_gain_s and altitude_power_loss_s [s]
        (null without them).
    """
    environment = day.environment
    summary: dict[str, Any] = ({key: None for key in ("heat_power_factor",
                                                      "altitude_power_factor", "wbgt_max_c",
                                                      "heat_category")}
                               if environment is None else dict(environment.as_dict()))
    costs = day.costs
    temperature, humidity, elevation = day.limits_measured
    summary.update({
        "limits_measured_temperature_c": temperature,
        "limits_measured_relative_humidity_pct": 100.0 * humidity,
        "limits_measured_elevation_m": elevation,
        "limits_measured_assumed": day.limits_assumed,
        "limit_factor": day.limit_factor,
        "heat_cost_w": None if costs is None else costs.heat_power,
        "heat_cost_s": None if costs is None else costs.heat_time,
        "altitude_air_gain_s": None if costs is None else costs.altitude_air_gain,
        "altitude_power_loss_s": None if costs is None else costs.altitude_power_loss,
    })
    return summary


RACE_DAY_CODES = ("weather-", "heat-", "wbgt-", "altitude-", "pressure-", "limits-")
"""Prefixes of the notice codes the race day adds to a plan's."""


def shared_race_day(request: RaceRequest) -> tuple[RaceRequest, CourseAir, RaceResult]:
    """One race day's air for callers that share one air among several setups (the setup
    comparison): the fixed point of the request's own athlete, then its air for all.

    The setups' passing times differ from the request's by their gains (seconds to minutes);
    the weather met is taken at the request's. The athlete's limits are lowered by the race
    day's heat and altitude as in `plan_race_day`.

    Parameters
    ----------
    request : RaceRequest
        A request with a race_day.

    Returns
    -------
    tuple of (RaceRequest, CourseAir, RaceResult)
        The request with its limits lowered and no race day (for pacing.plan.race
        .plan_race_in_air), the air of the converged passing times, and the race day's plan
        (its `race_day` and notices) [-].
    """
    result = plan_race_day(request)
    assert result.race_day is not None
    shared = replace(_with_limits(request, result.race_day.limit_factor), race_day=None)
    return shared, result.air, result


def race_day_notices(result: RaceResult) -> tuple[Notice, ...]:
    """The notices the race day added to a plan's (weather, heat, WBGT, altitude, pressure)."""
    return tuple(n for n in result.notices if n.code.startswith(RACE_DAY_CODES))
