"""The even pace of a running course, the D′ balance of any running plan, and the per-piece air
and checks that the running plans share (pacing.plan.running).

An *even pace* is one ground speed on every piece. Two of them serve the plans as references:
the even pace whose time-weighted mean metabolic power equals a given effort
(`even_pace_for_mean_power`; every plan carries the one at its own mean effort, see
`even_pace_reference`), and the fastest even pace whose D′ balance never falls below a reserve
(`even_pace_within_limits`). The D′ balance of a plan counts each piece's effort as its flat,
still-air speed (`plan_d_prime_balance`, Skiba's differential form through
`pacing.physiology.critical_speed.distance_capacity_balance`). Costs are those of
pacing.physics.running_cost (Minetti et al. 2002 on grades) plus air resistance
(pacing.physics.running).

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
doi:10.1152/japplphysiol.01177.2001
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3
Poole, D.C., Burnley, M., Vanhatalo, A., Rossiter, H.B. & Jones, A.M. (2016). Critical power:
an important fatigue threshold in exercise physiology. Med Sci Sports Exerc 48(11):2320-2334.
doi:10.1249/MSS.0000000000000939
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.physics.running import (
    RUNNING_SPEED_RANGE,
    Runner,
    metabolic_power,
    speed_for_metabolic_power,
)
from pacing.physiology.critical_speed import check_critical_speed, distance_capacity_balance
from pacing.weather.conditions import CourseAir

RUNNABLE_WIND_LIMIT = 17.2
"""Strongest wind at the runner a running plan accepts [m/s]: the lower edge of Beaufort force
8, "gale", whose land description is that it generally impedes progress on foot (Beaufort
scale as tabled by the World Meteorological Organization and the UK Met Office; from memory).
The scale is defined at 10 m, so at the runner (about 1 m) the limit is stricter than the
weather report's gale: it allows some 28 m/s at 10 m over open terrain. Beyond it the
running-cost model gives negative efforts (a tailwind pushing harder than running costs) and
paces no runner holds."""

AIR_DENSITY_RANGE = (0.3, 1.6)
"""Air density a plan accepts, above the first and at most the second [kg/m³]."""


def piece_air(
    course: Course,
    air_density: float | np.ndarray,
    headwind: float | np.ndarray,
    crosswind: float | np.ndarray,
) -> CourseAir:
    """Check the air of a plan and spread scalars over the pieces of `course`.

    Parameters
    ----------
    course : Course
        The course; its pieces set the length N-1 of every array [-].
    air_density : float or numpy.ndarray
        ρ, one number or one per piece, above 0.3 and at most 1.6 [kg/m³].
    headwind : float or numpy.ndarray
        Wind component against the direction of travel at the runner, one number or one per
        piece [m/s].
    crosswind : float or numpy.ndarray
        Wind component across the direction of travel at the runner, one number or one per
        piece [m/s].

    Returns
    -------
    CourseAir
        Density, headwind and crosswind on every piece [kg/m³, m/s, m/s].

    Raises
    ------
    InputError
        When an array has the wrong length, a value is not finite, the density is out of
        range, or the wind at the runner is above RUNNABLE_WIND_LIMIT.
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
    low, high = AIR_DENSITY_RANGE
    if np.any(arrays[0] <= low) or np.any(arrays[0] > high):
        raise InputError("air density must be 0.3-1.6 kg/m³")
    wind = float(np.max(np.hypot(arrays[1], arrays[2]), initial=0.0))
    if wind > RUNNABLE_WIND_LIMIT:
        raise InputError(f"a wind of {wind:.1f} m/s at the runner cannot be run in: from gale "
                         f"force ({RUNNABLE_WIND_LIMIT:g} m/s, Beaufort 8) progress on foot is "
                         "impeded, so no pace can be planned")
    return CourseAir(*arrays)


