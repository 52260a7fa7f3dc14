"""Types and fast pieces of a simulation: SimulationOptions, Prediction, SegmentResult, the
look-ahead speed limits, the steady-state prediction and per-segment summaries.

The inertial integrator that fills a Prediction is pacing.plan.simulate. Speed caps (cornering
√(a_lat·R), an optional maximum descent speed) are applied at the points with look-ahead: a
backward pass on v² with the braking deceleration lowers each point's limit so the rider can
slow down in time.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Federal Highway Administration, report FHWA-HRT-04-103 (riders' accepted lateral acceleration
in curves; values in docs/references.md, "Cornering").
VTI (Swedish National Road and Transport Research Institute), rapport 952 (peak tyre-asphalt
friction ≈ 1.0; docs/references.md, "Cornering").
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.course.geometry import Course
from pacing.errors import InputError
from pacing.physics.cycling import (
    WALKING_SPEED,
    Rider,
    aerodynamic_force,
    air_speed_components,
    bearing_force,
    gravity_force,
    power_for_speed,
    rolling_force,
    speed_for_power,
)
from pacing.weather.conditions import CourseAir

REAR_WHEEL_LOAD_SHARE = 0.6
"""Share of the weight on the rear wheel of a seated rider [-] (common practice)."""

TYRE_ROAD_FRICTION = 1.0
"""Peak tyre-asphalt friction coefficient [-] (VTI rapport 952; docs/references.md,
"Cornering")."""


@dataclass(frozen=True)
class SimulationOptions:
    """Choices of the inertial simulation.

    Attributes
    ----------
    start_speed : float
        Speed at the start line; 0 is a standing start. Lowered to the first point's speed
        limit if above it [m/s].
    lateral_acceleration : float
        The most sideways acceleration the rider accepts in a curve; the corner speed limit
        is √(a_lat·R). Default 2.5 m/s² (≈ 0.25 g): riders observed by FHWA-HRT-04-103
        accepted 0.26 g at R = 15.3 m and 0.18-0.20 g at R = 25-27.5 m (0.61 g only in a 3 m
        turn), far below tyre grip (μ ≈ 1.0, VTI rapport 952) [m/s²].
    braking_deceleration : float
        Deceleration used to slow down ahead of a limit. Default 3.0 m/s² (≈ 0.3 g), about
        half the pitch-over limit of a conventional bicycle on dry level road (0.5-0.6 g,
        from memory; docs/references.md, "Braking and coasting") [m/s²].
    max_descent_speed : float or None
        Speed the rider never exceeds (applied everywhere; it only binds on descents or in
        strong tailwinds); None for no such limit [m/s].
    coasting_speed : float or None
        Above this speed the rider stops pedalling; None to always pedal [m/s].
    minimum_speed : float
        Walking speed: pieces ridden slower than this are flagged as walking pace; where the
        bike would stall, or drop below it on a piece whose power cannot hold it (also from a
        standing start), the rider walks the bike at this speed (that work counts as rider
        work, and the piece is flagged) [m/s].
    max_drive_force : float or None
        Cap of the driving force at the rear wheel; None for rear-wheel traction,
        REAR_WHEEL_LOAD_SHARE·TYRE_ROAD_FRICTION·m·g (470 N for 80 kg). It acts only at low
        speed, below η·P/F_max (0.5 m/s at 250 W), where η·P/v would grow without bound; it
        makes a standing start finite [N].

    Raises
    ------
    InputError
        When a number is not finite and positive (start speed: ≥ 0).

    References
    ----------
    Federal Highway Administration, report FHWA-HRT-04-103 (accepted lateral acceleration in
    curves; docs/references.md, "Cornering").
    VTI (Swedish National Road and Transport Research Institute), rapport 952 (peak
    tyre-asphalt friction; docs/references.md, "Cornering").
    """

    start_speed: float = 0.0
    lateral_acceleration: float = 2.5
    braking_deceleration: float = 3.0
    max_descent_speed: float | None = None
    coasting_speed: float | None = None
    minimum_speed: float = WALKING_SPEED
    max_drive_force: float | None = None

    def __post_init__(self) -> None:
        def positive(value: float | None) -> bool:
            return value is None or (math.isfinite(value) and value > 0)

        checks = {
            "start speed": math.isfinite(self.start_speed) and self.start_speed >= 0,
            "lateral acceleration": positive(self.lateral_acceleration)
            and self.lateral_acceleration is not None,
            "braking deceleration": positive(self.braking_deceleration)
            and self.braking_deceleration is not None,
            "maximum descent speed": positive(self.max_descent_speed),
            "coasting speed": positive(self.coasting_speed),
            "minimum speed": positive(self.minimum_speed) and self.minimum_speed is not None,
            "maximum drive force": positive(self.max_drive_force),
        }
        for name, ok in checks.items():
            if not ok:
                value = getattr(self, _OPTION_FIELDS[name])
                raise InputError(f"{name} must be a positive number, got {value!r}")


_OPTION_FIELDS = {
    "start speed": "start_speed",
    "lateral acceleration": "lateral_acceleration",
    "braking deceleration": "braking_deceleration",
    "maximum descent speed": "max_descent_speed",
    "coasting speed": "coasting_speed",
    "minimum speed": "minimum_speed",
    "maximum drive force": "max_drive_force",
}


@dataclass(frozen=True, eq=False)
class Prediction:
    """Speed, time, power and energy along a course.

    Point arrays have length N, piece arrays length N-1.

    Attributes
    ----------
    distance : numpy.ndarray
        Course distance of each point, horizontal as in the Course [m].
    time : numpy.ndarray
        Time at each point, cumulative from the start [s].
    speed : numpy.ndarray
        Speed at each point, along the road [m/s].
    power : numpy.ndarray
        Crank power actually applied on each piece, after easing off, coasting and
        braking [W].
    air_speed : numpy.ndarray
        Apparent wind speed on each piece at its mean speed [m/s].
    yaw : numpy.ndarray
        Yaw angle of the apparent wind on each piece [deg].
    headwind : numpy.ndarray
        Headwind component on each piece (negative: tailwind) [m/s].
    aero : numpy.ndarray
        Work against air resistance on each piece [J].
    rolling : numpy.ndarray
        Work against rolling resistance on each piece [J].
    bearing : numpy.ndarray
        Work against wheel-bearing friction on each piece [J].
    drivetrain_loss : numpy.ndarray
        Work lost in the drivetrain on each piece [J].
    potential : numpy.ndarray
        Change of potential energy m·g·Δh on each piece [J].
    kinetic : numpy.ndarray
        Change of kinetic energy ½·m_eff·Δ(v²) on each piece [J].
    braking : numpy.ndarray
        Work taken by the brakes on each piece [J].
    walking : numpy.ndarray
        The rider walked the bike on part of the piece, or its mean speed is below the
        walking speed (bool) [-].
    walking_work : numpy.ndarray
        Work the rider did pushing the bike on foot on each piece, not through the pedals
        (not in `power` nor `work`) [J].
    """

    distance: np.ndarray
    time: np.ndarray
    speed: np.ndarray
    power: np.ndarray
    air_speed: np.ndarray
    yaw: np.ndarray
    headwind: np.ndarray
    aero: np.ndarray
    rolling: np.ndarray
    bearing: np.ndarray
    drivetrain_loss: np.ndarray
    potential: np.ndarray
    kinetic: np.ndarray
    braking: np.ndarray
    walking: np.ndarray
    walking_work: np.ndarray

    @property
    def piece_time(self) -> np.ndarray:
        """Time on each piece [s], length N-1."""
        return np.diff(self.time)

    @property
    def finish_time(self) -> float:
        """Time from start to finish [s]."""
        return float(self.time[-1] - self.time[0])

    @property
    def average_speed(self) -> float:
        """Course distance over finish time [m/s]."""
        return float(self.distance[-1] - self.distance[0]) / self.finish_time

    @property
    def average_power(self) -> float:
        """Time-weighted mean crank power over the finish time (walking counts as none) [W]."""
        return self.work / self.finish_time

    @property
    def max_speed(self) -> float:
        """Highest speed [m/s]."""
        return float(np.max(self.speed))

    @property
    def work(self) -> float:
        """Work done by the rider at the cranks [J] (walking work apart)."""
        return float(np.sum(self.power * self.piece_time))

    @property
    def energy_balance_residual(self) -> float:
        """|rider work at the cranks + walking work − (aero + rolling + bearing + drivetrain
        loss + Δpotential + Δkinetic + braking)| relative to the rider work (or to the largest
        term when the rider did none) [-]."""
        terms = [self.aero, self.rolling, self.bearing, self.drivetrain_loss, self.potential,
                 self.kinetic, self.braking]
        sinks = sum(float(np.sum(term)) for term in terms)
        done = self.work + float(np.sum(self.walking_work))
        scale = max(abs(done), max(abs(float(np.sum(term))) for term in terms), 1e-12)
        return abs(done - sinks) / scale


@dataclass(frozen=True)
class SegmentResult:
    """Summary of one segment of a Prediction.

    Attributes
    ----------
    index : int
        Segment number, from 0 [-].
    start : float
        Course distance of its first point [m].
    end : float
        Course distance of its last point [m].
    length : float
        Horizontal length [m].
    grade : float
        Mean grade, rise/run [-].
    power : float
        Time-weighted mean crank power on the pieces ridden (walked pieces left out; 0 when
        all were walked) [W].
    speed : float
        Length over time [m/s].
    time : float
        Time on the segment [s].
    max_speed : float
        Highest speed at its points [m/s].
    walking_distance : float
        Length of its pieces walked or ridden below walking pace [m].
    """

    index: int
    start: float
    end: float
    length: float
    grade: float
    power: float
    speed: float
    time: float
    max_speed: float
    walking_distance: float = 0.0


def piece_inputs(course: Course, power: ArrayLike, air: CourseAir
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Validate power and air and broadcast them to piece arrays (length N-1).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    power : array_like
        Crank power, one number or one per piece [W].
    air : pacing.weather.conditions.CourseAir
        Air density [kg/m³], headwind [m/s] and crosswind [m/s], each one number or one per
        piece [-].

    Returns
    -------
    power : numpy.ndarray
        Crank power of each piece [W].
    density : numpy.ndarray
        Air density on each piece [kg/m³].
    headwind : numpy.ndarray
        Headwind on each piece [m/s].
    crosswind : numpy.ndarray
        Crosswind on each piece [m/s].

    Raises
    ------
    InputError
        When a value is missing, not finite, a power negative or a density not positive.
    """
    pieces = len(course.distance) - 1
    power = np.asarray(power, dtype=float)
    if power.ndim == 0:
        power = np.full(pieces, float(power))
    if power.shape != (pieces,):
        raise InputError(f"power must be one number or one per piece ({pieces}), "
                         f"got {power.size} values")
    if not np.all(np.isfinite(power)) or np.any(power < 0):
        raise InputError("power must be finite and not negative")
    arrays = []
    for name in ("density", "headwind", "crosswind"):
        value = np.asarray(getattr(air, name), dtype=float)
        value = np.broadcast_to(value, (pieces,)) if value.ndim == 0 else value
        if value.shape != (pieces,):
            raise InputError(f"air {name} must have one value per piece ({pieces})")
        if not np.all(np.isfinite(value)):
            raise InputError(f"air {name} must be finite")
        arrays.append(np.asarray(value, dtype=float))
    if np.any(arrays[0] <= 0):
        raise InputError("air density must be positive")
    return power, arrays[0], arrays[1], arrays[2]


