"""What each parameter is worth on this course, and how sure a finish time (or a difference
between setups) is.

Sensitivities are finite differences of the finish time T of the inertial simulation
(pacing.plan.simulate.simulate) holding the plan's power profile::

    S_x = (T(x + h) − T(x − h)) / 2          central difference, seconds per step h

with the steps h (the table a coach reads): +0.01 m² of CdA, +1 kg of total mass, +10 W of
mean power (the profile scaled by (P̄ ± 10)/P̄), +0.001 of Crr, and +1 m/s of wind speed from
the forecast direction (at the forecast's measurement height, as a weather report gives it).
Wind uses a forward difference T(w + 1) − T(w) when the forecast wind w is below 1 m/s: a
negative wind speed would turn the wind around. In a race day's air (a weather table, given
as `air`) every ride is in that air and the wind step is on the day's mean wind speed, each
piece's wind scaled in proportion and keeping its direction (DayWind). Central differences
are second-order accurate; T is smooth in every parameter except where a speed cap starts or
stops binding.

SIGN CONVENTION: a sensitivity is the change of finish time for an INCREASE of the parameter,
positive = slower. More CdA, mass, Crr or wind is usually slower (positive); more power is
faster (negative). A tailwind course can have a negative wind sensitivity.

Uncertainty, linearized (first-order propagation of independent errors, e.g. JCGM 100:2008
"Guide to the expression of uncertainty in measurement", section 5.1)::

    σ_T² = Σ_x (S_x·σ_x / h_x)²

For the difference of two setups A and B the CdA errors are independent (each position is
measured on its own) while Crr, mass and wind are shared (same tyres, rider and weather), so
they enter through the difference of the sensitivities and mostly cancel::

    σ_Δ² = (S_A,cda·σ_A/h)² + (S_B,cda·σ_B/h)² + Σ_shared ((S_B,x − S_A,x)·σ_x/h_x)²

A Monte Carlo estimate (normal draws with a seed, the full simulation for each draw, the
draws ridden together: pacing.compare.sampled_uncertainty) checks the linearization where the
response is curved.

References
----------
JCGM 100:2008. Evaluation of measurement data — Guide to the expression of uncertainty in
measurement (GUM), section 5.1 (law of propagation of uncertainty) and Supplement 1,
JCGM 101:2008 (propagation of distributions by a Monte Carlo method).
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276 (the model the finish times come from, pacing.plan.simulate).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike

from pacing.compare.sampled_uncertainty import (
    UNCERTAIN_INPUTS,
    sampled_times,
    uncertainty_errors,
)
from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.physics.air import DEFAULT_AIR_DENSITY_MODEL
from pacing.physics.cycling import Rider
from pacing.physics.wind import wind_components
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, CourseAir, air_along_course

STEPS = {
    "drag_area": 0.01,
    "mass": 1.0,
    "power": 10.0,
    "rolling_coefficient": 0.001,
    "wind": 1.0,
}
"""Step of each sensitivity, in SI units: m², kg, W, -, m/s."""

SHARED = ("rolling_coefficient", "mass", "wind")
"""Parameters shared by two setups of one athlete on one day (their errors are correlated)."""


@dataclass(frozen=True)
class Sensitivity:
    """Seconds of finish time per step of each parameter (positive = slower).

    Attributes
    ----------
    finish_time : float
        Finish time of the unchanged ride [s].
    drag_area : float
        Change of finish time per +0.01 m² of CdA [s].
    mass : float
        Change per +1 kg of total mass (rider + bike + kit) [s].
    power : float
        Change per +10 W of mean power (negative: more power is faster) [s].
    rolling_coefficient : float
        Change per +0.001 of Crr [s].
    wind : float
        Change per +1 m/s of the day's wind speed (DayWind: from the forecast direction, or
        a race day's winds scaled in proportion) [s].
    wind_direction : float
        The direction the wind blows from used for `wind` (a race day's: its mean wind's),
        clockwise from north [deg].
    """

    finish_time: float
    drag_area: float
    mass: float
    power: float
    rolling_coefficient: float
    wind: float
    wind_direction: float

    def per_step(self) -> dict[str, float]:
        """{parameter: seconds per step} for the names of STEPS [s]."""
        return {name: getattr(self, name) for name in STEPS}


def _central(make: Callable[[float], float]) -> float:
    """Central difference (T(+h) − T(−h))/2 of a finish time given ±1 step [s]."""
    h = 1.0
    return 0.5 * (make(+h) - make(-h))


def _rider_sensitivities(finish: Callable[..., float], rider: Rider, base: float
                         ) -> tuple[float, float, float]:
    """Seconds per step of CdA, mass and Crr [s]; Crr below one step by a forward
    difference (Crr cannot go negative)."""
    cda_step, mass_step = STEPS["drag_area"], STEPS["mass"]
    crr_step = STEPS["rolling_coefficient"]
    if float(np.min(rider.drag_area)) <= cda_step:
        raise InputError(f"CdA must exceed {cda_step} m² for a sensitivity")
    drag = _central(lambda s: finish(replace(rider, drag_area=rider.drag_area + s * cda_step)))
    mass = _central(lambda s: finish(replace(rider, mass=rider.mass + s * mass_step)))
    rolling = np.asarray(rider.rolling_coefficient, dtype=float)
    if float(np.min(rolling)) >= crr_step:
        crr = _central(lambda s: finish(replace(
            rider, rolling_coefficient=rider.rolling_coefficient + s * crr_step)))
    else:  # Crr below one step: forward difference (Crr cannot go negative)
        crr = finish(replace(rider, rolling_coefficient=rider.rolling_coefficient
                             + crr_step)) - base
    return drag, mass, crr


@dataclass(frozen=True)
class DayWind:
    """The day's wind as the sensitivities and the draws change it: the wind on every piece
    is `unit` times the wind at the rider's height, that wind the log profile of `speed`.

    With one weather all day `speed` is the forecast's; with the air of a race day (a
    weather table) it is the mean over the pieces of the wind met, and a change of it scales
    the wind on every piece in proportion, each piece keeping its direction (a calm day: the
    change blows from the forecast direction).

    Attributes
    ----------
    unit : CourseAir
        The day's air density [kg/m³] and the headwind and crosswind per m/s at the rider [-].
    speed : float
        The day's wind speed at the forecast's height (a table's: the mean) [m/s].
    direction : float
        Where the day's (mean) wind blows from, clockwise from north [deg].
    conditions : Conditions
        The forecast: the heights and roughness of the log profile, the range of wind speeds
        it accepts [-].
    """

    unit: CourseAir
    speed: float
    direction: float
    conditions: Conditions

    def at_rider(self, speed: float) -> float:
        """The wind at the rider's height of a wind `speed` at the forecast's height [m/s]
        (InputError beyond the range Conditions accepts)."""
        return replace(self.conditions, wind_speed=speed).wind_at_rider

    def air(self, speed: float) -> CourseAir:
        """The day's air with the wind speed `speed` at the forecast's height [m/s]."""
        at_rider = self.at_rider(speed)
        return CourseAir(density=self.unit.density, headwind=self.unit.headwind * at_rider,
                         crosswind=self.unit.crosswind * at_rider)


def _mean_direction(course: Course, air: CourseAir) -> float | None:
    """Where the mean wind vector over the pieces blows from [deg], None when calm."""
    wind_from = np.radians(np.asarray(course.heading, dtype=float)) + np.arctan2(
        air.crosswind, air.headwind)
    speed = np.hypot(air.headwind, air.crosswind)
    east, north = np.mean(speed * np.sin(wind_from)), np.mean(speed * np.cos(wind_from))
    if math.hypot(east, north) == 0.0:
        return None
    return float(np.degrees(np.arctan2(east, north)) % 360.0)


def _forecast_wind(course: Course, conditions: Conditions, density: np.ndarray) -> DayWind:
    """The single forecast's wind over the day's density."""
    head, cross = wind_components(np.asarray(course.heading, dtype=float),
                                  conditions.wind_from, 1.0)
    return DayWind(CourseAir(density=np.asarray(density, dtype=float),
                             headwind=np.asarray(head, dtype=float),
                             crosswind=np.asarray(cross, dtype=float)),
                   float(conditions.wind_speed), float(conditions.wind_from), conditions)


def day_wind(course: Course, conditions: Conditions,
             density_model: str = DEFAULT_AIR_DENSITY_MODEL,
             air: CourseAir | None = None) -> DayWind:
    """The day's wind (DayWind) of a single forecast, or of the air a race day made.

    An air whose wind is the forecast's, number for number (a race day of one weather all
    day), is the forecast's wind over that air's density.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    conditions : pacing.weather.conditions.Conditions
        The forecast: its wind without `air`, and the heights and roughness of the log
        profile [-].
    density_model : str
        Key of pacing.physics.air.AIR_DENSITY_MODELS (without `air`) [-].
    air : CourseAir or None
        The day's air on every piece (pacing.plan.race_day.shared_race_day); None works it
        out from `conditions` [-].

    Returns
    -------
    DayWind
    """
    if air is None:
        return _forecast_wind(course, conditions,
                              air_along_course(course, conditions, density_model).density)
    forecast = wind_components(np.asarray(course.heading, dtype=float), conditions.wind_from,
                               conditions.wind_at_rider)
    if (np.array_equal(forecast[0], air.headwind)
            and np.array_equal(forecast[1], air.crosswind)):
        return _forecast_wind(course, conditions, air.density)
    at_rider = float(np.mean(np.hypot(air.headwind, air.crosswind)))
    direction = _mean_direction(course, air)
    if at_rider > 0.0 and direction is not None:
        profile = replace(conditions, wind_speed=1.0).wind_at_rider
        return DayWind(CourseAir(density=air.density, headwind=air.headwind / at_rider,
                                 crosswind=air.crosswind / at_rider),
                       at_rider / profile, direction, conditions)
    calm = _forecast_wind(course, conditions, air.density)
    return replace(calm, speed=0.0)


def _wind_sensitivity(wind: DayWind, finish: Callable[..., float], base: float) -> float:
    """Seconds per +1 m/s of the day's wind speed [s]; forward difference below one step."""
    step = STEPS["wind"]
    if wind.speed >= step:
        return 0.5 * (finish(air_now=wind.air(wind.speed + step))
                      - finish(air_now=wind.air(wind.speed - step)))
    return finish(air_now=wind.air(wind.speed + step)) - base


