"""Power balance of a rider on a bicycle (Martin et al. 1998), vectorized.

The balance at the pedals, per unit of ground speed v [m/s]::

    η·P = v·[F_aero + F_roll + F_bearing + F_gravity] + (m + I/r²)·v·dv/dt

    F_aero    = ½·ρ·(CdA·k(β)·(1 − d) + F_w)·V·v_a      (air drag along the track)
    F_roll    = Crr·m·g·cos(atan G)
    F_bearing = a + b·v                                  (wheel-bearing friction, a = 0.091 N,
                                                          b = 0.0087 N·s/m)
    F_gravity = m·g·sin(atan G)

v_a = v + w_h is the air speed along the direction of travel (w_h the headwind component),
w_c the crosswind, V = √(v_a² + w_c²) the apparent wind speed and β = atan2(w_c, v_a) the yaw
angle. The drag force acts along the apparent wind; its component along the track is
½ρ·CdA·V²·cos β = ½ρ·CdA·V·v_a. With no crosswind this is Martin's ½ρ·CdA·v_a²·sign(v_a);
with crosswind it is larger than the along-track part alone (the crosswind adds to the dynamic
pressure). k(β) is an optional CdA-versus-yaw multiplier (1 when no table is given) and d the
drafting reduction of the rider's own drag.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.constants import STANDARD_GRAVITY
from pacing.errors import InputError

MARTIN_1998 = {
    "drivetrain_efficiency": 0.976,
    "wheel_drag_area": 0.0044,
    "wheel_inertia": 0.14,
    "wheel_radius": 0.311,
    "rolling_coefficient": 0.0032,
    "bearing_force_constant": 0.091,
    "bearing_force_per_speed": 0.0087,
}
"""Published coefficient set of Martin et al. (1998): η [-], F_w [m²], I [kg·m²] (both
wheels), r [m], Crr [-], bearing loss P = v·(91 + 8.7·v)·1e-3 W → a [N], b [N·s/m]."""

WALKING_SPEED = 1.0
"""Ground speed below which a point is flagged as 'walking pace' [m/s]."""

PER_PIECE_FIELDS = ("drag_area", "rolling_coefficient")
"""Rider parameters that may be given per piece of a course (one value per piece)."""


@dataclass(frozen=True, eq=False)
class Rider:
    """Parameters of the cycling power balance (rider, bike and kit together).

    Attributes
    ----------
    mass : rider + bike + kit [kg].
    drag_area : CdA of rider and bike in still air, pedalling [m²]; a number, or one value
        per piece of the course (a position chosen piece by piece, e.g. low on the flats and
        upright on the climbs).
    rolling_coefficient : Crr [-]; a number, or one value per piece of the course.
    drivetrain_efficiency : η, crank power reaching the wheel [-].
    wheel_drag_area : F_w, the rotating-wheel drag term [m²].
    wheel_inertia : moment of inertia of both wheels [kg·m²].
    wheel_radius : outer radius of the wheels [m].
    bearing_force_constant, bearing_force_per_speed : a [N], b [N·s/m] of the bearing loss.
    drafting_reduction : fraction of the rider's own drag removed by drafting, 0..1 [-].
    yaw_drag_table : optional ((yaw [deg], CdA multiplier [-]), ...), symmetric in yaw,
        interpolated linearly in |yaw|; None means the multiplier is 1 at every yaw.

    Per-piece values are stored as read-only float arrays (a copy); every force and speed
    function broadcasts them against its piece arrays, and pacing.plan.simulate checks that there
    is one value per piece. Invalid values raise pacing.errors.InputError (one line).
    """

    mass: float = 80.0
    drag_area: float | np.ndarray = 0.30
    rolling_coefficient: float | np.ndarray = MARTIN_1998["rolling_coefficient"]
    drivetrain_efficiency: float = MARTIN_1998["drivetrain_efficiency"]
    wheel_drag_area: float = MARTIN_1998["wheel_drag_area"]
    wheel_inertia: float = MARTIN_1998["wheel_inertia"]
    wheel_radius: float = MARTIN_1998["wheel_radius"]
    bearing_force_constant: float = MARTIN_1998["bearing_force_constant"]
    bearing_force_per_speed: float = MARTIN_1998["bearing_force_per_speed"]
    drafting_reduction: float = 0.0
    yaw_drag_table: tuple[tuple[float, float], ...] | None = None

    def __post_init__(self) -> None:
        for name in PER_PIECE_FIELDS:
            value = getattr(self, name)
            if np.ndim(value) > 1:
                raise InputError(f"{name.replace('_', ' ')} must be a number or one value "
                                 f"per piece, got an array of shape {np.shape(value)}")
            if np.ndim(value) == 1:
                array = np.array(value, dtype=float)  # a copy: later edits cannot reach it
                array.flags.writeable = False
                object.__setattr__(self, name, array)
        drag_area = np.asarray(self.drag_area, dtype=float)
        rolling = np.asarray(self.rolling_coefficient, dtype=float)
        valid_per_piece = {
            "drag_area": np.isfinite(drag_area) & (drag_area > 0),
            "rolling_coefficient": np.isfinite(rolling) & (rolling >= 0),
        }
        checks = {
            "mass": self.mass > 0,
            "drag_area": bool(np.all(valid_per_piece["drag_area"])),
            "rolling_coefficient": bool(np.all(valid_per_piece["rolling_coefficient"])),
            "drivetrain_efficiency": 0 < self.drivetrain_efficiency <= 1,
            "wheel_drag_area": self.wheel_drag_area >= 0,
            "wheel_inertia": self.wheel_inertia >= 0,
            "wheel_radius": self.wheel_radius > 0,
            "drafting_reduction": 0 <= self.drafting_reduction < 1,
        }
        for name, ok in checks.items():
            if not ok:
                value = getattr(self, name)
                shown = repr(value)
                if np.ndim(value) == 1:  # one line, not the whole array
                    first = int(np.argmin(valid_per_piece[name]))
                    shown = f"{value[first]:g} on piece {first} of {value.size}"
                raise InputError(f"invalid {name}: {shown}")

    @property
    def effective_mass(self) -> float:
        """Mass including the wheels' rotational inertia, m + I/r² [kg]."""
        return self.mass + self.wheel_inertia / self.wheel_radius**2


