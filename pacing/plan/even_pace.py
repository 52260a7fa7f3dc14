"""The even pace of a running course, the D′ balance of any running plan, and the per-piece air
and checks that the running plans share (pacing.plan.running).

An *even pace* is one ground speed on every piece. Two of them serve the plans as references:
the even pace whose time-weighted mean metabolic power equals a given effort
(`even_pace_for_mean_power`; every plan carries the one at its own mean effort, see
`even_pace_reference`), and the fastest even pace whose D′ balance never falls below a reserve
(`even_pace_within_limits`). The D′ balance of a plan counts each piece's effort as its flat,
still-air speed (`plan_d_prime_balance`, Skiba's differential form through
`pacing.physiology.critical_speed.distance_capacity_balance`). Costs are those of
pacing.physics.running (Minetti et al.
2002 on grades plus air resistance).

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
Skiba, P.F. et al. (2015). Intramuscular determinants of the ability to recover work capacity
above critical power. Eur J Appl Physiol 115(4):703-713.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from scipy.optimize import brentq

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.physics.running import Runner, metabolic_power, speed_for_metabolic_power
from pacing.physiology.critical_speed import check_critical_speed, distance_capacity_balance
from pacing.weather.conditions import CourseAir


def piece_air(course: Course, air_density, headwind, crosswind) -> CourseAir:
    """Check the air of a plan and spread scalars over the pieces of `course`.

    Parameters
    ----------
    course : Course; air_density : per piece or scalar [kg/m³], 0.3-1.6; headwind, crosswind :
    per piece or scalar [m/s].
    """
    shape = course.grade.shape
    arrays = []
    for name, value in (("air density", air_density), ("headwind", headwind),
                        ("crosswind", crosswind)):
        array = np.asarray(value, dtype=float)
        if array.ndim > 1 or (array.ndim == 1 and array.shape != shape):
            raise InputError(f"{name} must be a number or one value per piece of the course")
        array = np.broadcast_to(array, shape)
        if not np.all(np.isfinite(array)):
            raise InputError(f"{name} must be finite")
        arrays.append(array)
    if np.any(arrays[0] <= 0.3) or np.any(arrays[0] > 1.6):
        raise InputError("air density must be 0.3-1.6 kg/m³")
    return CourseAir(*arrays)


def piece_metabolic_power(course: Course, runner: Runner, air: CourseAir,
                          speed: float | np.ndarray) -> np.ndarray:
    """Metabolic power on each piece at ground `speed` (scalar or per piece) [W/kg]
    (pacing.physics.running.metabolic_power on the course's grades in `air`)."""
    return metabolic_power(speed, course.grade, air.density, runner, air.headwind,
                           air.crosswind)


def _mean_power_of_even_pace(speed: float, course: Course, runner: Runner,
                             air: CourseAir) -> float:
    power = piece_metabolic_power(course, runner, air, speed)
    length = course.piece_length
    return float(np.sum(power * length) / length.sum())


def even_pace_speed(course: Course, runner: Runner, air: CourseAir, mean_power: float) -> float:
    """`even_pace_for_mean_power` in air already checked by `piece_air` [m/s]; mean_power
    [W/kg], > 0."""
    high = 2.0
    while _mean_power_of_even_pace(high, course, runner, air) < mean_power:
        high *= 2.0
        if high > 1e3:
            raise InputError("no even pace reaches that mean effort")
    return float(brentq(lambda v: _mean_power_of_even_pace(v, course, runner, air) - mean_power,
                        1e-3, high, xtol=1e-12, rtol=1e-14))


def even_pace_for_mean_power(
    course: Course,
    runner: Runner,
    mean_power: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
) -> float:
    """The one speed whose time-weighted mean metabolic power over the course is `mean_power`.

    At a constant speed v the time on piece j is L_j/v, so the time-weighted mean metabolic
    power is P̄(v) = Σ P_met,j(v)·L_j / Σ L_j; P̄(v) = mean_power is solved for v (scipy
    brentq). This is how the even-pace plan meets an effort: on average, not on every piece.

    Parameters
    ----------
    course : Course; runner : Runner; mean_power : [W/kg], > 0; air_density : per piece or
    scalar [kg/m³]; headwind, crosswind : per piece or scalar [m/s].

    Returns
    -------
    speed [m/s].
    """
    if not np.isfinite(mean_power) or mean_power <= 0:
        raise InputError(f"mean metabolic power must be positive, got {mean_power}")
    return even_pace_speed(course, runner, piece_air(course, air_density, headwind, crosswind),
                            float(mean_power))


def plan_d_prime_balance(
    metabolic_power: np.ndarray,
    time: np.ndarray,
    runner: Runner,
    air_density: float,
    critical_speed: float,
    d_prime: float,
) -> np.ndarray:
    """D′ balance along any plan: each piece's effort as its flat, still-air speed [m].

    u_j = speed_for_metabolic_power(P_met,j, grade 0, still air, ρ) is the flat-equivalent
    speed of the piece's effort; `distance_capacity_balance(u, time, CS, D′)` (Skiba's
    differential form, speed for power) gives the balance at the end of each piece.

    Parameters
    ----------
    metabolic_power : per piece [W/kg]; time : per piece [s]; runner : Runner;
    air_density : at the start, as in the effort target [kg/m³]; critical_speed : [m/s];
    d_prime : [m].
    """
    check_critical_speed(critical_speed, d_prime)
    # a piece whose metabolic power is not positive (steep descent in a strong tailwind)
    # counts as standing still: full recovery below critical speed
    power = np.maximum(np.asarray(metabolic_power, dtype=float), 1e-9)
    equivalent = speed_for_metabolic_power(power, 0.0, air_density, runner)
    return distance_capacity_balance(equivalent, np.asarray(time, dtype=float), critical_speed,
                                     d_prime)


def lowest_even_pace_balance(course: Course, runner: Runner, air: CourseAir, speed: float,
                             critical_speed: float, d_prime: float) -> float:
    """Lowest D′ balance along the course at the even pace `speed` [m/s] → [m]
    (`plan_d_prime_balance` at the start's air density)."""
    power = piece_metabolic_power(course, runner, air, speed)
    return float(plan_d_prime_balance(power, course.piece_length / speed, runner,
                                      float(air.density[0]), critical_speed, d_prime).min())


def highest_feasible_speed(feasible: Callable[[float], bool], low: float, high: float,
                           tolerance: float) -> float:
    """The highest speed that `feasible` accepts, to `tolerance` [m/s].

    `low` must be feasible. `high` is raised ×1.5 until infeasible (an InputError past 12 m/s),
    then the interval is bisected; returns its feasible end.
    """
    while feasible(high):
        low, high = high, high * 1.5
        if high > 12.0:
            raise InputError("critical speed and D′ allow an unrealistically fast pace")
    while high - low > tolerance:
        middle = 0.5 * (low + high)
        if feasible(middle):
            low = middle
        else:
            high = middle
    return low


def even_pace_within_limits(
    course: Course,
    runner: Runner,
    critical_speed: float,
    d_prime: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    d_prime_reserve: float = 0.0,
    tolerance: float = 1e-6,
) -> float:
    """The fastest single speed whose D′ balance never falls below the reserve [m/s].

    The even pace's climbs cost more than its mean effort, so they spend D′ that an
    equal-effort plan spreads evenly; `plan_fastest` reports the time it gains over this pace.
    Bisection on the speed, balance by `plan_d_prime_balance` (start density).

    Parameters
    ----------
    as pacing.plan.running.plan_fastest.
    """
    check_critical_speed(critical_speed, d_prime)
    air = piece_air(course, air_density, headwind, crosswind)

    def feasible(speed: float) -> bool:
        return lowest_even_pace_balance(course, runner, air, speed, critical_speed,
                                        d_prime) >= d_prime_reserve

    low, high = 0.5, critical_speed * 1.05 + 0.1
    if lowest_even_pace_balance(course, runner, air, low, critical_speed,
                                d_prime) < d_prime_reserve:
        raise InputError("even at 0.5 m/s this course spends more than the usable D′")
    return highest_feasible_speed(feasible, low, high, tolerance)


def check_limits(critical_speed: float | None, d_prime: float | None) -> bool:
    """True when critical speed and D′ are both given (and valid), False when neither is;
    InputError when only one is."""
    if (critical_speed is None) != (d_prime is None):
        raise InputError("give critical speed and D′ together")
    if critical_speed is not None and d_prime is not None:
        check_critical_speed(critical_speed, d_prime)
    return critical_speed is not None


def even_pace_reference(course: Course, runner: Runner, air: CourseAir, power: np.ndarray,
                        time: np.ndarray, effort: float) -> dict:
    """The even pace at a plan's time-weighted mean metabolic power, and what it costs.

    Parameters
    ----------
    power : the plan's metabolic power per piece [W/kg]; time : its time per piece [s];
    effort : its effort target [W/kg].

    Returns
    -------
    RunningPlan fields: even_pace_speed [m/s], even_pace_time [s],
    even_pace_peak_effort_ratio [-].
    """
    mean = float(np.sum(power * time) / time.sum())
    speed = even_pace_speed(course, runner, air, mean)
    even_power = piece_metabolic_power(course, runner, air, speed)
    return dict(even_pace_speed=speed,
                even_pace_time=float(np.sum(course.piece_length) / speed),
                even_pace_peak_effort_ratio=float(even_power.max() / effort))


def pace_clock(seconds: float) -> str:
    """M:SS of a pace in seconds, for messages (as the user typed it)."""
    minutes, rest = divmod(round(seconds), 60)
    return f"{minutes}:{rest:02d}"
