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
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import Course
from pacing.physics.cycling import (
    Rider,
    air_speed_components,
    gravity_force,
    rolling_force,
    yaw_multiplier,
)
from pacing.plan.prediction import (
    REAR_WHEEL_LOAD_SHARE,
    TYRE_ROAD_FRICTION,
    Prediction,
    SimulationOptions,
    per_piece_rider,
    piece_inputs,
    speed_limits,
)
from pacing.weather.conditions import CourseAir

_SPEED_CHANGE_RELATIVE = 0.02
_SPEED_CHANGE_ABSOLUTE = 0.02
_NEWTON_TOLERANCE = 1e-9

_PieceRide = tuple[float, float, float, float, float, bool, float]
"""(end speed [m/s], time [s], drive work [J], aero work [J], bearing work [J], walked,
walking work [J])."""


class _Piece:
    """One piece's constants for the scalar step solver (reused from piece to piece)."""

    __slots__ = ("head", "cross", "k", "constant", "b", "a", "rho", "rider", "plain", "length",
                 "m_eff", "drive_cap", "walking_speed", "drag_area", "own_share", "wheel")

    def __init__(self, rider: Rider, m_eff: float, drive_cap: float,
                 walking_speed: float) -> None:
        self.rider = rider
        self.plain = rider.yaw_drag_table is None
        self.a = rider.bearing_force_constant
        self.b = rider.bearing_force_per_speed
        self.own_share = 1.0 - rider.drafting_reduction
        self.wheel = rider.wheel_drag_area
        self.m_eff = m_eff
        self.drive_cap = drive_cap
        self.walking_speed = walking_speed
        self.set(0.0, 1.2, 0.0, 0.0, 0.0, 0.0)

    def set(self, length: float, density: float, headwind: float, crosswind: float,
            constant: float, drag_area: float) -> None:
        """Move to a piece: road length [m], air, the speed-independent forces [N] and the
        rider's drag area on this piece [m²]."""
        self.length = length
        self.rho = density
        self.head = headwind
        self.cross = crosswind
        self.drag_area = drag_area
        self.k = 0.5 * density * (drag_area * self.own_share + self.wheel)
        self.constant = constant

    def aero(self, v: float) -> tuple[float, float]:
        """Aerodynamic force [N] and its slope dF/dv [N·s/m] at ground speed v."""
        along = v + self.head
        apparent = math.hypot(along, self.cross)
        k = self.k
        if not self.plain:
            yaw = math.degrees(math.atan2(self.cross, along))
            k = 0.5 * self.rho * (self.drag_area * float(yaw_multiplier(
                yaw, self.rider.yaw_drag_table)) * self.own_share + self.wheel)
        slope = k * (apparent + along * along / apparent) if apparent > 0 else 0.0
        return k * apparent * along, slope


def _step(piece: _Piece, v0: float, resist0: float, h: float, drive: float, drive_cap: float,
          m_eff: float) -> tuple[float, float]:
    """Speed after a step of length h, and the drive work [J]; v1 < 0 when the bike stalls.

    Solves R(v1) = ½m(v1² − v0²) − W(v1) + h·(F0 + F(v1))/2 = 0, with W(v1) =
    min(drive·2h/(v0+v1), drive_cap·h) (0 without drive, also from rest): R is strictly
    increasing in v1, so Newton steps kept in a bracket [0, high] converge to the unique root.
    The bike stalls when R(0) ≥ 0.
    """
    half_h = 0.5 * h
    base = half_h * (resist0 + piece.constant) - 0.5 * m_eff * v0 * v0
    b = piece.b
    cap_work = drive_cap * h
    drive_work = drive * 2.0 * h
    plain = piece.plain
    head, cross, k = piece.head, piece.cross, piece.k
    low, high = 0.0, math.inf
    low_checked = False
    v1 = v0 if v0 > 0 else math.sqrt(2.0 * max(drive_cap, 1.0) * h / m_eff)
    for _ in range(100):
        if plain:
            along = v1 + head
            apparent = math.hypot(along, cross)
            aero1 = k * apparent * along
            aero_slope = k * (apparent + along * along / apparent) if apparent > 0 else 0.0
        else:
            aero1, aero_slope = piece.aero(v1)
        total = v0 + v1
        if total > 0 and drive_work < cap_work * total:
            work = drive_work / total
            work_slope = -work / total
        else:  # from rest: the traction cap, or nothing when there is no drive at all
            work = cap_work if drive_work > 0 else 0.0
            work_slope = 0.0
        value = 0.5 * m_eff * v1 * v1 - work + base + half_h * (aero1 + b * v1)
        slope = m_eff * v1 - work_slope + half_h * (aero_slope + b)
        if value > 0:
            high = v1
        else:
            low = v1
        newton = v1 - value / slope if slope > 0 else -1.0
        if newton <= low or newton >= high:
            if newton <= 0 and not low_checked:
                low_checked = True
                if low == 0.0 and v1 != 0.0:
                    v1 = 0.0  # is there a root above zero at all?
                    continue
            if low == 0.0 and v1 == 0.0 and value >= 0:
                return -1.0, 0.0
            newton = 0.5 * (low + high) if high < math.inf else 2.0 * v1 + 1.0
        if abs(newton - v1) <= _NEWTON_TOLERANCE * newton:
            v1 = newton
            break
        v1 = newton
    return v1, _drive_work(drive_work, cap_work, v0 + v1)