def sensitivity(course: Course, piece_power: ArrayLike, rider: Rider, conditions: Conditions,
                options: SimulationOptions | None = None,
                density_model: str = DEFAULT_AIR_DENSITY_MODEL,
                air: CourseAir | None = None) -> Sensitivity:
    """Finish-time sensitivities of a ride by finite differences on the inertial simulation.

    S_x = (T(x + h) − T(x − h)) / 2 with the steps h of STEPS (forward differences for Crr and
    wind below one step); the power step scales the whole profile by (P̄ ± 10 W)/P̄.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    piece_power : array_like
        The plan's crank power per piece, held (scaled for the power step), length N-1 [W].
    rider : pacing.physics.cycling.Rider
        The rider and bike; CdA must exceed one step (0.01 m²) [-].
    conditions : pacing.weather.conditions.Conditions
        The forecast [-].
    options : SimulationOptions or None
        Choices of the simulation; None for the defaults [-].
    density_model : str
        Key of pacing.physics.air.AIR_DENSITY_MODELS [-].
    air : CourseAir or None
        The day's air on every piece (a race day's, pacing.plan.race_day.shared_race_day):
        every ride, the wind's included (DayWind), is in it; None: the air of
        `conditions` [-].

    Returns
    -------
    Sensitivity
        Seconds per step of each parameter (module docstring: steps, sign convention) [-].

    Raises
    ------
    InputError
        When CdA is not above 0.01 m² or the mean power not above 10 W.

    References
    ----------
    JCGM 100:2008 (GUM), section 5.1: sensitivity coefficients.
    """
    power = np.asarray(piece_power, dtype=float)
    wind = day_wind(course, conditions, density_model, air)
    air = air_along_course(course, conditions, density_model) if air is None else air

    def finish(rider_now: Rider = rider, power_now: np.ndarray = power,
               air_now: CourseAir = air) -> float:
        return simulate(course, power_now, rider_now, air_now, options).finish_time

    base_ride = simulate(course, power, rider, air, options)
    base = base_ride.finish_time
    mean = base_ride.average_power
    drag, mass, crr = _rider_sensitivities(finish, rider, base)
    power_step = STEPS["power"]
    if not mean > power_step:
        raise InputError(f"mean power must exceed {power_step:g} W for a sensitivity")
    watts = _central(lambda s: finish(power_now=power * (mean + s * power_step) / mean))
    return Sensitivity(finish_time=base, drag_area=drag, mass=mass, power=watts,
                       rolling_coefficient=crr, wind=_wind_sensitivity(wind, finish, base),
                       wind_direction=wind.direction)


