"""Speed, time and energy along a course for a power plan: steady state and with inertia.

The rider's power balance (pacing.physics.cycling, Martin et al. 1998) with the kinetic-energy
term::

    m_eff·v·dv/dx = F_drive(v) − F_resist(v),   m_eff = m + I/r²,   F_drive = min(η·P/v, F_max)

is integrated along the road distance x of each piece (grade, air and power are constant on a
piece). The state is the speed; each step of length h solves the energy form of the balance
implicitly (a trapezoidal rule on the forces, second order)::

    ½·m_eff·(v1² − v0²) = W_drive − h·(F_resist(v0) + F_resist(v1))/2 − W_brake
    W_drive = min(η·P·Δt, F_max·h),   Δt = 2h/(v0 + v1)

Δt is exact for a uniform acceleration and finite from rest, so a standing start has no
singularity: F_max caps the drive force at low speed (traction of the rear wheel: about 60 % of
the weight on it times a tyre-road friction of 1.0, VTI rapport 952, see docs/references.md,
"Cornering"; the 60 % rear share is common practice). Steps are halved until the speed changes
by at most ~2 % (and 0.02 m/s) per step, so the start and sharp changes of grade are resolved; a
steady piece takes one step. Because the energy terms are evaluated with the same rule that moves
the rider, the energy balance closes to the solver's tolerance on every piece. Against scipy's
solve_ivp (DOP853, rtol 1e-10) on the same model the finish time agrees to about 1e-5 on a hilly
course of 10 m pieces, and the closed-form coasting solution to 2e-5 (tests/test_plan_simulate.py).

Speed caps (cornering √(a_lat·R), an optional maximum descent speed) are applied at the points
with look-ahead: a backward pass on v² with the braking deceleration lowers each point's limit
so the rider can slow down in time. When a piece would end above its limit the rider first
eases off the pedals (down to coasting) and then brakes; the brakes' work is accounted. Above an
optional coasting speed the rider stops pedalling (no brakes). Where the planned power cannot
hold the walking speed (SimulationOptions.minimum_speed) and the bike would stall or fall below
it, also from a standing start, the rider walks the bike at the walking speed; the work to push
it is the rider's walking work (not crank work: it does not go through the pedals, so the
drivetrain's efficiency does not divide it and the piece's crank power counts only the
pedalled steps), so no power, however small, leaves the rider standing still.

Distances in a Course are horizontal; the road along a piece is longer by √(1 + G²), and
speeds here are along the road (what a wheel sensor reads).

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Federal Highway Administration, report FHWA-HRT-04-103 (riders' accepted lateral acceleration
in curves; values in docs/references.md, "Cornering").
VTI (Swedish National Road and Transport Research Institute), rapport 952 (peak tyre-asphalt
friction ≈ 1.0; docs/references.md, "Cornering").

The options and result types, the speed limits, the steady prediction and the per-segment
summaries live in pacing.plan.prediction.

The per-piece loop is written once as kernels (pacing.plan.simulate_kernels: plain functions
of floats, tuples and arrays): plain Python for small jobs, compiled by numba for large ones
(pacing.kernels decides and compiles; numba is imported only then). Both give the same numbers
bit for bit: the compiled hypot is CPython's own algorithm (pacing.kernels.cpython_hypot).
`finish_times` rides many variants of one ride together (Monte Carlo draws of mass, CdA, Crr
and wind strength), the draws spread over every core when compiled.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np
from numpy.typing import ArrayLike

from pacing import kernels
from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import Course, synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan import simulate_kernels
from pacing.plan.prediction import (
    REAR_WHEEL_LOAD_SHARE,
    TYRE_ROAD_FRICTION,
    Prediction,
    SimulationOptions,
    per_piece_rider,
    piece_inputs,
    speed_limits,
)
from pacing.plan.simulate_kernels import RiderTuple, draw_ride, ride_pieces
from pacing.weather.conditions import CourseAir


@dataclass(frozen=True, eq=False)
class _Pieces:
    """The course as the step solver sees it, one value per piece: road length [m], air
    density [kg/m³], headwind and crosswind [m/s], speed-independent resistance [N], drag
    area [m²], crank power [W]; and the speed limit at every point [m/s]."""

    road: np.ndarray
    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray
    constant: np.ndarray
    drag_area: np.ndarray
    power: np.ndarray
    limit: np.ndarray


@dataclass(frozen=True, eq=False)
class _Trace:
    """What the ride along the pieces gives: speed and time at the points [m/s], [s]; rider
    work at the cranks, aero, bearing, braking and walking work per piece [J]; walked
    pieces."""

    speed: np.ndarray
    time: np.ndarray
    applied_work: np.ndarray
    aero: np.ndarray
    bearing: np.ndarray
    braking: np.ndarray
    walked: np.ndarray
    walking_work: np.ndarray


def _compiled() -> SimpleNamespace:
    """The simulation's kernels (pacing.plan.simulate_kernels) compiled by numba (built once
    per process)."""
    return kernels.compiled(vars(simulate_kernels), simulate_kernels.KERNELS,
                            parallel=("ride_draws",),
                            inline=("yaw_factor", "aero_force", "step_drive_work",
                                    "step_speed", "ride_piece", "held_at", "capped_ride"))


def _yaw_table(rider: Rider) -> tuple[np.ndarray, np.ndarray]:
    """The rider's yaw table as sorted (yaw [deg], multiplier [-]) arrays; empty for none."""
    if rider.yaw_drag_table is None:
        return np.empty(0), np.empty(0)
    angles, factors = np.asarray(sorted(rider.yaw_drag_table), dtype=float).T
    return np.ascontiguousarray(angles), np.ascontiguousarray(factors)


