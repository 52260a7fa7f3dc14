"""Running race plans on a course: equal effort, even pace, and the fastest that critical
speed and D′ allow.

The athlete's *effort* is the metabolic power of the flat-ground pace in still air at the start's
air density (pacing.physics.running_cost: the Minetti et al. 2002 cost of running on grades;
pacing.physics.running: plus air resistance). An *equal-effort* plan runs every piece at the speed
with that metabolic power; an *even-pace* plan runs one speed everywhere; the *fastest* plan is the
highest equal effort that the runner's critical speed and D′ allow (D′ balance by Skiba's
differential form, see `pacing.physiology.critical_speed.distance_capacity_balance`). The even-pace
references and the D′ balance of a plan are in pacing.plan.even_pace; the plan as data
(RunningPlan), its segment rows and target rows in pacing.plan.running_plan.

What each plan holds to, and which is faster
--------------------------------------------
* Equal effort: every piece at the effort target, never above it. This is the plan a runner can
  sustain: no climb asks for more than the flat effort. Where the descent cap binds, the piece
  runs below the target and that effort is not used.
* Even pace: one speed, chosen so that the *time-weighted mean* metabolic power over the course
  equals the effort target. It meets the effort only on average: on climbs (and into the wind)
  each piece costs more than the target, e.g. 130 % of the flat effort on a 5 % climb at
  5:00/km, and the plan reports that peak (`peak_effort_ratio`) and each segment's ratio.
* Fastest: the highest equal effort that critical speed and D′ allow. Only this plan uses the
  runner's ability to go above the flat effort for a while, and it is where a plan gains time.

In this model the cost per metre on a grade, Cr(i), does not depend on speed, so in still air
the energy per metre on piece j is e_j(v) = Cr_j + k·v² (k = a·ρ, the air term). Among all
plans with the same time-weighted mean metabolic power P̄, the fastest minimises
T = Σ L_j/v_j subject to Σ L_j·e_j(v_j) = P̄·T. With the Lagrangian
T + λ·(Σ L_j·(Cr_j + k·v_j²) − P̄·T), ∂/∂v_j = −(1 − λP̄)·L_j/v_j² + 2λk·L_j·v_j = 0 gives
v_j³ = (1 − λP̄)/(2λk), the same on every piece: a constant speed. So, at equal mean effort,
even pace is the fastest plan on a windless hilly course without a descent cap (with k = 0 all
plans of that mean effort take the same time, T = Σ L_j·Cr_j / P̄), and equal effort is slower
by a few seconds. That is the model's physics, not a flaw of either plan: the price of even
pace is the effort above the target on every climb, which an equal-effort runner never pays.
With wind, e_j depends on the air speed v + w_j, and equal effort gains into a headwind and
loses little with a tailwind, so on a flat out-and-back in wind it is at least as fast as even
pace at the same mean effort (a property tested in tests/test_plan_running.py). Each plan
carries the even pace at its own mean effort (`even_pace_time`, `time_saved`) so the two can be
compared fairly.

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
doi:10.1152/japplphysiol.01177.2001
Poole, D.C., Burnley, M., Vanhatalo, A., Rossiter, H.B. & Jones, A.M. (2016). Critical power:
an important fatigue threshold in exercise physiology. Med Sci Sports Exerc 48(11):2320-2334.
doi:10.1249/MSS.0000000000000939
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.notices import Notice, note, warning
from pacing.physics.running import (
    RUNNING_SPEED_RANGE,
    Runner,
    flat_effort,
    speed_for_metabolic_power,
)
from pacing.physics.running_cost import RUNNING_COST_MODELS
from pacing.physiology.critical_speed import check_critical_speed, distance_capacity_balance
from pacing.plan.even_pace import (
    EvenPaceReference,
    check_limits,
    even_pace_reference,
    even_pace_speed,
    even_pace_within_limits,
    highest_feasible_speed,
    lowest_even_pace_balance,
    piece_air,
    piece_metabolic_power,
    plan_d_prime_balance,
)
from pacing.plan.running_plan import RunningPlan, assemble_running_plan, running_segment_bounds
from pacing.weather.conditions import CourseAir

DOWNHILL_SPEED_RATIO_CAP = 1.2
"""Default cap on speed on descents, as a multiple of the flat speed [-]. Our choice: the
Minetti polynomial's equal-effort speeds on descents are unrealistically high (its authors
say so): ×1.27 at −5 %, ×1.67 at −10 %. Runners in a self-paced hilly time trial ran 13.8 %
faster on descents than on level sections (Med Sci Sports Exerc 42(1):160-169, 2010,
"Spontaneous pacing during overground hill running"; authors Townshend et al. from
memory), so 1.2 leaves room for steeper descents without the model's excess."""


