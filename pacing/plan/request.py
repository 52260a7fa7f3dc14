"""What the coach asks of a cycling plan (PlanRequest), and the power bounds of each segment
that follow from it and from the athlete's limits (power_limits).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.physics.cycling import WALKING_SPEED, power_for_speed
from pacing.physiology.critical_power import W_PRIME_BALANCE_MODELS
from pacing.plan.steady_model import SegmentModel

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

UPPER_BOUNDS = {
    "critical_power": (MAXIMUM_PLAN_POWER, "W"),
    "w_prime": (200_000.0, "J"),
    "target_time": (30 * 86_400.0, "s"),
    "max_power_ratio": (10.0, ""),
    "effort_weighted_cap": (MAXIMUM_PLAN_POWER, "W"),
}
"""Highest value accepted per field, so no plan overflows on an absurd number: CP at most the
plan power cap; W′ at most 200 kJ, several times the 10-40 kJ measured in trained cyclists
(Poole et al. 2016, Med Sci Sports Exerc 48(11):2320-2334; from memory); a target time of at
most 30 days; a power cap of at most 10 × CP (common practice)."""

MAX_POINTS_TIMES_SEGMENTS = 500_000_000
"""Largest course points × segments a plan works through [-]: a 2000 km course at the
default 10 m step with 2 km segments is 2·10⁵ × 1000 = 2·10⁸; resampled every metre (17.7 s
and 1.3 GB for its simulation alone, measured for issue 14) it is ten times that."""


def check_plan_size(points: int, segments: int) -> None:
    """Refuse a plan too big to work through in reasonable time and memory, in one line.

    Parameters
    ----------
    points : int
        Points of the course [-].
    segments : int
        Segments of the plan [-].

    Raises
    ------
    InputError
        When points × segments is above MAX_POINTS_TIMES_SEGMENTS.
    """
    if points * segments > MAX_POINTS_TIMES_SEGMENTS:
        raise InputError(f"{points} course points × {segments} segments is more than a plan "
                         f"works through ({MAX_POINTS_TIMES_SEGMENTS:.0e}); resample the "
                         "course with a longer step or use longer segments")


_POSITIVE_FIELDS = ("mean_power", "target_time", "critical_power", "w_prime", "max_power_ratio",
                    "effort_weighted_cap")


def _positive(value: float | None) -> bool:
    """Whether an optional number is unset or finite and above zero."""
    return value is None or (math.isfinite(value) and value > 0)


@dataclass(frozen=True)
class PlanRequest:
    """What the coach asks for, and the athlete's limits.

    Attributes
    ----------
    strategy : str
        "constant", "fastest" or "target-time" (one of STRATEGIES) [-].
    mean_power : float or None
        Constant power, or the mean power the fastest plan must match [W].
    target_time : float or None
        Finish time to reach (strategy "target-time") [s].
    constraint : str
        "mean-power" (time-weighted mean equal to `mean_power`) or "work" (same total work as
        the constant plan at `mean_power`) [-].
    critical_power : float or None
        Critical power CP; None if unknown [W].
    w_prime : float or None
        W′, the work capacity above CP; None if unknown (CP and W′ are both needed for the W′
        reserve) [J].
    w_prime_reserve : float
        W′ balance never to go below [J].
    max_power_ratio : float or None
        Segment power at most this multiple of CP (of the mean power without CP); None means
        DEFAULT_MAX_POWER_RATIO times the mean power [-].
    min_power_ratio : float
        Segment power at least this multiple of CP (of the mean power without CP) [-].
    allow_zero_on_descents : bool
        Descents (mean grade ≤ DESCENT_GRADE) may go down to 0 W [-].
    effort_weighted_cap : float or None
        Upper limit of the effort-weighted power; None for none [W].
    w_prime_model : str
        Key of pacing.physiology.critical_power.W_PRIME_BALANCE_MODELS [-].
    band : float
        Half-width of the target band around each segment power, as a fraction [-].

    Raises
    ------
    InputError
        When a name is unknown or a number out of range (one line, the field named).
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
        self._check_names()
        self._check_numbers()

    def _check_names(self) -> None:
        """InputError unless strategy, constraint and W′ model are known names."""
        if self.strategy not in STRATEGIES:
            raise InputError(f"unknown strategy {self.strategy!r}; choose one of "
                             f"{', '.join(STRATEGIES)}")
        if self.constraint not in CONSTRAINTS:
            raise InputError(f"unknown constraint {self.constraint!r}; choose one of "
                             f"{', '.join(CONSTRAINTS)}")
        if self.w_prime_model not in W_PRIME_BALANCE_MODELS:
            raise InputError(f"unknown W′ balance model {self.w_prime_model!r}")

    def _check_numbers(self) -> None:
        """InputError unless every number lies in its range."""
        for name in _POSITIVE_FIELDS:
            if not _positive(getattr(self, name)):
                raise InputError(f"{name.replace('_', ' ')} must be positive, "
                                 f"got {getattr(self, name)}")
        for name, (high, unit) in UPPER_BOUNDS.items():
            value = getattr(self, name)
            if value is not None and value > high:
                label = "W′" if name == "w_prime" else name.replace("_", " ")
                raise InputError(f"{label} must be at most {high:g} {unit}, "
                                 f"got {value:.4g}".replace(" ,", ","))
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