def _rider_tuple(rider: Rider, m_eff: float, drive_cap: float,
                 walking_speed: float) -> RiderTuple:
    """The rider as the kernels see it (pacing.plan.simulate_kernels)."""
    return (float(rider.bearing_force_constant), float(rider.bearing_force_per_speed),
            1.0 - float(rider.drafting_reduction), float(rider.wheel_drag_area), float(m_eff),
            float(drive_cap), float(walking_speed))


def _ride_pieces_compiled(pieces: _Pieces, rider: RiderTuple,
                          table: tuple[np.ndarray, np.ndarray], efficiency: float,
                          start: float, coasting: float) -> _Trace:
    """ride_pieces compiled, over contiguous float arrays."""
    count = pieces.road.size
    arrays = [np.require(value, float, ("C", "W")) for value in (
        pieces.road, pieces.density, pieces.headwind, pieces.crosswind, pieces.constant,
        pieces.drag_area, pieces.power, pieces.limit)]
    speed, time = np.empty(count + 1), np.empty(count + 1)
    work = np.empty((5, count))
    walked = np.empty(count, dtype=bool)
    _compiled().ride_pieces(*arrays, rider, *table, efficiency, start, coasting, speed, time,
                            work[0], work[1], work[2], work[3], walked, work[4])
    return _Trace(speed, time, work[0], work[1], work[2], work[3], walked, work[4])


def _ride_pieces_python(pieces: _Pieces, rider: RiderTuple,
                        table: tuple[np.ndarray, np.ndarray], efficiency: float,
                        start: float, coasting: float) -> _Trace:
    """ride_pieces as plain Python, over lists (indexing them is faster than numpy's)."""
    count = pieces.road.size
    road, density, headwind, crosswind, constant, area, power, limit = (
        np.asarray(value, dtype=float).tolist() for value in (
            pieces.road, pieces.density, pieces.headwind, pieces.crosswind, pieces.constant,
            pieces.drag_area, pieces.power, pieces.limit))
    speed, time = [0.0] * (count + 1), [0.0] * (count + 1)
    work = [[0.0] * count for _ in range(5)]
    walked = [False] * count
    ride_pieces(road, density, headwind, crosswind, constant, area, power, limit, rider,
                table[0].tolist(), table[1].tolist(), efficiency, start, coasting, speed, time,
                work[0], work[1], work[2], work[3], walked, work[4])
    return _Trace(np.array(speed), np.array(time), np.array(work[0]), np.array(work[1]),
                  np.array(work[2]), np.array(work[3]), np.array(walked, dtype=bool),
                  np.array(work[4]))


