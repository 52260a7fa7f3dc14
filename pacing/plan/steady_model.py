"""The steady-state segment model of a course for cycling plans.

The plans are made on the coach's segments (one power per segment, not per point): every piece
i of segment k is ridden at the steady speed v_i(P_k) of the Martin et al. power balance, so the
segment takes t_k(P_k) = Σ L_i / v_i(P_k). Differentiating the balance η·P = v·F(v) gives
dv/dP = η / (F + v·F′) and d²v/dP² = −(2F′ + v·F″)·(dv/dP)³ / η, so t_k, t_k′ and t_k″ are exact
and cheap. The per-piece constants of the balance are computed once per model, the Newton
steps for the speeds start from the previous call's speeds, and calm crosswind skips the
apparent-wind square root: one evaluation over 4,000 pieces takes about 0.1 ms.

References
----------
Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from pacing.course.segments import piece_segment_index
from pacing.errors import InputError
from pacing.physics.cycling import Rider, gravity_force, rolling_force, speed_for_power

_MINIMUM_SPEED = 0.05  # speed_for_power's floor (a stalled rider) [m/s]


@dataclass(frozen=True, eq=False)
class SegmentModel:
    """Pieces of a course grouped into segments, for the steady-state segment times.

    Attributes
    ----------
    length : road length of each piece, horizontal length·√(1 + G²) (the speeds of the power
        balance are along the road, as in pacing.plan.simulate) [m].
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
    course : pacing.course.geometry.Course; bounds : boundary point indices (first 0, last N-1);
    rider : pacing.physics.cycling.Rider; air : pacing.weather.conditions.CourseAir (arrays of
    length N-1).
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
    power = np.asarray(segment_power, dtype=float)[model.segment]
    speed = _steady_speed(model, power)
    piece = _piece_constants(model)
    drag = piece["drag"]
    along = speed + model.headwind if piece["headwind"] else speed
    if piece["calm_cross"]:
        # no crosswind: apparent = |along|, so the slope is 2k·|along| and the curvature
        # 2k·sign(along) (the general expressions below with w_c = 0)
        pull = drag * np.abs(along)
        slope = 2.0 * pull + piece["bearing"]
        curvature = 2.0 * drag * np.sign(along)
    else:
        apparent = np.hypot(along, model.crosswind)
        safe = np.where(apparent > 0, apparent, 1.0)
        slope = drag * (apparent + along**2 / safe) + piece["bearing"]
        curvature = drag * (3.0 * along / safe - along**3 / safe**3)
    efficiency = model.rider.drivetrain_efficiency
    inverse = 1.0 / speed
    force = efficiency * np.maximum(power, 0.0) * inverse
    first = efficiency / (force + speed * slope)
    second = -(2.0 * slope + speed * curvature) * first**3 / efficiency
    length_time = model.length * inverse  # L/v
    first_time = length_time * first * inverse  # L·v′/v²
    terms = np.empty((3, speed.size))
    terms[0] = length_time
    terms[1] = -first_time
    terms[2] = first_time * (2.0 * first * inverse) - length_time * inverse * second
    starts = piece["starts"]
    if starts is None:
        count = model.count
        return tuple(np.bincount(model.segment, row, count) for row in terms)
    sums = np.add.reduceat(terms, starts, axis=1)
    return sums[0], sums[1], sums[2]


def _piece_constants(model: SegmentModel) -> dict:
    """Per-piece quantities of the power balance that do not depend on power, computed once
    per model and kept in its cache: drag factor k = ½ρ·(CdA·(1 − drafting) + wheel CdA)
    [kg/m], the speed-independent resistance (rolling, gravity, bearings) [N], the bearing
    force per speed [N·s/m], the first piece of each segment, and whether the wind has a
    headwind or crosswind component at all."""
    cache = model.speed_guess
    found = cache.get("piece")
    sources = (model.segment, model.grade, model.density, model.headwind, model.crosswind,
               model.rider)
    # a model copied with dataclasses.replace shares the cache: recompute if an input changed
    if found is None or any(a is not b for a, b in zip(found["sources"], sources, strict=True)):
        rider = model.rider
        pieces = model.segment.size
        area = rider.drag_area * (1.0 - rider.drafting_reduction) + rider.wheel_drag_area
        found = {
            "drag": np.broadcast_to(0.5 * model.density * area, (pieces,)).copy(),
            "constant": np.broadcast_to(
                rolling_force(model.grade, rider) + gravity_force(model.grade, rider)
                + rider.bearing_force_constant, (pieces,)).copy(),
            "bearing": rider.bearing_force_per_speed,
            "starts": np.flatnonzero(np.diff(model.segment, prepend=-1)),
            "headwind": bool(np.any(model.headwind)),
            "calm_cross": not np.any(model.crosswind),
            "sources": sources,
        }
        if found["starts"].size != model.count or np.any(np.diff(model.segment) < 0):
            found["starts"] = None  # not consecutive runs 0..K-1: sum with bincount
        cache["piece"] = found
    return found


def _steady_speed(model: SegmentModel, power: np.ndarray) -> np.ndarray:
    """Steady speed on every piece [m/s]: pacing.physics.cycling.speed_for_power, or, when the model
    holds the speeds of a previous solve, Newton steps from them on the same balance
    g(v) = F(v) − η·P/v (pieces that do not converge fast fall back to speed_for_power)."""
    rider = model.rider
    guess = model.speed_guess.get("speed")
    if guess is None or rider.yaw_drag_table is not None:
        speed = speed_for_power(power, model.grade, model.density, rider, model.headwind,
                                model.crosswind)
        model.speed_guess["speed"] = speed
        return speed
    piece = _piece_constants(model)
    drag, constant, bearing = piece["drag"], piece["constant"], piece["bearing"]
    calm_cross = piece["calm_cross"]
    drive = rider.drivetrain_efficiency * np.maximum(power, 0.0)
    speed = guess.copy()
    step = np.full(speed.shape, np.inf)
    with np.errstate(all="ignore"):
        for _ in range(8):
            along = speed + model.headwind if piece["headwind"] else speed
            pushed = drive / speed  # η·P/v
            if calm_cross:
                pull = drag * np.abs(along)  # k·|v_a|: drag k·|v_a|·v_a, slope 2k·|v_a|
                value = pull * along + constant + bearing * speed - pushed
                slope = 2.0 * pull + bearing + pushed / speed
            else:
                apparent = np.hypot(along, model.crosswind)
                value = drag * apparent * along + constant + bearing * speed - pushed
                slope = (drag * (apparent + along**2 / np.where(apparent > 0, apparent, 1.0))
                         + bearing + pushed / speed)
            step = value / slope
            speed = speed - step
            # every piece within 1e-12 of its speed (a max against a min: one pass each)
            if np.abs(step).max() <= 1e-12 * np.abs(speed).min():
                break
    converged = np.abs(step) <= 1e-12 * np.abs(speed)
    bad = ~(converged & np.isfinite(speed) & (speed > _MINIMUM_SPEED))
    if bad.any():
        speed[bad] = speed_for_power(power[bad], model.grade[bad], model.density[bad], rider,
                                     model.headwind[bad], model.crosswind[bad])
    model.speed_guess["speed"] = speed
    return speed
