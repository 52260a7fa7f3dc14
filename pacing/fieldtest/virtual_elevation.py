"""Virtual elevation (Chung): the height a ride must have gained, from its power balance.

Between two samples the energy the rider puts in, minus what air, tyres, bearings and the change
of speed take, must have gone into height (forces of pacing.physics.cycling, Martin et al. 1998)::

    m·g·Δh = η·P̄·Δt − ½·(m + I/r²)·(v₁² − v₀²) − (a + b·v̄ + ½ρ·F_w·V·v_a)·Δs
             − CdA·½ρ·k(β)·V·v_a·Δs − Crr·m·g·cos θ·Δs,         Δs = v̄·Δt

The rise is linear in CdA and Crr (`elevation_terms` returns the three parts), which is what
pacing.fieldtest.estimate fits. cos θ is taken as 1: for grades under 6 % this changes Crr by less
than 0.2 %.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import STANDARD_GRAVITY
from pacing.physics.cycling import Rider, aerodynamic_force, bearing_force, rolling_force


@dataclass(frozen=True, eq=False)
class ElevationTerms:
    """The three parts of the virtual elevation rise of each piece, length N-1.

    rise = known − drag_area·per_drag_area − rolling_coefficient·per_rolling_coefficient

    Attributes
    ----------
    known : numpy.ndarray
        Rise from the terms that do not involve CdA or Crr [m].
    per_drag_area : numpy.ndarray
        Rise lost per unit CdA [m/m²].
    per_rolling_coefficient : numpy.ndarray
        Rise lost per unit Crr [m].
    """

    known: np.ndarray
    per_drag_area: np.ndarray
    per_rolling_coefficient: np.ndarray


def unit_rider(rider: Rider) -> Rider:
    """The rider with CdA = 1 m² and Crr = 1, no wheel drag and no drafting.

    Forces computed with it are per unit CdA or Crr.

    Parameters
    ----------
    rider : pacing.physics.cycling.Rider
        Mass [kg], drivetrain, bearing and yaw parameters kept.

    Returns
    -------
    pacing.physics.cycling.Rider
        A copy with drag_area 1 [m²], rolling_coefficient 1 [-], wheel_drag_area 0 [m²] and
        drafting_reduction 0 [-].
    """
    return dataclasses.replace(rider, drag_area=1.0, wheel_drag_area=0.0, drafting_reduction=0.0,
                               rolling_coefficient=1.0)


def elevation_terms(
    time: ArrayLike,
    speed: ArrayLike,
    power: ArrayLike,
    air_density: ArrayLike,
    rider: Rider,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    pause: ArrayLike | None = None,
) -> ElevationTerms:
    """Rise of each piece implied by the power balance, split into parts linear in CdA, Crr.

        m·g·Δh = η·P̄·Δt − ½·(m + I/r²)·(v₁² − v₀²) − (a + b·v̄ + F_w·q)·Δs
                 − CdA·k(β)·q·Δs − Crr·m·g·Δs,      q = ½ρ·V·v_a,  Δs = v̄·Δt

    P̄ and v̄ are the means of the two end samples. Pieces marked as pauses rise by 0.

    Parameters
    ----------
    time : array_like
        Time of each sample [s], length N.
    speed : array_like
        Ground speed [m/s], length N.
    power : array_like
        Crank power [W], length N.
    air_density : array_like
        Air density [kg/m³], scalar or length N-1.
    rider : pacing.physics.cycling.Rider
        Mass [kg], drivetrain efficiency [-], wheel and bearing parameters (its drag_area and
        rolling_coefficient are not used; its yaw_drag_table is).
    headwind : array_like
        Wind against the direction of travel [m/s], scalar or length N-1.
    crosswind : array_like
        Wind across the direction of travel [m/s], scalar or length N-1.
    pause : array_like or None
        True for pieces that bridge a dropped stop (bool, length N-1).

    Returns
    -------
    ElevationTerms
        Known rise [m], rise per unit CdA [m/m²], rise per unit Crr [m], each of length N-1.

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    time = np.asarray(time, dtype=float)
    speed = np.asarray(speed, dtype=float)
    power = np.asarray(power, dtype=float)
    duration = np.diff(time)
    mean_speed = 0.5 * (speed[1:] + speed[:-1])
    mean_power = 0.5 * (power[1:] + power[:-1])
    length = mean_speed * duration
    weight = rider.mass * STANDARD_GRAVITY
    unit = unit_rider(rider)
    per_area = aerodynamic_force(mean_speed, air_density, unit, headwind, crosswind)
    wheel = rider.wheel_drag_area * aerodynamic_force(
        mean_speed, air_density, dataclasses.replace(unit, yaw_drag_table=None), headwind,
        crosswind)
    kinetic = 0.5 * rider.effective_mass * (speed[1:] ** 2 - speed[:-1] ** 2)
    known = (rider.drivetrain_efficiency * mean_power * duration - kinetic
             - (bearing_force(mean_speed, rider) + wheel) * length) / weight
    per_drag = per_area * length / weight
    per_rolling = rolling_force(np.zeros(()), unit) * length / weight
    if pause is not None:
        keep = ~np.asarray(pause, dtype=bool)
        known, per_drag, per_rolling = known * keep, per_drag * keep, per_rolling * keep
    return ElevationTerms(known, per_drag, np.broadcast_to(per_rolling, known.shape).copy())


def virtual_elevation(
    time: ArrayLike,
    speed: ArrayLike,
    power: ArrayLike,
    air_density: ArrayLike,
    rider: Rider,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    start_elevation: float = 0.0,
    pause: ArrayLike | None = None,
) -> np.ndarray:
    """Elevation trace implied by the power balance with the rider's CdA and Crr.

    z_k = z_0 + Σ_{i<k} Δh_i, Δh_i from `elevation_terms` with CdA = rider.drag_area and
    Crr = rider.rolling_coefficient. With the right CdA and Crr it follows the road's profile.

    Parameters
    ----------
    time : array_like
        Time of each sample [s], length N.
    speed : array_like
        Ground speed [m/s], length N.
    power : array_like
        Crank power [W], length N.
    air_density : array_like
        Air density [kg/m³], scalar or length N-1.
    rider : pacing.physics.cycling.Rider
        Mass [kg], CdA [m²], Crr [-], drivetrain, wheel and bearing parameters.
    headwind : array_like
        Wind against the direction of travel [m/s], scalar or length N-1.
    crosswind : array_like
        Wind across the direction of travel [m/s], scalar or length N-1.
    start_elevation : float
        Elevation of the first sample [m].
    pause : array_like or None
        True for pieces that bridge a dropped stop (bool, length N-1).

    Returns
    -------
    numpy.ndarray
        Virtual elevation of each sample [m], length N.

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    terms = elevation_terms(time, speed, power, air_density, rider, headwind, crosswind, pause)
    rise = (terms.known - rider.drag_area * terms.per_drag_area
            - rider.rolling_coefficient * terms.per_rolling_coefficient)
    return start_elevation + np.concatenate(([0.0], np.cumsum(rise)))