def _drive_force_cap(rider: Rider, options: SimulationOptions) -> float:
    """The options' drive force cap, or rear-wheel traction μ·share·m·g [N]."""
    if options.max_drive_force is not None:
        return options.max_drive_force
    return REAR_WHEEL_LOAD_SHARE * TYRE_ROAD_FRICTION * rider.mass * STANDARD_GRAVITY


def _coasting(options: SimulationOptions) -> float:
    """The coasting speed, infinite for none [m/s]."""
    return math.inf if options.coasting_speed is None else float(options.coasting_speed)


def simulate(course: Course, power: ArrayLike, rider: Rider, air: CourseAir,
             options: SimulationOptions | None = None) -> Prediction:
    """Ride a power plan along a course with inertia, speed caps and braking.

    Integrates m_eff·v·dv/dx = min(η·P/v, F_max) − F_resist(v) along the road, piece by piece,
    with the trapezoidal energy step and the look-ahead speed limits of the module docstring.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    power : array_like
        Planned crank power per piece, length N-1, or one number [W].
    rider : pacing.physics.cycling.Rider
        The rider and bike; its drag_area [m²] and rolling_coefficient [-] may be one value
        per piece (length N-1), e.g. a riding position chosen segment by segment [-].
    air : pacing.weather.conditions.CourseAir
        Air on every piece: .density [kg/m³], .headwind (positive against the direction of
        travel) [m/s], .crosswind [m/s]; arrays of length N-1 (any object with those arrays
        will do) [-].
    options : SimulationOptions or None
        Start speed, cornering, braking, coasting and walking choices; None for the
        defaults [-].

    Returns
    -------
    Prediction
        Time, speed, applied power and the energy terms along the course [-].

    Raises
    ------
    InputError
        When the power or the air is not one finite value (power ≥ 0, density > 0) per piece,
        or a per-piece drag area or Crr has the wrong length.

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998).
    Validation of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    Federal Highway Administration, report FHWA-HRT-04-103 (accepted lateral acceleration in
    curves; the default of SimulationOptions.lateral_acceleration).
    """
    options = options or SimulationOptions()
    power, density, headwind, crosswind = piece_inputs(course, power, air)
    grade = np.asarray(course.grade, dtype=float)
    # in place where an array is fresh: every new array of 20,000 floats costs page faults
    root = np.sqrt(1.0 + grade**2)
    road = np.diff(np.asarray(course.distance, dtype=float))
    road *= root
    drag_area, _ = per_piece_rider(rider, len(road))
    m_eff = rider.effective_mass
    eta = rider.drivetrain_efficiency
    # rolling_force and gravity_force (pacing.physics.cycling), the same operations
    rolling_per_piece = np.broadcast_to(
        rider.rolling_coefficient * rider.mass * STANDARD_GRAVITY / root, grade.shape)
    gravity_per_piece = rider.mass * STANDARD_GRAVITY * grade
    gravity_per_piece /= root
    constant = rolling_per_piece + gravity_per_piece
    constant += rider.bearing_force_constant
    pieces = _Pieces(
        road=road, density=density, headwind=headwind, crosswind=crosswind,
        constant=constant, drag_area=drag_area, power=power,
        limit=np.maximum(speed_limits(course, road, options), 0.1))
    ride = _ride_pieces_compiled if kernels.use_compiled(road.size) else _ride_pieces_python
    trace = ride(pieces, _rider_tuple(rider, m_eff, _drive_force_cap(rider, options),
                                      options.minimum_speed),
                 _yaw_table(rider), float(eta), float(options.start_speed), _coasting(options))
    del pieces, constant
    piece_time = np.diff(trace.time)
    mean_speed = road / piece_time
    # air_speed_components (pacing.physics.cycling), the same operations
    along = mean_speed + headwind
    apparent = np.hypot(along, crosswind)
    yaw = np.arctan2(crosswind, along, out=along)
    np.degrees(yaw, out=yaw)
    walking = trace.walked
    walking |= mean_speed < options.minimum_speed
    del mean_speed
    drivetrain_loss = trace.applied_work * (1.0 - eta)
    applied_power = np.divide(trace.applied_work, piece_time, out=piece_time)
    kinetic = np.diff(trace.speed**2)
    kinetic *= 0.5 * m_eff
    rolling = rolling_per_piece * road
    gravity_per_piece *= road
    return Prediction(
        distance=np.asarray(course.distance, dtype=float).copy(),
        time=trace.time,
        speed=trace.speed,
        power=applied_power,
        air_speed=apparent,
        yaw=yaw,
        headwind=headwind.copy(),
        aero=trace.aero,
        rolling=rolling,
        bearing=trace.bearing,
        drivetrain_loss=drivetrain_loss,
        potential=gravity_per_piece,
        kinetic=kinetic,
        braking=trace.braking,
        walking=walking,
        walking_work=trace.walking_work,
    )