def piece_metabolic_power(course: Course, runner: Runner, air: CourseAir,
                          speed: float | np.ndarray) -> np.ndarray:
    """Metabolic power on each piece of the course at a ground speed [W/kg].

    pacing.physics.running.metabolic_power on the course's grades in `air`:
    P_met = Cr(i)·v + air term.

    Parameters
    ----------
    course : Course
        The course (grades of its N-1 pieces) [-].
    runner : Runner
        The runner's parameters [-].
    air : CourseAir
        The air on every piece, checked by `piece_air` [-].
    speed : float or numpy.ndarray
        Ground speed, one number or one per piece [m/s].

    Returns
    -------
    numpy.ndarray
        Metabolic power per kilogram on each piece [W/kg].

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001.
    """
    return metabolic_power(speed, course.grade, air.density, runner, air.headwind,
                           air.crosswind)


def _mean_power_of_even_pace(speed: float, course: Course, runner: Runner,
                             air: CourseAir) -> float:
    """Time-weighted mean metabolic power of one speed over the course [W/kg]."""
    power = piece_metabolic_power(course, runner, air, speed)
    length = course.piece_length
    return float(np.sum(power * length) / length.sum())


def even_pace_speed(course: Course, runner: Runner, air: CourseAir, mean_power: float) -> float:
    """`even_pace_for_mean_power` in air already checked by `piece_air` [m/s].

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    air : CourseAir
        The air on every piece [-].
    mean_power : float
        Time-weighted mean metabolic power to meet, > 0 [W/kg].

    Returns
    -------
    float
        The even pace [m/s].

    Raises
    ------
    InputError
        When no speed up to 1000 m/s reaches `mean_power`.

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001.
    """
    high = 2.0
    while _mean_power_of_even_pace(high, course, runner, air) < mean_power:
        high *= 2.0
        if high > 1e3:
            raise InputError("no even pace reaches that mean effort")
    return _sign_change(lambda v: _mean_power_of_even_pace(v, course, runner, air) - mean_power,
                        1e-3, high)


