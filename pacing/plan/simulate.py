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

The per-piece loop is written once as kernels (plain functions of floats, tuples and arrays):
plain Python for small jobs, compiled by numba for large ones (pacing.kernels decides and
compiles; numba is imported only then). Both give the same numbers bit for bit: the compiled
hypot is CPython's own algorithm (pacing.kernels.cpython_hypot). `finish_times` rides many
variants of one ride together (Monte Carlo draws of mass, CdA, Crr and wind strength), the
draws spread over every core when compiled.
"""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass
from math import hypot
from types import SimpleNamespace
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from pacing import kernels
from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import Course, synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import (
    Rider,
    air_speed_components,
    gravity_force,
    rolling_force,
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

prange = range
"""The sample loop of `_finish_times`: plain `range` here, numba.prange in the compiled family
(pacing.kernels.compiled)."""

# ------------------------------------------------------------------ kernels
# Plain functions of floats, tuples and arrays (pacing.kernels): run as Python for small jobs
# and compiled by numba for large ones. A piece is the tuple
#     (road length [m], density [kg/m³], headwind [m/s], crosswind [m/s],
#      speed-independent resistance [N], drag area [m²], k = ½ρ(CdA·(1 − d) + F_w) [kg/m]),
# the rider the tuple
#     (bearing a [N], bearing b [N·s/m], own share of the drag area 1 − d [-], wheel drag area
#      [m²], effective mass [kg], drive force cap [N], walking speed [m/s]),
# and the yaw table two sequences (yaw [deg], multiplier [-]) sorted by yaw, empty for none.

KERNELS = ("_yaw_factor", "_aero", "_step", "_drive_work", "_holds_walking_pace", "_ride",
           "_held_at", "_capped_ride", "_ride_pieces", "_draw_ride", "_finish_times")
"""The kernel functions of this module, compiled together (pacing.kernels.compiled)."""

_PieceRide = tuple[float, float, float, float, float, bool, float]
"""(end speed [m/s], time [s], drive work [J], aero work [J], bearing work [J], walked,
walking work [J])."""

_PieceTuple = tuple[float, float, float, float, float, float, float]
_RiderTuple = tuple[float, float, float, float, float, float, float]
_Floats = Any
"""A sequence of floats: a numpy array (compiled) or a list or tuple (plain Python)."""


def _yaw_factor(yaw: float, angles: _Floats, factors: _Floats) -> float:
    """CdA multiplier at |yaw| [-], interpolated in the table as numpy.interp does
    (pacing.physics.cycling.yaw_multiplier): held at the ends, exact at the table's angles."""
    size = abs(yaw)
    last = len(angles) - 1
    if size < angles[0]:
        return factors[0]
    if size >= angles[last]:
        return factors[last]
    j = 0
    while angles[j + 1] <= size:
        j += 1
    if size == angles[j]:
        return factors[j]
    slope = (factors[j + 1] - factors[j]) / (angles[j + 1] - angles[j])
    return slope * (size - angles[j]) + factors[j]


def _aero(v: float, piece: _PieceTuple, rider: _RiderTuple, angles: _Floats,
          factors: _Floats) -> tuple[float, float]:
    """Aerodynamic force [N] and its slope dF/dv [N·s/m] at ground speed v on a piece."""
    head, cross, k = piece[2], piece[3], piece[6]
    along = v + head
    apparent = hypot(along, cross)
    if len(angles) > 0:
        yaw = math.degrees(math.atan2(cross, along))
        k = 0.5 * piece[1] * (piece[5] * _yaw_factor(yaw, angles, factors) * rider[2]
                              + rider[3])
    slope = k * (apparent + along * along / apparent) if apparent > 0 else 0.0
    return k * apparent * along, slope


