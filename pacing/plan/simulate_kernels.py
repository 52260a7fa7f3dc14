"""The inertial simulation's kernels: one piece ridden step by step, a ride along the pieces,
many draws of a ride (pacing.plan.simulate holds the model, its equations and its callers).

Plain functions of floats, tuples and arrays (pacing.kernels): run as Python for small jobs
and compiled by numba for large ones, with the same numbers bit for bit (the same operations
in the same order; no call whose compiled version rounds differently). A piece is the tuple
    (road length [m], density [kg/m³], headwind [m/s], crosswind [m/s],
     speed-independent resistance [N], drag area [m²], k = ½ρ(CdA·(1 − d) + F_w) [kg/m]),
the rider the tuple
    (bearing a [N], bearing b [N·s/m], own share of the drag area 1 − d [-], wheel drag area
     [m²], effective mass [kg], drive force cap [N], walking speed [m/s]),
and the yaw table two sequences (yaw [deg], multiplier [-]) sorted by yaw, empty for none.

The apparent wind speed is math.hypot, compiled as CPython's own algorithm
(pacing.kernels.compiled): the adaptive steps' choices (halve a step or not) turn a last-bit
difference into differences of the integration error's size, so the two ways must agree bit
for bit.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

import math
from math import hypot
from typing import Any

import numpy as np

SPEED_CHANGE_RELATIVE = 0.02
"""Largest relative speed change of one step, with SPEED_CHANGE_ABSOLUTE [-]."""

SPEED_CHANGE_ABSOLUTE = 0.02
"""Largest speed change of one step beyond the relative part [m/s]."""

NEWTON_TOLERANCE = 1e-9
"""A step's Newton iteration stops after a step of at most this share of the speed [-]."""

prange = range
"""The sample loop of `ride_draws`: plain `range` here, numba.prange in the compiled family
(pacing.kernels.compiled)."""

KERNELS = ("yaw_factor", "aero_force", "step_speed", "step_drive_work", "holds_walking_pace",
           "ride_piece", "held_at", "capped_ride", "ride_pieces", "draw_ride", "ride_draws")
"""The kernel functions of this module, compiled together (pacing.kernels.compiled)."""

PieceRide = tuple[float, float, float, float, float, bool, float]
"""(end speed [m/s], time [s], drive work [J], aero work [J], bearing work [J], walked,
walking work [J])."""

PieceTuple = tuple[float, float, float, float, float, float, float]
RiderTuple = tuple[float, float, float, float, float, float, float]
Floats = Any
"""A sequence of floats: a numpy array (compiled) or a list or tuple (plain Python)."""


def yaw_factor(yaw: float, angles: Floats, factors: Floats) -> float:
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


def aero_force(v: float, piece: PieceTuple, rider: RiderTuple, angles: Floats,
               factors: Floats) -> tuple[float, float]:
    """Aerodynamic force [N] and its slope dF/dv [N·s/m] at ground speed v on a piece."""
    head, cross, k = piece[2], piece[3], piece[6]
    along = v + head
    apparent = hypot(along, cross)
    if len(angles) > 0:
        yaw = math.degrees(math.atan2(cross, along))
        k = 0.5 * piece[1] * (piece[5] * yaw_factor(yaw, angles, factors) * rider[2]
                              + rider[3])
    slope = k * (apparent + along * along / apparent) if apparent > 0 else 0.0
    return k * apparent * along, slope