def per_piece_rider(rider: Rider, pieces: int) -> tuple[np.ndarray, np.ndarray]:
    """The rider's drag area and rolling coefficient as piece arrays.

    Parameters
    ----------
    rider : pacing.physics.cycling.Rider
        The rider; drag_area [m²] and rolling_coefficient [-] one value or one per piece [-].
    pieces : int
        Number of pieces N-1 [-].

    Returns
    -------
    drag_area : numpy.ndarray
        Drag area on each piece [m²].
    rolling_coefficient : numpy.ndarray
        Rolling coefficient on each piece [-].

    Raises
    ------
    InputError
        When a per-piece array has the wrong length.
    """
    arrays = []
    for name, label in (("drag_area", "drag area (CdA)"), ("rolling_coefficient", "Crr")):
        value = np.asarray(getattr(rider, name), dtype=float)
        if value.ndim == 1 and value.shape != (pieces,):
            raise InputError(f"{label} must be one number or one per piece ({pieces}), "
                             f"got {value.size} values")
        arrays.append(np.broadcast_to(value, (pieces,)))
    return arrays[0], arrays[1]


def speed_limits(course: Course, road_length: np.ndarray, options: SimulationOptions
                 ) -> np.ndarray:
    """Highest speed at each point, with look-ahead braking.

    The cap at a point is min(√(a_lat·R), max_descent_speed), R the corner radius: with
    a_lat = μ·g it is the friction limit of a flat turn √(μ·g·R). Reaching point j at no more
    than its cap from point i needs v_i² ≤ cap_j² + 2·a_brake·(x_j − x_i), so

        limit_i² = min over j ≥ i of (cap_j² + 2·a_brake·x_j) − 2·a_brake·x_i,

    a reversed running minimum (one vectorized pass).

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course; its corner_radius at each point [m] is used [-].
    road_length : numpy.ndarray
        Road length of each piece, length N-1 [m].
    options : SimulationOptions
        lateral_acceleration [m/s²], braking_deceleration [m/s²] and max_descent_speed
        [m/s] [-].

    Returns
    -------
    numpy.ndarray
        Speed limit at each point, length N [m/s].

    References
    ----------
    Federal Highway Administration, report FHWA-HRT-04-103 (accepted lateral acceleration in
    curves; docs/references.md, "Cornering").
    """
    cap = np.sqrt(options.lateral_acceleration * np.asarray(course.corner_radius, dtype=float))
    if options.max_descent_speed is not None:
        cap = np.minimum(cap, options.max_descent_speed)
    position = np.concatenate([[0.0], np.cumsum(road_length)])
    key = cap**2 + 2.0 * options.braking_deceleration * position
    running = np.minimum.accumulate(key[::-1])[::-1]
    return np.sqrt(np.maximum(running - 2.0 * options.braking_deceleration * position, 0.0))