def yaw_multiplier(yaw: np.ndarray, table: tuple[tuple[float, float], ...] | None) -> np.ndarray:
    """CdA multiplier k(β) at yaw angle β [deg] from a (yaw [deg], multiplier) table.

    Symmetric in yaw: interpolated linearly in |β|, held constant beyond the table's ends.
    """
    yaw = np.abs(np.asarray(yaw, dtype=float))
    if table is None:
        return np.ones_like(yaw)
    angles, factors = np.asarray(sorted(table), dtype=float).T
    return np.interp(yaw, angles, factors)


def air_speed_components(
    speed: np.ndarray, headwind: np.ndarray, crosswind: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Apparent wind seen by a rider.

    Parameters
    ----------
    speed : ground speed [m/s].
    headwind : wind component against the direction of travel [m/s] (negative = tailwind).
    crosswind : wind component across the direction of travel [m/s].

    Returns
    -------
    (along, apparent, yaw) : air speed along the track v_a = v + w_h [m/s], apparent wind speed
        V = √(v_a² + w_c²) [m/s], yaw angle β = atan2(w_c, v_a) [deg].
    """
    along = np.asarray(speed, dtype=float) + headwind
    apparent = np.hypot(along, crosswind)
    yaw = np.degrees(np.arctan2(crosswind, along))
    return along, apparent, yaw


def aerodynamic_force(
    speed: np.ndarray,
    air_density: np.ndarray,
    rider: Rider,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
) -> np.ndarray:
    """Air drag along the direction of travel, F = ½·ρ·(CdA·k(β)·(1−d) + F_w)·V·v_a [N].

    Positive opposes motion; negative (a tailwind faster than the rider) pushes.

    Parameters
    ----------
    speed : ground speed [m/s]; air_density [kg/m³]; headwind, crosswind [m/s] (see
        air_speed_components).
    """
    along, apparent, yaw = air_speed_components(speed, headwind, crosswind)
    area = rider.drag_area * yaw_multiplier(yaw, rider.yaw_drag_table) * (
        1.0 - rider.drafting_reduction
    ) + rider.wheel_drag_area
    return 0.5 * air_density * area * apparent * along


def rolling_force(grade: np.ndarray, rider: Rider) -> np.ndarray:
    """Rolling resistance Crr·m·g·cos(atan G) [N]; grade G rise/run [-]."""
    grade = np.asarray(grade, dtype=float)
    return rider.rolling_coefficient * rider.mass * STANDARD_GRAVITY / np.sqrt(1.0 + grade**2)


def gravity_force(grade: np.ndarray, rider: Rider) -> np.ndarray:
    """Component of weight along the road m·g·sin(atan G) [N] (positive uphill)."""
    grade = np.asarray(grade, dtype=float)
    return rider.mass * STANDARD_GRAVITY * grade / np.sqrt(1.0 + grade**2)


def bearing_force(speed: np.ndarray, rider: Rider) -> np.ndarray:
    """Wheel-bearing friction a + b·v [N] (Martin et al. 1998: P = v·(91 + 8.7·v)·1e-3 W)."""
    return rider.bearing_force_constant + rider.bearing_force_per_speed * np.asarray(speed)


def resistive_force(
    speed: np.ndarray,
    grade: np.ndarray,
    air_density: np.ndarray,
    rider: Rider,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
) -> np.ndarray:
    """Sum of the forces opposing motion at steady speed [N]: aero + rolling + bearing + gravity."""
    return (
        aerodynamic_force(speed, air_density, rider, headwind, crosswind)
        + rolling_force(grade, rider)
        + bearing_force(speed, rider)
        + gravity_force(grade, rider)
    )


def power_for_speed(
    speed: np.ndarray,
    grade: np.ndarray,
    air_density: np.ndarray,
    rider: Rider,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
    acceleration: np.ndarray = 0.0,
) -> np.ndarray:
    """Crank power needed to ride at a speed [W] (Martin et al. 1998, eq. above).

    P = v·(F_resist + (m + I/r²)·a) / η. The result can be negative (the rider would have to
    brake); callers decide what that means.

    Parameters
    ----------
    speed : ground speed [m/s]; grade : rise/run [-]; air_density [kg/m³];
    headwind, crosswind : wind components [m/s]; acceleration : dv/dt [m/s²].
    """
    speed = np.asarray(speed, dtype=float)
    force = resistive_force(speed, grade, air_density, rider, headwind, crosswind)
    force = force + rider.effective_mass * np.asarray(acceleration, dtype=float)
    return speed * force / rider.drivetrain_efficiency


def speed_for_power(
    power: np.ndarray,
    grade: np.ndarray,
    air_density: np.ndarray,
    rider: Rider,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
    minimum_speed: float = 0.05,
    tolerance: float = 1e-12,
    max_iterations: int = 100,
) -> np.ndarray:
    """Steady ground speed at a crank power, on every point at once [m/s].

    Solves g(v) = F_resist(v) − η·P/v = 0 for v > 0. g is strictly increasing on v > 0 (F_resist
    grows with v, −η·P/v grows with v for P ≥ 0), so the root is unique; it is found by Newton
    steps kept inside a bisection bracket. At P = 0 downhill the root is the terminal speed.
    Where no root lies above `minimum_speed` (a climb at too little power) the result is
    `minimum_speed`: the rider is off the bike.

    Parameters
    ----------
    power : crank power [W], ≥ 0 (negative values are treated as 0).
    grade : rise/run [-]; air_density [kg/m³]; headwind, crosswind [m/s].
    rider : Rider; per-piece drag_area and rolling_coefficient broadcast with the arrays above.
    minimum_speed : floor of the result [m/s].
    tolerance : relative tolerance on speed [-].
    """
    power, grade, rho, head, cross, _, _ = np.broadcast_arrays(
        np.maximum(np.asarray(power, dtype=float), 0.0),
        np.asarray(grade, dtype=float),
        np.asarray(air_density, dtype=float),
        np.asarray(headwind, dtype=float),
        np.asarray(crosswind, dtype=float),
        np.asarray(rider.drag_area, dtype=float),  # per-piece rider values set the shape too
        np.asarray(rider.rolling_coefficient, dtype=float),
    )
    drive = rider.drivetrain_efficiency * power
    rolling = np.broadcast_to(rolling_force(grade, rider), grade.shape)
    constant = rolling + gravity_force(grade, rider) + rider.bearing_force_constant

    plain_area = rider.drag_area * (1.0 - rider.drafting_reduction) + rider.wheel_drag_area
    plain_k = 0.5 * rho * plain_area  # per piece when drag_area is

    def g_and_slope(v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        along = v + head
        apparent = np.hypot(along, cross)
        if rider.yaw_drag_table is None:
            k = plain_k  # no yaw table: skip the yaw angle (a third of the cost)
        else:
            yaw = np.degrees(np.arctan2(cross, along))
            area = rider.drag_area * yaw_multiplier(yaw, rider.yaw_drag_table) * (
                1.0 - rider.drafting_reduction
            ) + rider.wheel_drag_area
            k = 0.5 * rho * area
        value = k * apparent * along + constant + rider.bearing_force_per_speed * v - drive / v
        safe = np.where(apparent > 0, apparent, 1.0)
        slope = (
            k * np.where(apparent > 0, apparent + along**2 / safe, 0.0)
            + rider.bearing_force_per_speed
            + drive / v**2
        )
        return value, slope

    low = np.full(power.shape, float(minimum_speed))
    g_low, _ = g_and_slope(low)
    stalled = g_low >= 0
    high = np.full(power.shape, 30.0)
    for _ in range(60):
        g_high, _ = g_and_slope(high)
        short = (g_high < 0) & ~stalled
        if not short.any():
            break
        low = np.where(short, high, low)
        high = np.where(short, 2.0 * high, high)
    speed = 0.5 * (low + high)
    for _ in range(max_iterations):
        value, slope = g_and_slope(speed)
        low = np.where(value < 0, speed, low)
        high = np.where(value > 0, speed, high)
        newton = speed - value / slope
        # Non-strict bounds: once converged, a Newton step smaller than one ulp lands exactly on
        # the bracket end it came from and must not be mistaken for a step outside the bracket.
        inside = (newton >= low) & (newton <= high)
        new_speed = np.where(inside, newton, 0.5 * (low + high))
        converged = np.abs(new_speed - speed) <= tolerance * new_speed
        speed = new_speed
        if np.all(converged | stalled):
            break
    return np.where(stalled, float(minimum_speed), speed)
