"""Cycling pacing plans: constant power, a target finish time, and the fastest plan the
athlete can hold.

Plans are made on the coach's segments in the steady-state segment model
(pacing.plan.steady_model); the fastest plan in that model comes from pacing.plan.fastest
(Lagrange multiplier with priced limits, then SLSQP); the request and the power bounds it
implies are in pacing.plan.request.

The plan is then verified by the inertial simulation (pacing.plan.simulate) and corrected so the
verified ride meets the constraints (pacing.plan.verify): the free segments' powers are scaled
until the simulated mean power (or work) hits its target; the W′ reserve and the effort cap are
re-checked on the simulated ride and, when broken (or held with needless slack), the solver
runs again with the solver-side limit moved by secant steps, starting from the previous
round's plan. The first
round already asks the solver for a reserve in the middle of the accepted band (reserve plus
half of _SLACK), since the ride drains W′ a little faster than the steady model.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276 (pacing.plan.steady_model, pacing.plan.simulate)
Atkinson, G., Peacock, O. & Passfield, L. (2007). Variable versus constant power strategies
during cycling time-trials: prediction of time savings using an up-to-date mathematical model.
J Sports Sci 25(9):1001-1009. doi:10.1080/02640410600944709 (pacing.plan.fastest)
Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
doi:10.1249/MSS.0b013e3182517a80 (the W′ balance of the verified ride)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
from numpy.typing import ArrayLike

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.fastest import fastest_steady_plan
from pacing.plan.fastest_problem import SolverReport
from pacing.plan.prediction import Prediction, SimulationOptions
from pacing.plan.request import (
    MAXIMUM_PLAN_POWER,
    PlanRequest,
    check_plan_size,
    power_limits,
    required_mean_power,
    required_target_time,
    w_prime_parameters,
)
from pacing.plan.steady_model import segment_model, steady_times
from pacing.plan.verify import (
    VerifyingRide,
    bound_binding,
    constant_reference,
    ride_effort,
    ride_measure,
    ride_w_prime_balance,
    scaled_to_target,
)
from pacing.weather.conditions import CourseAir

_CORRECTION_ROUNDS = 4
_SLACK = 0.01  # verified slack of a held limit worth a re-solve, relative to W′ or the cap


@dataclass(frozen=True, eq=False)
class RacePlan:
    """A pacing plan and its verified prediction.

    Attributes
    ----------
    strategy : str
        The request's strategy [-].
    request : PlanRequest
        The request the plan answers (for a target time: with the constant power found) [-].
    bounds : numpy.ndarray
        Segment boundary point indices [-].
    segment_power : numpy.ndarray
        Target crank power of each segment, length K [W].
    piece_power : numpy.ndarray
        Planned power of each piece, length N-1 [W].
    prediction : Prediction
        Inertial simulation of the plan [-].
    reference : Prediction
        Simulation of constant power at the same verified mean power (or work) [-].
    reference_power : float
        That constant power [W].
    time_saved : float
        Reference finish time − plan finish time [s].
    w_prime_balance : numpy.ndarray or None
        W′ balance at every point, length N; None without CP and W′ [J].
    segment_w_prime_balance : numpy.ndarray or None
        W′ balance at the end of each segment, length K; None without CP and W′ [J].
    min_w_prime_balance : float or None
        Lowest W′ balance; None without CP and W′ [J].
    min_w_prime_distance : float or None
        Distance where it happens; None without CP and W′ [m].
    effort_weighted_power : float
        Effort-weighted power of the verified ride [W].
    residuals : dict of str to float
        Constraint residuals on the verified ride, by name: "mean_power_w" [W] or "work_j"
        [J], verified − target; "w_prime_reserve_j", min balance − reserve, ≥ 0 when met [J];
        "effort_cap_w", cap − effort-weighted power, ≥ 0 when met [W]; "power_bounds_w",
        largest excursion of a segment power outside its bounds, 0 when met [W].
    binding : tuple of str
        Names of the constraints that bind ("mean-power", "work", "max-power on N segments",
        "min-power on N segments", "w-prime-reserve", "effort-cap") [-].
    solver : SolverReport
        How the segment powers were found [-].
    steady_time : float
        Finish time of the plan in the steady-state segment model [s].
    steady_reference_time : float
        Finish time of constant power at the request's mean power in that model [s].
    power_low : numpy.ndarray or None
        Lower bound of each segment power, length K [W].
    power_high : numpy.ndarray or None
        Upper bound of each segment power, length K [W].
    """

    strategy: str
    request: PlanRequest
    bounds: np.ndarray
    segment_power: np.ndarray
    piece_power: np.ndarray
    prediction: Prediction
    reference: Prediction
    reference_power: float
    time_saved: float
    w_prime_balance: np.ndarray | None
    segment_w_prime_balance: np.ndarray | None
    min_w_prime_balance: float | None
    min_w_prime_distance: float | None
    effort_weighted_power: float
    residuals: dict[str, float] = field(default_factory=dict)
    binding: tuple[str, ...] = ()
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


# ------------------------------------------------------------------ plans

def make_plan(course: Course, bounds: ArrayLike, rider: Rider, air: CourseAir,
              request: PlanRequest, options: SimulationOptions | None = None) -> RacePlan:
    """Make the plan a request asks for and verify it by the inertial simulation.

    "constant": the request's mean power on every segment. "target-time": the constant power
    whose simulated finish time is the target. "fastest": the fastest segment powers of the
    steady-state segment model (pacing.plan.fastest), scaled so the verified ride meets the
    mean power (or work), re-solved while the verified ride breaks the W′ reserve or the
    effort cap (module docstring).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    bounds : array_like of int
        Segment boundary point indices, increasing, first 0, last N-1 [-].
    rider : pacing.physics.cycling.Rider
        The rider and bike [-].
    air : pacing.weather.conditions.CourseAir
        Air density [kg/m³], headwind [m/s] and crosswind [m/s] on every piece [-].
    request : PlanRequest
        What the coach asks for [-].
    options : SimulationOptions or None
        Choices of the verifying simulation; None for the defaults [-].

    Returns
    -------
    RacePlan
        The plan with its verified prediction and constant-power reference [-].

    Raises
    ------
    InputError
        When the request cannot be met (e.g. a target time beyond what CP and W′ allow, or a
        mean power that drains W′ below the reserve on every plan), or lacks its mean power
        or target time.

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998).
    Validation of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    Atkinson, G., Peacock, O. & Passfield, L. (2007). J Sports Sci 25(9):1001-1009.
    doi:10.1080/02640410600944709
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Med Sci Sports Exerc
    44(8):1526-1532. doi:10.1249/MSS.0b013e3182517a80
    """
    if not isinstance(request, PlanRequest):
        raise InputError("request must be a PlanRequest")
    if request.strategy == "target-time":
        required_target_time(request)
    else:
        required_mean_power(request)
    check_plan_size(int(np.asarray(course.distance).size), int(np.asarray(bounds).size) - 1)
    model = segment_model(course, bounds, rider, air)
    ride = VerifyingRide(course, np.asarray(bounds, dtype=int), rider, air, options, model)
    if request.strategy == "target-time":
        return _target_time_plan(ride, request)
    if request.strategy == "constant":
        return _finish_plan(ride, request, np.full(model.count, required_mean_power(request)),
                            None, SolverReport("constant"))
    return _fastest_plan(ride, request)


def _clock(seconds: float) -> str:
    """A finish time as the coach types it: "H:MM:SS", whole seconds rounded half up (the
    same text as pacing.display.units.format_duration, which the core does not import)."""
    hours, rest = divmod(int(np.floor(seconds + 0.5)), 3600)
    return f"{hours}:{rest // 60:02d}:{rest % 60:02d}"


def _constant_target_time(ride: VerifyingRide, request: PlanRequest, target: float) -> float:
    """Constant power whose simulated finish time equals the target [s]; the power [W].

    brentq on the steady finish time, then secant steps on the simulated one (to 0.01 s).
    """
    from scipy import optimize  # here: constant and fastest plans never load it

    model = ride.model

    def steady(power: float) -> float:
        time, _ = steady_times(model, np.full(model.count, power))
        return float(time.sum()) - target

    if steady(MAXIMUM_PLAN_POWER) > 0:
        raise InputError(f"finish time {_clock(target)} is not reachable: even "
                         f"{MAXIMUM_PLAN_POWER:g} W is slower")
    if steady(1.0) < 0:
        raise InputError(f"finish time {_clock(target)} is slower than riding at 1 W")
    power = optimize.brentq(steady, 1.0, MAXIMUM_PLAN_POWER, xtol=1e-6)
    pieces = np.asarray(ride.course.distance).size - 1
    previous = None
    for _ in range(8):
        finish = float(ride.simulate(np.full(pieces, power)).finish_time)
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
            raise InputError(f"finish time {_clock(target)} is not reachable on this course")
    return float(power)


def _target_time_plan(ride: VerifyingRide, request: PlanRequest) -> RacePlan:
    """The constant plan that reaches the request's target time, checked against CP, W′ and
    the power cap."""
    target = required_target_time(request)
    power = _constant_target_time(ride, request, target)
    request_for_plan = PlanRequest(
        strategy="target-time", mean_power=power, target_time=request.target_time,
        critical_power=request.critical_power, w_prime=request.w_prime,
        w_prime_reserve=request.w_prime_reserve, max_power_ratio=request.max_power_ratio,
        w_prime_model=request.w_prime_model, band=request.band)
    plan = _finish_plan(ride, request_for_plan, np.full(ride.model.count, power), None,
                        SolverReport("constant"))
    _check_reachable(plan, request)
    return plan


def _check_reachable(plan: RacePlan, request: PlanRequest) -> None:
    """InputError when the target-time plan drains W′ below the reserve or needs more than
    the power cap."""
    power = plan.reference_power
    target = required_target_time(request)
    if (request.uses_w_prime and plan.min_w_prime_balance is not None
            and plan.min_w_prime_balance < request.w_prime_reserve):
        critical_power, w_prime = w_prime_parameters(request)
        allowed = critical_power + (w_prime - request.w_prime_reserve) / plan.finish_time
        raise InputError(f"finish time {_clock(target)} is not reachable: it needs "
                         f"{power:.0f} W, more than the {allowed:.0f} W that CP and W′ allow")
    if request.max_power_ratio is not None:
        reference = request.critical_power or power
        if power > request.max_power_ratio * reference * (1 + 1e-9):
            raise InputError(f"finish time {_clock(target)} is not reachable: it "
                             f"needs {power:.0f} W, above the power cap")


@dataclass
class _Aim:
    """The W′ reserve [J] and effort cap [W] the solver is asked to keep in a correction
    round, and the (asked, verified) pairs tried so far for the secant steps."""

    reserve: float | None
    cap: float | None
    tried_reserve: list[tuple[float, float]] = field(default_factory=list)
    tried_cap: list[tuple[float, float]] = field(default_factory=list)


def _first_aim(request: PlanRequest) -> _Aim:
    """The first round's aim.

    The solver aims at the middle of the band a verified W′ reserve is accepted in (kept,
    with less than _SLACK of slack): the ride drains W′ a little faster than the steady model
    (speed changes), and that no longer needs a new round. The effort cap is aimed at as
    asked: the verified 30 s rolling measure is never above the solver's bound of it.
    """
    if not request.uses_w_prime:
        return _Aim(None, request.effort_weighted_cap)
    w_prime = w_prime_parameters(request)[1]
    target = request.w_prime_reserve
    return _Aim(max(target, min(target + 0.5 * _SLACK * w_prime, 0.999 * w_prime)),
                request.effort_weighted_cap)


def _solve_round(ride: VerifyingRide, request: PlanRequest, limits: tuple[np.ndarray, np.ndarray],
                 aim: _Aim, rounds: int, previous: tuple[np.ndarray, SolverReport] | None
                 ) -> tuple[np.ndarray, SolverReport]:
    """One round's steady solve; a correction round starts from the previous round's plan
    (the full search runs again only if that start fails). When the first round's aimed
    limits cannot be kept, the requested ones may: it solves for those (and `aim` moves)."""
    lower, upper = limits
    try:
        return fastest_steady_plan(ride.model, request, lower, upper, aim.reserve, aim.cap,
                                   start=previous)
    except InputError:
        asked = _first_aim(request)
        requested = request.w_prime_reserve if request.uses_w_prime else None
        if rounds > 0 or (aim.reserve == requested and aim.cap == asked.cap):
            raise
        aim.reserve, aim.cap = requested, asked.cap
        return fastest_steady_plan(ride.model, request, lower, upper, aim.reserve, aim.cap)


def _fastest_plan(ride: VerifyingRide, request: PlanRequest) -> RacePlan:
    """The fastest plan, verified, with correction rounds while the verified ride breaks a
    limit the solver held (or keeps it with needless slack); the fastest feasible one."""
    mean = required_mean_power(request)
    limits = power_limits(ride.model, request)
    aim = _first_aim(request)
    reference = constant_reference(ride, request)
    best = None
    previous = None
    w_gap = math.inf
    closest: tuple[float, np.ndarray, SolverReport] | None = None
    for rounds in range(_CORRECTION_ROUNDS + 1):
        power, report = _solve_round(ride, request, limits, aim, rounds, previous)
        previous = (power, report)
        report = replace(report, correction_rounds=rounds)
        plan = _finish_plan(ride, request, power, limits, report, reference)
        w_gap = plan.residuals.get("w_prime_reserve_j", math.inf)
        cap_gap = plan.residuals.get("effort_cap_w", math.inf)
        feasible = _keeps(plan, request)
        if feasible and (best is None or plan.finish_time < best.finish_time):
            best = plan
        shortfall = min(w_gap / float(request.w_prime or 1.0), cap_gap / mean)
        if closest is None or shortfall > closest[0]:
            closest = (shortfall, power, report)
        if not _correct_aim(aim, plan, request, w_gap, cap_gap) and feasible:
            break
    if best is None and closest is not None:
        best = _blended_plan(ride, request, limits, reference, closest[1], closest[2])
    if best is None:
        what = "W′ reserve" if w_gap < 0 else "effort cap"
        raise InputError(f"no plan at mean power {mean:g} W keeps the {what} on the simulated "
                         "ride")
    return best


def _keeps(plan: RacePlan, request: PlanRequest) -> bool:
    """Whether a verified plan keeps the W′ reserve (to 1e-6 of W′) and the effort cap (to
    1e-6 of the mean power)."""
    return (plan.residuals.get("w_prime_reserve_j", math.inf)
            >= -1e-6 * float(request.w_prime or 1.0)
            and plan.residuals.get("effort_cap_w", math.inf)
            >= -1e-6 * required_mean_power(request))


def _blended_plan(ride: VerifyingRide, request: PlanRequest, limits: tuple[np.ndarray, np.ndarray],
                  reference: tuple[Prediction, float], power: np.ndarray, report: SolverReport
                  ) -> RacePlan | None:
    """When no correction round's plan keeps the limits on the ride: the largest share α of
    the steady plan, the rest constant power, (1 − α)·P̄_ride + α·P, whose verified ride keeps
    them (bisection on α to 1/64; α = 0 is the constant plan); None when even constant power
    breaks them.

    Below CP the constant plan keeps W′ whole, while the steady plan rides long segments at CP
    exactly (the kink of the W′ balance), which scaling it to the ride's mean power pushes a
    hair above CP for most of the ride.
    """
    constant = np.full(ride.model.count, reference[1])
    low, best = 0.0, None
    high = 1.0
    for _ in range(7):
        share = low if best is None else 0.5 * (low + high)
        mixed = replace(report, method=report.method + "+blend",
                        message=f"{share:.3f} of the steady plan, the rest constant power: "
                                "the ride broke a limit with the whole plan")
        plan = _finish_plan(ride, request, (1.0 - share) * constant + share * power, limits,
                            mixed, reference)
        if _keeps(plan, request):
            low, best = share, plan
        elif best is None:
            return None
        else:
            high = share
    return best


def _correct_aim(aim: _Aim, plan: RacePlan, request: PlanRequest, w_gap: float,
                 cap_gap: float) -> bool:
    """Move the aimed reserve or cap by a secant step while a limit the solver held is broken
    on the verified ride, or kept with more than _SLACK of slack; whether one moved."""
    active = plan.solver.active
    w_prime = float(request.w_prime or 1.0)
    w_off = w_gap < 0 or ("w-prime-reserve" in active and w_gap > _SLACK * w_prime)
    cap_off = cap_gap < 0 or ("effort-cap" in active and cap_gap > _SLACK * float(
        request.effort_weighted_cap or 0.0))
    if (w_off and aim.reserve is not None and plan.min_w_prime_balance is not None):
        moved = _next_limit(aim.tried_reserve, aim.reserve, plan.min_w_prime_balance,
                            request.w_prime_reserve + 0.5 * _SLACK * w_prime)
        aim.reserve = min(max(moved, 0.0), 0.999 * w_prime)
    target_cap = request.effort_weighted_cap
    if cap_off and aim.cap is not None and target_cap is not None:
        aim.cap = _next_limit(aim.tried_cap, aim.cap, -plan.effort_weighted_power,
                              -(target_cap - 0.5 * _SLACK * target_cap))
    return w_off or cap_off


def _next_limit(history: list[tuple[float, float]], limit: float, measured: float,
                wanted: float) -> float:
    """Secant step on an internal limit so the verified value reaches `wanted`."""
    history.append((limit, measured))
    if len(history) >= 2:
        (l0, m0), (l1, m1) = history[-2], history[-1]
        if m1 != m0:
            return l1 + (wanted - m1) * (l1 - l0) / (m1 - m0)
    return limit + (wanted - measured)


def _finish_plan(ride: VerifyingRide, request: PlanRequest, segment_power: np.ndarray,
                 limits: tuple[np.ndarray, np.ndarray] | None, report: SolverReport,
                 reference: tuple[Prediction, float] | None = None) -> RacePlan:
    """Verify, correct and package a plan: the fastest plan is scaled to its target and its
    bounds checked; constant plans are their own reference."""
    mean = required_mean_power(request)
    model = ride.model
    constant_time, _ = steady_times(model, np.full(model.count, mean))
    steady_time, _ = steady_times(model, segment_power)
    lower, upper = limits if limits is not None else (segment_power, segment_power)
    residuals: dict[str, float] = {}
    binding: list[str] = []
    if request.strategy == "fastest":
        reference_ride, reference_power = reference or constant_reference(ride, request)
        target = mean if request.constraint == "mean-power" else float(reference_ride.work)
        segment_power, prediction = scaled_to_target(ride, request, segment_power, lower,
                                                      upper, target)
        piece_power = segment_power[model.segment]
        name = "work_j" if request.constraint == "work" else "mean_power_w"
        residuals[name] = ride_measure(prediction, request) - target
        bound_names, excursion = bound_binding(segment_power, lower, upper)
        binding += [request.constraint, *bound_names]
        residuals["power_bounds_w"] = excursion
    else:
        piece_power = np.full(model.segment.size, mean)
        reference_ride = prediction = ride.simulate(piece_power)
        reference_power = mean
    balance = segment_balance = min_balance = min_distance = None
    if request.uses_w_prime:
        balance, segment_balance, min_balance, min_distance = ride_w_prime_balance(
            prediction, request, ride.bounds)
        residuals["w_prime_reserve_j"] = min_balance - request.w_prime_reserve
        if "w-prime-reserve" in report.active:
            binding.append("w-prime-reserve")
    effort = ride_effort(prediction)
    if request.effort_weighted_cap is not None:
        residuals["effort_cap_w"] = request.effort_weighted_cap - effort
        if "effort-cap" in report.active:
            binding.append("effort-cap")
    return RacePlan(
        strategy=request.strategy,
        request=request,
        bounds=np.asarray(ride.bounds, dtype=int),
        segment_power=np.asarray(segment_power, dtype=float),
        piece_power=np.asarray(piece_power, dtype=float),
        prediction=prediction,
        reference=reference_ride,
        reference_power=reference_power,
        time_saved=float(reference_ride.finish_time) - float(prediction.finish_time),
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
