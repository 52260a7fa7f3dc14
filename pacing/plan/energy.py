"""Where the watts go: the athlete's energy on a predicted race split by what it pays for (a
rider's crank work, a runner's metabolic energy), the places where the rider eases off (brakes
or coasts), and why air drag grows with the square of speed at race speed.

The inertial simulation (pacing.plan.simulate) books every joule of crank work on a piece into
one of its terms, so that on each piece

    P·Δt = W_air + W_roll + W_bearing + W_drivetrain + m·g·Δh + ½·m_eff·Δ(v²) + W_brake,

the power balance of Martin et al. (1998) integrated over the piece. `energy_budget` adds these
terms up per segment and for the whole race; their sum is the crank work (the balance closes
to the simulation's rounding). Climbing is the net change of potential energy (negative on a
descending segment: gravity then pays for some of the rest), and the kinetic term is the net
change of speed (zero over a race that starts and ends at the same speed). Braking is the
energy the brakes turn into heat: it was paid for by the rider or by gravity before.

Running is split by what the running model gives (pacing.physics.running): metabolic energy,
not mechanical work. On each piece E = P_met·m·Δt = Cr(i)·m·d + a·ρ·V·v_a·m·d with d = v·Δt,
split by `running_energy_budget` into running on the flat (Cr(0)·m·d), the grade's part
((Cr(i) − Cr(0))·m·d, negative downhill: a descent is cheaper than the flat) and the air
(Minetti et al. 2002; Pugh 1971).

The Reynolds number Re = ρ·v·L/μ says which drag law holds: far above Re ≈ 1 (Stokes flow,
drag ∝ v) and below the drag crisis of smooth bodies (Re ≈ 2·10⁵ to 5·10⁵ for a sphere; a
rider's limbs and clothing are rough and edged, so the drag coefficient stays about constant
over race speeds), the drag force grows with v² and the power against the air with v³: 20 %
faster costs 1.2² = 1.44 times the force and 1.2³ = 1.73 times the power in still air.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Sutherland, W. (1893). The viscosity of gases and molecular force. Phil Mag 36(223):507-531.
doi:10.1080/14786449308620508; constants for air from White, F.M., Viscous Fluid Flow, 3rd ed.
(2006), table 1-2: μ₀ = 1.716·10⁻⁵ Pa·s at T₀ = 273 K, S = 111 K (from memory; checked against
CoolProp's air viscosity in tests/test_plan_energy.py).
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking
and running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
Pugh, L.G.C.E. (1971). The influence of wind resistance in running and walking and the
mechanical efficiency of work against horizontal or vertical forces. J Physiol 213(2):255-276.
Schlichting, H. & Gersten, K. (2017). Boundary-Layer Theory, 9th ed., ch. 1 (drag of bodies
against Reynolds number; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError

ENERGY_TERMS = ("air", "rolling", "climbing", "bearings", "drivetrain", "speed change",
                "braking")
"""The terms of the crank work, in the order the page shows them (keys of EnergyBudget)."""

SUTHERLAND_REFERENCE_VISCOSITY = 1.716e-5
"""μ₀, air's dynamic viscosity at SUTHERLAND_REFERENCE_TEMPERATURE [Pa·s] (White 2006)."""
SUTHERLAND_REFERENCE_TEMPERATURE = 273.15
"""T₀ [K] (White 2006 gives 273 K)."""
SUTHERLAND_CONSTANT = 110.4
"""S, Sutherland's constant of air [K] (White 2006: 111 K; 110.4 K is the value of the US
Standard Atmosphere 1976, eq. 51)."""
CELSIUS_TO_KELVIN = 273.15
"""0 °C in kelvin [K]."""

RIDER_LENGTH_SCALE = 1.0
"""Length scale of the Reynolds number of a rider or runner [m]: about the height of a rider
on the bike (or a runner's leg and trunk). Any body length between 0.3 and 1.8 m gives the
same regime (the order of magnitude is what matters; common practice)."""
STOKES_LIMIT = 1.0
"""Below about this Reynolds number drag grows linearly with speed (Stokes flow) [-]."""

EASED_POWER_TOLERANCE = 1.0e-6
"""A piece ridden this much below its planned power is eased off [W]."""


