"""What each parameter is worth on this course, and how sure a finish time (or a difference
between setups) is.

Sensitivities are finite differences of the finish time T of the inertial simulation
(pacing.plan.simulate.simulate) holding the plan's power profile::

    S_x = (T(x + h) − T(x − h)) / 2          central difference, seconds per step h

with the steps h (the table a coach reads): +0.01 m² of CdA, +1 kg of total mass, +10 W of
mean power (the profile scaled by (P̄ ± 10)/P̄), +0.001 of Crr, and +1 m/s of wind speed from
the forecast direction (at the forecast's measurement height, as a weather report gives it).
Wind uses a forward difference T(w + 1) − T(w) when the forecast wind w is below 1 m/s: a
negative wind speed would turn the wind around. Central differences are second-order accurate;
T is smooth in every parameter except where a speed cap starts or stops binding.

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

A Monte Carlo estimate (normal draws with a seed, the full simulation for each draw) checks
the linearization where the response is curved.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from pacing.errors import InputError
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.weather.conditions import air_along_course

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
    finish_time : finish time of the unchanged ride [s].
    drag_area : s per +0.01 m² CdA.
    mass : s per +1 kg (rider + bike + kit).
    power : s per +10 W mean power (negative: more power is faster).
    rolling_coefficient : s per +0.001 Crr.
    wind : s per +1 m/s wind speed from the forecast direction.
    wind_direction : the direction the wind blows from [deg] used for `wind`.
    """

    finish_time: float
    drag_area: float
    mass: float
    power: float
    rolling_coefficient: float
    wind: float
    wind_direction: float

    def per_step(self) -> dict[str, float]:
        """{parameter: seconds per step} for the names of STEPS."""
        return {name: getattr(self, name) for name in STEPS}


def sensitivity(course, piece_power, rider, conditions, options: SimulationOptions | None = None,
                density_model: str = "cipm_2007") -> Sensitivity:
    """Finish-time sensitivities of a ride by finite differences on the inertial simulation.

    Parameters
    ----------
    course : pacing.course.geometry.Course; piece_power : the plan's crank power per piece [W]
    (held;
    scaled for the power step); rider : pacing.physics.cycling.Rider;
    conditions : pacing.weather.conditions.Conditions (the forecast); options : SimulationOptions;
    density_model : key of pacing.physics.air.AIR_DENSITY_MODELS.

    Returns
    -------
    Sensitivity (see the module docstring for the steps and the sign convention).
    """
    power = np.asarray(piece_power, dtype=float)
    air = air_along_course(course, conditions, density_model)

    def finish(rider_now=rider, power_now=power, air_now=air) -> float:
        return simulate(course, power_now, rider_now, air_now, options).finish_time

    base_ride = simulate(course, power, rider, air, options)
    base = base_ride.finish_time
    mean = base_ride.average_power

    def central(make) -> float:
        h = 1.0
        return 0.5 * (make(+h) - make(-h))

    cda_step, mass_step = STEPS["drag_area"], STEPS["mass"]
    crr_step, power_step = STEPS["rolling_coefficient"], STEPS["power"]
    if float(np.min(rider.drag_area)) <= cda_step:
        raise InputError(f"CdA must exceed {cda_step} m² for a sensitivity")
    drag = central(lambda s: finish(replace(rider, drag_area=rider.drag_area + s * cda_step)))
    mass = central(lambda s: finish(replace(rider, mass=rider.mass + s * mass_step)))
    rolling = np.asarray(rider.rolling_coefficient, dtype=float)
    if float(np.min(rolling)) >= crr_step:
        crr = central(lambda s: finish(replace(
            rider, rolling_coefficient=rider.rolling_coefficient + s * crr_step)))
    else:  # Crr below one step: forward difference (Crr cannot go negative)
        crr = finish(replace(rider, rolling_coefficient=rider.rolling_coefficient
                             + crr_step)) - base
    if not mean > power_step:
        raise InputError(f"mean power must exceed {power_step:g} W for a sensitivity")
    watts = central(lambda s: finish(power_now=power * (mean + s * power_step) / mean))

    wind_step = STEPS["wind"]

    def with_wind(speed: float) -> float:
        changed = replace(conditions, wind_speed=speed)
        return finish(air_now=air_along_course(course, changed, density_model))

    if conditions.wind_speed >= wind_step:
        wind = 0.5 * (with_wind(conditions.wind_speed + wind_step)
                      - with_wind(conditions.wind_speed - wind_step))
    else:
        wind = with_wind(conditions.wind_speed + wind_step) - base
    return Sensitivity(finish_time=base, drag_area=drag, mass=mass, power=watts,
                       rolling_coefficient=crr, wind=wind,
                       wind_direction=float(conditions.wind_from))


# ------------------------------------------------------------------------ uncertainty