def _drive_work(drive_work: float, cap_work: float, total: float) -> float:
    """Drive work of a step [J]: `drive_work`/(v0 + v1), i.e. η·P·Δt with Δt = 2h/(v0 + v1)
    (`drive_work` = η·P·2h), at most the traction cap's `cap_work` = F_max·h; from rest the
    cap, or nothing without drive. `total` = v0 + v1 [m/s]."""
    if total > 0 and drive_work < cap_work * total:
        return drive_work / total
    return cap_work if drive_work > 0 else 0.0


def _holds_walking_pace(piece: _Piece, drive: float) -> bool:
    """Whether wheel power `drive` [W] can keep the bike at the walking speed on this piece:
    min(drive/v_w, F_max) ≥ F_resist(v_w)."""
    walk = piece.walking_speed
    aero, _ = piece.aero(walk)
    return min(drive / walk, piece.drive_cap) >= aero + piece.constant + piece.b * walk


def _ride(piece: _Piece, v_start: float, drive: float) -> _PieceRide:
    """Ride one piece at wheel power `drive` [W] from v_start with adaptive steps.

    Returns (end speed [m/s], time [s], drive work [J], aero work [J], bearing work [J],
    walked, walking work [J]). A step is halved until the speed changes by at most ~2 % +
    0.02 m/s; the next one tries twice the length. The rider walks the bike at the walking
    speed where the bike stalls, or where it would drop below the walking speed on a piece
    whose power cannot hold the walking speed (so a standing start with no or tiny power walks
    off instead of creeping, and more power is never slower); the work to push it is walking
    work, not drive work: it does not go through the pedals.
    """
    length, constant, a, b = piece.length, piece.constant, piece.a, piece.b
    m_eff, drive_cap, walking_speed = piece.m_eff, piece.drive_cap, piece.walking_speed
    holds = _holds_walking_pace(piece, drive)
    walked = False
    v_now = v_start
    aero_now, _ = piece.aero(v_now)
    done = 0.0
    h = length
    t_sum = work_sum = aero_sum = bearing_sum = walk_sum = 0.0
    while done < length * (1.0 - 1e-12):
        h = min(h, length - done)
        resist_now = aero_now + constant + b * v_now
        v_next, work = _step(piece, v_now, resist_now, h, drive, drive_cap, m_eff)
        walk = v_next < 0 or (v_next < walking_speed and not holds)
        if not walk or (v_now > walking_speed and v_next >= 0):  # resolve a fast change
            change = abs(v_next - v_now)
            allowed = _SPEED_CHANGE_RELATIVE * max(v_now, v_next) + _SPEED_CHANGE_ABSOLUTE
            if change > allowed and h > 1e-9 * length:
                h *= 0.25 if change > 4 * allowed else 0.5
                continue
        if walk:  # the rider walks the bike at the walking speed
            walked = True
            v_next = walking_speed
            aero_next, _ = piece.aero(v_next)
            resist_next = aero_next + constant + b * v_next
            work = 0.5 * m_eff * (v_next**2 - v_now**2) + 0.5 * h * (resist_now + resist_next)
        else:
            aero_next, _ = piece.aero(v_next)
        t_sum += 2.0 * h / (v_now + v_next)
        if walk:
            walk_sum += work
        else:
            work_sum += work
        aero_sum += 0.5 * h * (aero_now + aero_next)
        bearing_sum += h * (a + 0.5 * b * (v_now + v_next))
        done += h
        v_now, aero_now = v_next, aero_next
        h *= 2.0
    return v_now, t_sum, work_sum, aero_sum, bearing_sum, walked, walk_sum


def _held_at(piece: _Piece, v_start: float, v_end: float) -> _PieceRide:
    """One step over the piece ending exactly at v_end; the drive work it needs closes the
    energy balance (negative: the brakes must take that much). Same tuple as _ride (never
    walked, no walking work)."""
    length, a, b = piece.length, piece.a, piece.b
    aero0, _ = piece.aero(v_start)
    aero1, _ = piece.aero(v_end)
    aero_work = 0.5 * length * (aero0 + aero1)
    bearing_work = length * (a + 0.5 * b * (v_start + v_end))
    need = (0.5 * piece.m_eff * (v_end**2 - v_start**2) + aero_work + bearing_work
            + length * (piece.constant - a))
    return v_end, 2.0 * length / (v_start + v_end), need, aero_work, bearing_work, False, 0.0