@dataclass(frozen=True)
class EnergyBudget:
    """The crank work of a predicted race split by what it pays for (SI).

    Attributes
    ----------
    work : crank work of each segment, K values [J].
    terms : ENERGY_TERMS key → that term's work on each segment, K values [J]: "air" (air
        drag), "rolling" (rolling resistance), "climbing" (net potential energy m·g·Δh),
        "bearings" (wheel-bearing friction), "drivetrain" (loss in chain and gears), "speed
        change" (net kinetic energy ½·m_eff·Δ(v²)) and "braking" (taken by the brakes).
    walking_work : work done pushing the bike on foot, not through the pedals, K values [J].
    """

    work: np.ndarray
    terms: dict[str, np.ndarray]
    walking_work: np.ndarray

    @property
    def total_work(self) -> float:
        """Crank work of the race [J]."""
        return float(self.work.sum())

    def totals(self) -> dict[str, float]:
        """Each term over the whole race [J], in ENERGY_TERMS order."""
        return {key: float(values.sum()) for key, values in self.terms.items()}

    def flows(self) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]]:
        """Where each segment's energy comes from and where it goes, every value ≥ 0 [J].

        Sources: "athlete" (the crank work), "gravity" (height lost: the negative part of
        climbing), "momentum" (speed lost). Sinks: "air", "rolling", "bearings",
        "drivetrain", "braking", "height" (height gained) and "speed" (speed gained). On each
        segment the sources sum to the sinks (the balance of the module docstring, with
        climbing and speed change split by sign).
        """
        climbing, speed = self.terms["climbing"], self.terms["speed change"]
        sources = {"athlete": self.work, "gravity": np.maximum(-climbing, 0.0),
                   "momentum": np.maximum(-speed, 0.0)}
        sinks = {key: self.terms[key] for key in ("air", "rolling", "bearings", "drivetrain",
                                                  "braking")}
        sinks["height"] = np.maximum(climbing, 0.0)
        sinks["speed"] = np.maximum(speed, 0.0)
        return sources, sinks

    def imbalance(self) -> np.ndarray:
        """Crank work minus the sum of its terms, per segment [J] (the simulation's
        rounding; zero for a closed balance)."""
        return self.work - sum(self.terms.values())


def _segment_sums(values: np.ndarray, bounds: np.ndarray) -> np.ndarray:
    """Sum of a piece array over each segment given by point `bounds` [same unit]."""
    cumulative = np.concatenate(([0.0], np.cumsum(values)))
    return cumulative[bounds[1:]] - cumulative[bounds[:-1]]


def energy_budget(prediction, bounds=None) -> EnergyBudget:
    """Where the crank work of a predicted cycling race goes, per segment.

    Parameters
    ----------
    prediction : pacing.plan.prediction.Prediction
        The race: time per point [s], power per piece [W] and its energy terms per piece [J].
    bounds : array_like of int or None
        Segment boundary point indices (first 0, last N-1); None for the race as one
        segment [-].

    Returns
    -------
    EnergyBudget
        Crank work P·Δt per segment and its terms; they sum to it (Martin et al. 1998).

    Raises
    ------
    InputError
        When `bounds` do not run from the first to the last point, increasing.
    """
    time = np.asarray(prediction.time, dtype=float)
    points = time.size
    edges = np.asarray([0, points - 1] if bounds is None else bounds, dtype=int)
    if edges.size < 2 or edges[0] != 0 or edges[-1] != points - 1 or np.any(np.diff(edges) <= 0):
        raise InputError("segment bounds must increase from the first to the last point")
    power = np.asarray(prediction.power, dtype=float)
    pieces = {
        "air": prediction.aero, "rolling": prediction.rolling, "climbing": prediction.potential,
        "bearings": prediction.bearing, "drivetrain": prediction.drivetrain_loss,
        "speed change": prediction.kinetic, "braking": prediction.braking}
    terms = {key: _segment_sums(np.asarray(pieces[key], dtype=float), edges)
             for key in ENERGY_TERMS}
    return EnergyBudget(work=_segment_sums(power * np.diff(time), edges), terms=terms,
                        walking_work=_segment_sums(
                            np.asarray(prediction.walking_work, dtype=float), edges))


RUNNING_TERMS = ("flat running", "grade", "air")
"""The terms of a runner's metabolic energy (keys of RunningBudget.terms)."""


