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
docs/references.md, "Cycling power balance (Martin et al. 1998)" (worked values) and "Wind"
(apparent wind).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

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
wheels), r [m], Crr [-], bearing loss P = v·(91 + 8.7·v)·1e-3 W → a [N], b [N·s/m]
(docs/references.md, "Cycling power balance (Martin et al. 1998)")."""

WALKING_SPEED = 1.0
"""Ground speed below which a point is flagged as 'walking pace' [m/s]."""

PER_PIECE_FIELDS = ("drag_area", "rolling_coefficient")
"""Rider parameters that may be given per piece of a course (one value per piece)."""

BRACKET_START_SPEED = 30.0
"""First upper end of the bracket of `speed_for_power`, doubled until it holds the root
[m/s]."""


@dataclass(frozen=True, eq=False)
class Rider:
    """Parameters of the cycling power balance (rider, bike and kit together).

    Per-piece values are stored as read-only float arrays (a copy); every force and speed
    function broadcasts them against its piece arrays, and pacing.plan.simulate checks that there
    is one value per piece. Invalid values raise pacing.errors.InputError (one line).

    Attributes
    ----------
    mass : float
        Rider + bike + kit [kg].
    drag_area : float or numpy.ndarray
        CdA of rider and bike in still air, pedalling; a number, or one value per piece of the
        course (a position chosen piece by piece, e.g. low on the flats and upright on the
        climbs) [m²].
    rolling_coefficient : float or numpy.ndarray
        Crr; a number, or one value per piece of the course [-].
    drivetrain_efficiency : float
        η, the share of crank power reaching the wheel [-].
    wheel_drag_area : float
        F_w, the rotating-wheel drag term [m²].
    wheel_inertia : float
        Moment of inertia of both wheels [kg·m²].
    wheel_radius : float
        Outer radius of the wheels [m].
    bearing_force_constant : float
        a, the constant part of the bearing loss force [N].
    bearing_force_per_speed : float
        b, the part of the bearing loss force per unit speed [N·s/m].
    drafting_reduction : float
        Share of the rider's own drag area removed by drafting, 0..1 [-].
    yaw_drag_table : tuple of (float, float) pairs or None
        ((yaw [deg], CdA multiplier [-]), ...), symmetric in yaw, interpolated linearly in
        |yaw|; None means the multiplier is 1 at every yaw [deg, -].

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
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
        self._store_per_piece_values()
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

    def _store_per_piece_values(self) -> None:
        """Keep per-piece drag area and Crr as read-only copies; refuse arrays of 2-D or more."""
        for name in PER_PIECE_FIELDS:
            value = getattr(self, name)
            if np.ndim(value) > 1:
                raise InputError(f"{name.replace('_', ' ')} must be a number or one value "
                                 f"per piece, got an array of shape {np.shape(value)}")
            if np.ndim(value) == 1:
                array = np.array(value, dtype=float)  # a copy: later edits cannot reach it
                array.flags.writeable = False
                object.__setattr__(self, name, array)

    @property
    def effective_mass(self) -> float:
        """Mass including the wheels' rotational inertia, m + I/r² [kg].

        Examples
        --------
        Martin et al. (1998)'s wheels, I = 0.14 kg·m², r = 0.311 m, add 0.14/0.311² = 1.4475 kg:

        >>> Rider(mass=80.0).effective_mass
        81.4475
        """
        return self.mass + self.wheel_inertia / self.wheel_radius**2


def yaw_multiplier(yaw: ArrayLike, table: tuple[tuple[float, float], ...] | None) -> np.ndarray:
    """CdA multiplier k(β) at a yaw angle β from a (yaw, multiplier) table [-].

    Symmetric in yaw: interpolated linearly in |β|, held constant beyond the table's ends.

    Parameters
    ----------
    yaw : float or array_like
        Yaw angle β [deg].
    table : tuple of (float, float) pairs or None
        ((yaw [deg], multiplier [-]), ...); None for a multiplier of 1 at every yaw [deg, -].

    Returns
    -------
    numpy.ndarray
        k(β) [-], the shape of `yaw`.

    Examples
    --------
    Halfway between 10° (0.9) and 20° (0.95), on either side:

    >>> yaw_multiplier([-15.0, 15.0], ((0.0, 1.0), (10.0, 0.9), (20.0, 0.95))).tolist()
    [0.925, 0.925]
    """
    size: np.ndarray = np.abs(np.asarray(yaw, dtype=float))
    if table is None:
        return np.ones_like(size)
    angles, factors = np.asarray(sorted(table), dtype=float).T
    return np.interp(size, angles, factors)