def _step(piece: _PieceTuple, rider: _RiderTuple, angles: _Floats, factors: _Floats,
          v0: float, resist0: float, h: float, drive: float, aero0: float,
          aero_slope0: float) -> tuple[float, float]:
    """Speed after a step of length h, and the drive work [J]; v1 < 0 when the bike stalls.

    Solves R(v1) = ½m(v1² − v0²) − W(v1) + h·(F0 + F(v1))/2 = 0, with W(v1) =
    min(drive·2h/(v0+v1), drive_cap·h) (0 without drive, also from rest): R is strictly
    increasing in v1, so Newton steps kept in a bracket [0, high] converge to the unique root.
    The bike stalls when R(0) ≥ 0. The first Newton step starts from v0 when moving and takes
    the aerodynamic force and slope there from the caller (`aero0` [N], `aero_slope0`
    [N·s/m], what `_aero` gives at v0), not computing them again.
    """
    b, m_eff, drive_cap = rider[1], rider[4], rider[5]
    head, cross, k = piece[2], piece[3], piece[6]
    half_h = 0.5 * h
    base = half_h * (resist0 + piece[4]) - 0.5 * m_eff * v0 * v0
    cap_work = drive_cap * h
    drive_work = drive * 2.0 * h
    plain = len(angles) == 0
    low, high = 0.0, math.inf
    low_checked = False
    v1 = v0 if v0 > 0 else math.sqrt(2.0 * max(drive_cap, 1.0) * h / m_eff)
    known = v0 > 0  # the force at v1 = v0 is the caller's
    for _ in range(100):
        if known:
            aero1, aero_slope = aero0, aero_slope0
            known = False
        elif plain:
            along = v1 + head
            apparent = hypot(along, cross)
            aero1 = k * apparent * along
            aero_slope = k * (apparent + along * along / apparent) if apparent > 0 else 0.0
        else:
            aero1, aero_slope = _aero(v1, piece, rider, angles, factors)
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


def _holds_walking_pace(piece: _PieceTuple, rider: _RiderTuple, angles: _Floats,
                        factors: _Floats, drive: float) -> bool:
    """Whether wheel power `drive` [W] can keep the bike at the walking speed on this piece:
    min(drive/v_w, F_max) ≥ F_resist(v_w)."""
    walk = rider[6]
    aero, _ = _aero(walk, piece, rider, angles, factors)
    return min(drive / walk, rider[5]) >= aero + piece[4] + rider[1] * walk


def _ride(piece: _PieceTuple, rider: _RiderTuple, angles: _Floats, factors: _Floats,
          v_start: float, drive: float) -> _PieceRide:
    """Ride one piece at wheel power `drive` [W] from v_start with adaptive steps.

    Returns (end speed [m/s], time [s], drive work [J], aero work [J], bearing work [J],
    walked, walking work [J]). A step is halved until the speed changes by at most ~2 % +
    0.02 m/s; the next one tries twice the length. The rider walks the bike at the walking
    speed where the bike stalls, or where it would drop below the walking speed on a piece
    whose power cannot hold the walking speed (so a standing start with no or tiny power walks
    off instead of creeping, and more power is never slower); the work to push it is walking
    work, not drive work: it does not go through the pedals.
    """
    length, constant = piece[0], piece[4]
    a, b, m_eff, walking_speed = rider[0], rider[1], rider[4], rider[6]
    holds, holds_known = False, False  # whether the power holds the walking pace, on need
    walked = False
    v_now = v_start
    aero_now, slope_now = _aero(v_now, piece, rider, angles, factors)
    done = 0.0
    h = length
    t_sum = work_sum = aero_sum = bearing_sum = walk_sum = 0.0
    while done < length * (1.0 - 1e-12):
        h = min(h, length - done)
        resist_now = aero_now + constant + b * v_now
        v_next, work = _step(piece, rider, angles, factors, v_now, resist_now, h, drive,
                             aero_now, slope_now)
        walk = v_next < 0
        if not walk and v_next < walking_speed:
            if not holds_known:
                holds = _holds_walking_pace(piece, rider, angles, factors, drive)
                holds_known = True
            walk = not holds
        if not walk or (v_now > walking_speed and v_next >= 0):  # resolve a fast change
            change = abs(v_next - v_now)
            allowed = _SPEED_CHANGE_RELATIVE * max(v_now, v_next) + _SPEED_CHANGE_ABSOLUTE
            if change > allowed and h > 1e-9 * length:
                h *= 0.25 if change > 4 * allowed else 0.5
                continue
        if walk:  # the rider walks the bike at the walking speed
            walked = True
            v_next = walking_speed
            aero_next, slope_next = _aero(v_next, piece, rider, angles, factors)
            resist_next = aero_next + constant + b * v_next
            work = 0.5 * m_eff * (v_next**2 - v_now**2) + 0.5 * h * (resist_now + resist_next)
        else:
            aero_next, slope_next = _aero(v_next, piece, rider, angles, factors)
        t_sum += 2.0 * h / (v_now + v_next)
        if walk:
            walk_sum += work
        else:
            work_sum += work
        aero_sum += 0.5 * h * (aero_now + aero_next)
        bearing_sum += h * (a + 0.5 * b * (v_now + v_next))
        done += h
        v_now, aero_now, slope_now = v_next, aero_next, slope_next
        h *= 2.0
    return v_now, t_sum, work_sum, aero_sum, bearing_sum, walked, walk_sum