def _capped_ride(piece: _Piece, v_start: float, drive: float, coasting: float | None,
                 limit_end: float) -> tuple[_PieceRide, float]:
    """Ride one piece at wheel power `drive` [W] under the coasting speed and the end's speed
    limit [m/s]; (the ride, brake work [J]).

    Above the coasting speed the rider stops pedalling, easing off to end the piece at it when
    coasting alone would end slower. A ride that would end above the limit ends at it: easing
    off first, braking (the work the brakes take) when even coasting is too fast.
    """
    result = _ride(piece, v_start, drive)
    brake = 0.0
    if coasting is not None and drive > 0 and result[0] > coasting:
        coast = _ride(piece, v_start, 0.0)
        result = coast
        if coast[0] < coasting:  # ease off to end the piece at the coasting speed
            eased = _held_at(piece, v_start, coasting)
            result = eased if eased[2] >= 0 else coast
    if result[0] > limit_end:
        coast = result if result[2] == 0.0 else _ride(piece, v_start, 0.0)
        result = _held_at(piece, v_start, limit_end)
        if coast[0] > limit_end or result[2] < 0:
            brake = max(-result[2], 0.0)
            result = (result[0], result[1], 0.0, result[3], result[4], result[5], result[6])
    return result, brake


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


def _ride_pieces(piece: _Piece, pieces: _Pieces, efficiency: float,
                 options: SimulationOptions) -> _Trace:
    """Ride every piece in turn from the start speed (lowered to the first point's limit)."""
    count = pieces.road.size
    speed = np.empty(count + 1)
    time = np.zeros(count + 1)
    applied_work = np.zeros(count)
    aero_energy = np.zeros(count)
    bearing_energy = np.zeros(count)
    braking_energy = np.zeros(count)
    walked = np.zeros(count, dtype=bool)
    walking_work = np.zeros(count)
    v = min(float(options.start_speed), float(pieces.limit[0]))
    speed[0] = v
    coasting = options.coasting_speed
    # plain Python floats for the scalar loop (indexing lists is faster than numpy scalars)
    road_list, density_list = pieces.road.tolist(), pieces.density.tolist()
    head_list, cross_list = pieces.headwind.tolist(), pieces.crosswind.tolist()
    constant_list = pieces.constant.tolist()
    area_list, power_list = pieces.drag_area.tolist(), pieces.power.tolist()
    limit_list = pieces.limit.tolist()
    for i in range(count):
        piece.set(road_list[i], density_list[i], head_list[i], cross_list[i],
                  constant_list[i], area_list[i])
        result, brake = _capped_ride(piece, v, efficiency * power_list[i], coasting,
                                     limit_list[i + 1])
        v, t_piece, work, aero_work, bearing_work, walked_piece, walk_work = result
        walked[i] = walked_piece
        walking_work[i] = walk_work
        speed[i + 1] = v
        time[i + 1] = time[i] + t_piece
        applied_work[i] = work / efficiency
        aero_energy[i] = aero_work
        bearing_energy[i] = bearing_work
        braking_energy[i] = brake
    return _Trace(speed, time, applied_work, aero_energy, bearing_energy, braking_energy,
                  walked, walking_work)


def _drive_force_cap(rider: Rider, options: SimulationOptions) -> float:
    """The options' drive force cap, or rear-wheel traction μ·share·m·g [N]."""
    if options.max_drive_force is not None:
        return options.max_drive_force
    return REAR_WHEEL_LOAD_SHARE * TYRE_ROAD_FRICTION * rider.mass * STANDARD_GRAVITY


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
    horizontal = np.diff(np.asarray(course.distance, dtype=float))
    road = horizontal * np.sqrt(1.0 + grade**2)
    drag_area, _ = per_piece_rider(rider, len(road))
    m_eff = rider.effective_mass
    eta = rider.drivetrain_efficiency
    rolling_per_piece = np.broadcast_to(rolling_force(grade, rider), grade.shape).astype(float)
    gravity_per_piece = gravity_force(grade, rider)
    pieces = _Pieces(
        road=road, density=density, headwind=headwind, crosswind=crosswind,
        constant=(rolling_per_piece + gravity_per_piece) + rider.bearing_force_constant,
        drag_area=drag_area, power=power,
        limit=np.maximum(speed_limits(course, road, options), 0.1))
    piece = _Piece(rider, m_eff, _drive_force_cap(rider, options), options.minimum_speed)
    trace = _ride_pieces(piece, pieces, eta, options)
    piece_time = np.diff(trace.time)
    mean_speed = road / piece_time
    _, apparent, yaw = air_speed_components(mean_speed, headwind, crosswind)
    return Prediction(
        distance=np.asarray(course.distance, dtype=float).copy(),
        time=trace.time,
        speed=trace.speed,
        power=trace.applied_work / piece_time,
        air_speed=apparent,
        yaw=yaw,
        headwind=headwind.copy(),
        aero=trace.aero,
        rolling=rolling_per_piece * road,
        bearing=trace.bearing,
        drivetrain_loss=trace.applied_work * (1.0 - eta),
        potential=gravity_per_piece * road,
        kinetic=0.5 * m_eff * np.diff(trace.speed**2),
        braking=trace.braking,
        walking=trace.walked | (mean_speed < options.minimum_speed),
        walking_work=trace.walking_work,
    )