def _grade_notices(course: Course, runner: Runner) -> list[Notice]:
    """A warning when pieces lie outside the cost model's grade range (costed at its edge)."""
    low, high = RUNNING_COST_MODELS[runner.cost_model].grade_range
    outside = int(np.count_nonzero((course.grade < low) | (course.grade > high)))
    if outside:
        return [warning("running-grade-beyond-cost-model", count=outside, lowest_grade=low,
                        highest_grade=high)]
    return []


def _equal_effort_speeds(course: Course, runner: Runner, effort: float, flat_speed: float,
                         air: CourseAir, downhill_speed_ratio_cap: float | None,
                         ) -> tuple[np.ndarray, np.ndarray]:
    """Equal-effort speed per piece [m/s] and where the descent cap holds it back [-]."""
    speed = speed_for_metabolic_power(effort, course.grade, air.density, runner, air.headwind,
                                      air.crosswind)
    capped = np.zeros(speed.shape, dtype=bool)
    if downhill_speed_ratio_cap is not None:
        if not downhill_speed_ratio_cap >= 1.0:
            raise InputError(
                f"downhill speed cap must be at least 1 × flat speed, got "
                f"{downhill_speed_ratio_cap}"
            )
        limit = downhill_speed_ratio_cap * flat_speed
        capped = (course.grade < 0) & (speed > limit)
        speed = np.where(capped, limit, speed)
    return speed, capped


def _flat_speed_inputs(course: Course, runner: Runner, flat_speed: float,
                       air_density: float | np.ndarray, headwind: float | np.ndarray,
                       crosswind: float | np.ndarray, bounds: np.ndarray | None,
                       critical_speed: float | None,
                       d_prime: float | None) -> tuple[CourseAir, np.ndarray, float]:
    """Checked inputs of a plan set by its flat speed: air per piece, segment bounds and the
    effort target, the metabolic power of flat_speed at the start's air density [W/kg]."""
    check_limits(critical_speed, d_prime)
    air = piece_air(course, air_density, headwind, crosswind)
    checked_bounds = running_segment_bounds(course, bounds)
    return air, checked_bounds, flat_effort(flat_speed, float(air.density[0]), runner)


def _balance_if_given(power: np.ndarray, time: np.ndarray, runner: Runner, air: CourseAir,
                      critical_speed: float | None, d_prime: float | None) -> np.ndarray | None:
    """`plan_d_prime_balance` at the start's air density [m], or None without critical speed."""
    if critical_speed is None or d_prime is None:
        return None
    return plan_d_prime_balance(power, time, runner, float(air.density[0]), critical_speed,
                                d_prime)


def _comparison_notice(finish_time: float, reference: EvenPaceReference,
                       overdrawn_balance: float | None = None) -> list[Notice]:
    """A note on the even pace at the same mean effort: how much later (or sooner) it
    finishes [s], its peak effort [-] and, when it overdraws D′, its lowest balance [m]."""
    later = reference.time - finish_time
    if abs(later) < 0.5:
        return []
    return [note("even-pace-at-same-effort", speed_mps=reference.speed,
                 later_s=later, peak_effort_ratio=reference.peak_effort_ratio,
                 overdrawn_balance_m=overdrawn_balance)]