# ------------------------------------------------------------------------ uncertainty

LARGEST_UNCERTAINTY = {"drag_area": (0.5, " m²"), "rolling_coefficient": (0.05, ""),
                       "mass": (100.0, " kg"), "wind": (20.0, " m/s")}
"""Largest 1 σ accepted per input, [m²], [-], [kg], [m/s]: each is already wider than the
input's whole plausible range (CdA 0.15-0.5 m², Crr 0.002-0.01; common practice), so a larger
σ is a typing mistake and would only overflow the spread."""


@dataclass(frozen=True)
class Uncertainty:
    """One standard deviation (1 σ) of each uncertain input.

    Attributes
    ----------
    drag_area : float
        σ of CdA [m²].
    rolling_coefficient : float
        σ of Crr [-].
    mass : float
        σ of the total mass [kg].
    wind : float
        σ of the forecast wind speed [m/s].

    Raises
    ------
    InputError
        When a σ is negative or not finite.
    """

    drag_area: float = 0.0
    rolling_coefficient: float = 0.0
    mass: float = 0.0
    wind: float = 0.0

    def __post_init__(self) -> None:
        for name in STEPS:
            if name == "power":
                continue
            value = getattr(self, name)
            if not (math.isfinite(value) and value >= 0):
                raise InputError(f"uncertainty of {name.replace('_', ' ')} must be ≥ 0, "
                                 f"got {value!r}")
            high, unit = LARGEST_UNCERTAINTY[name]
            if value > high:
                raise InputError(f"uncertainty of {name.replace('_', ' ')} must be at most "
                                 f"{high:g}{unit}, got {value:.4g}")