def steady_prediction(course: Course, power: ArrayLike, rider: Rider, air: CourseAir,
                      minimum_speed: float = WALKING_SPEED) -> Prediction:
    """Each piece ridden at its steady speed for the power (no inertia, no caps): fast.

    Speeds come from pacing.physics.cycling.speed_for_power on every piece at once; time per
    piece is road length / speed. Where a climb is too steep for the power the speed is
    floored at 0.05 m/s (speed_for_power) and the work to hold it counts as rider work. Point
    speeds are the mean of the adjacent pieces'. Kinetic and braking energy are zero.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course, N points [-].
    power : array_like
        Crank power per piece, length N-1, or one number [W].
    rider : pacing.physics.cycling.Rider
        The rider and bike (per-piece drag area and Crr allowed) [-].
    air : pacing.weather.conditions.CourseAir
        Air density [kg/m³], headwind [m/s] and crosswind [m/s] on every piece [-].
    minimum_speed : float
        Pieces slower than this are flagged as walking [m/s].

    Returns
    -------
    Prediction
        The steady ride [-].

    Raises
    ------
    InputError
        As `piece_inputs` and `per_piece_rider`.

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998).
    Validation of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276
    """
    power, density, headwind, crosswind = piece_inputs(course, power, air)
    per_piece_rider(rider, power.size)
    grade = np.asarray(course.grade, dtype=float)
    road = np.diff(np.asarray(course.distance, dtype=float)) * np.sqrt(1.0 + grade**2)
    piece_speed = speed_for_power(power, grade, density, rider, headwind, crosswind)
    needed = power_for_speed(piece_speed, grade, density, rider, headwind, crosswind)
    applied = np.maximum(power, needed)  # stalled pieces: the rider pushes at the floor speed
    piece_time = road / piece_speed
    time = np.concatenate([[0.0], np.cumsum(piece_time)])
    point_speed = np.empty(len(road) + 1)
    point_speed[0], point_speed[-1] = piece_speed[0], piece_speed[-1]
    point_speed[1:-1] = 0.5 * (piece_speed[:-1] + piece_speed[1:])
    _, apparent, yaw = air_speed_components(piece_speed, headwind, crosswind)
    eta = rider.drivetrain_efficiency
    return Prediction(
        distance=np.asarray(course.distance, dtype=float).copy(),
        time=time,
        speed=point_speed,
        power=applied,
        air_speed=apparent,
        yaw=yaw,
        headwind=headwind.copy(),
        aero=aerodynamic_force(piece_speed, density, rider, headwind, crosswind) * road,
        rolling=np.broadcast_to(rolling_force(grade, rider), grade.shape) * road,
        bearing=bearing_force(piece_speed, rider) * road,
        drivetrain_loss=applied * piece_time * (1.0 - eta),
        potential=gravity_force(grade, rider) * road,
        kinetic=np.zeros(len(road)),
        braking=np.zeros(len(road)),
        walking=piece_speed < minimum_speed,
        walking_work=np.zeros(len(road)),
    )