def _held_at(piece: _PieceTuple, rider: _RiderTuple, angles: _Floats, factors: _Floats,
             v_start: float, v_end: float) -> _PieceRide:
    """One step over the piece ending exactly at v_end; the drive work it needs closes the
    energy balance (negative: the brakes must take that much). Same tuple as _ride (never
    walked, no walking work)."""
    length, a, b = piece[0], rider[0], rider[1]
    aero0, _ = _aero(v_start, piece, rider, angles, factors)
    aero1, _ = _aero(v_end, piece, rider, angles, factors)
    aero_work = 0.5 * length * (aero0 + aero1)
    bearing_work = length * (a + 0.5 * b * (v_start + v_end))
    need = (0.5 * rider[4] * (v_end**2 - v_start**2) + aero_work + bearing_work
            + length * (piece[4] - a))
    return v_end, 2.0 * length / (v_start + v_end), need, aero_work, bearing_work, False, 0.0


def _capped_ride(piece: _PieceTuple, rider: _RiderTuple, angles: _Floats, factors: _Floats,
                 v_start: float, drive: float, coasting: float,
                 limit_end: float) -> tuple[_PieceRide, float]:
    """Ride one piece at wheel power `drive` [W] under the coasting speed (infinite for none)
    and the end's speed limit [m/s]; (the ride, brake work [J]).

    Above the coasting speed the rider stops pedalling, easing off to end the piece at it when
    coasting alone would end slower. A ride that would end above the limit ends at it: easing
    off first, braking (the work the brakes take) when even coasting is too fast.
    """
    result = _ride(piece, rider, angles, factors, v_start, drive)
    brake = 0.0
    if drive > 0 and result[0] > coasting:
        coast = _ride(piece, rider, angles, factors, v_start, 0.0)
        result = coast
        if coast[0] < coasting:  # ease off to end the piece at the coasting speed
            eased = _held_at(piece, rider, angles, factors, v_start, coasting)
            result = eased if eased[2] >= 0 else coast
    if result[0] > limit_end:
        coast = result if result[2] == 0.0 else _ride(piece, rider, angles, factors,
                                                      v_start, 0.0)
        result = _held_at(piece, rider, angles, factors, v_start, limit_end)
        if coast[0] > limit_end or result[2] < 0:
            brake = max(-result[2], 0.0)
            result = (result[0], result[1], 0.0, result[3], result[4], result[5], result[6])
    return result, brake


def _ride_pieces(road: _Floats, density: _Floats, headwind: _Floats, crosswind: _Floats,
                 constant: _Floats, drag_area: _Floats, power: _Floats, limit: _Floats,
                 rider: _RiderTuple, angles: _Floats, factors: _Floats, efficiency: float,
                 start_speed: float, coasting: float, speed: _Floats, time: _Floats,
                 applied_work: _Floats, aero: _Floats, bearing: _Floats, braking: _Floats,
                 walked: _Floats, walking_work: _Floats) -> None:
    """Ride every piece in turn from the start speed (lowered to the first point's limit),
    filling the outputs: speed and time at the points [m/s], [s]; crank, aero, bearing,
    braking and walking work per piece [J]; walked pieces."""
    own_share, wheel = rider[2], rider[3]
    v = min(start_speed, limit[0])
    speed[0] = v
    time[0] = 0.0
    for i in range(len(road)):
        rho, area = density[i], drag_area[i]
        piece = (road[i], rho, headwind[i], crosswind[i], constant[i], area,
                 0.5 * rho * (area * own_share + wheel))
        result, brake = _capped_ride(piece, rider, angles, factors, v, efficiency * power[i],
                                     coasting, limit[i + 1])
        v = result[0]
        walked[i] = result[5]
        walking_work[i] = result[6]
        speed[i + 1] = v
        time[i + 1] = time[i] + result[1]
        applied_work[i] = result[2] / efficiency
        aero[i] = result[3]
        bearing[i] = result[4]
        braking[i] = brake


