"""The steady ground speed at a crank power on every piece (pacing.physics.cycling's
`speed_for_power` calls it): the root of the force balance

    g(v) = F_resist(v) − η·P/v = 0,   F_resist = ½ρ·(CdA·k(β)·(1 − d) + F_w)·V·v_a + c + b·v

found by Newton steps kept inside a bisection bracket, vectorised over the pieces with numpy,
or piece by piece by the compiled kernel of pacing.physics.cycling_kernels (large jobs,
pacing.kernels decides; no yaw table). Both take the same steps with the same operations: the
same speeds bit for bit.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np
from numpy.typing import ArrayLike

from pacing import kernels
from pacing.physics import cycling_kernels
from pacing.physics.cycling import (
    BRACKET_START_SPEED,
    Rider,
    gravity_force,
    rolling_force,
    yaw_multiplier,
)

ForceBalance = Callable[[np.ndarray, "np.ndarray | None"], tuple[np.ndarray, np.ndarray]]
"""g(v) = F_resist(v) − η·P/v [N] and its slope dg/dv [N·s/m] at ground speeds v [m/s]: on
every piece, or on the pieces of an index array (v then holds one speed per index)."""


@dataclass(frozen=True, eq=False)
class SteadyTerms:
    """The force balance's terms on every piece, flattened to 1-D contiguous arrays.

    Attributes
    ----------
    drive : numpy.ndarray
        η·P [W].
    constant : numpy.ndarray
        Speed-independent resistance: rolling, gravity and the bearing constant a [N].
    plain_k : numpy.ndarray
        ½ρ·(CdA·(1 − d) + F_w), the drag factor without a yaw table [kg/m].
    area : numpy.ndarray
        CdA [m²].
    rho : numpy.ndarray
        Air density [kg/m³].
    head : numpy.ndarray
        Headwind component [m/s].
    cross : numpy.ndarray
        Crosswind component [m/s].
    """

    drive: np.ndarray
    constant: np.ndarray
    plain_k: np.ndarray
    area: np.ndarray
    rho: np.ndarray
    head: np.ndarray
    cross: np.ndarray


def steady_terms(power: np.ndarray, grade: np.ndarray, rho: np.ndarray, head: np.ndarray,
                 cross: np.ndarray, rider: Rider) -> SteadyTerms:
    """The terms of g(v) = F_resist(v) − η·P/v on every piece (arrays broadcast alike, then
    flattened) [-]."""
    shape = power.shape

    def flat(value: ArrayLike) -> np.ndarray:  # 1-D: the in-place steps need real arrays
        return np.ascontiguousarray(np.broadcast_to(value, shape), dtype=float).reshape(-1)

    rolling = np.broadcast_to(rolling_force(grade, rider), grade.shape)
    plain_area = rider.drag_area * (1.0 - rider.drafting_reduction) + rider.wheel_drag_area
    return SteadyTerms(
        drive=flat(rider.drivetrain_efficiency * power),
        constant=flat(rolling + gravity_force(grade, rider) + rider.bearing_force_constant),
        plain_k=flat(0.5 * rho * plain_area),  # per piece when drag_area is
        area=flat(np.asarray(rider.drag_area, dtype=float)),
        rho=flat(rho), head=flat(head), cross=flat(cross))


def _steady_force_balance(terms: SteadyTerms, rider: Rider) -> ForceBalance:
    """g(v) = F_resist(v) − η·P/v and dg/dv on every piece (v and the results are 1-D), or
    on some of them."""
    drive, constant, plain_k = terms.drive, terms.constant, terms.plain_k
    area, rho, head, cross = terms.area, terms.rho, terms.head, terms.cross
    b = rider.bearing_force_per_speed
    table = rider.yaw_drag_table

    def g_and_slope(v: np.ndarray, index: np.ndarray | None = None
                    ) -> tuple[np.ndarray, np.ndarray]:
        if index is None:
            at_head, at_cross, at_drive, at_constant = head, cross, drive, constant
        else:
            at_head, at_cross = head.take(index), cross.take(index)
            at_drive, at_constant = drive.take(index), constant.take(index)
        along = v + at_head
        apparent = np.hypot(along, at_cross)
        if table is None:
            k = plain_k if index is None else plain_k.take(index)  # no yaw table: no angle
        else:
            yaw = np.degrees(np.arctan2(at_cross, along))
            at_area = area if index is None else area.take(index)
            at_rho = rho if index is None else rho.take(index)
            k = 0.5 * at_rho * (at_area * yaw_multiplier(yaw, table) * (
                1.0 - rider.drafting_reduction) + rider.wheel_drag_area)
        # in place, in the order of k·V·v_a + c + b·v − η·P/v (no new arrays: fewer faults)
        pull = at_drive / v
        value = k * apparent
        value *= along
        value += at_constant
        value += b * v
        value -= pull
        pull = np.divide(at_drive, np.multiply(v, v, out=pull), out=pull)  # η·P/v²
        if apparent.min() > 0:  # V > 0 everywhere (the usual case): V + v_a²/V
            along *= along
            along /= apparent
            along += apparent
            slope = np.multiply(k, along, out=along)
        else:
            safe = np.where(apparent > 0, apparent, 1.0)
            slope = k * np.where(apparent > 0, apparent + along**2 / safe, 0.0)
        slope += b
        slope += pull
        return value, slope

    return g_and_slope


def _bracket_speed(balance: ForceBalance, shape: tuple[int, ...], minimum_speed: float
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(low, high, stalled, start): g(low) < 0 < g(high) where a root lies above
    `minimum_speed`; `stalled` where none does (g(minimum_speed) ≥ 0); `start` the first
    speed of the Newton steps, the middle of the bracket."""
    low = np.full(shape, float(minimum_speed))
    g_low, _ = balance(low, None)
    stalled = g_low >= 0
    high = np.full(shape, BRACKET_START_SPEED)
    g_high, _ = balance(high, None)
    short = np.flatnonzero((g_high < 0) & ~stalled)  # the root lies above: double the top
    for _ in range(60):
        if short.size == 0:
            break
        low[short] = high[short]
        high[short] *= 2.0
        g_short, _ = balance(high[short], short)
        short = short[g_short < 0]
    return low, high, stalled, 0.5 * (low + high)