@dataclass(frozen=True)
class RunningBudget:
    """A runner's metabolic energy per segment split by what it pays for (SI).

    Attributes
    ----------
    work : metabolic energy of each segment, K values [J].
    terms : RUNNING_TERMS key → its part on each segment, K values [J]: "flat running"
        (Cr(0)·m·d), "grade" ((Cr(i) − Cr(0))·m·d, negative downhill) and "air".
    """

    work: np.ndarray
    terms: dict[str, np.ndarray]

    @property
    def total_work(self) -> float:
        """Metabolic energy of the race [J]."""
        return float(self.work.sum())

    def flows(self) -> tuple[dict[str, np.ndarray], dict[str, np.ndarray]]:
        """Sources ("athlete", "downhill": what descents save against the flat) and sinks
        ("flat running", "height": the extra cost of climbing, "air") per segment, every value
        ≥ 0 [J]; on each segment they sum to the same."""
        grade = self.terms["grade"]
        sources = {"athlete": self.work, "downhill": np.maximum(-grade, 0.0)}
        sinks = {"flat running": self.terms["flat running"],
                 "height": np.maximum(grade, 0.0), "air": self.terms["air"]}
        return sources, sinks

    def imbalance(self) -> np.ndarray:
        """Energy minus the sum of its terms, per segment [J]."""
        return self.work - sum(self.terms.values())


def running_energy_budget(speed, duration, grade, runner, air_density, headwind=0.0,
                          crosswind=0.0, bounds=None) -> RunningBudget:
    """Where a runner's metabolic energy goes, per segment.

    Parameters
    ----------
    speed : array_like
        Ground speed on each piece, N-1 values [m/s].
    duration : array_like
        Time on each piece, N-1 values [s].
    grade : array_like
        Grade of each piece, rise/run [-].
    runner : pacing.physics.running.Runner
        Body mass [kg], air coefficient and grade-cost model.
    air_density, headwind, crosswind : float or array_like
        Air on each piece [kg/m³], [m/s], [m/s].
    bounds : array_like of int or None
        Segment boundary point indices; None for the race as one segment [-].

    Returns
    -------
    RunningBudget
        E = P_met·m·Δt per segment and its terms (Minetti et al. 2002 cost, air as
        pacing.physics.running.metabolic_power).
    """
    from pacing.physics.cycling import air_speed_components
    from pacing.physics.running_cost import RUNNING_COST_MODELS

    speed = np.asarray(speed, dtype=float)
    duration = np.asarray(duration, dtype=float)
    pieces = speed.size
    edges = np.asarray([0, pieces] if bounds is None else bounds, dtype=int)
    if edges.size < 2 or edges[0] != 0 or edges[-1] != pieces or np.any(np.diff(edges) <= 0):
        raise InputError("segment bounds must increase from the first to the last point")
    cost = RUNNING_COST_MODELS[runner.cost_model].cost
    metres = speed * duration * runner.body_mass  # [kg·m]
    flat = cost(np.zeros(pieces)) * metres
    on_grade = cost(np.asarray(grade, dtype=float) + np.zeros(pieces)) * metres
    along, apparent, _ = air_speed_components(speed, headwind, crosswind)
    air = runner.air_coefficient * np.asarray(air_density) * apparent * along * metres
    terms = {"flat running": _segment_sums(flat, edges),
             "grade": _segment_sums(on_grade - flat, edges),
             "air": _segment_sums(air + np.zeros(pieces), edges)}
    return RunningBudget(work=_segment_sums(on_grade + air, edges), terms=terms)


@dataclass(frozen=True)
class EasingEvent:
    """A stretch where the rider rides below the planned power: braking before a corner or a
    speed limit, coasting, or the first pedal strokes of a standing start (SI).

    Attributes
    ----------
    start, end : where it begins and ends along the course [m].
    kind : "braking" (the brakes take energy), "coasting" (less or no pedalling, no brakes)
        or "start" (the start, where grip limits the drive force).
    lowest_speed : lowest speed in it [m/s].
    braking_work : energy taken by the brakes [J].
    work_not_given : planned minus ridden crank work over it [J].
    tightest_radius : the tightest corner radius in it [m]; inf on a straight road.
    """

    start: float
    end: float
    kind: str
    lowest_speed: float
    braking_work: float
    work_not_given: float
    tightest_radius: float


def _runs(flags: np.ndarray, join: int) -> list[tuple[int, int]]:
    """(first, last) piece index of each run of True in `flags`, runs closer than `join`
    pieces apart made one."""
    runs: list[tuple[int, int]] = []
    for index in np.flatnonzero(flags):
        if runs and index - runs[-1][1] <= join:
            runs[-1] = (runs[-1][0], int(index))
        else:
            runs.append((int(index), int(index)))
    return runs