def _finish_times(road: _Floats, density: _Floats, unit_headwind: _Floats,
                  unit_crosswind: _Floats, grade: _Floats, root: _Floats,
                  rolling_coefficient: _Floats, drag_area: _Floats, power: _Floats,
                  limit: _Floats, fixed: _Floats, angles: _Floats, factors: _Floats,
                  draws: _Floats, finish: _Floats) -> None:
    """Finish time [s] of each draw into `finish`; a row of `draws` holds mass [kg],
    effective mass [kg], drive force cap [N], wind at the rider [m/s], CdA change [m²] and
    Crr change [-].

    Per draw and piece, as `simulate` has it: CdA and Crr with their change, kept at or above
    their floors; headwind and crosswind the wind at the rider times the components of a unit
    wind; rolling Crr·m·g/√(1 + G²) and gravity m·g·G/√(1 + G²) (`root` = √(1 + G²)). `fixed`
    holds (bearing a [N], bearing b [N·s/m], own share of the drag area [-], wheel drag area
    [m²], walking speed [m/s], drivetrain efficiency [-], start speed [m/s], coasting speed
    [m/s], standard gravity [m/s²], CdA floor [m²], Crr floor [-]).
    """
    count = len(road)
    for s in prange(len(draws)):
        head = np.empty(count)
        cross = np.empty(count)
        constant = np.empty(count)
        area = np.empty(count)
        speed = np.empty(count + 1)
        time = np.empty(count + 1)
        scratch = np.empty((5, count))
        walked = np.empty(count, dtype=np.bool_)
        finish[s] = _draw_ride(road, density, unit_headwind, unit_crosswind, grade, root,
                               rolling_coefficient, drag_area, power, limit, fixed, angles,
                               factors, draws[s], head, cross, constant, area, speed, time,
                               scratch[0], scratch[1], scratch[2], scratch[3], walked,
                               scratch[4])


def _draw_ride(road: _Floats, density: _Floats, unit_headwind: _Floats,
               unit_crosswind: _Floats, grade: _Floats, root: _Floats,
               rolling_coefficient: _Floats, drag_area: _Floats, power: _Floats,
               limit: _Floats, fixed: _Floats, angles: _Floats, factors: _Floats,
               row: _Floats, head: _Floats, cross: _Floats, constant: _Floats, area: _Floats,
               speed: _Floats, time: _Floats, applied_work: _Floats, aero: _Floats,
               bearing: _Floats, braking: _Floats, walked: _Floats,
               walking_work: _Floats) -> float:
    """Finish time [s] of one draw of `_finish_times` (`row`), its pieces written into
    `head`, `cross`, `constant` and `area` and its ride into the outputs of `_ride_pieces`."""
    a, b, own_share, wheel, walking = fixed[0], fixed[1], fixed[2], fixed[3], fixed[4]
    efficiency, start, coasting, gravity = fixed[5], fixed[6], fixed[7], fixed[8]
    area_floor, rolling_floor = fixed[9], fixed[10]
    mass, wind, d_area, d_rolling = row[0], row[3], row[4], row[5]
    rider = (a, b, own_share, wheel, row[1], row[2], walking)
    count = len(road)
    for i in range(count):
        head[i] = wind * unit_headwind[i]
        cross[i] = wind * unit_crosswind[i]
        rolling = max(rolling_coefficient[i] + d_rolling, rolling_floor)
        constant[i] = (rolling * mass * gravity / root[i]
                       + mass * gravity * grade[i] / root[i]) + a
        area[i] = max(drag_area[i] + d_area, area_floor)
    _ride_pieces(road, density, head, cross, constant, area, power, limit, rider, angles,
                 factors, efficiency, start, coasting, speed, time, applied_work, aero, bearing,
                 braking, walked, walking_work)
    return time[count]


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
    """This module's kernels compiled by numba (built once per process)."""
    return kernels.compiled(globals(), KERNELS, parallel=("_finish_times",),
                            inline=("_yaw_factor", "_aero", "_drive_work"))