@dataclass(frozen=True, eq=False)
class Spread:
    """Spread of a finish time (or of a difference of finish times).

    Attributes
    ----------
    standard_deviation : float
        1 σ, linearized [s].
    contributions : dict of str to float
        {parameter: its 1 σ contribution}; they add in quadrature [s].
    samples : numpy.ndarray or None
        Monte Carlo values; None when not sampled [s].
    """

    standard_deviation: float
    contributions: dict[str, float]
    samples: np.ndarray | None = None

    @property
    def sampled_standard_deviation(self) -> float | None:
        """Standard deviation of the samples (ddof 1), or None [s]."""
        if self.samples is None or self.samples.size < 2:
            return None
        return float(np.std(self.samples, ddof=1))

    def interval(self, coverage: float = 0.9) -> tuple[float, float] | None:
        """Central interval of the samples holding `coverage` of them, or None.

        Parameters
        ----------
        coverage : float
            Share of the samples inside the interval [-].

        Returns
        -------
        tuple of float or None
            (low, high) percentiles of the samples [s].
        """
        if self.samples is None or self.samples.size < 2:
            return None
        tail = 50.0 * (1.0 - coverage)
        low, high = np.percentile(self.samples, [tail, 100.0 - tail])
        return float(low), float(high)


def finish_time_spread(sens: Sensitivity, uncertainty: Uncertainty) -> Spread:
    """Linearized 1 σ of a finish time, σ_T² = Σ (S_x·σ_x/h_x)².

    Parameters
    ----------
    sens : Sensitivity
        Seconds per step of each parameter [-].
    uncertainty : Uncertainty
        1 σ of each input [-].

    Returns
    -------
    Spread
        1 σ and each input's contribution; no samples [s].

    References
    ----------
    JCGM 100:2008 (GUM), section 5.1: law of propagation of uncertainty, uncorrelated inputs.
    """
    parts = {name: abs(getattr(sens, name) * getattr(uncertainty, name) / STEPS[name])
             for name in UNCERTAIN_INPUTS}
    return Spread(math.sqrt(sum(v * v for v in parts.values())), parts)


def difference_spread(first: Sensitivity, second: Sensitivity, uncertainty: Uncertainty,
                      second_uncertainty: Uncertainty | None = None) -> Spread:
    """Linearized 1 σ of T_second − T_first.

    CdA errors of the two setups are independent; Crr, mass and wind errors are shared and
    enter through the difference of the sensitivities (module docstring).

    Parameters
    ----------
    first : Sensitivity
        The first setup's sensitivities [-].
    second : Sensitivity
        The second setup's [-].
    uncertainty : Uncertainty
        The first setup's CdA σ and the shared σ of Crr, mass and wind [-].
    second_uncertainty : Uncertainty or None
        The second setup's CdA σ (default: the same as the first's) [-].

    Returns
    -------
    Spread
        1 σ of the difference [s] and each input's contribution [s].

    References
    ----------
    JCGM 100:2008 (GUM), section 5.1: propagation of uncertainty; shared inputs are fully
    correlated between the two finish times.
    """
    other = second_uncertainty or uncertainty
    step = STEPS["drag_area"]
    parts = {
        "drag_area": math.hypot(first.drag_area * uncertainty.drag_area / step,
                                second.drag_area * other.drag_area / step),
    }
    for name in SHARED:
        parts[name] = abs((getattr(second, name) - getattr(first, name))
                          * getattr(uncertainty, name) / STEPS[name])
    return Spread(math.sqrt(sum(v * v for v in parts.values())), parts)