def air_speed_components(
    speed: ArrayLike, headwind: ArrayLike, crosswind: ArrayLike
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Apparent wind seen by a rider: air speed along the track, apparent speed and yaw.

    v_a = v + w_h,  V = √(v_a² + w_c²),  β = atan2(w_c, v_a)

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    headwind : float or array_like
        Wind component against the direction of travel w_h [m/s] (negative = tailwind).
    crosswind : float or array_like
        Wind component across the direction of travel w_c [m/s].

    Returns
    -------
    along : numpy.ndarray
        Air speed along the track v_a [m/s].
    apparent : numpy.ndarray
        Apparent wind speed V [m/s].
    yaw : numpy.ndarray
        Yaw angle β [deg].

    References
    ----------
    docs/references.md, "Wind" (apparent wind).

    Examples
    --------
    Riding at 10 m/s with a 5 m/s wind from the side: V = √125 = 11.180 m/s at
    atan(0.5) = 26.57° yaw.

    >>> along, apparent, yaw = air_speed_components(10.0, 0.0, 5.0)
    >>> round(float(apparent), 3), round(float(yaw), 2)
    (11.18, 26.57)
    """
    along = np.asarray(speed, dtype=float) + headwind
    apparent = np.hypot(along, crosswind)
    yaw = np.degrees(np.arctan2(crosswind, along))
    return along, apparent, yaw


def aerodynamic_force(
    speed: ArrayLike,
    air_density: ArrayLike,
    rider: Rider,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
) -> np.ndarray:
    """Air drag along the direction of travel, F = ½·ρ·(CdA·k(β)·(1−d) + F_w)·V·v_a [N].

    Positive opposes motion; negative (a tailwind faster than the rider) pushes.

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    air_density : float or array_like
        ρ [kg/m³].
    rider : Rider
        Drag area, wheel drag area, drafting and yaw table of the rider [m², -].
    headwind : float or array_like, optional
        Wind component against the direction of travel [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel [m/s].

    Returns
    -------
    numpy.ndarray
        Drag force along the track [N], broadcast from the inputs.

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276

    Examples
    --------
    ½·1.2·(0.269 + 0.0044)·10² = 16.404 N at 10 m/s in still air:

    >>> float(aerodynamic_force(10.0, 1.2, Rider(drag_area=0.269)))
    16.404
    """
    along, apparent, yaw = air_speed_components(speed, headwind, crosswind)
    area = rider.drag_area * yaw_multiplier(yaw, rider.yaw_drag_table) * (
        1.0 - rider.drafting_reduction
    ) + rider.wheel_drag_area
    return 0.5 * np.asarray(air_density) * area * apparent * along


def rolling_force(grade: ArrayLike, rider: Rider) -> np.ndarray:
    """Rolling resistance Crr·m·g·cos(atan G) [N].

    Parameters
    ----------
    grade : float or array_like
        Grade G, rise/run [-].
    rider : Rider
        Mass and Crr of the rider [kg, -].

    Returns
    -------
    numpy.ndarray
        Rolling resistance [N], the shape of `grade` (or of a per-piece Crr).

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276

    Examples
    --------
    0.0032·80·9.80665 = 2.5105 N on the flat:

    >>> float(rolling_force(0.0, Rider(mass=80.0)))
    2.5105
    """
    grade = np.asarray(grade, dtype=float)
    return rider.rolling_coefficient * rider.mass * STANDARD_GRAVITY / np.sqrt(1.0 + grade**2)


def gravity_force(grade: ArrayLike, rider: Rider) -> np.ndarray:
    """Component of weight along the road m·g·sin(atan G), positive uphill [N].

    Parameters
    ----------
    grade : float or array_like
        Grade G, rise/run [-].
    rider : Rider
        Mass of the rider [kg].

    Returns
    -------
    numpy.ndarray
        Force along the road [N], the shape of `grade`.

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276

    Examples
    --------
    80·9.80665·0.06/√1.0036 = 46.987 N on a 6 % climb:

    >>> float(gravity_force(0.06, Rider(mass=80.0)))
    46.987
    """
    grade = np.asarray(grade, dtype=float)
    return rider.mass * STANDARD_GRAVITY * grade / np.sqrt(1.0 + grade**2)


def bearing_force(speed: ArrayLike, rider: Rider) -> np.ndarray:
    """Wheel-bearing friction a + b·v [N].

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    rider : Rider
        Bearing loss coefficients a [N] and b [N·s/m].

    Returns
    -------
    numpy.ndarray
        Bearing friction [N], the shape of `speed`.

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291: P = v·(91 + 8.7·v)·1e-3 W.

    Examples
    --------
    (91 + 8.7·10)·1e-3 = 0.178 N at 10 m/s:

    >>> float(bearing_force(10.0, Rider()))
    0.178
    """
    return rider.bearing_force_constant + rider.bearing_force_per_speed * np.asarray(speed)


def resistive_force(
    speed: ArrayLike,
    grade: ArrayLike,
    air_density: ArrayLike,
    rider: Rider,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
) -> np.ndarray:
    """Sum of the forces opposing motion at steady speed: aero + rolling + bearing + gravity [N].

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    grade : float or array_like
        Grade G, rise/run [-].
    air_density : float or array_like
        ρ [kg/m³].
    rider : Rider
        The rider's parameters.
    headwind : float or array_like, optional
        Wind component against the direction of travel [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel [m/s].

    Returns
    -------
    numpy.ndarray
        Resistive force [N], broadcast from the inputs.

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    return (
        aerodynamic_force(speed, air_density, rider, headwind, crosswind)
        + rolling_force(grade, rider)
        + bearing_force(speed, rider)
        + gravity_force(grade, rider)
    )


def power_for_speed(
    speed: ArrayLike,
    grade: ArrayLike,
    air_density: ArrayLike,
    rider: Rider,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    acceleration: ArrayLike = 0.0,
) -> np.ndarray:
    """Crank power needed to ride at a speed, Martin et al. (1998) [W].

    P = v·(F_resist + (m + I/r²)·a) / η. The result can be negative (the rider would have to
    brake); callers decide what that means.

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    grade : float or array_like
        Grade G, rise/run [-].
    air_density : float or array_like
        ρ [kg/m³].
    rider : Rider
        The rider's parameters.
    headwind : float or array_like, optional
        Wind component against the direction of travel [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel [m/s].
    acceleration : float or array_like, optional
        dv/dt [m/s²].

    Returns
    -------
    numpy.ndarray
        Crank power P [W], broadcast from the inputs.

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation
    of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    docs/references.md, "Cycling power balance (Martin et al. 1998)".

    Examples
    --------
    The worked values of docs/references.md (80 kg, CdA 0.269 m², ρ 1.2 kg/m³, Martin et al.'s
    constants, computed there from the equation with plain floats): 195.6 W at 10 m/s on the
    flat and 275.3 W at 5 m/s on 6 %.

    >>> rider = Rider(mass=80.0, drag_area=0.269)
    >>> round(float(power_for_speed(10.0, 0.0, 1.2, rider)), 1)
    195.6
    >>> round(float(power_for_speed(5.0, 0.06, 1.2, rider)), 1)
    275.3
    """
    speed = np.asarray(speed, dtype=float)
    force = resistive_force(speed, grade, air_density, rider, headwind, crosswind)
    force = force + rider.effective_mass * np.asarray(acceleration, dtype=float)
    return speed * force / rider.drivetrain_efficiency


def speed_for_power(
    power: ArrayLike,
    grade: ArrayLike,
    air_density: ArrayLike,
    rider: Rider,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    minimum_speed: float = 0.05,
    tolerance: float = 1e-12,
    max_iterations: int = 100,
) -> np.ndarray:
    """Steady ground speed at a crank power, on every point at once [m/s].

    Solves g(v) = F_resist(v) − η·P/v = 0 for v > 0. g is strictly increasing on v > 0 (F_resist
    grows with v, −η·P/v grows with v for P ≥ 0), so the root is unique; it is found by Newton
    steps kept inside a bisection bracket (pacing.physics.cycling_speed: vectorised, or
    compiled piece by piece for large jobs, the same numbers). At P = 0 downhill the root is
    the terminal speed.
    Where no root lies above `minimum_speed` (a climb at too little power) the result is
    `minimum_speed`: the rider is off the bike.

    Parameters
    ----------
    power : float or array_like
        Crank power P [W], ≥ 0 (negative values are treated as 0).
    grade : float or array_like
        Grade G, rise/run [-].
    air_density : float or array_like
        ρ [kg/m³].
    rider : Rider
        The rider's parameters; per-piece drag_area and rolling_coefficient broadcast with the
        arrays above.
    headwind : float or array_like, optional
        Wind component against the direction of travel [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel [m/s].
    minimum_speed : float, optional
        Floor of the result [m/s].
    tolerance : float, optional
        Relative tolerance on speed [-].
    max_iterations : int, optional
        Most Newton-or-bisection steps [-].

    Returns
    -------
    numpy.ndarray
        Steady ground speed [m/s], broadcast from the inputs.

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    docs/references.md, "Cycling power balance (Martin et al. 1998)".

    Examples
    --------
    The worked value of docs/references.md (80 kg, CdA 0.269 m², ρ 1.2 kg/m³, found there
    with scipy's brentq on the equation): 289 W on the flat gives 11.522 m/s.

    >>> round(float(speed_for_power(289.0, 0.0, 1.2, Rider(mass=80.0, drag_area=0.269))), 3)
    11.522
    """
    from pacing.physics.cycling_speed import steady_speed  # the solver (it imports this module)

    return steady_speed(power, grade, air_density, rider, headwind, crosswind, minimum_speed,
                        tolerance, max_iterations)
