"""Setups side by side on one course: finish times, where time is won or lost, break-even
figures, and a plan that changes position by segment.

Every setup (a riding position or a set of equipment) is ridden with the SAME pacing request
(pacing.plan.request.PlanRequest): the request's power figures (mean power, critical power, effort
cap) are multiplied by the setup's power share, the share of the athlete's power the position
allows (e.g. 1.0 upright, 0.95 in a low aero position); W′ is left as it is. Each plan is
verified by the inertial simulation (pacing.plan.simulate), so the times compared include
accelerations, corner limits and braking.

Sign convention everywhere in this module: a time difference is setup − baseline [s], so a
positive number means the setup is SLOWER than the baseline.

Break-even figures hold the setup's planned power profile (its shape; only a scale changes)
and find by root finding on the simulation (scipy.optimize.brentq) the power, drag area or
mass at which the setup's finish time equals the baseline's.

The mixed plan picks, for every segment, the position (among setups of the same bike: equal
in every rider parameter but the drag area) with the shortest steady-state segment time at its
planned power (pacing.plan.steady_model.steady_segment_times), then rides the whole course once with
the inertial simulation, the drag area and power given per piece, and reports whether the mix
is faster than every single position.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4 (scipy brentq).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields, replace

import numpy as np
from scipy import optimize

from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.cycling import RacePlan, make_plan
from pacing.plan.prediction import Prediction, SimulationOptions
from pacing.plan.request import PlanRequest
from pacing.plan.simulate import simulate
from pacing.plan.steady_model import segment_model, steady_segment_times

MAX_SETUPS = 12
"""Most setups compared at once."""

COMPARE_STRATEGIES = ("constant", "fastest")
"""Strategies a comparison can use (a target time fixes the finish, so there is nothing to
compare)."""


@dataclass(frozen=True)
class RiderSetup:
    """One setup as the power balance sees it.

    Attributes
    ----------
    name : label shown to the user (unique within a comparison).
    rider : pacing.physics.cycling.Rider (mass is rider + bike + kit [kg], drag_area [m²],
        rolling_coefficient [-], optional yaw_drag_table).
    power_share : share of the athlete's power this setup allows [-], 0.3..1.2.
    """

    name: str
    rider: Rider
    power_share: float = 1.0

    def __post_init__(self) -> None:
        if not str(self.name).strip():
            raise InputError("a setup needs a name")
        if not (math.isfinite(self.power_share) and 0.3 <= self.power_share <= 1.2):
            raise InputError(f"setup {self.name!r}: power share must be 0.3-1.2, "
                             f"got {self.power_share:g}")


def from_athlete(athlete, setups) -> list[RiderSetup]:
    """RiderSetups of a pacing.athlete.Athlete on each pacing.athlete.Setup."""
    from pacing.athlete import rider_for

    return [RiderSetup(setup.name, rider_for(athlete, setup), setup.power_share)
            for setup in setups]


@dataclass(frozen=True, eq=False)
class SetupResult:
    """One setup ridden with the comparison's strategy.

    Attributes
    ----------
    setup : the RiderSetup.
    plan : pacing.plan.cycling.RacePlan of this setup (power scaled by its power share).
    finish_time : verified finish time [s].
    delta : finish_time − the baseline's [s] (positive = slower).
    segment_time : time on each segment [s], length K.
    segment_delta : segment_time − the baseline's [s], length K (positive = time lost).
    delta_along : time at each point − the baseline's time at that point [s], length N:
        the cumulative gap along the course, for a plot (last value = delta).
    """

    setup: RiderSetup
    plan: RacePlan
    finish_time: float
    delta: float
    segment_time: np.ndarray
    segment_delta: np.ndarray
    delta_along: np.ndarray

    @property
    def name(self) -> str:
        return self.setup.name

    @property
    def prediction(self) -> Prediction:
        return self.plan.prediction

    @property
    def mean_power(self) -> float:
        """Time-weighted mean crank power of the verified ride [W]."""
        return float(self.plan.prediction.average_power)


@dataclass(frozen=True, eq=False)
class Comparison:
    """Setups side by side.

    Attributes
    ----------
    results : one SetupResult per setup, in the order given.
    baseline : index of the baseline setup in `results`.
    bounds : segment boundary point indices.
    distance : course distance of each point [m], length N (x axis of delta_along).
    request : the PlanRequest every setup was ridden with (before power-share scaling).
    """

    results: tuple[SetupResult, ...]
    baseline: int
    bounds: np.ndarray
    distance: np.ndarray
    request: PlanRequest

    @property
    def baseline_result(self) -> SetupResult:
        return self.results[self.baseline]

    @property
    def fastest(self) -> SetupResult:
        """The setup with the shortest finish time."""
        return min(self.results, key=lambda result: result.finish_time)

    def result(self, name: str) -> SetupResult:
        """The result of the setup called `name`."""
        for result in self.results:
            if result.name == name:
                return result
        raise InputError(f"no setup called {name!r}; setups: "
                         f"{', '.join(r.name for r in self.results)}")


def setup_request(request: PlanRequest, power_share: float) -> PlanRequest:
    """The request with its power figures (mean power, CP, effort cap) times power_share."""
    def scaled(value):
        return None if value is None else float(value) * power_share

    return replace(request, mean_power=scaled(request.mean_power),
                   critical_power=scaled(request.critical_power),
                   effort_weighted_cap=scaled(request.effort_weighted_cap))


def _check_setups(setups) -> list[RiderSetup]:
    setups = list(setups)
    if not setups:
        raise InputError("give at least one setup to compare")
    if len(setups) > MAX_SETUPS:
        raise InputError(f"at most {MAX_SETUPS} setups can be compared, got {len(setups)}")
    names = [setup.name for setup in setups]
    repeated = sorted({name for name in names if names.count(name) > 1})
    if repeated:
        raise InputError(f"setup names must differ; repeated: {', '.join(repeated)}")
    return setups


def _baseline_index(setups: list[RiderSetup], baseline) -> int:
    if baseline is None:
        return 0
    if isinstance(baseline, int | np.integer):
        if not 0 <= baseline < len(setups):
            raise InputError(f"baseline index {baseline} is out of range")
        return int(baseline)
    for index, setup in enumerate(setups):
        if setup.name == baseline:
            return index
    raise InputError(f"baseline {baseline!r} is not one of the setups: "
                     f"{', '.join(s.name for s in setups)}")


def compare_setups(course, bounds, setups, air, request: PlanRequest, baseline=None,
                   options: SimulationOptions | None = None) -> Comparison:
    """Ride every setup with the same strategy and compare them to a baseline.

    Parameters
    ----------
    course : pacing.course.geometry.Course (N points); bounds : segment boundary point indices.
    setups : RiderSetups (1..MAX_SETUPS, unique names).
    air : pacing.weather.conditions.CourseAir (per piece).
    request : PlanRequest ("constant" or "fastest"); its power figures are for power share 1.
    baseline : name or index of the baseline setup; None for the first.
    options : pacing.plan.prediction.SimulationOptions.

    Returns
    -------
    Comparison (differences are setup − baseline [s], positive = slower).
    """
    setups = _check_setups(setups)
    if not isinstance(request, PlanRequest):
        raise InputError("request must be a PlanRequest")
    if request.strategy not in COMPARE_STRATEGIES:
        raise InputError(f"compare rides every setup with the same strategy: use "
                         f"{' or '.join(COMPARE_STRATEGIES)}, not {request.strategy!r}")
    base = _baseline_index(setups, baseline)
    bounds = np.asarray(bounds, dtype=int)
    plans = [make_plan(course, bounds, setup.rider, air,
                       setup_request(request, setup.power_share), options)
             for setup in setups]
    base_time = np.asarray(plans[base].prediction.time, dtype=float)
    results = []
    for setup, plan in zip(setups, plans, strict=True):
        time = np.asarray(plan.prediction.time, dtype=float)
        segment_time = np.diff(time[bounds])
        results.append(SetupResult(
            setup=setup,
            plan=plan,
            finish_time=float(plan.finish_time),
            delta=float(plan.finish_time - plans[base].finish_time),
            segment_time=segment_time,
            segment_delta=segment_time - np.diff(base_time[bounds]),
            delta_along=time - base_time,
        ))
    return Comparison(results=tuple(results), baseline=base, bounds=bounds,
                      distance=np.asarray(course.distance, dtype=float).copy(),
                      request=request)


# ------------------------------------------------------------------------ break-even

@dataclass(frozen=True)
class BreakEven:
    """What a setup may give away (or must gain) to tie with the baseline on this course.

    Each figure holds everything else of the setup (and its planned power profile) fixed.
    None where no value in the searched range ties.

    Attributes
    ----------
    name, baseline : setup names.
    power : the setup's time-weighted mean crank power at which it ties [W].
    power_margin : its mean power − `power` [W]: watts it may lose before it is no longer
        faster (negative: watts it must gain to catch up).
    drag_area : the setup's CdA at which it ties [m²].
    drag_area_margin : `drag_area` − its CdA [m²]: drag area it may add (negative: the CdA it
        must save, e.g. to pay for extra mass).
    mass : the setup's total mass (rider + bike + kit) at which it ties [kg].
    mass_margin : `mass` − its mass [kg]: mass it may add (negative: mass it must shed).
    """

    name: str
    baseline: str
    power: float | None
    power_margin: float | None
    drag_area: float | None
    drag_area_margin: float | None
    mass: float | None
    mass_margin: float | None


def _tie(function, start: float, low: float, high: float, tolerance: float) -> float | None:
    """Root of a monotone function in [low, high] near `start`; None if none there.

    Secant steps from start (they converge in a few simulations on these smooth responses);
    once a sign change is seen, brentq finishes inside that bracket. Each step goes a little
    past the secant estimate and at most 8× the previous step, clipped to [low, high].
    """
    x0, f0 = start, function(start)
    if f0 == 0.0:
        return x0
    x1 = min(max(start * 1.01 if start else tolerance * 100.0, low), high)
    f1 = function(x1)
    for _ in range(30):
        if f1 == 0.0:
            return x1
        if (f1 > 0) != (f0 > 0):
            return optimize.brentq(function, min(x0, x1), max(x0, x1), xtol=tolerance)
        if f1 != f0:
            step = -f1 * (x1 - x0) / (f1 - f0)
        else:
            step = x1 - x0
        # go a little past the secant estimate so the root gets bracketed; at most 8× the
        # previous step, so a flat stretch does not throw the search far away
        limit = 8.0 * abs(x1 - x0)
        step = math.copysign(min(max(abs(step) * 1.05, tolerance * 10.0), limit), step)
        x2 = min(max(x1 + step, low), high)
        if x2 == x1:
            return None
        x0, f0 = x1, f1
        x1, f1 = x2, function(x2)
    return None


def break_even(course, result: SetupResult, baseline: SetupResult, air,
               options: SimulationOptions | None = None) -> BreakEven:
    """Break-even power, drag area and mass of a setup against a baseline (root finding on
    the inertial simulation; the setup's planned power profile is held, only scaled).

    Solves T(q) = T_baseline for q = the scale of the power profile, then CdA, then mass,
    with T the simulated finish time of the setup (pacing.plan.simulate.simulate).

    Parameters
    ----------
    course : pacing.course.geometry.Course; result, baseline : SetupResults of one Comparison;
    air : pacing.weather.conditions.CourseAir; options : SimulationOptions.
    """
    target = baseline.finish_time
    rider = result.setup.rider
    profile = np.asarray(result.plan.piece_power, dtype=float)

    def gap(power_scale=1.0, drag_area=None, mass=None) -> float:
        changed = rider
        if drag_area is not None:
            changed = replace(changed, drag_area=drag_area)
        if mass is not None:
            changed = replace(changed, mass=mass)
        ride = simulate(course, profile * power_scale, changed, air, options)
        return ride.finish_time - target

    mean = result.mean_power
    scale = _tie(lambda s: gap(power_scale=s), 1.0, 0.2, 3.0, 1e-5)
    cda = _tie(lambda a: gap(drag_area=a), float(rider.drag_area), 0.02, 2.0, 1e-6)
    mass = _tie(lambda m: gap(mass=m), float(rider.mass), 20.0, 400.0, 1e-3)
    tie_power = None if scale is None else mean * scale
    return BreakEven(
        name=result.name,
        baseline=baseline.name,
        power=tie_power,
        power_margin=None if tie_power is None else mean - tie_power,
        drag_area=cda,
        drag_area_margin=None if cda is None else cda - float(rider.drag_area),
        mass=mass,
        mass_margin=None if mass is None else mass - float(rider.mass),
    )


# ------------------------------------------------------------------------ mixed positions

@dataclass(frozen=True, eq=False)
class MixedPlan:
    """A position chosen for every segment, verified by the inertial simulation.

    Attributes
    ----------
    names : setup name ridden on each segment, length K.
    choice : index into `candidates` per segment, length K.
    candidates : names of the setups the choice was made among.
    piece_power : crank power per piece [W], length N-1 (each segment at its setup's plan).
    prediction : the verified ride (pacing.plan.simulate.simulate with the chosen drag area per
        piece).
    finish_time : [s].
    best_single : name of the fastest single candidate, and `best_single_time` its time [s].
    gain : best_single_time − finish_time [s] (positive: the mix is faster).
    """

    names: tuple[str, ...]
    choice: np.ndarray
    candidates: tuple[str, ...]
    piece_power: np.ndarray
    prediction: Prediction
    finish_time: float
    best_single: str
    best_single_time: float
    gain: float

    @property
    def faster(self) -> bool:
        """Whether the verified mix beats every single candidate."""
        return self.gain > 0


SWAPPABLE_FIELDS = tuple(field.name for field in fields(Rider) if field.name != "drag_area")
"""Rider parameters two setups must share to be swapped during a ride: everything but the
drag area (the same bike, tyres, wheels and yaw response; only the position changes)."""


def _same_bike(rider: Rider, other: Rider) -> bool:
    """Whether two riders differ at most in drag area (per-piece values compared whole)."""
    for name in SWAPPABLE_FIELDS:
        mine, theirs = getattr(rider, name), getattr(other, name)
        if name == "yaw_drag_table":
            same = (mine is None and theirs is None) or (
                mine is not None and theirs is not None
                and np.array_equal(np.asarray(sorted(mine), dtype=float),
                                   np.asarray(sorted(theirs), dtype=float)))
        else:
            same = np.array_equal(np.asarray(mine, dtype=float), np.asarray(theirs, dtype=float))
        if not same:
            return False
    return True


def mix_candidates(comparison: Comparison) -> list[SetupResult]:
    """Setups that can be swapped during a ride: those equal to the fastest setup in every
    rider parameter but the drag area (SWAPPABLE_FIELDS: positions on one bike)."""
    best = comparison.fastest.setup.rider
    return [result for result in comparison.results if _same_bike(result.setup.rider, best)]


def mixed_plan(course, comparison: Comparison, air, options: SimulationOptions | None = None,
               candidates=None) -> MixedPlan | None:
    """Choose the position per segment where it is faster, and verify the whole ride.

    For each segment k and candidate j the steady-state segment time t_kj at the candidate's
    planned segment power (pacing.plan.steady_model.steady_segment_times) is computed; segment k is
    ridden with argmin_j t_kj. The whole course is then ridden once by the inertial simulation
    with that setup's drag area and planned power on each piece (the candidates share every
    other rider parameter), so speed carries over segment ends and look-ahead braking sees the
    whole course.

    Parameters
    ----------
    course : Course; comparison : Comparison; air : CourseAir; options : SimulationOptions;
    candidates : names of the setups to mix; None for `mix_candidates(comparison)`. Named
        setups must differ only in drag area (InputError otherwise).

    Returns
    -------
    MixedPlan, or None when fewer than two candidates are available.
    """
    if candidates is None:
        chosen = mix_candidates(comparison)
    else:
        chosen = [comparison.result(name) for name in candidates]
        for result in chosen[1:]:
            if not _same_bike(result.setup.rider, chosen[0].setup.rider):
                raise InputError(f"setups {chosen[0].name!r} and {result.name!r} differ in more "
                                 f"than CdA; only positions on one bike can be mixed")
    if len(chosen) < 2:
        return None
    bounds = comparison.bounds
    times = np.vstack([
        steady_segment_times(segment_model(course, bounds, result.setup.rider, air),
                             result.plan.segment_power)[0]
        for result in chosen
    ])
    choice = np.argmin(times, axis=0)
    segment_of_piece = np.repeat(np.arange(bounds.size - 1), np.diff(bounds))
    pieces = np.arange(segment_of_piece.size)
    powers = np.vstack([result.plan.piece_power for result in chosen])
    piece_power = powers[choice[segment_of_piece], pieces]
    areas = np.vstack([np.broadcast_to(np.asarray(result.setup.rider.drag_area, dtype=float),
                                       pieces.shape) for result in chosen])
    rider = replace(chosen[0].setup.rider, drag_area=areas[choice[segment_of_piece], pieces])
    prediction = simulate(course, piece_power, rider, air, options)
    best = min(chosen, key=lambda result: result.finish_time)
    return MixedPlan(
        names=tuple(chosen[j].name for j in choice),
        choice=choice,
        candidates=tuple(result.name for result in chosen),
        piece_power=piece_power,
        prediction=prediction,
        finish_time=prediction.finish_time,
        best_single=best.name,
        best_single_time=best.finish_time,
        gain=best.finish_time - prediction.finish_time,
    )