def step_speed(piece: PieceTuple, rider: RiderTuple, angles: Floats, factors: Floats,
               v0: float, resist0: float, h: float, drive: float, aero0: float,
               aero_slope0: float) -> tuple[float, float]:
    """Speed after a step of length h, and the drive work [J]; v1 < 0 when the bike stalls.

    Solves R(v1) = ½m(v1² − v0²) − W(v1) + h·(F0 + F(v1))/2 = 0, with W(v1) =
    min(drive·2h/(v0+v1), drive_cap·h) (0 without drive, also from rest): R is strictly
    increasing in v1, so Newton steps kept in a bracket [0, high] converge to the unique root.
    The bike stalls when R(0) ≥ 0. The first Newton step starts from v0 when moving and takes
    the aerodynamic force and slope there from the caller (`aero0` [N], `aero_slope0`
    [N·s/m], what `aero_force` gives at v0), not computing them again.
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
            aero1, aero_slope = aero_force(v1, piece, rider, angles, factors)
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
        if abs(newton - v1) <= NEWTON_TOLERANCE * newton:
            v1 = newton
            break
        v1 = newton
    return v1, step_drive_work(drive_work, cap_work, v0 + v1)


def step_drive_work(drive_work: float, cap_work: float, total: float) -> float:
    """Drive work of a step [J]: `drive_work`/(v0 + v1), i.e. η·P·Δt with Δt = 2h/(v0 + v1)
    (`drive_work` = η·P·2h), at most the traction cap's `cap_work` = F_max·h; from rest the
    cap, or nothing without drive. `total` = v0 + v1 [m/s]."""
    if total > 0 and drive_work < cap_work * total:
        return drive_work / total
    return cap_work if drive_work > 0 else 0.0


def holds_walking_pace(piece: PieceTuple, rider: RiderTuple, angles: Floats,
                       factors: Floats, drive: float) -> bool:
    """Whether wheel power `drive` [W] can keep the bike at the walking speed on this piece:
    min(drive/v_w, F_max) ≥ F_resist(v_w)."""
    walk = rider[6]
    aero, _ = aero_force(walk, piece, rider, angles, factors)
    return min(drive / walk, rider[5]) >= aero + piece[4] + rider[1] * walk


def ride_piece(piece: PieceTuple, rider: RiderTuple, angles: Floats, factors: Floats,
               v_start: float, drive: float) -> PieceRide:
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
    aero_now, slope_now = aero_force(v_now, piece, rider, angles, factors)
    done = 0.0
    h = length
    t_sum = work_sum = aero_sum = bearing_sum = walk_sum = 0.0
    while done < length * (1.0 - 1e-12):
        h = min(h, length - done)
        resist_now = aero_now + constant + b * v_now
        v_next, work = step_speed(piece, rider, angles, factors, v_now, resist_now, h,
                                  drive, aero_now, slope_now)
        walk = v_next < 0
        if not walk and v_next < walking_speed:
            if not holds_known:
                holds = holds_walking_pace(piece, rider, angles, factors, drive)
                holds_known = True
            walk = not holds
        if not walk or (v_now > walking_speed and v_next >= 0):  # resolve a fast change
            change = abs(v_next - v_now)
            allowed = SPEED_CHANGE_RELATIVE * max(v_now, v_next) + SPEED_CHANGE_ABSOLUTE
            if change > allowed and h > 1e-9 * length:
                h *= 0.25 if change > 4 * allowed else 0.5
                continue
        if walk:  # the rider walks the bike at the walking speed
            walked = True
            v_next = walking_speed
            aero_next, slope_next = aero_force(v_next, piece, rider, angles, factors)
            resist_next = aero_next + constant + b * v_next
            work = 0.5 * m_eff * (v_next**2 - v_now**2) + 0.5 * h * (resist_now + resist_next)
        else:
            aero_next, slope_next = aero_force(v_next, piece, rider, angles, factors)
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


def held_at(piece: PieceTuple, rider: RiderTuple, angles: Floats, factors: Floats,
            v_start: float, v_end: float) -> PieceRide:
    """One step over the piece ending exactly at v_end; the drive work it needs closes the
    energy balance (negative: the brakes must take that much). Same tuple as ride_piece (never
    walked, no walking work)."""
    length, a, b = piece[0], rider[0], rider[1]
    aero0, _ = aero_force(v_start, piece, rider, angles, factors)
    aero1, _ = aero_force(v_end, piece, rider, angles, factors)
    aero_work = 0.5 * length * (aero0 + aero1)
    bearing_work = length * (a + 0.5 * b * (v_start + v_end))
    need = (0.5 * rider[4] * (v_end**2 - v_start**2) + aero_work + bearing_work
            + length * (piece[4] - a))
    return v_end, 2.0 * length / (v_start + v_end), need, aero_work, bearing_work, False, 0.0


def capped_ride(piece: PieceTuple, rider: RiderTuple, angles: Floats, factors: Floats,
                v_start: float, drive: float, coasting: float,
                limit_end: float) -> tuple[PieceRide, float]:
    """Ride one piece at wheel power `drive` [W] under the coasting speed (infinite for none)
    and the end's speed limit [m/s]; (the ride, brake work [J]).

    Above the coasting speed the rider stops pedalling, easing off to end the piece at it when
    coasting alone would end slower. A ride that would end above the limit ends at it: easing
    off first, braking (the work the brakes take) when even coasting is too fast.
    """
    result = ride_piece(piece, rider, angles, factors, v_start, drive)
    brake = 0.0
    if drive > 0 and result[0] > coasting:
        coast = ride_piece(piece, rider, angles, factors, v_start, 0.0)
        result = coast
        if coast[0] < coasting:  # ease off to end the piece at the coasting speed
            eased = held_at(piece, rider, angles, factors, v_start, coasting)
            result = eased if eased[2] >= 0 else coast
    if result[0] > limit_end:
        coast = result if result[2] == 0.0 else ride_piece(piece, rider, angles, factors,
                                                           v_start, 0.0)
        result = held_at(piece, rider, angles, factors, v_start, limit_end)
        if coast[0] > limit_end or result[2] < 0:
            brake = max(-result[2], 0.0)
            result = (result[0], result[1], 0.0, result[3], result[4], result[5], result[6])
    return result, brake


def ride_pieces(road: Floats, density: Floats, headwind: Floats, crosswind: Floats,
                constant: Floats, drag_area: Floats, power: Floats, limit: Floats,
                rider: RiderTuple, angles: Floats, factors: Floats, efficiency: float,
                start_speed: float, coasting: float, speed: Floats, time: Floats,
                applied_work: Floats, aero: Floats, bearing: Floats, braking: Floats,
                walked: Floats, walking_work: Floats) -> None:
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
        result, brake = capped_ride(piece, rider, angles, factors, v, efficiency * power[i],
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


def ride_draws(road: Floats, density: Floats, unit_headwind: Floats,
               unit_crosswind: Floats, grade: Floats, root: Floats,
               rolling_coefficient: Floats, drag_area: Floats, power: Floats,
               limit: Floats, fixed: Floats, angles: Floats, factors: Floats,
               draws: Floats, finish: Floats) -> None:
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
        finish[s] = draw_ride(road, density, unit_headwind, unit_crosswind, grade, root,
                              rolling_coefficient, drag_area, power, limit, fixed, angles,
                              factors, draws[s], head, cross, constant, area, speed, time,
                              scratch[0], scratch[1], scratch[2], scratch[3], walked,
                              scratch[4])


def draw_ride(road: Floats, density: Floats, unit_headwind: Floats,
              unit_crosswind: Floats, grade: Floats, root: Floats,
              rolling_coefficient: Floats, drag_area: Floats, power: Floats,
              limit: Floats, fixed: Floats, angles: Floats, factors: Floats,
              row: Floats, head: Floats, cross: Floats, constant: Floats, area: Floats,
              speed: Floats, time: Floats, applied_work: Floats, aero: Floats,
              bearing: Floats, braking: Floats, walked: Floats,
              walking_work: Floats) -> float:
    """Finish time [s] of one draw of `ride_draws` (`row`), its pieces written into
    `head`, `cross`, `constant` and `area` and its ride into the outputs of `ride_pieces`."""
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
    ride_pieces(road, density, head, cross, constant, area, power, limit, rider, angles,
                factors, efficiency, start, coasting, speed, time, applied_work, aero, bearing,
                braking, walked, walking_work)
    return time[count]
