"""The Monte Carlo draws of the finish-time uncertainty: normal errors drawn with a seed, cut at
physical limits, and every draw ridden by the full inertial simulation, all draws together
(pacing.plan.simulate.finish_times: one compiled call, the draws on every core).

pacing.compare.sensitivity's `sampled_finish_time` and `sampled_difference` draw with these;
the sampled spread checks the linearized one where the response is curved.

References
----------
JCGM 101:2008. Evaluation of measurement data — Supplement 1 to the "Guide to the expression of
uncertainty in measurement" — Propagation of distributions using a Monte Carlo method.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import finish_times

if TYPE_CHECKING:  # defined beside the sensitivities, which import this module
    from pacing.compare.sensitivity import DayWind, Uncertainty

UNCERTAIN_INPUTS = ("drag_area", "rolling_coefficient", "mass", "wind")
"""The uncertain inputs (attributes of pacing.compare.sensitivity.Uncertainty), in the order of
the columns of the draws [-]."""

LARGEST_SAMPLES = 100_000
"""Most draws of one Monte Carlo estimate [-]."""

Errors = tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]
"""The drawn errors of CdA [m²], Crr [-], total mass [kg] and wind speed [m/s], one value per
draw each."""


def check_samples(samples: int) -> None:
    """InputError unless `samples` is a whole number 2-LARGEST_SAMPLES."""
    if not (isinstance(samples, int | np.integer) and 2 <= samples <= LARGEST_SAMPLES):
        raise InputError(f"samples must be a whole number 2-{LARGEST_SAMPLES}, got {samples!r}")


def normal_errors(sigmas: Sequence[float], samples: int, generator: np.random.Generator,
                  extra: int = 0) -> np.ndarray:
    """Normal errors, one row per draw: one column per σ of `sigmas`, scaled by it, then
    `extra` standard normal columns. Row by row, so the first draws do not depend on how many
    are taken.

    Parameters
    ----------
    sigmas : sequence of float
        1 σ of each error, in the order of the columns [SI].
    samples : int
        Number of draws (rows) [-].
    generator : numpy.random.Generator
        The seeded generator [-].
    extra : int
        Standard normal columns after those of `sigmas` [-].

    Returns
    -------
    numpy.ndarray
        (samples, len(sigmas) + extra) errors [SI].
    """
    scale = np.array(list(sigmas) + [1.0] * extra, dtype=float)
    return generator.standard_normal((samples, scale.size)) * scale


def uncertainty_errors(uncertainty: Uncertainty, samples: int, seed: int,
                       extra: int = 0) -> np.ndarray:
    """Normal errors of the inputs of UNCERTAIN_INPUTS scaled by their σ in `uncertainty`, then
    `extra` standard normal columns, from numpy's default generator seeded with `seed`
    (`normal_errors`) [SI].

    Raises
    ------
    InputError
        When `samples` is not a whole number 2-LARGEST_SAMPLES.
    """
    check_samples(samples)
    sigmas = [getattr(uncertainty, name) for name in UNCERTAIN_INPUTS]
    return normal_errors(sigmas, samples, np.random.default_rng(seed), extra)


def draw_rows(rider: Rider, wind: DayWind, errors: Errors,
              floors: Mapping[str, float]) -> np.ndarray:
    """Rows of pacing.plan.simulate.finish_times for the errors of each draw: total mass (at
    least its floor) [kg], CdA and Crr errors [m², -] (their floors apply per piece) and the
    wind at the rider's height from the day's speed plus its error (at least its floor)
    [m/s], for the unit air `wind.unit`.

    Raises
    ------
    InputError
        When a drawn wind speed is out of the range Conditions accepts.
    """
    d_cda, d_crr, d_mass, d_wind = errors
    mass = np.maximum(rider.mass + d_mass, floors["mass"])
    at_rider = [wind.at_rider(max(wind.speed + error, floors["wind"]))
                for error in d_wind.tolist()]
    return np.column_stack([mass, d_cda, d_crr, np.array(at_rider, dtype=float)])


def sampled_times(course: Course, power: ArrayLike, rider: Rider, wind: DayWind,
                  options: SimulationOptions | None, errors: Errors,
                  floors: Mapping[str, float]) -> np.ndarray:
    """Finish time of each draw [s] with the errors (CdA, Crr, mass, wind) added, cut at
    `floors` (drag_area [m²], rolling_coefficient [-], mass [kg], wind [m/s]), all draws
    ridden together."""
    rows = draw_rows(rider, wind, errors, floors)
    return finish_times(course, np.asarray(power, dtype=float), rider, wind.unit, rows,
                        options, (floors["drag_area"], floors["rolling_coefficient"]))