DRAW_COLUMNS = ("mass", "drag_area", "rolling_coefficient", "wind")
"""The columns of the draws of `finish_times`: total mass [kg], change of CdA [m²], change
of Crr [-] and wind speed at the rider's height [m/s]."""


def finish_times(course: Course, power: ArrayLike, rider: Rider, air: CourseAir,
                 draws: ArrayLike, options: SimulationOptions | None = None,
                 floors: tuple[float, float] = (0.0, 0.0)) -> np.ndarray:
    """Finish times of many variants of one ride, evaluated together (Monte Carlo draws).

    Each draw rides the course as `simulate` would with the rider's mass replaced, the
    rider's CdA and Crr (one value or one per piece) changed by the draw's amounts and kept at
    or above `floors`, and the wind on every piece the draw's wind speed times the
    components of `air` (a unit wind: wind speed and direction enter the headwind and
    crosswind only as their product). Same numbers as `simulate` per draw; the compiled kernel
    (pacing.kernels) rides the draws on every core.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    power : array_like
        Planned crank power per piece, length N-1, or one number [W].
    rider : pacing.physics.cycling.Rider
        The rider and bike the draws change [-].
    air : pacing.weather.conditions.CourseAir
        Air density [kg/m³] and the headwind and crosswind of a wind of 1 m/s at the rider
        (from the day's direction) [-] on every piece [-].
    draws : array_like
        One row per draw, the columns of DRAW_COLUMNS: mass [kg], CdA change [m²], Crr change
        [-], wind speed at the rider [m/s] [-].
    options : SimulationOptions or None
        Start speed, cornering, braking, coasting and walking choices; None for the
        defaults [-].
    floors : tuple of float
        Least CdA [m²] and least Crr [-] of a draw [-].

    Returns
    -------
    numpy.ndarray
        Finish time of each draw [s].

    Raises
    ------
    InputError
        As `simulate`, and when the draws are not finite rows of four numbers with a positive
        mass, or a floor is not positive (CdA) or negative (Crr).

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998).
    Validation of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    """
    options = options or SimulationOptions()
    arrays, fixed, angles, factors, rows = _draw_inputs(course, power, rider, air, draws,
                                                        options, floors)
    finish = np.empty(rows.shape[0])
    if kernels.use_compiled(arrays[0].size * rows.shape[0]):
        with kernels.PARALLEL_LOCK:  # one parallel kernel at a time
            _compiled().ride_draws(*arrays, fixed, angles, factors, rows, finish)
        return finish
    road, density, headwind, crosswind, grade, root, rolling, area, piece_power, limit = (
        value.tolist() for value in arrays)
    count = len(road)
    head, cross, constant, drag, work, aero, bearing, braking, walking = (
        [0.0] * count for _ in range(9))
    speed, time = [0.0] * (count + 1), [0.0] * (count + 1)
    walked = [False] * count
    fixed_list, angle_list, factor_list = fixed.tolist(), angles.tolist(), factors.tolist()
    for s, row in enumerate(rows.tolist()):  # plain Python: the draws' loop over lists
        finish[s] = draw_ride(road, density, headwind, crosswind, grade, root, rolling, area,
                              piece_power, limit, fixed_list, angle_list, factor_list, row,
                              head, cross, constant, drag, speed, time, work, aero, bearing,
                              braking, walked, walking)
    return finish


