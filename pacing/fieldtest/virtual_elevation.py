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
Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from pacing.constants import STANDARD_GRAVITY
from pacing.physics.cycling import Rider, aerodynamic_force, bearing_force, rolling_force


@dataclass(frozen=True, eq=False)
class ElevationTerms:
    """The three parts of the virtual elevation rise of each piece [m], length N-1.

    rise = known − drag_area·per_drag_area − rolling_coefficient·per_rolling_coefficient
    """

    known: np.ndarray
    per_drag_area: np.ndarray
    per_rolling_coefficient: np.ndarray


def unit_rider(rider: Rider) -> Rider:
    """The rider with CdA = 1 m² and Crr = 1, no wheel drag and no drafting: forces computed
    with it are per unit CdA or Crr."""
    return dataclasses.replace(rider, drag_area=1.0, wheel_drag_area=0.0, drafting_reduction=0.0,
                               rolling_coefficient=1.0)


def elevation_terms(
    time,
    speed,
    power,
    air_density,
    rider: Rider,
    headwind=0.0,
    crosswind=0.0,
    pause=None,
) -> ElevationTerms:
    """Rise of each piece implied by the power balance, split into parts linear in CdA, Crr.

        m·g·Δh = η·P̄·Δt − ½·(m + I/r²)·(v₁² − v₀²) − (a + b·v̄ + F_w·q)·Δs
                 − CdA·k(β)·q·Δs − Crr·m·g·Δs,      q = ½ρ·V·v_a,  Δs = v̄·Δt

    P̄ and v̄ are the means of the two end samples. Pieces marked as pauses rise by 0.

    Parameters
    ----------
    time [s], speed [m/s], power [W] : length N.
    air_density [kg/m³], headwind, crosswind [m/s] : scalars or length N-1.
    rider : mass, drivetrain efficiency, wheel and bearing parameters (its drag_area and
        rolling_coefficient are not used; its yaw_drag_table is).
    pause : bool, length N-1, or None.

    References
    ----------
    Chung, "Estimating CdA with a power meter"; Martin et al. (1998).
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
    per_rolling = rolling_force(0.0, unit) * length / weight
    if pause is not None:
        keep = ~np.asarray(pause, dtype=bool)
        known, per_drag, per_rolling = known * keep, per_drag * keep, per_rolling * keep
    return ElevationTerms(known, per_drag, np.broadcast_to(per_rolling, known.shape).copy())


def virtual_elevation(
    time,
    speed,
    power,
    air_density,
    rider: Rider,
    headwind=0.0,
    crosswind=0.0,
    start_elevation: float = 0.0,
    pause=None,
) -> np.ndarray:
    """Elevation trace implied by the power balance with the rider's CdA and Crr [m], length N.

    z_k = z_0 + Σ_{i<k} Δh_i, Δh_i from `elevation_terms` with CdA = rider.drag_area and
    Crr = rider.rolling_coefficient. With the right CdA and Crr it follows the road's profile.

    References
    ----------
    Chung, "Estimating CdA with a power meter".
    """
    terms = elevation_terms(time, speed, power, air_density, rider, headwind, crosswind, pause)
    rise = (terms.known - rider.drag_area * terms.per_drag_area
            - rider.rolling_coefficient * terms.per_rolling_coefficient)
    return start_elevation + np.concatenate(([0.0], np.cumsum(rise)))