def easing_events(prediction, planned_power, corner_radius=None,
                  join: int = 2) -> list[EasingEvent]:
    """The places where the ridden power falls below the plan, in order along the course.

    Parameters
    ----------
    prediction : pacing.plan.prediction.Prediction
        The race: distance, time and speed per point; power and braking per piece.
    planned_power : array_like
        The plan's power per piece (RacePlan.piece_power) [W].
    corner_radius : array_like or None
        Corner radius per point (Course.corner_radius) [m]; None: not known (inf).
    join : int
        Stretches fewer than this many pieces apart are one event [-].

    Returns
    -------
    list of EasingEvent
    """
    power = np.asarray(prediction.power, dtype=float)
    planned = np.asarray(planned_power, dtype=float)
    if planned.shape != power.shape:
        raise InputError("the planned power must have one value per piece of the prediction")
    distance = np.asarray(prediction.distance, dtype=float)
    speed = np.asarray(prediction.speed, dtype=float)
    braking = np.asarray(prediction.braking, dtype=float)
    duration = np.diff(np.asarray(prediction.time, dtype=float))
    radius = (np.full(distance.size, np.inf) if corner_radius is None
              else np.asarray(corner_radius, dtype=float))
    events = []
    for first, last in _runs(power < planned - EASED_POWER_TOLERANCE, join):
        taken = float(braking[first:last + 1].sum())
        kind = "braking" if taken > 0 else ("start" if first == 0 else "coasting")
        given = (planned[first:last + 1] - power[first:last + 1]) * duration[first:last + 1]
        events.append(EasingEvent(
            start=float(distance[first]), end=float(distance[last + 1]), kind=kind,
            lowest_speed=float(speed[first:last + 2].min()), braking_work=taken,
            work_not_given=float(np.clip(given, 0.0, None).sum()),
            tightest_radius=float(radius[first:last + 2].min())))
    return events


def planned_mean_power(prediction, planned_power) -> float:
    """Time-weighted mean of the planned power over the predicted race [W]: what the plan
    asks for, before easing off for corners, limits and the start."""
    duration = np.diff(np.asarray(prediction.time, dtype=float))
    return float(np.sum(np.asarray(planned_power, dtype=float) * duration) / duration.sum())


def air_viscosity(temperature: float) -> float:
    """Dynamic viscosity of air by Sutherland's law [Pa·s].

    μ = μ₀·(T/T₀)^(3/2)·(T₀ + S)/(T + S), T in kelvin.

    Parameters
    ----------
    temperature : float
        Air temperature [°C].

    Returns
    -------
    float
        μ [Pa·s].

    References
    ----------
    Sutherland (1893); White, Viscous Fluid Flow (2006), table 1-2 (see the module).

    Examples
    --------
    >>> round(air_viscosity(0.0) * 1e5, 4)
    1.716
    """
    kelvin = float(temperature) + CELSIUS_TO_KELVIN
    if not np.isfinite(kelvin) or kelvin <= 0:
        raise InputError(f"air temperature must be above absolute zero, got {temperature!r} °C")
    ratio = kelvin / SUTHERLAND_REFERENCE_TEMPERATURE
    return (SUTHERLAND_REFERENCE_VISCOSITY * ratio ** 1.5
            * (SUTHERLAND_REFERENCE_TEMPERATURE + SUTHERLAND_CONSTANT)
            / (kelvin + SUTHERLAND_CONSTANT))


def reynolds_number(density: float, speed: float, temperature: float,
                    length: float = RIDER_LENGTH_SCALE) -> float:
    """Reynolds number of a body in air, Re = ρ·v·L/μ [-].

    Parameters
    ----------
    density : float
        Air density [kg/m³].
    speed : float
        Speed of the air past the body [m/s].
    temperature : float
        Air temperature, for the viscosity (`air_viscosity`) [°C].
    length : float
        The body's length scale [m] (RIDER_LENGTH_SCALE).

    Returns
    -------
    float
        Re [-].

    Examples
    --------
    Air at 20 °C and 1.204 kg/m³ past 1 m at 10 m/s: Re ≈ 6.6·10⁵.

    >>> round(reynolds_number(1.204, 10.0, 20.0) / 1e5, 2)
    6.64
    """
    return float(density) * float(speed) * float(length) / air_viscosity(temperature)


def drag_growth(speed_ratio: float) -> tuple[float, float]:
    """How much more air drag force and power against still air at `speed_ratio` times the
    speed, in the quadratic regime (Re far above STOKES_LIMIT): (k², k³) [-].

    >>> tuple(round(x, 2) for x in drag_growth(1.2))
    (1.44, 1.73)
    """
    return float(speed_ratio) ** 2, float(speed_ratio) ** 3
