"""Verifying a cycling plan by the inertial simulation: the ride it is checked on, its scaling
to the target mean power or work, and what the verified ride keeps (W′ balance, effort, power
bounds).

The plans of pacing.plan.cycling are made in the steady-state segment model; the inertial
simulation (pacing.plan.simulate) then rides them, and the ride differs a little (speed
changes, braking, easing off). Here a plan is scaled until its verified mean power (or work)
hits the target: only the segments not held at a bound scale, by secant steps on the
simulated measure to a relative tolerance of 5e-5. The constant plan the fastest plan is
compared with is verified the same way.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276 (the power balance of pacing.plan.simulate)
Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
doi:10.1249/MSS.0b013e3182517a80 (the W′ balance of the verified ride)
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from pacing.course.geometry import Course
from pacing.physics.cycling import Rider
from pacing.physiology.critical_power import effort_weighted_power, w_prime_balance
from pacing.plan.prediction import Prediction, SimulationOptions
from pacing.plan.request import PlanRequest, required_mean_power, w_prime_parameters
from pacing.plan.simulate import simulate
from pacing.plan.steady_model import SegmentModel
from pacing.weather.conditions import CourseAir

_MATCH_TOLERANCE = 5e-5  # relative, verified mean power (or work) against its target


@dataclass(frozen=True, eq=False)
class VerifyingRide:
    """What a plan is made on and verified with.

    Attributes
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    bounds : numpy.ndarray
        Segment boundary point indices [-].
    rider : pacing.physics.cycling.Rider
        The rider and bike [-].
    air : pacing.weather.conditions.CourseAir
        The air on every piece [-].
    options : SimulationOptions or None
        Choices of the verifying simulation; None for the defaults [-].
    model : SegmentModel
        The steady segment model of the course at those bounds [-].
    """

    course: Course
    bounds: np.ndarray
    rider: Rider
    air: CourseAir
    options: SimulationOptions | None
    model: SegmentModel

    def simulate(self, piece_power: np.ndarray) -> Prediction:
        """The inertial simulation of a plan (default options when none).

        Parameters
        ----------
        piece_power : numpy.ndarray
            Planned power of each piece, length N-1 [W].

        Returns
        -------
        Prediction
            The simulated ride [-].
        """
        options = self.options if self.options is not None else SimulationOptions()
        return simulate(self.course, piece_power, self.rider, self.air, options)


def ride_measure(prediction: Prediction, request: PlanRequest) -> float:
    """What the coupling constraint holds on a ride.

    Parameters
    ----------
    prediction : Prediction
        The simulated ride [-].
    request : PlanRequest
        Its constraint ("mean-power" or "work") [-].

    Returns
    -------
    float
        The ride's work [J] under "work", else its time-weighted mean power [W].
    """
    if request.constraint == "work":
        return float(prediction.work)
    return float(prediction.average_power)


def _matched(ride: VerifyingRide, make_powers: Callable[[float], np.ndarray],
             request: PlanRequest, target: float, free_pieces: np.ndarray | None = None,
             first: Prediction | None = None) -> tuple[Prediction, float]:
    """Scale a plan so the simulated mean power [W] (or work [J]) equals target; (prediction,
    scale [-]).

    `make_powers(scale)` gives the piece powers; only the pieces in `free_pieces` (default
    all) scale with it. The first step assumes the measure changes by the scaled pieces' share
    of it (piece times held); later steps are secant steps. `first`: the simulation of
    make_powers(1.0) when already done.
    """
    scale = 1.0
    prediction = first if first is not None else ride.simulate(make_powers(scale))
    value = ride_measure(prediction, request)
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
        prediction = ride.simulate(make_powers(scale))
        value = ride_measure(prediction, request)
    return prediction, scale


def _piece_durations(prediction: Prediction) -> np.ndarray:
    """Time on each piece [s]."""
    return np.diff(np.asarray(prediction.time, dtype=float))


def _balance_along(prediction: Prediction, request: PlanRequest) -> np.ndarray:
    """W′ balance at every point of a ride [J], length N."""
    critical_power, w_prime = w_prime_parameters(request)
    balance = w_prime_balance(np.asarray(prediction.power, dtype=float),
                              _piece_durations(prediction), critical_power, w_prime,
                              request.w_prime_model)
    return np.concatenate([[w_prime], balance])


def ride_effort(prediction: Prediction) -> float:
    """Effort-weighted power of a ride (negative powers count as zero).

    Parameters
    ----------
    prediction : Prediction
        The simulated ride [-].

    Returns
    -------
    float
        pacing.physiology.critical_power.effort_weighted_power of the piece powers [W].
    """
    return effort_weighted_power(np.maximum(np.asarray(prediction.power, dtype=float), 0.0),
                                 _piece_durations(prediction))


def constant_reference(ride: VerifyingRide, request: PlanRequest) -> tuple[Prediction, float]:
    """The constant plan at the request's mean power, verified.

    With the mean-power constraint its power is scaled until the simulated time-weighted mean
    equals the request's (they differ where the simulation eases off or brakes); with the work
    constraint the constant power is kept and its simulated work is the target.

    Parameters
    ----------
    ride : VerifyingRide
        The course, rider, air and simulation options [-].
    request : PlanRequest
        Mean power and constraint [-].

    Returns
    -------
    prediction : Prediction
        The verified constant ride [-].
    power : float
        Its constant power [W].
    """
    mean = required_mean_power(request)
    pieces = np.asarray(ride.course.distance).size - 1

    def constant_powers(scale: float) -> np.ndarray:
        return np.full(pieces, mean * scale)

    if request.constraint == "work":
        return ride.simulate(constant_powers(1.0)), mean
    prediction, scale = _matched(ride, constant_powers, request, mean)
    return prediction, mean * scale


def scaled_to_target(ride: VerifyingRide, request: PlanRequest, segment_power: np.ndarray,
                     lower: np.ndarray, upper: np.ndarray, target: float
                     ) -> tuple[np.ndarray, Prediction]:
    """Scale the segment powers until the verified mean power (or work) is the target.

    Only the segments not held at a bound are scaled, so bounds stay where they bind; when
    that cannot reach the target (the free ones hit a bound first), the segments held at the
    lower bound scale up with them, or else those at the upper bound down.

    Parameters
    ----------
    ride : VerifyingRide
        The course, its segments, rider, air and simulation options [-].
    request : PlanRequest
        The constraint ("mean-power" or "work") [-].
    segment_power : numpy.ndarray
        Power of each segment, length K [W].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    target : float
        The verified mean power [W] (or work [J]) to reach.

    Returns
    -------
    segment_power : numpy.ndarray
        The scaled segment powers, within the bounds, length K [W].
    prediction : Prediction
        Their verified ride [-].
    """
    pieces_segment = ride.model.segment
    at_low = segment_power <= lower * (1 + 1e-6) + 1e-9
    at_high = segment_power >= upper * (1 - 1e-6)
    choices = [c for c in (~at_low & ~at_high, ~at_high, ~at_low) if c.any()]
    choices = choices or [np.ones_like(at_low)]
    # every choice starts from the same plan (scale 1): it is simulated once
    unscaled = ride.simulate(np.clip(segment_power, lower, upper)[pieces_segment])
    for free in choices:
        def corrected(scale: float, free: np.ndarray = free) -> np.ndarray:
            return np.clip(np.where(free, segment_power * scale, segment_power), lower, upper)

        prediction, scale = _matched(ride, lambda scale: corrected(scale)[pieces_segment],
                                     request, target, free[pieces_segment], unscaled)
        if abs(ride_measure(prediction, request) - target) <= _MATCH_TOLERANCE * target:
            break
    return corrected(scale), prediction


def bound_binding(segment_power: np.ndarray, lower: np.ndarray, upper: np.ndarray
                  ) -> tuple[list[str], float]:
    """The power bounds a plan sits on, and how far it strays outside them.

    A segment is at its upper bound within 1e-6 of it, at its lower bound within 1e-6 of it
    plus 1e-9 W.

    Parameters
    ----------
    segment_power : numpy.ndarray
        Power of each segment, length K [W].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].

    Returns
    -------
    binding : list of str
        "max-power on N segments" and "min-power on N segments" when any [-].
    excursion : float
        The largest excursion of a segment power outside its bounds, 0 when within [W].
    """
    binding = []
    at_upper = int(np.sum(segment_power >= upper * (1 - 1e-6)))
    at_lower = int(np.sum(segment_power <= lower * (1 + 1e-6) + 1e-9))
    if at_upper:
        binding.append(f"max-power on {at_upper} segments")
    if at_lower:
        binding.append(f"min-power on {at_lower} segments")
    return binding, float(max(0.0, np.max(segment_power - upper),
                              np.max(lower - segment_power)))


def ride_w_prime_balance(prediction: Prediction, request: PlanRequest, bounds: np.ndarray
                         ) -> tuple[np.ndarray, np.ndarray, float, float]:
    """The W′ balance of a verified ride, and where it is lowest.

    Parameters
    ----------
    prediction : Prediction
        The simulated ride, N points [-].
    request : PlanRequest
        CP, W′ and the W′ balance model [-].
    bounds : numpy.ndarray
        Segment boundary point indices [-].

    Returns
    -------
    balance : numpy.ndarray
        W′ balance at every point, W′ at the start, length N [J].
    segment_balance : numpy.ndarray
        W′ balance at each segment's end, length K [J].
    lowest : float
        The lowest balance [J].
    distance : float
        Where it happens, the prediction's distance [m].

    References
    ----------
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Med Sci Sports Exerc
    44(8):1526-1532. doi:10.1249/MSS.0b013e3182517a80 (pacing.physiology.critical_power).
    """
    balance = _balance_along(prediction, request)
    where = int(np.argmin(balance))
    return (balance, balance[np.asarray(bounds)[1:]], float(balance[where]),
            float(np.asarray(prediction.distance)[where]))