def plan_equal_effort(
    course: Course,
    runner: Runner,
    flat_speed: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    downhill_speed_ratio_cap: float | None = DOWNHILL_SPEED_RATIO_CAP,
    critical_speed: float | None = None,
    d_prime: float | None = None,
) -> RunningPlan:
    """Equal effort: on every piece the speed whose metabolic power equals the flat effort.

    effort = P_met(flat_speed, grade 0, still air, ρ at the first piece); then on each piece
    P_met(v) = effort is solved for v, and on descents v ≤ cap × flat_speed. No piece runs
    above the effort target (physiologically sustainable); capped descents run below it.

    The plan also carries the even pace at its own time-weighted mean metabolic power
    (`even_pace_time`, `time_saved`): in still air on hills that even pace is a few seconds
    faster (module docstring: the Lagrange condition gives a constant speed) but runs the
    climbs above the target (`even_pace_peak_effort_ratio`).

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    flat_speed : float
        Speed held on flat ground in still air, 0.5..12 [m/s].
    air_density : float or numpy.ndarray, optional
        ρ, one number or one per piece [kg/m³].
    headwind : float or numpy.ndarray, optional
        Wind component against the direction of travel at the runner, one number or one per
        piece [m/s].
    crosswind : float or numpy.ndarray, optional
        Wind component across the direction of travel at the runner, one number or one per
        piece [m/s].
    bounds : numpy.ndarray or None, optional
        Segment boundary point indices, increasing from 0 to N-1; None for every km [-].
    downhill_speed_ratio_cap : float or None, optional
        Highest speed on descents as a multiple of flat_speed, ≥ 1; None for no cap [-].
    critical_speed : float or None, optional
        CS, to show the D′ balance; give it with d_prime [m/s].
    d_prime : float or None, optional
        D′, to show the D′ balance; give it with critical_speed [m].

    Returns
    -------
    RunningPlan
        Speed, time and metabolic power per piece, target rows and notes [SI].

    Raises
    ------
    InputError
        When the flat speed, the air, the bounds, the cap or the limits are out of range, or
        only one of critical speed and D′ is given.

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001
    (cost on grades); Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713,
    doi:10.1007/s00421-014-3050-3 (D′ balance, by analogy).

    Examples
    --------
    5:00 per km on the flat is 300·Cr(0.05)/Cr(0) = 300 × 4.6852/3.6 = 390.4 s per km (6:30)
    up 5 % on a treadmill (Minetti et al. 2002 polynomial):

    >>> import numpy as np
    >>> from pacing.course.geometry import synthetic_course
    >>> from pacing.physics.running import Runner
    >>> distance = np.arange(0.0, 2001.0, 10.0)
    >>> climb = synthetic_course(distance, 0.05 * distance)
    >>> plan = plan_equal_effort(climb, Runner(70.0, drag_area=0.0), 1000 / 300)
    >>> round(plan.segments[0].pace, 1)
    390.4
    """
    air, checked_bounds, effort = _flat_speed_inputs(course, runner, flat_speed, air_density,
                                                     headwind, crosswind, bounds,
                                                     critical_speed, d_prime)
    speed, capped = _equal_effort_speeds(course, runner, effort, flat_speed, air,
                                         downhill_speed_ratio_cap)
    time = course.piece_length / speed
    power = piece_metabolic_power(course, runner, air, speed)
    balance = _balance_if_given(power, time, runner, air, critical_speed, d_prime)
    reference = even_pace_reference(course, runner, air, power, time, effort)
    notes = _grade_notices(course, runner)
    if capped.any():
        notes.append(note("running-descent-capped", ratio=downhill_speed_ratio_cap,
                          share=float(capped.mean())))
    notes.extend(_comparison_notice(float(time.sum()), reference))
    return assemble_running_plan("equal-effort", course, checked_bounds, air, speed, time,
                                 power, effort, flat_speed, balance, notes, reference)


def _check_even_pace(speed: float) -> float:
    """The given even pace, refused unless 0.5-12 m/s [m/s]."""
    low, high = RUNNING_SPEED_RANGE
    if not np.isfinite(speed) or not low <= speed <= high:
        raise InputError(f"even pace must be 0.5-12 m/s (1:24-33:20 per km), got {speed:.3g} m/s")
    return float(speed)