@dataclass(frozen=True)
class Uncertainty:
    """One standard deviation (1 σ) of each uncertain input, in SI units.

    drag_area [m²]; rolling_coefficient [-]; mass [kg]; wind : of the forecast wind speed [m/s].
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


@dataclass(frozen=True, eq=False)
class Spread:
    """Spread of a finish time (or of a difference of finish times).

    Attributes
    ----------
    standard_deviation : 1 σ [s] (linearized).
    contributions : {parameter: its 1 σ contribution [s]}; they add in quadrature.
    samples : Monte Carlo values [s] (None when not sampled).
    """

    standard_deviation: float
    contributions: dict
    samples: np.ndarray | None = None

    @property
    def sampled_standard_deviation(self) -> float | None:
        """Standard deviation of the samples [s] (ddof 1), or None."""
        if self.samples is None or self.samples.size < 2:
            return None
        return float(np.std(self.samples, ddof=1))

    def interval(self, coverage: float = 0.9) -> tuple[float, float] | None:
        """Central interval of the samples holding `coverage` of them [s], or None."""
        if self.samples is None or self.samples.size < 2:
            return None
        tail = 50.0 * (1.0 - coverage)
        low, high = np.percentile(self.samples, [tail, 100.0 - tail])
        return float(low), float(high)


def _names() -> list[str]:
    """The uncertain inputs, in the order of the Monte Carlo draw columns."""
    return ["drag_area", "rolling_coefficient", "mass", "wind"]


def finish_time_spread(sens: Sensitivity, uncertainty: Uncertainty) -> Spread:
    """Linearized 1 σ of a finish time: σ_T² = Σ (S_x·σ_x/h_x)² [s]."""
    parts = {name: abs(getattr(sens, name) * getattr(uncertainty, name) / STEPS[name])
             for name in _names()}
    return Spread(math.sqrt(sum(v * v for v in parts.values())), parts)


def difference_spread(first: Sensitivity, second: Sensitivity, uncertainty: Uncertainty,
                      second_uncertainty: Uncertainty | None = None) -> Spread:
    """Linearized 1 σ of T_second − T_first [s].

    CdA errors of the two setups are independent; Crr, mass and wind errors are shared and
    enter through the difference of the sensitivities (module docstring). `uncertainty` is
    the first setup's (and the shared σ); `second_uncertainty` the second's CdA σ (default:
    the same as the first's).
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


def _draws(uncertainty: Uncertainty, samples: int, generator, extra: int = 0) -> np.ndarray:
    """Normal errors, one row per draw: columns in the order of _names() scaled by their σ,
    then `extra` standard normal columns. Row by row, so the first draws do not depend on
    how many are taken."""
    scale = np.array([getattr(uncertainty, name) for name in _names()] + [1.0] * extra)
    return generator.standard_normal((samples, scale.size)) * scale


def _perturbed_time(course, power, rider, conditions, options, density_model,
                    d_cda, d_crr, d_mass, d_wind) -> float:
    changed = replace(rider,
                      drag_area=np.maximum(rider.drag_area + d_cda, 0.01),
                      rolling_coefficient=np.maximum(
                          np.asarray(rider.rolling_coefficient, dtype=float) + d_crr, 0.0),
                      mass=max(rider.mass + d_mass, 20.0))
    wind = replace(conditions, wind_speed=max(conditions.wind_speed + d_wind, 0.0))
    air = air_along_course(course, wind, density_model)
    return simulate(course, power, changed, air, options).finish_time


def _check_samples(samples: int) -> None:
    if not (isinstance(samples, int | np.integer) and 2 <= samples <= 100_000):
        raise InputError(f"samples must be a whole number 2-100000, got {samples!r}")


def sampled_finish_time(course, piece_power, rider, conditions, uncertainty: Uncertainty,
                        samples: int = 200, seed: int = 0,
                        options: SimulationOptions | None = None,
                        density_model: str = "cipm_2007") -> np.ndarray:
    """Monte Carlo finish times [s]: normal errors of CdA, Crr, mass and wind speed (clipped
    at physical limits), the full simulation for each draw, a seeded generator."""
    _check_samples(samples)
    generator = np.random.default_rng(seed)
    draws = _draws(uncertainty, samples, generator)
    power = np.asarray(piece_power, dtype=float)
    return np.array([
        _perturbed_time(course, power, rider, conditions, options, density_model, *draw)
        for draw in draws
    ])


def sampled_difference(course, first, second, conditions, uncertainty: Uncertainty,
                       samples: int = 200, seed: int = 0,
                       options: SimulationOptions | None = None,
                       density_model: str = "cipm_2007") -> np.ndarray:
    """Monte Carlo T_second − T_first [s]. `first`, `second` are (rider, piece_power) pairs;
    shared draws of Crr, mass and wind, independent draws of each setup's CdA."""
    _check_samples(samples)
    generator = np.random.default_rng(seed)
    draws = _draws(uncertainty, samples, generator, extra=2)
    values = np.empty(samples)
    for i, draw in enumerate(draws):
        _, d_crr, d_mass, d_wind = draw[:4]
        times = [
            _perturbed_time(course, np.asarray(power, dtype=float), rider, conditions,
                            options, density_model, draw[4 + j] * uncertainty.drag_area,
                            d_crr, d_mass, d_wind)
            for j, (rider, power) in enumerate((first, second))
        ]
        values[i] = times[1] - times[0]
    return values