def segment_results(course: Course, prediction: Prediction, bounds: ArrayLike
                    ) -> list[SegmentResult]:
    """Per-segment summaries of a Prediction.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course the prediction was made on [-].
    prediction : Prediction
        The ride [-].
    bounds : array_like of int
        Segment boundary point indices, increasing, first 0, last N-1 [-].

    Returns
    -------
    list of SegmentResult
        One summary per segment, in course order [-].

    Raises
    ------
    InputError
        When the bounds are not increasing indices from 0 to N-1.
    """
    bounds = np.asarray(bounds, dtype=int)
    n = len(prediction.distance)
    if (bounds.ndim != 1 or bounds.size < 2 or bounds[0] != 0 or bounds[-1] != n - 1
            or np.any(np.diff(bounds) <= 0)):
        raise InputError("segment bounds must be increasing point indices from 0 to N-1")
    distance = prediction.distance
    elevation = np.asarray(course.elevation, dtype=float)
    ridden = ~np.asarray(prediction.walking, dtype=bool)
    piece_time = prediction.piece_time
    cumulative_work = _cumulative(np.where(ridden, prediction.power * piece_time, 0.0))
    cumulative_ridden = _cumulative(np.where(ridden, piece_time, 0.0))
    cumulative_walked = _cumulative(np.where(ridden, 0.0, np.diff(distance)))
    results = []
    for index, (first, last) in enumerate(zip(bounds[:-1], bounds[1:], strict=True)):
        length = float(distance[last] - distance[first])
        time = float(prediction.time[last] - prediction.time[first])
        results.append(SegmentResult(
            index=index,
            start=float(distance[first]),
            end=float(distance[last]),
            length=length,
            grade=float(elevation[last] - elevation[first]) / length,
            power=_ratio(cumulative_work[last] - cumulative_work[first],
                         cumulative_ridden[last] - cumulative_ridden[first]),
            speed=length / time,
            time=time,
            max_speed=float(np.max(prediction.speed[first:last + 1])),
            walking_distance=float(cumulative_walked[last] - cumulative_walked[first]),
        ))
    return results


def _cumulative(values: np.ndarray) -> np.ndarray:
    """0 and the running sum of piece values: the sum over points first..last is
    result[last] − result[first]."""
    return np.concatenate([[0.0], np.cumsum(values)])


def _ratio(work: float, time: float) -> float:
    """Mean power of `work` [J] over `time` [s], 0 when nothing was ridden [W]."""
    return float(work) / float(time) if time > 0 else 0.0