def _draw_inputs(course: Course, power: ArrayLike, rider: Rider, air: CourseAir,
                 draws: ArrayLike, options: SimulationOptions, floors: tuple[float, float]
                 ) -> tuple[list[np.ndarray], np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The arguments of `ride_draws` (checked): the piece arrays, `fixed`, the yaw table
    and one row per draw."""
    table = np.array(draws, dtype=float, ndmin=2)
    if table.ndim != 2 or table.shape[1] != len(DRAW_COLUMNS):
        raise InputError(f"draws must be rows of {len(DRAW_COLUMNS)} numbers "
                         f"({', '.join(DRAW_COLUMNS)}), got shape {np.shape(draws)}")
    if not (np.all(np.isfinite(table)) and np.all(table[:, 0] > 0)):
        raise InputError("draws must be finite numbers with a positive mass")
    if not (floors[0] > 0 and floors[1] >= 0):
        raise InputError(f"floors must be a positive CdA and a Crr ≥ 0, got {floors!r}")
    power, density, headwind, crosswind = piece_inputs(course, power, air)
    grade = np.asarray(course.grade, dtype=float)
    root = np.sqrt(1.0 + grade**2)
    road = np.diff(np.asarray(course.distance, dtype=float)) * root
    drag_area, rolling = per_piece_rider(rider, len(road))
    masses = table[:, 0]
    cap = (np.full(masses.size, float(options.max_drive_force))
           if options.max_drive_force is not None
           else REAR_WHEEL_LOAD_SHARE * TYRE_ROAD_FRICTION * masses * STANDARD_GRAVITY)
    rows = np.column_stack([masses, masses + rider.wheel_inertia / rider.wheel_radius**2, cap,
                            table[:, 3], table[:, 1], table[:, 2]])
    fixed = np.array([rider.bearing_force_constant, rider.bearing_force_per_speed,
                      1.0 - rider.drafting_reduction, rider.wheel_drag_area,
                      options.minimum_speed, rider.drivetrain_efficiency, options.start_speed,
                      _coasting(options), STANDARD_GRAVITY, floors[0], floors[1]], dtype=float)
    limit = np.maximum(speed_limits(course, road, options), 0.1)
    arrays = [np.require(value, float, ("C", "W")) for value in (
        road, density, headwind, crosswind, grade, root, rolling, drag_area, power, limit)]
    angles, factors = _yaw_table(rider)
    return arrays, fixed, angles, factors, np.ascontiguousarray(rows)


def warm_up_kernels() -> None:
    """Load (or compile) this module's kernels on a two-piece ride (pacing.kernels.warm_up)."""
    course = synthetic_course(np.array([0.0, 10.0, 20.0]), np.zeros(3))
    air = CourseAir(np.full(2, 1.2), np.zeros(2), np.zeros(2))
    _ride_pieces_compiled(
        _Pieces(road=np.full(2, 10.0), density=air.density, headwind=air.headwind,
                crosswind=air.crosswind, constant=np.full(2, 3.0), drag_area=np.full(2, 0.3),
                power=np.full(2, 200.0), limit=np.full(3, 30.0)),
        _rider_tuple(Rider(), 81.0, 470.0, 1.0), _yaw_table(Rider()), 0.976, 5.0, math.inf)
    arrays, fixed, angles, factors, rows = _draw_inputs(
        course, 200.0, Rider(), air, [[80.0, 0.0, 0.0, 1.0]], SimulationOptions(), (0.01, 0.0))
    with kernels.PARALLEL_LOCK:
        _compiled().ride_draws(*arrays, fixed, angles, factors, rows, np.empty(1))