def required_mean_power(request: PlanRequest) -> float:
    """The request's mean power, which constant and fastest plans need.

    Parameters
    ----------
    request : PlanRequest
        The request [-].

    Returns
    -------
    float
        `request.mean_power` [W].

    Raises
    ------
    InputError
        When the request has no mean power.
    """
    if request.mean_power is None:
        raise InputError(f"the {request.strategy} plan needs a mean power (--power)")
    return float(request.mean_power)


def required_target_time(request: PlanRequest) -> float:
    """The request's target finish time, which the target-time plan needs.

    Parameters
    ----------
    request : PlanRequest
        The request [-].

    Returns
    -------
    float
        `request.target_time` [s].

    Raises
    ------
    InputError
        When the request has no target time.
    """
    if request.target_time is None:
        raise InputError("the target-time plan needs a target time")
    return float(request.target_time)


def w_prime_parameters(request: PlanRequest) -> tuple[float, float]:
    """The request's critical power and W′, which the W′ balance needs.

    Parameters
    ----------
    request : PlanRequest
        The request [-].

    Returns
    -------
    critical_power : float
        CP [W].
    w_prime : float
        W′ [J].

    Raises
    ------
    InputError
        When CP or W′ is unknown (`request.uses_w_prime` is false).
    """
    if request.critical_power is None or request.w_prime is None:
        raise InputError("the W′ balance needs both critical power and W′")
    return float(request.critical_power), float(request.w_prime)


def power_limits(model: SegmentModel, request: PlanRequest) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper power bound of each segment.

    The reference is CP when known, else the mean power P̄. The upper bound is
    min(max_power_ratio·reference, MAXIMUM_PLAN_POWER), or DEFAULT_MAX_POWER_RATIO·P̄ when the
    request sets no ratio. The lower bound is min_power_ratio·reference (0 on descents when the
    request allows it), raised to the power that keeps the rider moving at the walking speed
    (pacing.physics.cycling.WALKING_SPEED) on the segment's steepest piece: below it the steady
    model stalls.

    Parameters
    ----------
    model : SegmentModel
        The course's pieces grouped into segments, with the rider and the air [-].
    request : PlanRequest
        Mean power, CP and the power ratios [-].

    Returns
    -------
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].

    Raises
    ------
    InputError
        When a segment needs more than the cap just to keep riding, when the mean power lies
        outside the bounds, or when the request has no mean power.

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation
    of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276 (the power to hold the walking speed).
    """
    mean = required_mean_power(request)
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
