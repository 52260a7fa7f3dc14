"""The forecast's uncertainty as a finish-time band: the plan replayed in sampled weathers.

A forecast is uncertain: its wind speed, the direction the wind blows from and the temperature
may each be off by some standard deviation (the coach's estimate, or the spread of an
ensemble forecast). `finish_time_band` draws `samples` weathers (seeded, normally
distributed offsets added to the weather every piece met in the plan: the same offsets over
the whole race, as a forecast is off by about the same all day), builds the air of each
(pacing.weather.conditions) and replays the plan in it — the cycling plan's power per piece
through the inertial simulation (pacing.plan.simulate.finish_times, one draw per air), the
running plan's metabolic power per piece through the running balance
(pacing.physics.running.speed_for_metabolic_power) — and returns the 5th, 50th and 95th
percentiles of the finish times. The athlete's power (cycling) or effort (running) is held:
the band is the weather's, not a re-planned race's.

References
----------
Martin, J.C. et al. (1998), J Appl Biomech 14(3):276-291 (the cycling power balance);
JCGM 101:2008, Evaluation of measurement data — Supplement 1: Propagation of distributions
using a Monte Carlo method (the sampling and the coverage interval of the percentiles).
docs/race_day_weather.md, "Forecast band".
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, cast

import numpy as np

from pacing.errors import InputError
from pacing.weather.conditions import CourseAir, air_along_course, air_in_weather
from pacing.weather.timeline import WeatherAt

if TYPE_CHECKING:
    from pacing.plan.cycling import RacePlan
    from pacing.plan.race import RaceRequest, RaceResult
    from pacing.plan.running_plan import RunningPlan

DEFAULT_BAND_SAMPLES = 200
"""Sampled weathers of a finish-time band unless said [-]."""

MAX_BAND_SAMPLES = 5000
"""Most sampled weathers a band takes (each is one replay of the plan) [-]."""

BAND_PERCENTILES = (5.0, 50.0, 95.0)
"""The band's percentiles of the sampled finish times [%]."""


@dataclass(frozen=True)
class WeatherSpread:
    """The forecast's standard deviations.

    Attributes
    ----------
    wind_speed : standard deviation of the wind speed at 10 m [m/s].
    wind_from : standard deviation of the direction the wind blows from [deg].
    temperature : standard deviation of the air temperature [°C].
    samples : sampled weathers [-].
    seed : seed of the random draws [-].
    """

    wind_speed: float = 0.0
    wind_from: float = 0.0
    temperature: float = 0.0
    samples: int = DEFAULT_BAND_SAMPLES
    seed: int = 0

    def __post_init__(self) -> None:
        for name in ("wind_speed", "wind_from", "temperature"):
            value = getattr(self, name)
            if not (np.isfinite(value) and value >= 0):
                raise InputError(f"the forecast's spread of {name.replace('_', ' ')} must be "
                                 f"a number ≥ 0, got {value}")
        if not 2 <= int(self.samples) <= MAX_BAND_SAMPLES:
            raise InputError(f"the forecast band needs 2-{MAX_BAND_SAMPLES} samples, got "
                             f"{self.samples}")


@dataclass(frozen=True)
class FinishTimeBand:
    """Finish times of the plan in the sampled weathers.

    Attributes
    ----------
    p5, p50, p95 : 5th, 50th and 95th percentiles of the finish time [s].
    samples : sampled weathers [-].
    seed : seed of the draws [-].
    spread : the standard deviations sampled.
    """

    p5: float
    p50: float
    p95: float
    samples: int
    seed: int
    spread: WeatherSpread

    def as_dict(self) -> dict[str, float | int]:
        """JSON-ready: p5_s, p50_s, p95_s [s], samples, seed and the spread (SI keys)."""
        return {"p5_s": self.p5, "p50_s": self.p50, "p95_s": self.p95,
                "samples": self.samples, "seed": self.seed,
                "wind_speed_sd_mps": self.spread.wind_speed,
                "wind_from_sd_deg": self.spread.wind_from,
                "temperature_sd_c": self.spread.temperature}


def sampled_offsets(spread: WeatherSpread) -> np.ndarray:
    """Offsets of wind speed [m/s], direction [deg] and temperature [°C], one row per sample:
    independent normal draws of the spread's seed (numpy's PCG64)."""
    generator = np.random.default_rng(spread.seed)
    scale = np.array([spread.wind_speed, spread.wind_from, spread.temperature])
    return generator.standard_normal((int(spread.samples), 3)) * scale