def _sign_change(function: Callable[[float], float], low: float, high: float) -> float:
    """Where `function` changes sign in [low, high] (below zero at `low`, not below at `high`),
    by bisection down to neighbouring floats: of the last two, the one nearer zero.

    About 55 halvings for a bracket of 1000 m/s; each is one sum over the course, so a
    millisecond or two. Bisection, not scipy.optimize.brentq: importing scipy.optimize costs
    the command line a third of a second, more than a whole running plan.
    """
    low_value, high_value = function(low), function(high)
    if low_value >= 0:
        if low_value == 0:
            return low
        raise InputError("no even pace is slow enough for that mean effort")
    while True:
        middle = 0.5 * (low + high)
        if not low < middle < high:
            return low if abs(low_value) < abs(high_value) else high
        value = function(middle)
        if value < 0:
            low, low_value = middle, value
        else:
            high, high_value = middle, value


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
    power is P̄(v) = Σ P_met,j(v)·L_j / Σ L_j; P̄(v) = mean_power is solved for v (by
    bisection, to the last bit). This is how the even-pace plan meets an effort: on average,
    not on every piece.

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    mean_power : float
        Time-weighted mean metabolic power to meet, > 0 [W/kg].
    air_density : float or numpy.ndarray, optional
        ρ, one number or one per piece [kg/m³].
    headwind : float or numpy.ndarray, optional
        Wind component against the direction of travel, one number or one per piece [m/s].
    crosswind : float or numpy.ndarray, optional
        Wind component across the direction of travel, one number or one per piece [m/s].

    Returns
    -------
    float
        The even pace [m/s].

    Raises
    ------
    InputError
        When `mean_power` is not a positive number or the air is invalid (`piece_air`).

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001.

    Examples
    --------
    On a flat treadmill course 12 W/kg is 12/Cr(0) = 12/3.6 = 3.333 m/s (5:00 per km):

    >>> from pacing.course.geometry import synthetic_course
    >>> from pacing.physics.running import Runner
    >>> flat = synthetic_course([0.0, 1000.0], [0.0, 0.0])
    >>> round(even_pace_for_mean_power(flat, Runner(70.0, drag_area=0.0), 12.0), 4)
    3.3333
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
    """D′ balance along any plan, each piece's effort counted as its flat, still-air speed [m].

    u_j = speed_for_metabolic_power(P_met,j, grade 0, still air, ρ) is the flat-equivalent
    speed of the piece's effort; `distance_capacity_balance(u, time, CS, D′)` (Skiba's
    differential form with speed for power) gives the balance at the end of each piece:
    dD/dt = −(u − CS) above CS, dD/dt = (CS − u)·(D′ − D)/D′ below. A piece whose metabolic
    power is not positive (a steep descent in a strong tailwind) counts as standing still.

    Parameters
    ----------
    metabolic_power : numpy.ndarray
        Metabolic power on each piece [W/kg].
    time : numpy.ndarray
        Time on each piece, same length [s].
    runner : Runner
        The runner's parameters [-].
    air_density : float
        ρ at the start, as in the effort target [kg/m³].
    critical_speed : float
        CS, 0.5..10 [m/s].
    d_prime : float
        D′, 0..2000 [m].

    Returns
    -------
    numpy.ndarray
        D′ balance at the end of each piece [m].

    Raises
    ------
    InputError
        When critical speed or D′ is out of range, or the arrays differ in length.

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713, doi:10.1007/s00421-014-3050-3
    (the cycling form, used here by analogy); Poole et al. (2016), Med Sci Sports Exerc
    48(11):2320-2334 (critical speed and D′).

    Examples
    --------
    On a treadmill u = P/Cr(0) = P/3.6: 60 s at 21.384 W/kg (CS + 1 m/s) spends 60 m of
    D′ = 123 m; 100 s at 14.184 W/kg (CS − 1 m/s) recovers to 123 − 60·exp(−100/123):

    >>> from pacing.physics.running import Runner
    >>> treadmill = Runner(70.0, drag_area=0.0)
    >>> plan_d_prime_balance(np.array([21.384, 14.184]), np.array([60.0, 100.0]), treadmill,
    ...                      1.2, 4.94, 123.0).round(2)
    array([63.  , 96.39])
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
    """Lowest D′ balance along the course at an even pace [m].

    `plan_d_prime_balance` of one speed on every piece, at the start's air density.

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    air : CourseAir
        The air on every piece [-].
    speed : float
        The even pace, > 0 [m/s].
    critical_speed : float
        CS [m/s].
    d_prime : float
        D′ [m].

    Returns
    -------
    float
        The lowest balance at the end of a piece, negative when D′ is overdrawn [m].

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713, doi:10.1007/s00421-014-3050-3.
    """
    power = piece_metabolic_power(course, runner, air, speed)
    return float(plan_d_prime_balance(power, course.piece_length / speed, runner,
                                      float(air.density[0]), critical_speed, d_prime).min())


def highest_feasible_speed(feasible: Callable[[float], bool], low: float, high: float,
                           tolerance: float) -> float:
    """The highest speed that `feasible` accepts, by bisection [m/s].

    `high` is raised ×1.5 (and `low` to the old `high`) while it is feasible, then the interval
    is bisected until it is narrower than `tolerance`; the feasible end is returned. Feasible
    speeds must form an interval that starts at or below `low`.

    Parameters
    ----------
    feasible : callable
        speed [m/s] → whether the plan at that speed keeps within its limits [-].
    low : float
        A feasible speed [m/s].
    high : float
        A first guess of an infeasible speed, above `low` [m/s].
    tolerance : float
        Width of the final interval, > 0 [m/s].

    Returns
    -------
    float
        A feasible speed less than `tolerance` below the highest feasible one [m/s].

    Raises
    ------
    InputError
        When speeds up to 12 m/s are all feasible (limits that allow an unrealistic pace).
    """
    while feasible(high):
        low, high = high, high * 1.5
        if high > RUNNING_SPEED_RANGE[1]:
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
    equal-effort plan spreads evenly; `pacing.plan.running.plan_fastest` reports the time it
    gains over this pace. Bisection on the speed (`highest_feasible_speed`), balance by
    `plan_d_prime_balance` at the start's air density. On a flat course in still air this is
    d/t with t = (d − D′)/CS (Poole et al. 2016).

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    critical_speed : float
        CS, 0.5..10 [m/s].
    d_prime : float
        D′, 0..2000 [m].
    air_density : float or numpy.ndarray, optional
        ρ, one number or one per piece [kg/m³].
    headwind : float or numpy.ndarray, optional
        Wind component against the direction of travel, one number or one per piece [m/s].
    crosswind : float or numpy.ndarray, optional
        Wind component across the direction of travel, one number or one per piece [m/s].
    d_prime_reserve : float, optional
        Balance never to go below [m].
    tolerance : float, optional
        On the speed [m/s].

    Returns
    -------
    float
        The fastest even pace within the limits [m/s].

    Raises
    ------
    InputError
        When critical speed, D′ or the air are invalid, when even 0.5 m/s overdraws the
        usable D′, or when the limits allow more than 12 m/s.

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713, doi:10.1007/s00421-014-3050-3;
    Poole et al. (2016), Med Sci Sports Exerc 48(11):2320-2334,
    doi:10.1249/MSS.0000000000000939.
    """
    check_critical_speed(critical_speed, d_prime)
    air = piece_air(course, air_density, headwind, crosswind)

    def feasible(speed: float) -> bool:
        return lowest_even_pace_balance(course, runner, air, speed, critical_speed,
                                        d_prime) >= d_prime_reserve

    low, high = RUNNING_SPEED_RANGE[0], critical_speed * 1.05 + 0.1
    if lowest_even_pace_balance(course, runner, air, low, critical_speed,
                                d_prime) < d_prime_reserve:
        raise InputError("even at 0.5 m/s this course spends more than the usable D′")
    return highest_feasible_speed(feasible, low, high, tolerance)