def plan_even_pace(
    course: Course,
    runner: Runner,
    flat_speed: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    speed: float | None = None,
    critical_speed: float | None = None,
    d_prime: float | None = None,
) -> RunningPlan:
    """Even pace, the naive plan: one speed everywhere, and what it costs.

    By default the speed is the one whose time-weighted mean metabolic power over the course
    equals the flat effort (`pacing.plan.even_pace.even_pace_for_mean_power`): the effort
    target is met on average, not on every piece. Each segment's `effort_ratio` and the plan's
    `peak_effort_ratio` show what the even pace costs (above 1 on climbs and into the wind):
    the reason a runner does not hold one pace up a hill. In still air it is the fastest plan
    of its mean effort (module docstring), so it can finish sooner than equal effort, which
    never runs above the target.

    Parameters
    ----------
    course : Course
        The course [-].
    runner : Runner
        The runner's parameters [-].
    flat_speed : float
        Speed held on flat ground in still air, which sets the effort target, 0.5..12 [m/s].
    air_density : float or numpy.ndarray, optional
        ρ, one number or one per piece [kg/m³].
    headwind : float or numpy.ndarray, optional
        Wind component against the direction of travel at the runner, one number or one per
        piece [m/s].
    crosswind : float or numpy.ndarray, optional
        Wind component across the direction of travel at the runner, one number or one per
        piece [m/s].
    bounds : numpy.ndarray or None, optional
        Segment boundary point indices, increasing from 0 to N-1; None for every km [-].
    speed : float or None, optional
        Hold this speed instead, 0.5..12 [m/s].
    critical_speed : float or None, optional
        CS, to show the D′ balance; give it with d_prime [m/s].
    d_prime : float or None, optional
        D′, to show the D′ balance; give it with critical_speed [m].

    Returns
    -------
    RunningPlan
        One speed on every piece, its time and metabolic power per piece, target rows and
        notes [SI].

    Raises
    ------
    InputError
        When the flat speed, the given speed, the air, the bounds or the limits are out of
        range, or only one of critical speed and D′ is given.

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001
    (cost on grades); Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713,
    doi:10.1007/s00421-014-3050-3 (D′ balance, by analogy).
    """
    air, checked_bounds, effort = _flat_speed_inputs(course, runner, flat_speed, air_density,
                                                     headwind, crosswind, bounds,
                                                     critical_speed, d_prime)
    length = course.piece_length
    held = (even_pace_speed(course, runner, air, effort) if speed is None
            else _check_even_pace(speed))
    speeds = np.full(length.shape, held)
    time = length / speeds
    power = piece_metabolic_power(course, runner, air, speeds)
    balance = _balance_if_given(power, time, runner, air, critical_speed, d_prime)
    notes = _grade_notices(course, runner)
    peak = float(power.max() / effort)
    mean = float(np.sum(power * time) / time.sum() / effort)
    notes.append(note("even-pace-effort-on-average", mean_effort_ratio=mean,
                      peak_effort_ratio=peak))
    reference = EvenPaceReference(speed=held, time=float(time.sum()), peak_effort_ratio=peak)
    return assemble_running_plan("even-pace", course, checked_bounds, air, speeds, time, power,
                                 effort, flat_speed, balance, notes, reference)


@dataclass(frozen=True, eq=False)
class _Attempt:
    """An equal-effort plan at one flat-equivalent level, as the fastest plan tries it."""

    effort: float
    speed: np.ndarray
    time: np.ndarray
    power: np.ndarray
    capped: np.ndarray
    balance: np.ndarray


def _attempt_level(level: float, course: Course, runner: Runner, air: CourseAir,
                   critical_speed: float, d_prime: float,
                   downhill_speed_ratio_cap: float | None) -> _Attempt:
    """The equal-effort plan at the flat-equivalent speed `level` [m/s] and its D′ balance:
    capped descents count at the flat speed of their lower metabolic power."""
    start_density = float(air.density[0])
    effort = flat_effort(level, start_density, runner)
    speed, capped = _equal_effort_speeds(course, runner, effort, level, air,
                                         downhill_speed_ratio_cap)
    time = course.piece_length / speed
    power = piece_metabolic_power(course, runner, air, speed)
    equivalent = np.full(speed.shape, level)
    if capped.any():
        equivalent[capped] = speed_for_metabolic_power(power[capped], 0.0, start_density,
                                                       runner)
    balance = distance_capacity_balance(equivalent, time, critical_speed, d_prime)
    return _Attempt(effort, speed, time, power, capped, balance)


def _check_usable_d_prime(course: Course, d_prime: float, d_prime_reserve: float) -> None:
    """Refuse a course not longer than the usable D′, D′ − reserve [m]."""
    if course.total_distance <= d_prime - d_prime_reserve:
        raise InputError(
            f"course ({course.total_distance:.0f} m) must be longer than the usable D′ "
            f"({d_prime - d_prime_reserve:.0f} m)"
        )


def _fastest_notes(course: Course, runner: Runner, air: CourseAir, best: _Attempt,
                   reference: EvenPaceReference, limited_speed: float, limited_time: float,
                   critical_speed: float, d_prime: float, d_prime_reserve: float,
                   downhill_speed_ratio_cap: float | None) -> list[Notice]:
    """The notes of the fastest plan: grades, the recovery analogy, capped descents, and the
    two even paces it is compared with (speeds [m/s], times [s], balances [m])."""
    notes = _grade_notices(course, runner)
    notes.append(note("d-prime-recovery-by-analogy"))
    if best.capped.any():
        notes.append(note("running-descent-capped-at-level", ratio=downhill_speed_ratio_cap,
                          share=float(best.capped.mean())))
    even_lowest = lowest_even_pace_balance(course, runner, air, reference.speed,
                                           critical_speed, d_prime)
    finish = float(best.time.sum())
    notes.extend(_comparison_notice(finish, reference,
                                    even_lowest if even_lowest < d_prime_reserve else None))
    notes.append(note("even-pace-within-limits", speed_mps=limited_speed,
                      later_s=limited_time - finish))
    return notes