DRAW_FLOORS = {"drag_area": 0.01, "rolling_coefficient": 0.0, "mass": 20.0, "wind": 0.0}
"""Where a Monte Carlo draw is cut (its physical limits): CdA [m²], Crr [-], total mass [kg]
and wind speed [m/s] never go below these."""


def sampled_finish_time(course: Course, piece_power: ArrayLike, rider: Rider,
                        conditions: Conditions, uncertainty: Uncertainty,
                        samples: int = 200, seed: int = 0,
                        options: SimulationOptions | None = None,
                        density_model: str = DEFAULT_AIR_DENSITY_MODEL,
                        air: CourseAir | None = None) -> np.ndarray:
    """Monte Carlo finish times: normal errors of CdA, Crr, mass and wind speed.

    Each draw is clipped at physical limits and ridden by the full simulation, all draws
    together (pacing.plan.simulate.finish_times); the generator is seeded, and the first draws
    do not depend on how many are taken.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    piece_power : array_like
        The plan's crank power per piece, length N-1 [W].
    rider : pacing.physics.cycling.Rider
        The rider and bike [-].
    conditions : pacing.weather.conditions.Conditions
        The forecast [-].
    uncertainty : Uncertainty
        1 σ of each input [-].
    samples : int
        Number of draws, 2-100000 [-].
    seed : int
        Seed of numpy's default generator [-].
    options : SimulationOptions or None
        Choices of the simulation; None for the defaults [-].
    density_model : str
        Key of pacing.physics.air.AIR_DENSITY_MODELS [-].
    air : CourseAir or None
        The day's air on every piece (a race day's); the wind's error changes its wind as
        DayWind says; None: the air of `conditions` [-].

    Returns
    -------
    numpy.ndarray
        Finish time of each draw [s].

    Raises
    ------
    InputError
        When `samples` is not a whole number 2-100000.

    References
    ----------
    JCGM 101:2008 (GUM Supplement 1): propagation of distributions by a Monte Carlo method.
    """
    draws = uncertainty_errors(uncertainty, samples, seed)
    errors = (draws[:, 0], draws[:, 1], draws[:, 2], draws[:, 3])
    return sampled_times(course, piece_power, rider,
                         day_wind(course, conditions, density_model, air), options, errors,
                         DRAW_FLOORS)


def sampled_difference(course: Course, first: tuple[Rider, ArrayLike],
                       second: tuple[Rider, ArrayLike], conditions: Conditions,
                       uncertainty: Uncertainty, samples: int = 200, seed: int = 0,
                       options: SimulationOptions | None = None,
                       density_model: str = DEFAULT_AIR_DENSITY_MODEL,
                       air: CourseAir | None = None) -> np.ndarray:
    """Monte Carlo T_second − T_first: shared draws of Crr, mass and wind, independent draws
    of each setup's CdA (both with the σ of `uncertainty`).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    first : tuple of (Rider, array_like)
        (rider, crank power per piece [W]) of the first setup [-].
    second : tuple of (Rider, array_like)
        (rider, crank power per piece [W]) of the second setup [-].
    conditions : pacing.weather.conditions.Conditions
        The forecast [-].
    uncertainty : Uncertainty
        1 σ of each input [-].
    samples : int
        Number of draws, 2-100000 [-].
    seed : int
        Seed of numpy's default generator [-].
    options : SimulationOptions or None
        Choices of the simulation; None for the defaults [-].
    density_model : str
        Key of pacing.physics.air.AIR_DENSITY_MODELS [-].
    air : CourseAir or None
        The day's air on every piece (a race day's); the wind's error changes its wind as
        DayWind says; None: the air of `conditions` [-].

    Returns
    -------
    numpy.ndarray
        T_second − T_first of each draw [s].

    Raises
    ------
    InputError
        When `samples` is not a whole number 2-100000.

    References
    ----------
    JCGM 101:2008 (GUM Supplement 1): propagation of distributions by a Monte Carlo method.
    """
    draws = uncertainty_errors(uncertainty, samples, seed, extra=2)
    wind = day_wind(course, conditions, density_model, air)
    times = [
        sampled_times(course, power, rider, wind, options,
                      (draws[:, 4 + j] * uncertainty.drag_area, draws[:, 1], draws[:, 2],
                       draws[:, 3]), DRAW_FLOORS)
        for j, (rider, power) in enumerate((first, second))
    ]
    return times[1] - times[0]