def check_limits(critical_speed: float | None, d_prime: float | None) -> bool:
    """Whether critical speed and D′ are given, after checking them.

    Parameters
    ----------
    critical_speed : float or None
        CS, 0.5..10, or None [m/s].
    d_prime : float or None
        D′, 0..2000, or None [m].

    Returns
    -------
    bool
        True when both are given (and valid), False when neither is [-].

    Raises
    ------
    InputError
        When only one of them is given, or a given one is out of range.
    """
    if (critical_speed is None) != (d_prime is None):
        raise InputError("give critical speed and D′ together")
    if critical_speed is not None and d_prime is not None:
        check_critical_speed(critical_speed, d_prime)
    return critical_speed is not None


@dataclass(frozen=True)
class EvenPaceReference:
    """The even pace at a plan's time-weighted mean metabolic power, and what it costs.

    Attributes
    ----------
    speed : float
        The even pace [m/s].
    time : float
        Its finish time [s].
    peak_effort_ratio : float
        Its highest metabolic power on a piece over the plan's effort target [-].
    """

    speed: float
    time: float
    peak_effort_ratio: float


def even_pace_reference(course: Course, runner: Runner, air: CourseAir, power: np.ndarray,
                        time: np.ndarray, effort: float) -> EvenPaceReference:
    """The even pace at a plan's time-weighted mean metabolic power, and what it costs.

    P̄ = Σ P_j·t_j / Σ t_j of the plan; the even pace of P̄ by `even_pace_speed`.

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    air : CourseAir
        The air on every piece [-].
    power : numpy.ndarray
        The plan's metabolic power on each piece [W/kg].
    time : numpy.ndarray
        The plan's time on each piece [s].
    effort : float
        The plan's effort target [W/kg].

    Returns
    -------
    EvenPaceReference
        Its speed [m/s], finish time [s] and peak effort ratio [-].

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001.
    """
    mean = float(np.sum(power * time) / time.sum())
    speed = even_pace_speed(course, runner, air, mean)
    even_power = piece_metabolic_power(course, runner, air, speed)
    return EvenPaceReference(speed=speed, time=float(np.sum(course.piece_length) / speed),
                             peak_effort_ratio=float(even_power.max() / effort))