def _newton_in_bracket(balance: ForceBalance, low: np.ndarray, high: np.ndarray,
                       stalled: np.ndarray, start: np.ndarray, tolerance: float,
                       max_iterations: int) -> np.ndarray:
    """Root of the increasing g in [low, high] from `start`: Newton steps kept inside the
    shrinking bracket, bisection otherwise; a speed is kept once it moves by at most
    `tolerance`·v (later steps would move it by less than rounding), the others go on."""
    speed, low, high = start.copy(), low.copy(), high.copy()
    active = np.flatnonzero(~stalled)
    for _ in range(max_iterations):
        if active.size == 0:
            break
        now, below, above = speed[active], low[active], high[active]
        value, slope = balance(now, active if active.size < speed.size else None)
        below = np.where(value < 0, now, below)
        above = np.where(value > 0, now, above)
        newton = now - value / slope
        # Non-strict bounds: once converged, a Newton step smaller than one ulp lands exactly on
        # the bracket end it came from and must not be mistaken for a step outside the bracket.
        inside = (newton >= below) & (newton <= above)
        new_speed = np.where(inside, newton, 0.5 * (below + above))
        converged = np.abs(new_speed - now) <= tolerance * new_speed
        speed[active], low[active], high[active] = new_speed, below, above
        active = active[~converged]
    return speed


def _compiled() -> SimpleNamespace:
    """The steady-speed kernels (pacing.physics.cycling_kernels) compiled by numba (built once
    per process)."""
    return kernels.compiled(vars(cycling_kernels), cycling_kernels.KERNELS,
                            parallel=("steady_speeds",), inline=("steady_balance",))


def _compiled_speeds(terms: SteadyTerms, rider: Rider, minimum_speed: float,
                     tolerance: float, max_iterations: int, wait: bool = True
                     ) -> np.ndarray | None:
    """Speeds [m/s] by the compiled kernel, piece by piece on every core (no yaw table); None
    without `wait` when another parallel kernel runs (kernels.PARALLEL_LOCK is taken)."""
    if not kernels.PARALLEL_LOCK.acquire(blocking=wait):
        return None
    try:
        speed = np.empty(terms.drive.size)
        _compiled().steady_speeds(terms.drive, terms.constant, terms.plain_k, terms.head,
                                  terms.cross, float(rider.bearing_force_per_speed),
                                  float(minimum_speed), BRACKET_START_SPEED,
                                  float(tolerance), int(max_iterations), speed)
    finally:
        kernels.PARALLEL_LOCK.release()
    return speed


def steady_speed(power: ArrayLike, grade: ArrayLike, air_density: ArrayLike, rider: Rider,
                 headwind: ArrayLike = 0.0, crosswind: ArrayLike = 0.0,
                 minimum_speed: float = 0.05, tolerance: float = 1e-12,
                 max_iterations: int = 100) -> np.ndarray:
    """Steady ground speed at a crank power, on every point at once [m/s]: what
    pacing.physics.cycling.speed_for_power documents (parameters, units, examples)."""
    power, grade, rho, head, cross, _, _ = np.broadcast_arrays(
        np.maximum(np.asarray(power, dtype=float), 0.0),
        np.asarray(grade, dtype=float),
        np.asarray(air_density, dtype=float),
        np.asarray(headwind, dtype=float),
        np.asarray(crosswind, dtype=float),
        np.asarray(rider.drag_area, dtype=float),  # per-piece rider values set the shape too
        np.asarray(rider.rolling_coefficient, dtype=float),
    )
    terms = steady_terms(power, grade, rho, head, cross, rider)
    if rider.yaw_drag_table is None and kernels.use_compiled(power.size):
        # another thread's parallel kernel (a Monte Carlo ride of 3 s) is not waited for: the
        # vectorised steps below give the same speeds
        found = _compiled_speeds(terms, rider, minimum_speed, tolerance, max_iterations,
                                 wait=False)
        if found is not None:
            return found.reshape(power.shape)
    balance = _steady_force_balance(terms, rider)
    low, high, stalled, start = _bracket_speed(balance, (power.size,), minimum_speed)
    speed = _newton_in_bracket(balance, low, high, stalled, start, tolerance, max_iterations)
    return np.where(stalled, float(minimum_speed), speed).reshape(power.shape)


def warm_up_kernels() -> None:
    """Load (or compile) this module's kernels on two pieces (pacing.kernels.warm_up)."""
    terms = steady_terms(np.full(2, 200.0), np.array([0.0, 0.05]), np.full(2, 1.2),
                         np.zeros(2), np.zeros(2), Rider())
    _compiled_speeds(terms, Rider(), 0.05, 1e-12, 100)
