"""Cycling pacing plans: constant power, a target finish time, and the fastest plan the
athlete can hold.

The fastest plan is found on the coach's segments (one power per segment, not per point) with a
steady-state model of each segment: every piece i of segment k is ridden at the steady speed
v_i(P_k) of the Martin et al. power balance, so the segment takes t_k(P_k) = Σ L_i / v_i(P_k).
Differentiating the balance η·P = v·F(v) gives dv/dP = η / (F + v·F′) and
d²v/dP² = −(2F′ + v·F″)·(dv/dP)³ / η, so t_k, t_k′ and t_k″ are exact and cheap.

Minimise T = Σ t_k(P_k) subject to one coupling constraint
    E(P) = Σ (P_k − c)·t_k(P_k) − E₀ = 0,
with c = P̄, E₀ = 0 for an equal time-weighted mean power, and c = 0, E₀ = work of the
constant plan for an equal total work, and lo_k ≤ P_k ≤ hi_k. The problem separates: for a
multiplier λ each segment minimises its own Lagrangian t_k(P)·(1 + λ·(P − c)) on [lo_k, hi_k]
(its stationarity condition is t_k′·(1 + λ(P − c)) + λ·t_k = 0: every free segment buys the
same time per joule), and λ is the root of the monotone E(P(λ)) = 0. Those two nested 1-D
problems (a vectorised safeguarded Newton over all segments inside a safeguarded Newton on
λ, dE/dλ = −Σ b_k²/a_k by implicit differentiation) solve the pure mean-power case exactly.

When the athlete's W′ balance (reserve) or the effort cap would be broken:
1. the broken limit gets a price in every segment's Lagrangian, μ·(P − CP)⁺·t_k for W′ spent
   above CP or ν·P⁴·t_k for the effort measure, and the lowest price whose plan keeps the limit
   is found by false position (the problem stays separable, so it is as fast as above);
   when both limits break, the highest common power ceiling that keeps them is used instead;
2. on up to _SLSQP_MAX_SEGMENTS segments, scipy's SLSQP then polishes that feasible plan on the
   full problem (W′ balance at every segment end, recovery included), with analytic gradients
   of time, mean power and W′ balance; its answer is kept only when feasible and faster.
The solver's effort measure is the time-weighted 4th-power mean of the segment powers, an upper
bound of the effort-weighted power (a 30 s rolling mean can only lower it).

The plan is then verified by the inertial simulation (pacing.simulate) and corrected so the
verified ride meets the constraints: the free segments' powers are scaled until the simulated
mean power (or work) hits its target; the W′ reserve and the effort cap are re-checked on the
simulated ride and, when broken (or held with needless slack), the solver runs again with the
solver-side limit moved by secant steps.

References
----------
Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
Atkinson, G., Peacock, O. & Passfield, L. (2007). Variable versus constant power strategies
during cycling time-trials: prediction of time savings using an up-to-date mathematical model.
J Sports Sci 25(9):1001-1009. doi:10.1080/02640410600944709
Bos, L., Slawinski, M.A., Slawinski, R.A. & Stanoev, T. (2024). On minimizing cyclists' ascent
times. arXiv:2403.03363.
Kraft, D. (1988). A software package for sequential quadratic programming. DFVLR-FB 88-28
(scipy.optimize SLSQP).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np
from scipy import optimize

from pacing.course import piece_segment_index
from pacing.cycling import (
    WALKING_SPEED,
    Rider,
    gravity_force,
    power_for_speed,
    rolling_force,
    speed_for_power,
)
from pacing.errors import InputError
from pacing.physiology import (
    W_PRIME_BALANCE_MODELS,
    effort_weighted_power,
    recovery_time_constant,
    w_prime_balance,
)

STRATEGIES = ("constant", "fastest", "target-time")
"""Plans `make_plan` can make."""

CONSTRAINTS = ("mean-power", "work")
"""What the fastest plan keeps equal to the constant plan: time-weighted mean power or work."""

DEFAULT_MAX_POWER_RATIO = 1.5
"""Upper power bound relative to the mean power when the request sets none [-]: a safety cap
so an unbounded optimum never asks for a sprint-level effort on a long climb."""

DESCENT_GRADE = -0.02
"""Mean grade at or below which a segment counts as a descent for `allow_zero_on_descents` [-]."""

MAXIMUM_PLAN_POWER = 3000.0
"""No plan asks for more crank power than this [W]."""

_POWER_TOLERANCE = 1e-11  # relative, on segment powers
_CORRECTION_ROUNDS = 4
_MINIMUM_SPEED = 0.05  # speed_for_power's floor (a stalled rider) [m/s]
_PRICE_TOLERANCE = 1e-3  # slack left by the priced plan, relative to W′ or the cap
_SLSQP_MAX_SEGMENTS = 120  # above this the dense SLSQP polish costs more than it gains
_MATCH_TOLERANCE = 5e-5  # relative, verified mean power (or work) against its target
_SLACK = 0.01  # verified slack of a held limit worth a re-solve, relative to W′ or the cap


@dataclass(frozen=True)
class PlanRequest:
    """What the coach asks for, and the athlete's limits.

    Attributes
    ----------
    strategy : "constant", "fastest" or "target-time".
    mean_power : constant power, or the mean power the fastest plan must match [W].
    target_time : finish time to reach ("target-time") [s].
    constraint : "mean-power" (time-weighted mean equal to `mean_power`) or "work" (same
        total work as the constant plan at `mean_power`).
    critical_power : CP [W]; None if unknown.
    w_prime : W′ [J]; None if unknown (both CP and W′ are needed for the W′ reserve).
    w_prime_reserve : W′ balance never to go below [J].
    max_power_ratio : segment power at most this multiple of CP (of the mean power without
        CP) [-]; None means DEFAULT_MAX_POWER_RATIO times the mean power.
    min_power_ratio : segment power at least this multiple of CP (of the mean power without
        CP) [-].
    allow_zero_on_descents : descents (mean grade ≤ DESCENT_GRADE) may go down to 0 W.
    effort_weighted_cap : upper limit of the effort-weighted power [W]; None for none.
    w_prime_model : key of pacing.physiology.W_PRIME_BALANCE_MODELS.
    band : half-width of the target band around each segment power, as a fraction [-].
    """

    strategy: str = "constant"
    mean_power: float | None = None
    target_time: float | None = None
    constraint: str = "mean-power"
    critical_power: float | None = None
    w_prime: float | None = None
    w_prime_reserve: float = 0.0
    max_power_ratio: float | None = None
    min_power_ratio: float = 0.0
    allow_zero_on_descents: bool = False
    effort_weighted_cap: float | None = None
    w_prime_model: str = "differential"
    band: float = 0.03

    def __post_init__(self) -> None:
        def positive(value: float | None) -> bool:
            return value is None or (math.isfinite(value) and value > 0)

        if self.strategy not in STRATEGIES:
            raise InputError(f"unknown strategy {self.strategy!r}; choose one of "
                             f"{', '.join(STRATEGIES)}")
        if self.constraint not in CONSTRAINTS:
            raise InputError(f"unknown constraint {self.constraint!r}; choose one of "
                             f"{', '.join(CONSTRAINTS)}")
        if self.w_prime_model not in W_PRIME_BALANCE_MODELS:
            raise InputError(f"unknown W′ balance model {self.w_prime_model!r}")
        for name in ("mean_power", "target_time", "critical_power", "w_prime",
                     "max_power_ratio", "effort_weighted_cap"):
            if not positive(getattr(self, name)):
                raise InputError(f"{name.replace('_', ' ')} must be positive, "
                                 f"got {getattr(self, name)}")
        if self.mean_power is not None and self.mean_power > MAXIMUM_PLAN_POWER:
            raise InputError(f"mean power {self.mean_power:g} W is beyond "
                             f"{MAXIMUM_PLAN_POWER:g} W")
        if not (math.isfinite(self.w_prime_reserve) and self.w_prime_reserve >= 0):
            raise InputError(f"W′ reserve must be ≥ 0 J, got {self.w_prime_reserve}")
        if self.w_prime is not None and self.w_prime_reserve >= self.w_prime:
            raise InputError(f"W′ reserve {self.w_prime_reserve:g} J must be below W′ "
                             f"{self.w_prime:g} J")
        if not (math.isfinite(self.min_power_ratio) and self.min_power_ratio >= 0):
            raise InputError(f"min power ratio must be ≥ 0, got {self.min_power_ratio}")
        if (self.max_power_ratio is not None
                and self.max_power_ratio <= self.min_power_ratio):
            raise InputError("max power ratio must exceed min power ratio")
        if not (math.isfinite(self.band) and 0 <= self.band < 1):
            raise InputError(f"band must be a fraction 0..1, got {self.band}")

    @property
    def uses_w_prime(self) -> bool:
        """Whether CP and W′ are both known, so the W′ balance is tracked and limited."""
        return self.critical_power is not None and self.w_prime is not None


@dataclass(frozen=True, eq=False)
class SegmentModel:
    """Pieces of a course grouped into segments, for the steady-state segment times.

    Attributes
    ----------
    length : road length of each piece, horizontal length·√(1 + G²) (the speeds of the power
        balance are along the road, as in pacing.simulate) [m].
    grade, density, headwind, crosswind : per piece [-], [kg/m³], [m/s], [m/s].
    segment : segment number of each piece, length N-1.
    count : number of segments K.
    mean_grade : net rise over length of each segment [-], length K.
    rider : the Rider.
    """

    length: np.ndarray
    grade: np.ndarray
    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray
    segment: np.ndarray
    count: int
    mean_grade: np.ndarray
    rider: Rider
    speed_guess: dict = field(default_factory=dict, repr=False)
    """Last steady speeds found, to start the next solve from (a cache; results do not
    depend on it beyond the solver's tolerance)."""


def segment_model(course, bounds, rider: Rider, air) -> SegmentModel:
    """Build the SegmentModel of a course cut at `bounds` with the air on each piece.

    Parameters
    ----------
    course : pacing.course.Course; bounds : boundary point indices (first 0, last N-1);
    rider : pacing.cycling.Rider; air : pacing.conditions.CourseAir (arrays of length N-1).
    """
    bounds = np.asarray(bounds)
    points = np.asarray(course.distance).size
    if (bounds.ndim != 1 or bounds.size < 2 or bounds[0] != 0 or bounds[-1] != points - 1
            or np.any(np.diff(bounds) <= 0)):
        raise InputError("segment bounds must be increasing point indices from 0 to N-1")
    bounds = bounds.astype(int)
    pieces = points - 1

    def per_piece(values, name: str) -> np.ndarray:
        array = np.broadcast_to(np.asarray(values, dtype=float), (pieces,)).copy()
        if not np.all(np.isfinite(array)):
            raise InputError(f"{name} must be finite on every piece")
        return array

    elevation = np.asarray(course.elevation, dtype=float)
    distance = np.asarray(course.distance, dtype=float)
    grade = per_piece(course.grade, "grade")
    return SegmentModel(
        length=np.diff(distance) * np.sqrt(1.0 + grade**2),
        grade=grade,
        density=per_piece(air.density, "air density"),
        headwind=per_piece(air.headwind, "headwind"),
        crosswind=per_piece(air.crosswind, "crosswind"),
        segment=piece_segment_index(bounds),
        count=bounds.size - 1,
        mean_grade=np.diff(elevation[bounds]) / np.diff(distance[bounds]),
        rider=rider,
    )


def steady_segment_times(
    model: SegmentModel, segment_power: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Steady-state time of each segment and its first two derivatives in power.

    t_k = Σ L_i / v_i, t_k′ = −Σ L_i·v_i′ / v_i², t_k″ = Σ L_i·(2·v_i′²/v_i³ − v_i″/v_i²), with
    v′ = η/(F + v·F′) and v″ = −(2F′ + v·F″)·v′³/η from the power balance η·P = v·F(v)
    (Martin et al. 1998). The slope of a yaw-drag table is neglected in F′ and F″ only.

    Parameters
    ----------
    model : SegmentModel; segment_power : crank power of each segment [W], length K.

    Returns
    -------
    (time [s], dtime/dpower [s/W], d²time/dpower² [s/W²]), each of length K.
    """
    rider = model.rider
    power = np.asarray(segment_power, dtype=float)[model.segment]
    speed = _steady_speed(model, power)
    along = speed + model.headwind
    apparent = np.hypot(along, model.crosswind)
    area = rider.drag_area * (1.0 - rider.drafting_reduction) + rider.wheel_drag_area
    k = 0.5 * model.density * area
    safe = np.where(apparent > 0, apparent, 1.0)
    slope = k * (apparent + along**2 / safe) + rider.bearing_force_per_speed
    curvature = k * (3.0 * along / safe - along**3 / safe**3)
    efficiency = rider.drivetrain_efficiency
    force = efficiency * np.maximum(power, 0.0) / speed
    first = efficiency / (force + speed * slope)
    second = -(2.0 * slope + speed * curvature) * first**3 / efficiency
    length = model.length
    count = model.count
    time = np.bincount(model.segment, length / speed, count)
    dtime = np.bincount(model.segment, -length * first / speed**2, count)
    d2time = np.bincount(
        model.segment, length * (2.0 * first**2 / speed**3 - second / speed**2), count
    )
    return time, dtime, d2time


def _steady_speed(model: SegmentModel, power: np.ndarray) -> np.ndarray:
    """Steady speed on every piece [m/s]: pacing.cycling.speed_for_power, or, when the model
    holds the speeds of a previous solve, Newton steps from them on the same balance
    g(v) = F(v) − η·P/v (pieces that do not converge fast fall back to speed_for_power)."""
    rider = model.rider
    guess = model.speed_guess.get("speed")
    if guess is None or rider.yaw_drag_table is not None:
        speed = speed_for_power(power, model.grade, model.density, rider, model.headwind,
                                model.crosswind)
        model.speed_guess["speed"] = speed
        return speed
    constant = model.speed_guess.get("constant")
    if constant is None:
        constant = (rolling_force(model.grade, rider) + gravity_force(model.grade, rider)
                    + rider.bearing_force_constant)
        model.speed_guess["constant"] = constant
    drag = 0.5 * model.density * (rider.drag_area * (1.0 - rider.drafting_reduction)
                                  + rider.wheel_drag_area)
    drive = rider.drivetrain_efficiency * np.maximum(power, 0.0)
    speed = guess.copy()
    converged = np.zeros(speed.shape, dtype=bool)
    with np.errstate(all="ignore"):
        for _ in range(8):
            along = speed + model.headwind
            apparent = np.hypot(along, model.crosswind)
            value = (drag * apparent * along + constant + rider.bearing_force_per_speed * speed
                     - drive / speed)
            slope = (drag * (apparent + along**2 / np.where(apparent > 0, apparent, 1.0))
                     + rider.bearing_force_per_speed + drive / speed**2)
            step = value / slope
            speed = speed - step
            converged = np.abs(step) <= 1e-12 * np.abs(speed)
            if converged.all():
                break
    bad = ~(converged & np.isfinite(speed) & (speed > _MINIMUM_SPEED))
    if bad.any():
        speed[bad] = speed_for_power(power[bad], model.grade[bad], model.density[bad], rider,
                                     model.headwind[bad], model.crosswind[bad])
    model.speed_guess["speed"] = speed
    return speed


def power_limits(model: SegmentModel, request: PlanRequest) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper power bound of each segment [W].

    The reference is CP when known, else the mean power. The lower bound is at least the power
    that keeps the rider moving at walking pace on the segment's steepest piece (below it the
    steady model stalls), except on descents when zero is allowed.
    """
    mean = float(request.mean_power)
    reference = request.critical_power if request.critical_power is not None else mean
    upper = (request.max_power_ratio * reference if request.max_power_ratio is not None
             else DEFAULT_MAX_POWER_RATIO * mean)
    upper = min(upper, MAXIMUM_PLAN_POWER)
    lower = np.full(model.count, request.min_power_ratio * reference)
    if request.allow_zero_on_descents:
        lower[model.mean_grade <= DESCENT_GRADE] = 0.0
    moving = power_for_speed(WALKING_SPEED, model.grade, model.density, model.rider,
                             model.headwind, model.crosswind)
    needed = np.zeros(model.count)
    np.maximum.at(needed, model.segment, np.maximum(moving, 0.0))
    lower = np.maximum(lower, needed)
    high = np.full(model.count, upper)
    if np.any(lower > high):
        k = int(np.argmax(lower - high))
        raise InputError(f"segment {k + 1} needs {lower[k]:.0f} W just to keep riding, more "
                         f"than the power cap {upper:.0f} W")
    if not (lower.min() <= mean <= upper):
        raise InputError(f"mean power {mean:g} W lies outside the power limits "
                         f"{lower.min():.0f}-{upper:.0f} W")
    return lower, high


@dataclass(frozen=True)
class SolverReport:
    """How the fastest plan was found, and evidence that it is optimal.

    Attributes
    ----------
    method : "constant"; "lagrange" (coupling constraint and bounds only); "lagrange+price"
        or "lagrange+ceiling" (a limit priced, or a common power ceiling), with "+slsqp" when
        SLSQP improved that plan.
    multiplier : λ, time saved per joule-equivalent of the coupling constraint [s/J]
        (Lagrange stage); None when not used.
    iterations : solver iterations (outer root finding + SLSQP iterations).
    evaluations : steady-state evaluations of the whole course.
    stationarity : largest relative KKT stationarity residual over free segments [-]
        (≈ 0 at the optimum; every free segment has the same marginal time per joule).
    message : the solver's own message.
    correction_rounds : times the plan was re-solved because the verified ride broke a limit
        the solver held (or kept it with slack).
    active : limits held by the solver at its solution ("w-prime-reserve", "effort-cap").
    """

    method: str
    multiplier: float | None = None
    iterations: int = 0
    evaluations: int = 0
    stationarity: float = 0.0
    message: str = ""
    correction_rounds: int = 0
    active: tuple = ()


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
    prediction : inertial simulation of the plan (pacing.simulate.Prediction).
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


# ------------------------------------------------------------------ fastest plan, steady state

def _coupling(request: PlanRequest, model: SegmentModel) -> tuple[float, float]:
    """(c, E₀) of the coupling constraint Σ (P_k − c)·t_k = E₀."""
    mean = float(request.mean_power)
    if request.constraint == "mean-power":
        return mean, 0.0
    time, _, _ = steady_segment_times(model, np.full(model.count, mean))
    return 0.0, mean * float(time.sum())


@dataclass(frozen=True)
class _Prices:
    """Prices of the limits in the segment Lagrangian: μ·(P − CP)⁺·t (W′ spent above CP) and
    ν·P⁴·t (the solver's effort measure)."""

    w_prime: float = 0.0
    critical_power: float = math.inf
    effort: float = 0.0


def _segment_argmin(model, multiplier, centre, lower, upper, start, counter, prices=None):
    """Minimise t_k(P)·(1 + λ(P − c)) (+ priced limits) over [lo_k, hi_k] for every segment
    (safeguarded Newton, vectorized over segments).

    Returns (power, time, slope of the coupling constraint b_k = t_k + (P_k − c)·t_k′,
    curvature of the Lagrangian a_k, free-segment mask).
    """
    prices = prices or _Prices()
    low, high = lower.copy(), upper.copy()
    power = np.clip(start, lower, upper)
    kink = prices.critical_power
    for _ in range(60):
        time, dtime, d2time = steady_segment_times(model, power)
        counter[0] += 1
        weight = 1.0 + multiplier * (power - centre)
        gradient = dtime * weight + multiplier * time
        hessian = d2time * weight + 2.0 * multiplier * dtime
        at_kink = np.zeros(power.shape, dtype=bool)
        if prices.w_prime > 0:
            excess = power - kink
            above = excess > 0
            gradient = gradient + prices.w_prime * np.where(above, time + excess * dtime, 0.0)
            hessian = hessian + prices.w_prime * np.where(above, 2 * dtime + excess * d2time,
                                                          0.0)
            # at CP the right-hand slope is larger by μ·t: a minimum can sit on the kink
            at_kink = (power == kink) & (gradient < 0) & (gradient + prices.w_prime * time > 0)
        if prices.effort > 0:
            gradient = gradient + prices.effort * (4 * power**3 * time + power**4 * dtime)
            hessian = hessian + prices.effort * (12 * power**2 * time + 8 * power**3 * dtime
                                                 + power**4 * d2time)
        low = np.where(gradient < 0, power, low)
        high = np.where((gradient > 0) | at_kink, power, high)
        at_lower = (power <= lower) & (gradient >= 0)
        at_upper = (power >= upper) & (gradient <= 0)
        convex = hessian > 0
        newton = power - gradient / np.where(convex, hessian, np.inf)
        inside = convex & (newton > low) & (newton < high)
        new = np.where(inside, newton, 0.5 * (low + high))
        # a step across the kink at CP: try CP itself
        crossing = (low < kink) & (kink < high) & ((newton - kink) * (power - kink) < 0)
        new = np.where(crossing, kink, new)
        new = np.where(at_kink, kink, new)
        # a step past a bound not yet excluded by the bracket: try the bound itself
        new = np.where((~convex | (newton <= low)) & (gradient > 0) & (low <= lower), lower, new)
        new = np.where((~convex | (newton >= high)) & (gradient < 0) & (high >= upper), upper,
                       new)
        new = np.where(at_lower, lower, np.where(at_upper, upper, new))
        done = np.abs(new - power) <= _POWER_TOLERANCE * np.maximum(power, 1.0)
        if np.all(done):
            break
        power = new
    free = ~(at_lower | at_upper | at_kink)
    slope = time + (power - centre) * dtime
    return power, time, slope, hessian, free


def _lagrange_plan(model, request, lower, upper, counter, prices=None, start=None):
    """Fastest powers under the coupling constraint and bounds only; (power, λ, iterations).

    λ is found by Newton steps on E(λ) = Σ (P_k(λ) − c)·t_k − E₀, with
    dE/dλ = −Σ_free b_k² / a_k (implicit differentiation of the segments' stationarity),
    kept inside a bisection bracket; E is decreasing in λ.
    """
    centre, target = _coupling(request, model)
    mean = float(request.mean_power)
    time, dtime, _ = steady_segment_times(model, np.full(model.count, mean))
    counter[0] += 1
    multiplier = float(-dtime.sum() / time.sum())  # λ of a uniform course
    tolerance = 1e-9 * mean * float(time.sum())
    power = np.full(model.count, mean)
    if start is not None:  # a nearby problem's (λ, powers)
        multiplier, power = start[0], np.clip(start[1], lower, upper)
    guess = abs(multiplier)
    # λ < 0 only happens when a priced effort limit pushes every power down
    low = -math.inf if prices is not None and prices.effort > 0 else 0.0
    high = math.inf
    previous = math.inf
    iterations = 0
    for _ in range(60):
        iterations += 1
        power, time, slope, curvature, free = _segment_argmin(
            model, multiplier, centre, lower, upper, power, counter, prices)
        excess = float(np.sum((power - centre) * time) - target)
        if abs(excess) <= tolerance:
            break
        if excess > 0:
            low = multiplier
        else:
            high = multiplier
        usable = free & (curvature > 0)
        derivative = -float(np.sum(slope[usable] ** 2 / curvature[usable]))
        step = multiplier - excess / derivative if derivative < 0 else math.nan
        slow = abs(excess) > 0.5 * previous  # Newton is not converging: bisect instead
        previous = abs(excess)
        if low < step < high and not (slow and math.isfinite(high - low)):
            multiplier = step
        elif math.isfinite(high) and math.isfinite(low):
            multiplier = 0.5 * (low + high)
        elif math.isfinite(high):
            multiplier = high - 2.0 * max(abs(high), guess)
        else:
            multiplier = low + 2.0 * max(abs(low), guess)
        if math.isfinite(high - low) and high - low <= 1e-15 * max(abs(high), guess):
            break
    else:
        raise InputError("no plan within the power limits matches the mean power")
    if abs(excess) > 1e-6 * mean * float(time.sum()):
        raise InputError("no plan within the power limits matches the mean power")
    return power, multiplier, iterations


def _stationarity(model, power, multiplier, centre, lower, upper) -> float:
    time, dtime, _ = steady_segment_times(model, power)
    gradient = dtime * (1.0 + multiplier * (power - centre)) + multiplier * time
    free = (power > lower * (1 + 1e-6) + 1e-9) & (power < upper * (1 - 1e-6))
    if not free.any():
        return 0.0
    return float(np.max(np.abs(gradient[free]) / np.abs(multiplier * time[free])))


def _segment_w_prime(power, time, request) -> np.ndarray:
    """W′ balance at the end of each segment of steady power [J]."""
    return w_prime_balance(power, time, request.critical_power, request.w_prime,
                           request.w_prime_model)


def _w_prime_jacobian(power, time, dtime, request: PlanRequest) -> np.ndarray:
    """d(W′ balance at the end of segment j)/d(power of segment k) [J/W], shape (K, K).

    Both W′ models are affine steps on the deficit D = W′ − W′bal over a segment of constant
    power, D_{k+1} = a_k·D_k + b_k (differential: a = 1, b = (P − CP)·t above CP and
    a = e^{(P − CP)·t/W′}, b = 0 below; integral: a = e^{−t/τ}, b = (P − CP)⁺·τ·(1 − a)), and t_k
    depends on P_k through t_k′. Then dD_j/dP_k = (Π_{k<m<j} a_m)·(D_k·da_k/dP_k + db_k/dP_k)
    for j > k. The integral form's τ is held fixed (its dependence on the mean recovery power is
    neglected in the gradient only).
    """
    critical, w_prime = float(request.critical_power), float(request.w_prime)
    excess = power - critical
    above = excess > 0
    if request.w_prime_model == "differential":
        exponent = np.where(above, 0.0, excess * time / w_prime)
        decay = np.exp(exponent)
        d_decay = np.where(above, 0.0, decay * (time + excess * dtime) / w_prime)
        d_increment = np.where(above, time + excess * dtime, 0.0)
    else:
        below = ~above & (power < critical)
        below_time = float(time[below].sum())
        gap = (critical - float(np.sum(power[below] * time[below])) / below_time
               if below_time > 0 else 0.0)
        tau = recovery_time_constant(gap)
        decay = np.exp(-time / tau)
        d_decay = -decay * dtime / tau
        d_increment = np.where(above, tau * (1.0 - decay), 0.0) + np.maximum(excess, 0.0) * \
            decay * dtime
    deficit = w_prime - np.concatenate([[w_prime], _segment_w_prime(power, time, request)])
    local = deficit[:-1] * d_decay + d_increment  # dD_{k+1}/dP_k
    log_decay = np.concatenate([[0.0], np.cumsum(np.log(np.maximum(decay, 1e-300)))])
    rows = np.arange(power.size)[:, None]
    cols = np.arange(power.size)[None, :]
    # the deficit after segment r (row r) depends on P_k, k ≤ r, through Π_{k<m≤r} a_m
    span = np.where(cols <= rows, log_decay[rows + 1] - log_decay[cols + 1], -np.inf)
    jacobian = -np.exp(span) * local[None, :]
    if request.w_prime_model == "integral" and below_time > 0:
        # τ depends on every below-CP segment through D_CP = CP − Σ_b P·t / Σ_b t
        d_gap = np.where(below, -(time + power * dtime) / below_time
                         + float(np.sum(power[below] * time[below])) * dtime / below_time**2,
                         0.0)
        d_tau = -5.46 * np.exp(-0.01 * gap) * d_gap
        by_tau = np.empty(power.size)  # dD_{r+1}/dτ
        slope = 0.0
        for r in range(power.size):
            da = decay[r] * time[r] / tau**2
            db = max(excess[r], 0.0) * ((1.0 - decay[r]) - decay[r] * time[r] / tau)
            slope = decay[r] * slope + deficit[r] * da + db
            by_tau[r] = slope
        jacobian -= np.outer(by_tau, d_tau)
    return jacobian


def _raw_effort(power: np.ndarray, time: np.ndarray) -> float:
    """Time-weighted 4th-power mean of segment powers: an upper bound of the effort-weighted
    power (averaging over 30 s can only lower it), used as the solver's effort constraint."""
    return float((np.sum(power**4 * time) / np.sum(time)) ** 0.25)


def _slsqp_plan(model, request, lower, upper, start, reserve, cap, counter):
    """Fastest powers with W′ reserve and/or effort cap (SLSQP); returns (power, result)."""
    centre, target = _coupling(request, model)
    mean = float(request.mean_power)
    time0, _, _ = steady_segment_times(model, np.full(model.count, mean))
    total0 = float(time0.sum())
    cache: dict = {}

    def evaluate(x):
        key = x.tobytes()
        if key not in cache:
            cache.clear()
            counter[0] += 1
            cache[key] = steady_segment_times(model, x * mean)
        return cache[key]

    def objective(x):
        return float(evaluate(x)[0].sum() / total0)

    def objective_gradient(x):
        return evaluate(x)[1] * mean / total0

    def coupling(x):
        time = evaluate(x)[0]
        return np.array([(np.sum((x * mean - centre) * time) - target) / (mean * total0)])

    def coupling_gradient(x):
        time, dtime, _ = evaluate(x)
        return ((time + (x * mean - centre) * dtime) * mean / (mean * total0))[None, :]

    constraints = [{"type": "eq", "fun": coupling, "jac": coupling_gradient}]
    if reserve is not None:
        w_prime = float(request.w_prime)

        def balance(x):
            return (_segment_w_prime(x * mean, evaluate(x)[0], request) - reserve) / w_prime

        def balance_jacobian(x):
            time, dtime, _ = evaluate(x)
            return _w_prime_jacobian(x * mean, time, dtime, request) * mean / w_prime

        constraints.append({"type": "ineq", "fun": balance, "jac": balance_jacobian})
    if cap is not None:
        def effort(x):
            time = evaluate(x)[0]
            return np.array([1.0 - (_raw_effort(x * mean, time) / cap) ** 4])

        def effort_gradient(x):
            time, dtime, _ = evaluate(x)
            power = x * mean
            total = time.sum()
            fourth = np.sum(power**4 * time) / total
            grad = (4 * power**3 * time + power**4 * dtime) / total - fourth * dtime / total
            return (-grad * mean / cap**4)[None, :]

        constraints.append({"type": "ineq", "fun": effort, "jac": effort_gradient})
    result = optimize.minimize(
        objective, np.clip(start, lower, upper) / mean, jac=objective_gradient,
        bounds=list(zip(lower / mean, upper / mean, strict=True)), constraints=constraints,
        method="SLSQP", options={"maxiter": 100, "ftol": 1e-10},
    )
    power = np.clip(result.x * mean, lower, upper)
    return power, result


def _priced_plan(model, request, lower, upper, multiplier, reserve, cap, counter):
    """Lowest price of one limit (W′ reserve or effort cap) whose priced plan keeps it.

    Returns (power or None when no price up to a large one works, iterations).
    """
    mean = float(request.mean_power)
    w_prime = float(request.w_prime) if request.w_prime is not None else 1.0

    def prices(price: float) -> _Prices:
        if reserve is not None:
            return _Prices(w_prime=price, critical_power=float(request.critical_power))
        return _Prices(effort=price / mean**3)

    warm: list = []

    def margin(price: float):
        try:
            power, found, _ = _lagrange_plan(model, request, lower, upper, counter,
                                             prices(price), warm[-1] if warm else None)
        except InputError:
            return None, -math.inf
        warm.append((found, power))
        time, _, _ = steady_segment_times(model, power)
        counter[0] += 1
        if reserve is not None:
            return power, (_segment_w_prime(power, time, request).min() - reserve) / w_prime
        return power, (cap - _raw_effort(power, time)) / cap

    low, g_low = 0.0, None
    high = multiplier
    power, g_high = margin(high)
    steps = 1
    while g_high < 0 and power is not None and steps < 30:
        low, g_low = high, g_high
        high *= 4.0
        power, g_high = margin(high)
        steps += 1
    if g_high < 0 or power is None:
        return None, steps  # no price keeps the limit, or the priced problem has no plan
    if g_low is None:
        _, g_low = margin(0.0)
        steps += 1
    best, side = power, 0
    while steps < 40 and g_high > _PRICE_TOLERANCE:
        if math.isfinite(g_low):
            trial = high - g_high * (high - low) / (g_high - g_low)
        else:
            trial = 0.5 * (low + high)
        if not low < trial < high:
            trial = 0.5 * (low + high)
        power, g_trial = margin(trial)
        steps += 1
        if g_trial >= 0:
            high, g_high, best = trial, g_trial, power
            if side == 1:
                g_low *= 0.5
            side = 1
        else:
            low, g_low = trial, g_trial
            if side == -1:
                g_high *= 0.5
            side = -1
        if high - low <= 1e-9 * high:
            break
    return best, steps


def fastest_steady_plan(
    model: SegmentModel,
    request: PlanRequest,
    lower: np.ndarray | None = None,
    upper: np.ndarray | None = None,
    reserve: float | None = None,
    cap: float | None = None,
) -> tuple[np.ndarray, SolverReport]:
    """Fastest segment powers in the steady-state segment model.

    Parameters
    ----------
    model : SegmentModel; request : PlanRequest (mean power, constraint, limits).
    lower, upper : power bounds per segment [W] (default `power_limits`).
    reserve : W′ balance floor used by the solver [J] (default the request's reserve when CP
        and W′ are known, else none).
    cap : effort cap used by the solver [W] (default the request's cap).

    Returns
    -------
    (segment power [W], SolverReport). Raises InputError when no plan meets the mean power
    within the bounds, or keeps the W′ reserve / effort cap (e.g. a mean power above CP for
    longer than W′ allows).
    """
    if lower is None or upper is None:
        lower, upper = power_limits(model, request)
    if reserve is None and request.uses_w_prime:
        reserve = request.w_prime_reserve
    if cap is None:
        cap = request.effort_weighted_cap
    counter = [0]
    power, multiplier, iterations = _lagrange_plan(model, request, lower, upper, counter)
    centre, _ = _coupling(request, model)
    stationarity = _stationarity(model, power, multiplier, centre, lower, upper)
    time, _, _ = steady_segment_times(model, power)
    breaks_w_prime = (reserve is not None
                      and _segment_w_prime(power, time, request).min() < reserve)
    breaks_cap = cap is not None and _raw_effort(power, time) > cap
    if not (breaks_w_prime or breaks_cap):
        return power, SolverReport("lagrange", multiplier, iterations, counter[0], stationarity,
                                   "equal marginal time per joule on every free segment")
    if (breaks_w_prime and request.constraint == "mean-power"
            and request.w_prime_model == "differential"):
        # dW′/dt ≤ CP − P at every power, so W′(T) ≤ W′ − (P̄ − CP)·T for any plan of mean P̄,
        # and no plan is faster than this one (T ≥ its time)
        best_case = float(request.w_prime) - (float(request.mean_power)
                                              - float(request.critical_power)) * time.sum()
        if best_case < reserve:
            raise InputError(f"no plan at mean power {request.mean_power:g} W keeps the W′ "
                             f"reserve: {request.mean_power:g} W is above CP "
                             f"{request.critical_power:g} W for too long")
    reserve_used = reserve if breaks_w_prime else None
    cap_used = cap if breaks_cap else None

    def meets(power: np.ndarray, slack: float = 0.0) -> bool:
        time, _, _ = steady_segment_times(model, power)
        counter[0] += 1
        return ((reserve_used is None or _segment_w_prime(power, time, request).min()
                 >= reserve_used - slack * float(request.w_prime))
                and (cap_used is None or _raw_effort(power, time) <= cap_used * (1 + slack)))

    mean = float(request.mean_power)
    # 1. price the broken limit in every segment's Lagrangian (W′ spent above CP, or the
    #    effort measure) and find the lowest price that keeps it (Illinois false position)
    priced = None
    if breaks_w_prime != breaks_cap:
        priced, steps = _priced_plan(model, request, lower, upper, multiplier, reserve_used,
                                     cap_used, counter)
        iterations += steps
    # 2. otherwise a feasible plan: the fastest plan under a common power ceiling U, with U the
    #    highest ceiling that keeps the limits (bisection; U = mean power: constant power)

    low_ceiling, high_ceiling = mean, float(upper.max())
    constant = np.full(model.count, mean)
    if not meets(constant):
        what = "W′ reserve" if breaks_w_prime else "effort cap"
        raise InputError(f"no plan at mean power {mean:g} W keeps the {what}: even constant "
                         "power breaks it")
    capped, ceiling_steps = constant, 0
    if priced is not None:
        capped, high_ceiling = priced, low_ceiling
    while high_ceiling - low_ceiling > 1e-3 * mean:
        ceiling_steps += 1
        ceiling = 0.5 * (low_ceiling + high_ceiling)
        try:
            trial, _, used = _lagrange_plan(model, request, np.minimum(lower, ceiling),
                                            np.minimum(upper, ceiling), counter)
            iterations += used
        except InputError:
            trial = None
        if trial is not None and meets(trial):
            low_ceiling, capped = ceiling, trial
        else:
            high_ceiling = ceiling
    # 2. polish with SLSQP on the full problem from that feasible start; keep its answer only
    #    if it is feasible, meets the coupling constraint and is faster
    if priced is not None:
        power, method, message, nit = capped, "lagrange+price", (
            "lowest price of the limit that keeps it"), 0
    else:
        power, method, message, nit = capped, "lagrange+ceiling", (
            f"highest common power ceiling {low_ceiling:.1f} W that keeps the limits"), 0
    if model.count <= _SLSQP_MAX_SEGMENTS:
        polished, result = _slsqp_plan(model, request, lower, upper, capped, reserve_used,
                                       cap_used, counter)
        nit = int(result.nit)
        centre, target = _coupling(request, model)
        time, _, _ = steady_segment_times(model, polished)
        coupling_gap = abs(float(np.sum((polished - centre) * time)) - target)
        if (meets(polished, 1e-6) and coupling_gap <= 1e-7 * mean * float(time.sum())
                and time.sum() < steady_segment_times(model, capped)[0].sum()):
            power, method, message = polished, method + "+slsqp", str(result.message)
    time, _, _ = steady_segment_times(model, power)
    active = []
    if breaks_w_prime and _segment_w_prime(power, time, request).min() <= reserve + (
            2 * _PRICE_TOLERANCE * float(request.w_prime)):
        active.append("w-prime-reserve")
    if breaks_cap and _raw_effort(power, time) >= cap * (1 - 2 * _PRICE_TOLERANCE):
        active.append("effort-cap")
    return power, SolverReport(method, multiplier, iterations + ceiling_steps + nit,
                               counter[0], float("nan"), message, active=tuple(active))


# ------------------------------------------------------------------ verification and plans

def _simulate(course, piece_power, rider, air, options):
    from pacing import simulate as simulation

    if options is None:
        options = simulation.SimulationOptions()
    return simulation.simulate(course, piece_power, rider, air, options)


def _measure(prediction, request: PlanRequest) -> float:
    if request.constraint == "work":
        return float(prediction.work)
    return float(prediction.average_power)


def _matched(make_powers, course, rider, air, options, request, target, free_pieces=None):
    """Scale a plan so the simulated mean power (or work) equals target; (prediction, scale).

    `make_powers(scale)` gives the piece powers; only the pieces in `free_pieces` (default
    all) scale with it. The first step assumes the measure changes by the scaled pieces' share
    of it (piece times held); later steps are secant steps.
    """
    scale = 1.0
    prediction = _simulate(course, make_powers(scale), rider, air, options)
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
    course : pacing.course.Course; bounds : segment boundary point indices (first 0, last N-1);
    rider : pacing.cycling.Rider; air : pacing.conditions.CourseAir (per piece);
    request : PlanRequest; options : pacing.simulate.SimulationOptions (default options).

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
    reserve, cap = target_reserve, target_cap
    reference = _reference(course, rider, air, options, request)
    best = None
    tried_reserve: list[tuple[float, float]] = []
    tried_cap: list[tuple[float, float]] = []
    for rounds in range(_CORRECTION_ROUNDS + 1):
        power, report = fastest_steady_plan(model, request, lower, upper, reserve, cap)
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

        # only the segments not held at a bound are scaled, so bounds stay where they bind
        free = (segment_power > lower * (1 + 1e-6) + 1e-9) & (segment_power < upper * (1 - 1e-6))
        if not free.any():
            free = np.ones_like(free)

        def corrected(scale: float) -> np.ndarray:
            return np.clip(np.where(free, segment_power * scale, segment_power), lower, upper)

        prediction, scale = _matched(lambda scale: corrected(scale)[pieces_segment], course,
                                     rider, air, options, request, target,
                                     free[pieces_segment])
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
