"""Cycling pacing plans: constant power, a target finish time, and the fastest plan the
athlete can hold.

Plans are made on the coach's segments in the steady-state segment model
(pacing.plan.steady_model); the fastest plan in that model comes from pacing.plan.fastest
(Lagrange multiplier with priced limits, then SLSQP); the request and the power bounds it
implies are in pacing.plan.request.

The plan is then verified by the inertial simulation (pacing.plan.simulate) and corrected so the
verified ride meets the constraints: the free segments' powers are scaled until the simulated
mean power (or work) hits its target; the W′ reserve and the effort cap are re-checked on the
simulated ride and, when broken (or held with needless slack), the solver runs again with the
solver-side limit moved by secant steps, starting from the previous round's plan. The first
round already asks the solver for a reserve in the middle of the accepted band (reserve plus
half of _SLACK), since the ride drains W′ a little faster than the steady model.

References
----------
Those of the models: pacing.plan.steady_model (Martin et al. 1998), pacing.plan.fastest
(Atkinson, Peacock & Passfield 2007; Bos et al. 2024; Kraft 1988), pacing.plan.simulate.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
from scipy import optimize

from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.physiology.critical_power import effort_weighted_power, w_prime_balance
from pacing.plan.fastest import SolverReport, fastest_steady_plan
from pacing.plan.request import (
    MAXIMUM_PLAN_POWER,
    PlanRequest,
    power_limits,
)
from pacing.plan.steady_model import segment_model, steady_segment_times

_CORRECTION_ROUNDS = 4
_MATCH_TOLERANCE = 5e-5  # relative, verified mean power (or work) against its target
_SLACK = 0.01  # verified slack of a held limit worth a re-solve, relative to W′ or the cap


@dataclass(frozen=True, eq=False)
class RacePlan:
    """A pacing plan and its verified prediction.

    Attributes
    ----------
    strategy : the request's strategy.
    request : the PlanRequest.
    bounds : segment boundary point indices.
    segment_power : target crank power of each segment [W], length K.
    piece_power : planned power of each piece [W], length N-1.
    prediction : inertial simulation of the plan (pacing.plan.prediction.Prediction).
    reference : simulation of constant power at the same verified mean power (or work).
    reference_power : that constant power [W].
    time_saved : reference finish time − plan finish time [s].
    w_prime_balance : W′ balance at every point [J], length N; None without CP and W′.
    segment_w_prime_balance : W′ balance at the end of each segment [J]; None without CP/W′.
    min_w_prime_balance : lowest W′ balance [J]; None without CP and W′.
    min_w_prime_distance : distance where it happens [m]; None without CP and W′.
    effort_weighted_power : effort-weighted power of the verified ride [W].
    residuals : constraint residuals on the verified ride, by name ("mean_power_w" or "work_j":
        verified − target; "w_prime_reserve_j": min balance − reserve, ≥ 0 when met;
        "effort_cap_w": cap − effort-weighted power, ≥ 0 when met; "power_bounds_w": largest
        excursion of a segment power outside its bounds, 0 when met).
    binding : names of the constraints that bind ("mean-power", "work", "max-power on N
        segments", "min-power on N segments", "w-prime-reserve", "effort-cap").
    solver : SolverReport.
    steady_time, steady_reference_time : finish times of plan and reference in the
        steady-state segment model [s].
    power_low, power_high : lower and upper bound of each segment power [W].
    """

    strategy: str
    request: PlanRequest
    bounds: np.ndarray
    segment_power: np.ndarray
    piece_power: np.ndarray
    prediction: object
    reference: object
    reference_power: float
    time_saved: float
    w_prime_balance: np.ndarray | None
    segment_w_prime_balance: np.ndarray | None
    min_w_prime_balance: float | None
    min_w_prime_distance: float | None
    effort_weighted_power: float
    residuals: dict = field(default_factory=dict)
    binding: tuple = ()
    solver: SolverReport = SolverReport("constant")
    steady_time: float = float("nan")
    steady_reference_time: float = float("nan")
    power_low: np.ndarray | None = None
    power_high: np.ndarray | None = None

    @property
    def finish_time(self) -> float:
        """Finish time of the verified plan [s]."""
        return float(self.prediction.finish_time)

    @property
    def mean_power(self) -> float:
        """Time-weighted mean power of the verified plan [W]."""
        return float(self.prediction.average_power)

    @property
    def work(self) -> float:
        """Work of the verified plan [J]."""
        return float(self.prediction.work)


# ------------------------------------------------------------------ verification and plans

def _simulate(course, piece_power, rider, air, options):
    from pacing.plan import simulate as simulation
    from pacing.plan.prediction import SimulationOptions

    if options is None:
        options = SimulationOptions()
    return simulation.simulate(course, piece_power, rider, air, options)


def _measure(prediction, request: PlanRequest) -> float:
    if request.constraint == "work":
        return float(prediction.work)
    return float(prediction.average_power)


def _matched(make_powers, course, rider, air, options, request, target, free_pieces=None,
             first=None):
    """Scale a plan so the simulated mean power (or work) equals target; (prediction, scale).

    `make_powers(scale)` gives the piece powers; only the pieces in `free_pieces` (default
    all) scale with it. The first step assumes the measure changes by the scaled pieces' share
    of it (piece times held); later steps are secant steps. `first`: the simulation of
    make_powers(1.0) when already done.
    """
    scale = 1.0
    prediction = first if first is not None else _simulate(course, make_powers(scale), rider,
                                                           air, options)
    value = _measure(prediction, request)
    tolerance = _MATCH_TOLERANCE * target
    previous = None
    for _ in range(6):
        if abs(value - target) <= tolerance:
            break
        if previous is None or previous[1] == value:
            work = np.asarray(prediction.power, dtype=float) * _piece_durations(prediction)
            share = float(work.sum() if free_pieces is None else work[free_pieces].sum())
            if request.constraint == "mean-power":
                share /= float(prediction.finish_time)
            new_scale = scale + (target - value) * scale / share if share > 0 else 2.0 * scale
        else:
            new_scale = scale + (target - value) * (scale - previous[0]) / (value - previous[1])
        previous = (scale, value)
        scale = float(np.clip(new_scale, 0.5 * scale, 2.0 * scale))
        prediction = _simulate(course, make_powers(scale), rider, air, options)
        value = _measure(prediction, request)
    return prediction, scale


def _piece_durations(prediction) -> np.ndarray:
    return np.diff(np.asarray(prediction.time, dtype=float))


def _balance_along(prediction, request: PlanRequest) -> np.ndarray:
    balance = w_prime_balance(np.asarray(prediction.power, dtype=float),
                              _piece_durations(prediction), request.critical_power,
                              request.w_prime, request.w_prime_model)
    return np.concatenate([[float(request.w_prime)], balance])


def _effort(prediction) -> float:
    return effort_weighted_power(np.maximum(np.asarray(prediction.power, dtype=float), 0.0),
                                 _piece_durations(prediction))


def _constant_target_time(course, rider, air, options, request, model) -> float:
    """Constant power whose simulated finish time equals the target [W]."""
    target = float(request.target_time)

    def steady(power: float) -> float:
        time, _, _ = steady_segment_times(model, np.full(model.count, power))
        return float(time.sum()) - target

    if steady(MAXIMUM_PLAN_POWER) > 0:
        raise InputError(f"target time {target:.0f} s is not reachable: even "
                         f"{MAXIMUM_PLAN_POWER:g} W is slower")
    if steady(1.0) < 0:
        raise InputError(f"target time {target:.0f} s is slower than riding at 1 W")
    power = optimize.brentq(steady, 1.0, MAXIMUM_PLAN_POWER, xtol=1e-6)
    pieces = np.asarray(course.distance).size - 1
    previous = None
    for _ in range(8):
        finish = float(_simulate(course, np.full(pieces, power), rider, air,
                                 options).finish_time)
        if abs(finish - target) <= 0.01:
            break
        if previous is None or previous[1] == finish:
            new = power * (1.0 + 0.5 * (finish - target) / target * 3.0)
        else:
            new = power + (target - finish) * (power - previous[0]) / (finish - previous[1])
        previous = (power, finish)
        power = float(np.clip(new, 0.5 * power, min(2.0 * power, MAXIMUM_PLAN_POWER)))
    else:
        if abs(finish - target) > 1.0:
            raise InputError(f"target time {target:.0f} s is not reachable on this course")
    return float(power)


def make_plan(course, bounds, rider: Rider, air, request: PlanRequest,
              options=None) -> RacePlan:
    """Make the plan a request asks for and verify it by the inertial simulation.

    Parameters
    ----------
    course : pacing.course.geometry.Course; bounds : segment boundary point indices (first 0,
    last N-1);
    rider : pacing.physics.cycling.Rider; air : pacing.weather.conditions.CourseAir (per piece);
    request : PlanRequest; options : pacing.plan.prediction.SimulationOptions (default options).

    Returns
    -------
    RacePlan. Raises InputError when the request cannot be met (e.g. a target time beyond
    what CP and W′ allow, or a mean power that drains W′ below the reserve on every plan).
    """
    if not isinstance(request, PlanRequest):
        raise InputError("request must be a PlanRequest")
    if request.strategy in ("constant", "fastest") and request.mean_power is None:
        raise InputError(f"the {request.strategy} plan needs a mean power (--power)")
    if request.strategy == "target-time" and request.target_time is None:
        raise InputError("the target-time plan needs a target time (--target-time)")
    model = segment_model(course, bounds, rider, air)
    bounds = np.asarray(bounds, dtype=int)
    if request.strategy == "target-time":
        power = _constant_target_time(course, rider, air, options, request, model)
        request_for_plan = PlanRequest(
            strategy="target-time", mean_power=power, target_time=request.target_time,
            critical_power=request.critical_power, w_prime=request.w_prime,
            w_prime_reserve=request.w_prime_reserve, max_power_ratio=request.max_power_ratio,
            w_prime_model=request.w_prime_model, band=request.band)
        plan = _finish_plan(course, bounds, rider, air, request_for_plan, options, model,
                            np.full(model.count, power), None, SolverReport("constant"))
        _check_reachable(plan, request)
        return plan
    mean = float(request.mean_power)
    if request.strategy == "constant":
        return _finish_plan(course, bounds, rider, air, request, options, model,
                            np.full(model.count, mean), None, SolverReport("constant"))
    lower, upper = power_limits(model, request)
    target_reserve = request.w_prime_reserve if request.uses_w_prime else None
    target_cap = request.effort_weighted_cap
    # the solver aims at the middle of the band a verified W′ reserve is accepted in (kept,
    # with less than _SLACK of slack): the ride drains W′ a little faster than the steady model
    # (speed changes), and that no longer needs a new round. The effort cap is aimed at as
    # asked: the verified 30 s rolling measure is never above the solver's bound of it.
    reserve = None if target_reserve is None else max(target_reserve, min(
        target_reserve + 0.5 * _SLACK * float(request.w_prime), 0.999 * float(request.w_prime)))
    cap = target_cap
    reference = _reference(course, rider, air, options, request)
    best = None
    tried_reserve: list[tuple[float, float]] = []
    tried_cap: list[tuple[float, float]] = []
    previous = None
    for rounds in range(_CORRECTION_ROUNDS + 1):
        # a correction round only moves the solver's reserve or cap a little: it starts from
        # the previous round's plan (the full search runs again only if that start fails)
        try:
            power, report = fastest_steady_plan(model, request, lower, upper, reserve, cap,
                                                start=previous)
        except InputError:
            if rounds > 0 or (reserve == target_reserve and cap == target_cap):
                raise
            # the aimed limits cannot be kept, the requested ones may: solve for those
            reserve, cap = target_reserve, target_cap
            power, report = fastest_steady_plan(model, request, lower, upper, reserve, cap)
        previous = (power, report)
        report = replace(report, correction_rounds=rounds)
        plan = _finish_plan(course, bounds, rider, air, request, options, model, power,
                            (lower, upper), report, reference)
        w_gap = plan.residuals.get("w_prime_reserve_j", math.inf)
        cap_gap = plan.residuals.get("effort_cap_w", math.inf)
        feasible = (w_gap >= -1e-6 * float(request.w_prime or 1.0)
                    and cap_gap >= -1e-6 * mean)
        if feasible and (best is None or plan.finish_time < best.finish_time):
            best = plan
        # re-solve while a limit the solver held is broken, or kept with needless slack
        w_off = w_gap < 0 or ("w-prime-reserve" in report.active
                              and w_gap > _SLACK * float(request.w_prime))
        cap_off = cap_gap < 0 or ("effort-cap" in report.active
                                  and cap_gap > _SLACK * target_cap)
        if not (w_off or cap_off) and feasible:
            break
        if w_off:
            reserve = _next_limit(tried_reserve, reserve, plan.min_w_prime_balance,
                                  target_reserve + 0.5 * _SLACK * float(request.w_prime))
            reserve = min(max(reserve, 0.0), 0.999 * float(request.w_prime))
        if cap_off:
            cap = _next_limit(tried_cap, cap, -plan.effort_weighted_power,
                              -(target_cap - 0.5 * _SLACK * target_cap))
    if best is None:
        what = "W′ reserve" if w_gap < 0 else "effort cap"
        raise InputError(f"no plan at mean power {mean:g} W keeps the {what} on the simulated "
                         "ride")
    return best


def _next_limit(history: list, limit: float, measured: float, wanted: float) -> float:
    """Secant step on an internal limit so the verified value reaches `wanted`."""
    history.append((limit, measured))
    if len(history) >= 2:
        (l0, m0), (l1, m1) = history[-2], history[-1]
        if m1 != m0:
            return l1 + (wanted - m1) * (l1 - l0) / (m1 - m0)
    return limit + (wanted - measured)


def _check_reachable(plan: RacePlan, request: PlanRequest) -> None:
    power = plan.reference_power
    if request.uses_w_prime and plan.min_w_prime_balance < request.w_prime_reserve:
        allowed = request.critical_power + (request.w_prime - request.w_prime_reserve) / \
            plan.finish_time
        raise InputError(f"target time {request.target_time:.0f} s is not reachable: it needs "
                         f"{power:.0f} W, more than the {allowed:.0f} W that CP and W′ allow")
    if request.max_power_ratio is not None:
        reference = request.critical_power or power
        if power > request.max_power_ratio * reference * (1 + 1e-9):
            raise InputError(f"target time {request.target_time:.0f} s is not reachable: it "
                             f"needs {power:.0f} W, above the power cap")


def _reference(course, rider, air, options, request: PlanRequest):
    """The constant plan at the request's mean power, verified; (prediction, power [W]).

    With the mean-power constraint its power is scaled until the simulated time-weighted mean
    equals the request's (they differ where the simulation eases off or brakes); with the work
    constraint the constant power is kept and its simulated work is the target.
    """
    mean = float(request.mean_power)
    pieces = np.asarray(course.distance).size - 1

    def constant_powers(scale: float) -> np.ndarray:
        return np.full(pieces, mean * scale)

    if request.constraint == "work":
        return _simulate(course, constant_powers(1.0), rider, air, options), mean
    prediction, scale = _matched(constant_powers, course, rider, air, options, request, mean)
    return prediction, mean * scale


def _finish_plan(course, bounds, rider, air, request, options, model, segment_power, limits,
                 report: SolverReport, reference=None) -> RacePlan:
    """Verify, correct and package a plan."""
    mean = float(request.mean_power)
    pieces_segment = model.segment
    constant_time, _, _ = steady_segment_times(model, np.full(model.count, mean))
    steady_time, _, _ = steady_segment_times(model, segment_power)
    lower, upper = limits if limits is not None else (segment_power, segment_power)

    if request.strategy == "fastest":
        reference, reference_power = reference or _reference(course, rider, air, options,
                                                             request)
        target = mean if request.constraint == "mean-power" else float(reference.work)

        # only the segments not held at a bound are scaled, so bounds stay where they bind;
        # when that cannot reach the target (the free ones hit a bound first), the segments
        # held at the lower bound scale up with them, or else those at the upper bound down
        at_low = segment_power <= lower * (1 + 1e-6) + 1e-9
        at_high = segment_power >= upper * (1 - 1e-6)
        choices = [c for c in (~at_low & ~at_high, ~at_high, ~at_low) if c.any()]
        choices = choices or [np.ones_like(at_low)]
        # every choice starts from the same plan (scale 1): it is simulated once
        unscaled = _simulate(course, np.clip(segment_power, lower, upper)[pieces_segment],
                             rider, air, options)
        for free in choices:
            def corrected(scale: float, free=free) -> np.ndarray:
                return np.clip(np.where(free, segment_power * scale, segment_power), lower,
                               upper)

            prediction, scale = _matched(lambda scale: corrected(scale)[pieces_segment], course,
                                         rider, air, options, request, target,
                                         free[pieces_segment], unscaled)
            if abs(_measure(prediction, request) - target) <= _MATCH_TOLERANCE * target:
                break
        segment_power = corrected(scale)
        piece_power = segment_power[pieces_segment]
        measured = _measure(prediction, request)
        residuals = {("work_j" if request.constraint == "work" else "mean_power_w"):
                     measured - target}
    else:
        piece_power = np.full(pieces_segment.size, mean)
        reference = prediction = _simulate(course, piece_power, rider, air, options)
        reference_power = mean
        residuals = {}
    binding: list[str] = []
    if request.strategy == "fastest":
        binding.append(request.constraint)
        at_upper = int(np.sum(segment_power >= upper * (1 - 1e-6)))
        at_lower = int(np.sum(segment_power <= lower * (1 + 1e-6) + 1e-9))
        if at_upper:
            binding.append(f"max-power on {at_upper} segments")
        if at_lower:
            binding.append(f"min-power on {at_lower} segments")
        residuals["power_bounds_w"] = float(max(0.0, np.max(segment_power - upper),
                                                np.max(lower - segment_power)))
    balance = segment_balance = min_balance = min_distance = None
    if request.uses_w_prime:
        balance = _balance_along(prediction, request)
        segment_balance = balance[np.asarray(bounds)[1:]]
        where = int(np.argmin(balance))
        min_balance = float(balance[where])
        min_distance = float(np.asarray(prediction.distance)[where])
        residuals["w_prime_reserve_j"] = min_balance - request.w_prime_reserve
        if "w-prime-reserve" in report.active:
            binding.append("w-prime-reserve")
    effort = _effort(prediction)
    if request.effort_weighted_cap is not None:
        residuals["effort_cap_w"] = request.effort_weighted_cap - effort
        if "effort-cap" in report.active:
            binding.append("effort-cap")
    return RacePlan(
        strategy=request.strategy,
        request=request,
        bounds=np.asarray(bounds, dtype=int),
        segment_power=np.asarray(segment_power, dtype=float),
        piece_power=np.asarray(piece_power, dtype=float),
        prediction=prediction,
        reference=reference,
        reference_power=reference_power,
        time_saved=float(reference.finish_time) - float(prediction.finish_time),
        w_prime_balance=balance,
        segment_w_prime_balance=segment_balance,
        min_w_prime_balance=min_balance,
        min_w_prime_distance=min_distance,
        effort_weighted_power=effort,
        residuals=residuals,
        binding=tuple(binding),
        solver=report,
        steady_time=float(steady_time.sum()),
        steady_reference_time=float(constant_time.sum()),
        power_low=np.asarray(lower, dtype=float),
        power_high=np.asarray(upper, dtype=float),
    )