def plan_fastest(
    course: Course,
    runner: Runner,
    critical_speed: float,
    d_prime: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    downhill_speed_ratio_cap: float | None = DOWNHILL_SPEED_RATIO_CAP,
    d_prime_reserve: float = 0.0,
    tolerance: float = 1e-6,
) -> RunningPlan:
    """The fastest equal-effort plan that critical speed and D′ allow.

    Each effort level is expressed as its flat-equivalent speed u (flat ground, still air,
    start density). The plan is equal effort at level u; its D′ balance along the course is
    computed with `distance_capacity_balance` (pieces where the descent cap holds the runner
    back run below the level and may recover). The highest u whose balance never falls below
    `d_prime_reserve` is found by bisection. On a flat still-air course this is u = d/t with
    t = (d − D′)/CS (`critical_speed_flat_race_time`).

    This is where a plan gains: at the limit of D′ an even pace must slow down for its
    climbs, which cost more than its mean effort, while equal effort spends D′ evenly.
    `limited_even_pace_time` is the fastest even pace within the same CS and D′
    (`even_pace_within_limits`); `time_saved` is, as in the other plans, against the even pace
    at the same mean effort (which may overdraw D′).

    Caution: the recovery below critical speed uses Skiba's constants from cycling.

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
        Wind component against the direction of travel at the runner, one number or one per
        piece [m/s].
    crosswind : float or numpy.ndarray, optional
        Wind component across the direction of travel at the runner, one number or one per
        piece [m/s].
    bounds : numpy.ndarray or None, optional
        Segment boundary point indices, increasing from 0 to N-1; None for every km [-].
    downhill_speed_ratio_cap : float or None, optional
        Highest speed on descents as a multiple of the level's flat speed, ≥ 1; None for no
        cap [-].
    d_prime_reserve : float, optional
        Balance never to go below, 0 ≤ reserve < D′ [m].
    tolerance : float, optional
        On the flat-equivalent speed u [m/s].

    Returns
    -------
    RunningPlan
        The plan at the highest feasible level, its D′ balance, target rows and notes [SI].

    Raises
    ------
    InputError
        When critical speed, D′, the reserve, the air, the bounds or the cap are out of range,
        the course is not longer than the usable D′, or the limits allow more than 12 m/s.

    References
    ----------
    Poole et al. (2016), Med Sci Sports Exerc 48(11):2320-2334,
    doi:10.1249/MSS.0000000000000939 (critical speed and D′); Skiba et al. (2015), Eur J Appl
    Physiol 115(4):703-713, doi:10.1007/s00421-014-3050-3 (recovery, by analogy); Minetti et
    al. (2002), J Appl Physiol 93(3):1039-1046, doi:10.1152/japplphysiol.01177.2001.
    """
    check_critical_speed(critical_speed, d_prime)
    if not 0.0 <= d_prime_reserve < d_prime:
        raise InputError(f"D′ reserve must be 0 to D′ ({d_prime:g} m), got {d_prime_reserve}")
    air = piece_air(course, air_density, headwind, crosswind)
    checked_bounds = running_segment_bounds(course, bounds)
    _check_usable_d_prime(course, d_prime, d_prime_reserve)

    def attempt(level: float) -> _Attempt:
        return _attempt_level(level, course, runner, air, critical_speed, d_prime,
                              downhill_speed_ratio_cap)

    level = highest_feasible_speed(lambda u: attempt(u).balance.min() >= d_prime_reserve,
                                   critical_speed, critical_speed * 1.05 + 0.1, tolerance)
    best = attempt(level)
    reference = even_pace_reference(course, runner, air, best.power, best.time, best.effort)
    limited_speed = even_pace_within_limits(course, runner, critical_speed, d_prime,
                                            air.density, air.headwind, air.crosswind,
                                            d_prime_reserve, tolerance)
    limited_time = float(course.piece_length.sum() / limited_speed)
    notes = _fastest_notes(course, runner, air, best, reference, limited_speed, limited_time,
                           critical_speed, d_prime, d_prime_reserve, downhill_speed_ratio_cap)
    return assemble_running_plan("fastest", course, checked_bounds, air, best.speed,
                                 best.time, best.power, best.effort, level, best.balance, notes,
                                 reference, limited_even_pace_time=limited_time)