def _yaw_table(rider: Rider) -> tuple[np.ndarray, np.ndarray]:
    """The rider's yaw table as sorted (yaw [deg], multiplier [-]) arrays; empty for none."""
    if rider.yaw_drag_table is None:
        return np.empty(0), np.empty(0)
    angles, factors = np.asarray(sorted(rider.yaw_drag_table), dtype=float).T
    return np.ascontiguousarray(angles), np.ascontiguousarray(factors)


def _rider_tuple(rider: Rider, m_eff: float, drive_cap: float,
                 walking_speed: float) -> _RiderTuple:
    """The rider as the kernels see it (module comment above `KERNELS`)."""
    return (float(rider.bearing_force_constant), float(rider.bearing_force_per_speed),
            1.0 - float(rider.drafting_reduction), float(rider.wheel_drag_area), float(m_eff),
            float(drive_cap), float(walking_speed))


def _ride_pieces_compiled(pieces: _Pieces, rider: _RiderTuple,
                          table: tuple[np.ndarray, np.ndarray], efficiency: float,
                          start: float, coasting: float) -> _Trace:
    """_ride_pieces compiled, over contiguous float arrays."""
    count = pieces.road.size
    arrays = [np.require(value, float, ("C", "W")) for value in (
        pieces.road, pieces.density, pieces.headwind, pieces.crosswind, pieces.constant,
        pieces.drag_area, pieces.power, pieces.limit)]
    speed, time = np.empty(count + 1), np.empty(count + 1)
    work = np.empty((5, count))
    walked = np.empty(count, dtype=bool)
    _compiled()._ride_pieces(*arrays, rider, *table, efficiency, start, coasting, speed, time,
                             work[0], work[1], work[2], work[3], walked, work[4])
    return _Trace(speed, time, work[0], work[1], work[2], work[3], walked, work[4])


def _ride_pieces_python(pieces: _Pieces, rider: _RiderTuple,
                        table: tuple[np.ndarray, np.ndarray], efficiency: float,
                        start: float, coasting: float) -> _Trace:
    """_ride_pieces as plain Python, over lists (indexing them is faster than numpy's)."""
    count = pieces.road.size
    road, density, headwind, crosswind, constant, area, power, limit = (
        np.asarray(value, dtype=float).tolist() for value in (
            pieces.road, pieces.density, pieces.headwind, pieces.crosswind, pieces.constant,
            pieces.drag_area, pieces.power, pieces.limit))
    speed, time = [0.0] * (count + 1), [0.0] * (count + 1)
    work = [[0.0] * count for _ in range(5)]
    walked = [False] * count
    _ride_pieces(road, density, headwind, crosswind, constant, area, power, limit, rider,
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
    ride = _ride_pieces_compiled if kernels.use_compiled(road.size) else _ride_pieces_python
    trace = ride(pieces, _rider_tuple(rider, m_eff, _drive_force_cap(rider, options),
                                      options.minimum_speed),
                 _yaw_table(rider), float(eta), float(options.start_speed), _coasting(options))
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


_PARALLEL_LOCK = threading.Lock()
"""One parallel ride of draws at a time per process (the app serves sessions on threads)."""

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
        with _PARALLEL_LOCK:  # numba's workqueue threads must not be entered twice at once
            _compiled()._finish_times(*arrays, fixed, angles, factors, rows, finish)
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
        finish[s] = _draw_ride(road, density, headwind, crosswind, grade, root, rolling, area,
                               piece_power, limit, fixed_list, angle_list, factor_list, row,
                               head, cross, constant, drag, speed, time, work, aero, bearing,
                               braking, walked, walking)
    return finish


def _draw_inputs(course: Course, power: ArrayLike, rider: Rider, air: CourseAir,
                 draws: ArrayLike, options: SimulationOptions, floors: tuple[float, float]
                 ) -> tuple[list[np.ndarray], np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The arguments of `_finish_times` (checked): the piece arrays, `fixed`, the yaw table
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
    _compiled()._finish_times(*arrays, fixed, angles, factors, rows, np.empty(1))