def shifted_weather(weather: WeatherAt, offset: np.ndarray) -> WeatherAt:
    """The weather met with one sample's offsets: wind speed (at least 0), the direction
    (wrapped to 0..360) and the temperature shifted."""
    return replace(weather,
                   wind_speed=np.maximum(np.asarray(weather.wind_speed) + offset[0], 0.0),
                   wind_from=np.mod(np.asarray(weather.wind_from) + offset[1], 360.0),
                   temperature=np.asarray(weather.temperature) + offset[2])


def sampled_air(request: RaceRequest, weather: WeatherAt, offset: np.ndarray) -> CourseAir:
    """The air along the course in one sampled weather: the single Conditions shifted, or
    each piece's weather met shifted (a weather table)."""
    day = request.race_day
    if day is None or day.weather is None:
        conditions = request.conditions
        return air_along_course(request.course, replace(
            conditions, wind_speed=max(conditions.wind_speed + float(offset[0]), 0.0),
            wind_from=float(np.mod(conditions.wind_from + offset[1], 360.0)),
            temperature=conditions.temperature + float(offset[2])))
    return air_in_weather(request.course, shifted_weather(weather, offset), request.conditions,
                          day.weather.pressure_kind)


def replayed_finish_time(request: RaceRequest, result: RaceResult, air: CourseAir) -> float:
    """Finish time of the plan's power (cycling) or metabolic power (running) per piece in
    another air [s]."""
    if result.sport == "cycling":
        from pacing.plan.simulate import finish_times

        plan = cast("RacePlan", result.plan)
        rider = request.rider
        assert rider is not None
        draw = [[rider.mass, 0.0, 0.0, 1.0]]  # a wind of 1 × the air's own components
        floors = (float(np.min(rider.drag_area)), 0.0)  # the draw changes neither
        return float(finish_times(request.course, plan.piece_power, rider, air, draw,
                                  request.options, floors)[0])
    return _running_replay(request, cast("RunningPlan", result.plan), air)


def _running_replay(request: RaceRequest, plan: RunningPlan, air: CourseAir) -> float:
    """The running plan's metabolic power per piece in another air; where the plan held the
    speed below its power's (the descent cap), that speed stays the cap [s]."""
    from pacing.physics.running import speed_for_metabolic_power

    runner = request.runner
    assert runner is not None
    course = request.course
    power = np.asarray(plan.metabolic_power, dtype=float)
    planned = np.asarray(plan.speed, dtype=float)
    time = np.asarray(plan.time, dtype=float)
    speed = speed_for_metabolic_power(power, course.grade, air.density, runner, air.headwind,
                                      air.crosswind)
    cap = request.running.downhill_speed_ratio_cap
    if cap is not None:
        limit = cap * plan.flat_speed
        speed = np.where((np.asarray(course.grade) < 0) & (speed > limit), limit, speed)
    length = planned * time  # each piece's length as the plan ran it
    return float(np.sum(length / speed))


def finish_time_band(request: RaceRequest, result: RaceResult, air: CourseAir,
                     weather: WeatherAt, spread: WeatherSpread) -> FinishTimeBand:
    """The finish-time band of the forecast's spread: the plan replayed in sampled weathers.

    Parameters
    ----------
    request : pacing.plan.race.RaceRequest
        The request (course, rider or runner, conditions, race day).
    result : pacing.plan.race.RaceResult
        The plan to replay.
    air : pacing.weather.conditions.CourseAir
        The air the plan was made in (kept for the caller's symmetry; each sample builds its
        own) [-].
    weather : pacing.weather.timeline.WeatherAt
        The weather met on each piece [-].
    spread : WeatherSpread
        Standard deviations, samples and seed.

    Returns
    -------
    FinishTimeBand
        5th, 50th and 95th percentiles of the sampled finish times [s].
    """
    del air
    if result.sport == "cycling":
        from pacing import kernels

        pieces = int(np.asarray(request.course.distance).size) - 1
        if kernels.use_compiled(pieces * int(spread.samples)) and not kernels.loaded():
            kernels.warm_up(("pacing.plan.simulate",))  # one ride per sample: load them once
    times = np.array([replayed_finish_time(request, result, sampled_air(request, weather, row))
                      for row in sampled_offsets(spread)])
    low, middle, high = np.percentile(times, BAND_PERCENTILES)
    return FinishTimeBand(p5=float(low), p50=float(middle), p95=float(high),
                          samples=int(spread.samples), seed=int(spread.seed), spread=spread)
