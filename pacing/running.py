"""Energy cost of running on grades and against the air, and running race plans.

The runner's metabolic power per kilogram at ground speed v [m/s] on a piece of grade i::

    P_met(v) = Cr(i)·v + ½·ρ·CdA·(1 − d)·V·v_a·v / (η_air·m)          [W/kg]

Cr(i) is the energy cost of running on the grade from treadmill measurements (Minetti et al.
2002), which has no air resistance in it. The second term is the mechanical power against the
air (as in cycling: v_a = v + w_h the air speed along the track, V = √(v_a² + w_c²) the apparent
wind speed, d the share of drag removed by drafting) converted to metabolic power with the
efficiency of running against a horizontal impeding force, η_air = 0.361 (Lloyd & Zacks 1972).
With the runner's drag area CdA = 0.9 × 0.266 × BSA and ρ = 1.2 kg/m³ this gives
0.3979·BSA·v³/m W/kg in still air, the di Prampero term 0.4·BSA·v³/m used by Péronnet &
Thibault (1989) (see `air_metabolic_power_di_prampero`). This module uses the first form
because it carries air density, wind and drafting; the second is kept as the published check.

The athlete's *effort* is the metabolic power of the flat-ground pace in still air at the
start's air density. An *equal-effort* plan runs every piece at the speed with that metabolic
power; an *even-pace* plan runs one speed everywhere; the *fastest* plan is the highest equal
effort that the runner's critical speed and D′ allow.

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
Pugh, L.G.C.E. (1971). The influence of wind resistance in running and walking and the
mechanical efficiency of work against horizontal or vertical forces. J Physiol 213(2):255-276.
doi:10.1113/jphysiol.1971.sp009381
Lloyd, B.B. & Zacks, R.M. (1972). The mechanical efficiency of treadmill running against a
horizontal impeding force. J Physiol 223:355-363.
Péronnet, F. & Thibault, G. (1989). Mathematical analysis of running performance and world
running records. J Appl Physiol 67(1):453-465.
Du Bois, D. & Du Bois, E.F. (1916). A formula to estimate the approximate surface area if height
and weight be known. Arch Intern Med 17(6):863-871.
Poole, D.C. et al. (2016). Critical power: an important fatigue threshold in exercise
physiology. Med Sci Sports Exerc 48(11):2320-2334.
Skiba, P.F. et al. (2015). Intramuscular determinants of the ability to recover work capacity
above critical power. Eur J Appl Physiol 115(4):703-713.
Kordi, M. et al. (2019). Int J Sports Physiol Perform 14:685 (typical CS and D′ of trained
men: 4.94 ± 0.32 m/s, 123 ± 58 m).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from pacing.course import Course, split_every
from pacing.cycling import air_speed_components
from pacing.errors import InputError
from pacing.physiology import w_prime_balance_differential
from pacing.targets import SegmentTarget

# ---------------------------------------------------------------------------------------------
# Energy cost of running on a grade
# ---------------------------------------------------------------------------------------------

MINETTI_2002_COEFFICIENTS = (155.4, -30.4, -43.3, 46.3, 19.5, 3.6)
"""Cr(i) = 155.4i⁵ − 30.4i⁴ − 43.3i³ + 46.3i² + 19.5i + 3.6 [J/(kg·m)], highest power first
(Minetti et al. 2002, running, fitted on −0.45 ≤ i ≤ +0.45)."""

MINETTI_2002_GRADE_RANGE = (-0.45, 0.45)
"""Grades the Minetti et al. (2002) running polynomial was fitted on [-]."""

def _polynomial_cost(
    grade: np.ndarray,
    coefficients: tuple[float, ...],
    grade_range: tuple[float, float],
    outside_range: str,
) -> np.ndarray:
    grade = np.asarray(grade, dtype=float)
    if not np.all(np.isfinite(grade)):
        raise InputError("grade must be a finite number")
    low, high = grade_range
    if outside_range == "raise":
        if np.any((grade < low) | (grade > high)):
            raise InputError(
                f"grade outside the running cost model's range {low:+.0%}..{high:+.0%}"
            )
    elif outside_range != "clip":
        raise InputError(f"outside_range must be 'clip' or 'raise', got {outside_range!r}")
    grade = np.clip(grade, low, high)
    return np.polyval(coefficients, grade)


def running_cost_minetti(grade: np.ndarray, outside_range: str = "clip") -> np.ndarray:
    """Energy cost of running on a grade, Minetti et al. (2002) [J/(kg·m)].

    Cr(i) = 155.4·i⁵ − 30.4·i⁴ − 43.3·i³ + 46.3·i² + 19.5·i + 3.6

    Metabolic energy per kilogram of body mass per metre travelled (along the ground), from
    treadmill running (no air resistance), independent of speed. The fit covers
    −0.45 ≤ i ≤ +0.45; its cost is lowest near i = −0.18 (1.78 J/(kg·m)).

    Parameters
    ----------
    grade : i, rise over run [-] (0.05 = 5 %), scalar or array.
    outside_range : "clip" (default) evaluates grades beyond ±0.45 at the nearest end of the
        range; "raise" raises InputError instead.

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93:1039-1046.
    """
    return _polynomial_cost(grade, MINETTI_2002_COEFFICIENTS, MINETTI_2002_GRADE_RANGE,
                            outside_range)


@dataclass(frozen=True)
class GradeCostModel:
    """One published model of the energy cost of running on a grade.

    Attributes
    ----------
    name : registry key.
    cost : function grade [-] → Cr [J/(kg·m)] (with an ``outside_range`` keyword).
    grade_range : (lowest, highest) grade it is used on [-].
    label : short description for menus.
    reference : the source.
    """

    name: str
    cost: Callable[..., np.ndarray]
    grade_range: tuple[float, float]
    label: str
    reference: str


RUNNING_COST_MODELS: dict[str, GradeCostModel] = {
    "minetti-2002": GradeCostModel(
        "minetti-2002", running_cost_minetti, MINETTI_2002_GRADE_RANGE,
        "Minetti et al. 2002 (treadmill metabolic cost)",
        "Minetti et al. (2002), J Appl Physiol 93:1039",
    ),
}
"""Grade-cost models by name; "minetti-2002" is the default. A gentler shallow-grade model from
race data would belong here too; none is included until its coefficients can be checked
against the published paper itself."""

# ---------------------------------------------------------------------------------------------
# Air resistance of a runner
# ---------------------------------------------------------------------------------------------

PROJECTED_AREA_FRACTION = 0.266
"""Frontal area of a runner as a fraction of body surface area [-] (from memory; its source
was not verified)."""

RUNNER_DRAG_COEFFICIENT = 0.9
"""Drag coefficient of a running person [-] (from memory; the literature quotes 0.8-1.0)."""

EFFICIENCY_AGAINST_AIR = 0.361
"""Efficiency of running against a horizontal impeding force [-]: Lloyd & Zacks (1972), J
Physiol 223:355, mean apparent load-running efficiency 36.1 % of three trained athletes."""

PUGH_1971_DRAFTING_VO2_REDUCTION = 0.065
"""Fall in oxygen intake running 1 m behind another runner at middle-distance speed [-]
(Pugh 1971: "virtually eliminated air resistance and reduced VO₂ by 6.5 %")."""

DI_PRAMPERO_AIR_COEFFICIENT = 0.4
"""k in the still-air term k·BSA·v³/m [W/kg] (di Prampero 1984, as used by Péronnet &
Thibault 1989; read in a secondary copy of the 1989 paper's equation)."""


def body_surface_area_du_bois(body_mass: float, height: float) -> float:
    """Body surface area by Du Bois & Du Bois (1916) [m²].

    BSA = 0.007184 · m^0.425 · H^0.725, with m in kg and H in cm.

    Parameters
    ----------
    body_mass : [kg]; height : [m].

    References
    ----------
    Du Bois & Du Bois (1916), Arch Intern Med 17(6):863-871.
    """
    if not (20.0 <= body_mass <= 250.0):
        raise InputError(f"body mass must be 20-250 kg, got {body_mass}")
    if not (1.0 <= height <= 2.5):
        raise InputError(f"height must be 1.0-2.5 m, got {height}")
    return 0.007184 * body_mass**0.425 * (100.0 * height) ** 0.725


def runner_drag_area(
    body_mass: float,
    height: float,
    projected_area_fraction: float = PROJECTED_AREA_FRACTION,
    drag_coefficient: float = RUNNER_DRAG_COEFFICIENT,
) -> float:
    """Drag area of a runner from body size, CdA = Cd · f · BSA [m²].

    BSA by Du Bois & Du Bois (1916); frontal area A = f·BSA with f = 0.266 and Cd = 0.9 (both
    from memory; see the constants). 70 kg, 1.75 m → BSA 1.848 m², CdA 0.442 m².

    Parameters
    ----------
    body_mass : [kg]; height : [m]; projected_area_fraction : f [-]; drag_coefficient : Cd [-].
    """
    return drag_coefficient * projected_area_fraction * body_surface_area_du_bois(body_mass,
                                                                                 height)


def air_resistance_power(
    speed: np.ndarray,
    air_density: np.ndarray,
    drag_area: float,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
    drafting_reduction: float = 0.0,
) -> np.ndarray:
    """Mechanical power against the air, ½·ρ·CdA·(1 − d)·V·v_a·v [W].

    As in cycling (pacing.cycling.aerodynamic_force): the drag acts along the apparent wind
    and its component along the track is ½ρ·CdA·V·v_a. Negative when a tailwind is faster than
    the runner (the air pushes).

    Parameters
    ----------
    speed : ground speed [m/s]; air_density [kg/m³]; drag_area : CdA [m²];
    headwind, crosswind : wind components at the runner [m/s] (headwind positive against the
    direction of travel); drafting_reduction : share of drag removed, 0..1 [-].
    """
    speed = np.asarray(speed, dtype=float)
    along, apparent, _ = air_speed_components(speed, headwind, crosswind)
    return 0.5 * np.asarray(air_density) * drag_area * (1.0 - drafting_reduction) \
        * apparent * along * speed


def air_metabolic_power_di_prampero(
    speed: np.ndarray, body_surface_area: float, body_mass: float
) -> np.ndarray:
    """Metabolic power against still air, di Prampero's form 0.4·BSA·v³/m [W/kg].

    The air term of Péronnet & Thibault (1989) (after di Prampero 1984), in still air at sea
    level. About 0.0106·v³ W/kg for 70 kg, 1.75 m. Kept as the published check of
    `metabolic_power`'s air term, which also handles air density, wind and drafting.

    Parameters
    ----------
    speed : [m/s]; body_surface_area : [m²]; body_mass : [kg].
    """
    speed = np.asarray(speed, dtype=float)
    return DI_PRAMPERO_AIR_COEFFICIENT * body_surface_area * speed**3 / body_mass


@dataclass(frozen=True)
class Runner:
    """Parameters of the running energy balance.

    Attributes
    ----------
    body_mass : [kg].
    drag_area : CdA [m²] (0 for no air resistance, as on a treadmill).
    drafting_reduction : share of the runner's drag removed by running behind others, 0..1
        [-]; Pugh (1971) found 1 m behind another runner "virtually eliminated" it.
    efficiency_against_air : metabolic-to-mechanical efficiency of work against the air [-].
    cost_model : key of RUNNING_COST_MODELS.
    """

    body_mass: float = 70.0
    drag_area: float = 0.44
    drafting_reduction: float = 0.0
    efficiency_against_air: float = EFFICIENCY_AGAINST_AIR
    cost_model: str = "minetti-2002"

    def __post_init__(self) -> None:
        if not 20.0 <= self.body_mass <= 250.0:
            raise InputError(f"body mass must be 20-250 kg, got {self.body_mass}")
        if not 0.0 <= self.drag_area <= 1.5:
            raise InputError(f"runner's CdA must be 0-1.5 m², got {self.drag_area}")
        if not 0.0 <= self.drafting_reduction <= 1.0:
            raise InputError(
                f"drafting reduction must be a share 0-1, got {self.drafting_reduction}"
            )
        if not 0.05 <= self.efficiency_against_air <= 1.0:
            raise InputError(
                f"efficiency against air must be 0.05-1, got {self.efficiency_against_air}"
            )
        if self.cost_model not in RUNNING_COST_MODELS:
            raise InputError(
                f"unknown running cost model {self.cost_model!r}; "
                f"choose from {', '.join(RUNNING_COST_MODELS)}"
            )

    @classmethod
    def from_body(
        cls,
        body_mass: float,
        height: float | None = None,
        drag_area: float | None = None,
        **options,
    ) -> Runner:
        """A runner whose CdA is given, or else estimated from height and body mass."""
        if drag_area is None:
            if height is None:
                raise InputError("give the runner's height or CdA")
            drag_area = runner_drag_area(body_mass, height)
        return cls(body_mass=body_mass, drag_area=drag_area, **options)

    @property
    def air_coefficient(self) -> float:
        """a = ½·CdA·(1 − d)/(η_air·m), so the air term is a·ρ·V·v_a·v [m²/kg]."""
        return 0.5 * self.drag_area * (1.0 - self.drafting_reduction) / (
            self.efficiency_against_air * self.body_mass
        )


def metabolic_power(
    speed: np.ndarray,
    grade: np.ndarray,
    air_density: np.ndarray,
    runner: Runner,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
    outside_range: str = "clip",
) -> np.ndarray:
    """Metabolic power of running at a speed [W/kg].

    P_met = Cr(i)·v + ½·ρ·CdA·(1 − d)·V·v_a·v / (η_air·m)   (module docstring)

    Parameters
    ----------
    speed : ground speed [m/s]; grade : rise/run [-]; air_density [kg/m³];
    runner : Runner; headwind, crosswind [m/s]; outside_range : see running_cost_minetti.
    """
    speed = np.asarray(speed, dtype=float)
    cost = RUNNING_COST_MODELS[runner.cost_model].cost(grade, outside_range=outside_range)
    along, apparent, _ = air_speed_components(speed, headwind, crosswind)
    return cost * speed + runner.air_coefficient * np.asarray(air_density) * apparent * along \
        * speed


def speed_for_metabolic_power(
    power: np.ndarray,
    grade: np.ndarray,
    air_density: np.ndarray,
    runner: Runner,
    headwind: np.ndarray = 0.0,
    crosswind: np.ndarray = 0.0,
    tolerance: float = 1e-12,
    max_iterations: int = 100,
) -> np.ndarray:
    """Ground speed at which running costs a metabolic power, on every piece at once [m/s].

    Solves g(v) = P_met(v) − P = 0 for v > 0. g(0) = −P < 0 and g grows without bound, so a
    root lies in (0, ∞); the bracket starts at (0, 2·P/Cr) and is doubled until it holds the
    root. Newton steps are taken while they stay inside the bracket, bisection otherwise.

    Parameters
    ----------
    power : metabolic power [W/kg], > 0.
    grade : rise/run [-] (clipped to the cost model's range); air_density [kg/m³];
    runner : Runner; headwind, crosswind [m/s]; tolerance : relative, on speed [-].
    """
    power, grade, rho, head, cross = np.broadcast_arrays(
        np.asarray(power, dtype=float),
        np.asarray(grade, dtype=float),
        np.asarray(air_density, dtype=float),
        np.asarray(headwind, dtype=float),
        np.asarray(crosswind, dtype=float),
    )
    if np.any(~np.isfinite(power) | (power <= 0)):
        raise InputError("metabolic power must be positive")
    cost = RUNNING_COST_MODELS[runner.cost_model].cost(grade)
    a = runner.air_coefficient * rho

    def g_and_slope(v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        along = v + head  # as pacing.cycling.air_speed_components, without the yaw angle
        apparent = np.hypot(along, cross)
        value = cost * v + a * apparent * along * v - power
        safe = np.where(apparent > 0, apparent, 1.0)
        slope = cost + a * (apparent * along + v * np.where(apparent > 0,
                                                             apparent + along**2 / safe, 0.0))
        return value, slope

    low = np.zeros(power.shape)
    high = 2.0 * power / cost
    for _ in range(60):
        short = g_and_slope(high)[0] < 0
        if not short.any():
            break
        low = np.where(short, high, low)
        high = np.where(short, 2.0 * high, high)
    # start from the speed without air, which is close when the air term is small
    speed = np.clip(power / cost, low + 0.25 * (high - low), high - 0.25 * (high - low))
    for _ in range(max_iterations):
        value, slope = g_and_slope(speed)
        low = np.where(value < 0, speed, low)
        high = np.where(value > 0, speed, high)
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = speed - value / slope
        inside = (newton >= low) & (newton <= high) & np.isfinite(newton)
        new_speed = np.where(inside, newton, 0.5 * (low + high))
        done = (np.abs(new_speed - speed) <= tolerance * new_speed) | (value == 0)
        speed = new_speed
        if np.all(done):
            break
    return speed


def flat_effort(flat_speed: float, air_density: float, runner: Runner) -> float:
    """The effort of a flat-ground pace: metabolic power on level ground in still air [W/kg].

    Parameters
    ----------
    flat_speed : [m/s]; air_density : at the start [kg/m³]; runner : Runner.
    """
    if not np.isfinite(flat_speed) or not 0.5 <= flat_speed <= 12.0:
        raise InputError(
            f"flat pace must be 1:24-33:20 per km (0.5-12 m/s), got {flat_speed:.3g} m/s"
        )
    return float(metabolic_power(flat_speed, 0.0, air_density, runner))


def air_share(speed: float, air_density: float, runner: Runner) -> float:
    """Share of metabolic power spent against still air on level ground [-]."""
    total = metabolic_power(speed, 0.0, air_density, runner)
    without_air = metabolic_power(speed, 0.0, air_density,
                                  Runner(runner.body_mass, 0.0, cost_model=runner.cost_model))
    return float((total - without_air) / total)


# ---------------------------------------------------------------------------------------------
# Critical speed and D′
# ---------------------------------------------------------------------------------------------


def critical_speed_time_limit(speed: np.ndarray, critical_speed: float,
                              d_prime: float) -> np.ndarray:
    """Time to exhaustion at a constant speed above critical speed, t = D′/(v − CS) [s].

    Infinite at or below critical speed. The running form of the critical power model
    (Hughson et al. 1984; Poole et al. 2016, Med Sci Sports Exerc 48:2320).

    Parameters
    ----------
    speed : [m/s]; critical_speed : CS [m/s]; d_prime : D′, distance above CS [m].
    """
    _check_critical_speed(critical_speed, d_prime)
    speed = np.asarray(speed, dtype=float)
    excess = speed - critical_speed
    with np.errstate(divide="ignore"):
        return np.where(excess > 0, d_prime / np.where(excess > 0, excess, 1.0), np.inf)


def critical_speed_flat_race_time(distance: float, critical_speed: float,
                                  d_prime: float) -> float:
    """Fastest time over a flat distance at constant speed by the CS model [s].

    From t = D′/(v − CS) with v = d/t: t = (d − D′)/CS. Requires d > D′.

    Parameters
    ----------
    distance : [m]; critical_speed : [m/s]; d_prime : [m].
    """
    _check_critical_speed(critical_speed, d_prime)
    if distance <= d_prime:
        raise InputError(f"race distance {distance:.0f} m must exceed D′ ({d_prime:.0f} m)")
    return (distance - d_prime) / critical_speed


def distance_capacity_balance(
    equivalent_speed: np.ndarray, time: np.ndarray, critical_speed: float, d_prime: float
) -> np.ndarray:
    """D′ balance at the end of each piece, the running analogue of W′ balance [m].

    `equivalent_speed` is the flat, still-air speed of the same metabolic power, held for
    `time` on each piece. Above CS the balance falls at (u − CS) metres per second; below CS it
    recovers by Skiba's differential form dD/dt = (CS − u)·(D′ − D)/D′, integrated exactly over
    each piece: D′ − D(t) = (D′ − D(0))·exp(−(CS − u)·t/D′).

    Caution: Skiba's recovery law was fitted to cycling (power, W′); its use with speed and
    D′ in running is an analogy, not a measured result.

    Parameters
    ----------
    equivalent_speed : per piece [m/s]; time : per piece [s]; critical_speed : [m/s];
    d_prime : [m].

    The integration is pacing.physiology.w_prime_balance_differential with speed for power.

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115:703-713.
    """
    _check_critical_speed(critical_speed, d_prime)
    speed = np.asarray(equivalent_speed, dtype=float)
    time = np.asarray(time, dtype=float)
    if speed.shape != time.shape or speed.ndim != 1:
        raise InputError("equivalent speed and time must be 1-D arrays of equal length")
    # Skiba's equation in speed units: the same integration as W′ balance in pacing.physiology
    return w_prime_balance_differential(speed, time, critical_speed, d_prime)


def _check_critical_speed(critical_speed: float, d_prime: float) -> None:
    if not np.isfinite(critical_speed) or not 0.5 <= critical_speed <= 10.0:
        raise InputError(f"critical speed must be 0.5-10 m/s, got {critical_speed}")
    if not np.isfinite(d_prime) or not 0.0 < d_prime <= 2000.0:
        raise InputError(f"D′ must be 0-2000 m, got {d_prime}")


# ---------------------------------------------------------------------------------------------
# Plans
# ---------------------------------------------------------------------------------------------

DOWNHILL_SPEED_RATIO_CAP = 1.2
"""Default cap on speed on descents, as a multiple of the flat speed [-]. Our choice: the
Minetti polynomial's equal-effort speeds on descents are unrealistically high (its authors
say so): ×1.27 at −5 %, ×1.67 at −10 %. Runners in a self-paced hilly time trial ran 13.8 %
faster on descents than on level sections (Med Sci Sports Exerc 42(1):160-169, 2010,
"Spontaneous pacing during overground hill running"; authors Townshend et al. from
memory), so 1.2 leaves room for steeper descents without the model's excess."""

DEFAULT_SPLIT = 1000.0
"""Segment length when no segment bounds are given [m]: kilometre splits."""


@dataclass(frozen=True)
class RunningSegment:
    """One row of a running plan's target table (numbers only; formatting at the edges).

    Attributes
    ----------
    start, end : distance from the start [m].
    grade : mean grade, rise/run [-].
    headwind : length-weighted mean headwind component [m/s] (negative: tailwind).
    speed : mean ground speed [m/s].
    pace : target pace [s/km].
    time : expected time on the segment [s].
    cumulative_time : elapsed time at the segment's end [s].
    effort_ratio : time-weighted mean metabolic power relative to the effort target [-].
    """

    start: float
    end: float
    grade: float
    headwind: float
    speed: float
    pace: float
    time: float
    cumulative_time: float
    effort_ratio: float


@dataclass(frozen=True, eq=False)
class RunningPlan:
    """A running plan on a course and its prediction.

    Attributes
    ----------
    strategy : "equal-effort", "even-pace" or "fastest".
    speed : ground speed on each piece [m/s], length N-1.
    time : time on each piece [s], length N-1.
    metabolic_power : on each piece [W/kg], length N-1.
    effort : the effort target, metabolic power of the flat speed in still air [W/kg].
    flat_speed : the flat-ground, still-air speed of that effort [m/s].
    segments : target rows.
    d_prime_balance : D′ balance at the end of each piece [m] (fastest plan; else None).
    notes : cautions to show beside the numbers.
    """

    strategy: str
    speed: np.ndarray
    time: np.ndarray
    metabolic_power: np.ndarray
    effort: float
    flat_speed: float
    segments: tuple[RunningSegment, ...]
    d_prime_balance: np.ndarray | None = None
    notes: tuple[str, ...] = ()

    @property
    def finish_time(self) -> float:
        """[s]."""
        return float(self.time.sum())

    @property
    def distance(self) -> float:
        """[m]."""
        return float((self.speed * self.time).sum())

    @property
    def average_speed(self) -> float:
        """[m/s]."""
        return self.distance / self.finish_time

    @property
    def mean_effort_ratio(self) -> float:
        """Time-weighted mean metabolic power relative to the effort target [-] (below 1 for
        an equal-effort plan where the descent cap holds the runner back)."""
        return float(np.sum(self.metabolic_power * self.time) / self.finish_time / self.effort)


@dataclass(frozen=True)
class _Air:
    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray


def _air(course: Course, air_density, headwind, crosswind) -> _Air:
    shape = course.grade.shape
    arrays = []
    for name, value in (("air density", air_density), ("headwind", headwind),
                        ("crosswind", crosswind)):
        array = np.asarray(value, dtype=float)
        if array.ndim > 1 or (array.ndim == 1 and array.shape != shape):
            raise InputError(f"{name} must be a number or one value per piece of the course")
        array = np.broadcast_to(array, shape)
        if not np.all(np.isfinite(array)):
            raise InputError(f"{name} must be finite")
        arrays.append(array)
    if np.any(arrays[0] <= 0.3) or np.any(arrays[0] > 1.6):
        raise InputError("air density must be 0.3-1.6 kg/m³")
    return _Air(*arrays)


def _check_bounds(course: Course, bounds) -> np.ndarray:
    if bounds is None:
        return split_every(course, DEFAULT_SPLIT)
    bounds = np.asarray(bounds, dtype=int)
    n = course.distance.size
    if bounds.ndim != 1 or bounds.size < 2 or bounds[0] != 0 or bounds[-1] != n - 1 \
            or np.any(np.diff(bounds) <= 0):
        raise InputError("segment bounds must increase from 0 to the last point of the course")
    return bounds


def _segments(course: Course, bounds: np.ndarray, speed: np.ndarray, time: np.ndarray,
              power: np.ndarray, effort: float, headwind: np.ndarray) -> tuple:
    length = course.piece_length
    cumulative = np.concatenate([[0.0], np.cumsum(time)])
    rows = []
    for first, last in zip(bounds[:-1], bounds[1:], strict=True):
        pieces = slice(first, last)
        run = float(course.distance[last] - course.distance[first])
        seg_time = float(time[pieces].sum())
        seg_speed = run / seg_time
        rows.append(RunningSegment(
            start=float(course.distance[first] - course.distance[0]),
            end=float(course.distance[last] - course.distance[0]),
            grade=float((course.elevation[last] - course.elevation[first]) / run),
            headwind=float(np.average(headwind[pieces], weights=length[pieces])),
            speed=seg_speed,
            pace=1000.0 / seg_speed,
            time=seg_time,
            cumulative_time=float(cumulative[last]),
            effort_ratio=float(np.average(power[pieces], weights=time[pieces]) / effort),
        ))
    return tuple(rows)


def _grade_notes(course: Course, runner: Runner) -> list[str]:
    low, high = RUNNING_COST_MODELS[runner.cost_model].grade_range
    outside = int(np.count_nonzero((course.grade < low) | (course.grade > high)))
    if outside:
        return [f"{outside} piece(s) steeper than the cost model's range {low:+.0%}..{high:+.0%}"
                " were costed at its edge"]
    return []


def _equal_effort_speeds(course, runner, effort, flat_speed, air, downhill_speed_ratio_cap):
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


def plan_equal_effort(
    course: Course,
    runner: Runner,
    flat_speed: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    downhill_speed_ratio_cap: float | None = DOWNHILL_SPEED_RATIO_CAP,
) -> RunningPlan:
    """Equal effort: on every piece the speed whose metabolic power equals the flat effort.

    effort = P_met(flat_speed, grade 0, still air, ρ at the first piece); then on each piece
    P_met(v) = effort is solved for v, and on descents v ≤ cap × flat_speed.

    Parameters
    ----------
    course : Course; runner : Runner; flat_speed : speed held on flat ground in still air
    [m/s]; air_density : per piece or scalar [kg/m³]; headwind, crosswind : per piece or
    scalar [m/s] at the runner; bounds : segment boundary point indices (default: every km);
    downhill_speed_ratio_cap : highest speed on descents as a multiple of flat_speed [-], None
    for no cap.
    """
    air = _air(course, air_density, headwind, crosswind)
    bounds = _check_bounds(course, bounds)
    effort = flat_effort(flat_speed, float(air.density[0]), runner)
    speed, capped = _equal_effort_speeds(course, runner, effort, flat_speed, air,
                                         downhill_speed_ratio_cap)
    time = course.piece_length / speed
    power = metabolic_power(speed, course.grade, air.density, runner, air.headwind,
                            air.crosswind)
    notes = _grade_notes(course, runner)
    if capped.any():
        notes.append(
            f"descent speed capped at {downhill_speed_ratio_cap:g} × flat speed on "
            f"{capped.mean():.0%} of the course: the cost model's downhill speeds are "
            "unrealistic"
        )
    return RunningPlan(
        strategy="equal-effort", speed=speed, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(flat_speed),
        segments=_segments(course, bounds, speed, time, power, effort, air.headwind),
        notes=tuple(notes),
    )


def plan_even_pace(
    course: Course,
    runner: Runner,
    flat_speed: float,
    air_density: float | np.ndarray = 1.2,
    headwind: float | np.ndarray = 0.0,
    crosswind: float | np.ndarray = 0.0,
    bounds: np.ndarray | None = None,
    speed: float | None = None,
) -> RunningPlan:
    """Even pace, the naive plan: one speed everywhere, and what it costs.

    By default the speed is the one whose time-weighted mean metabolic power over the course
    equals the flat effort (the same average effort as the flat pace): at constant speed the
    time on each piece is proportional to its length, so Σ P_met,j(v)·L_j / Σ L_j = effort is
    solved for v (scipy brentq). Each segment's `effort_ratio` shows what the even pace costs
    there (above 1 on climbs and into the wind). Where the descent cap holds an equal-effort
    plan below its effort, that plan's mean effort is lower than this one's, and even pace can
    then finish sooner: compare `mean_effort_ratio` too.

    Parameters
    ----------
    as plan_equal_effort; speed : hold this speed instead [m/s].
    """
    air = _air(course, air_density, headwind, crosswind)
    bounds = _check_bounds(course, bounds)
    effort = flat_effort(flat_speed, float(air.density[0]), runner)
    length = course.piece_length

    def mean_power(v: float) -> float:
        power = metabolic_power(v, course.grade, air.density, runner, air.headwind,
                                air.crosswind)
        return float(np.sum(power * length) / length.sum())

    if speed is None:
        high = 2.0 * flat_speed
        while mean_power(high) < effort:
            high *= 2.0
        speed = brentq(lambda v: mean_power(v) - effort, 1e-3, high, xtol=1e-12, rtol=1e-14)
    elif not np.isfinite(speed) or not 0.5 <= speed <= 12.0:
        raise InputError(f"even pace must be 1:24-33:20 per km (0.5-12 m/s), got {speed} m/s")
    speeds = np.full(length.shape, float(speed))
    time = length / speeds
    power = metabolic_power(speeds, course.grade, air.density, runner, air.headwind,
                            air.crosswind)
    notes = _grade_notes(course, runner)
    peak = float(power.max() / effort)
    if peak > 1.05:
        notes.append(f"even pace costs up to {peak:.0%} of the flat effort on the hardest piece")
    return RunningPlan(
        strategy="even-pace", speed=speeds, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(flat_speed),
        segments=_segments(course, bounds, speeds, time, power, effort, air.headwind),
        notes=tuple(notes),
    )


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

    Caution: the recovery below critical speed uses Skiba's constants from cycling.

    Parameters
    ----------
    as plan_equal_effort; critical_speed : CS [m/s]; d_prime : D′ [m]; d_prime_reserve :
    balance never to go below [m]; tolerance : on u [m/s].
    """
    _check_critical_speed(critical_speed, d_prime)
    if not 0.0 <= d_prime_reserve < d_prime:
        raise InputError(f"D′ reserve must be 0 to D′ ({d_prime:g} m), got {d_prime_reserve}")
    air = _air(course, air_density, headwind, crosswind)
    bounds = _check_bounds(course, bounds)
    start_density = float(air.density[0])
    length = course.piece_length
    if course.total_distance <= d_prime - d_prime_reserve:
        raise InputError(
            f"course ({course.total_distance:.0f} m) must be longer than the usable D′ "
            f"({d_prime - d_prime_reserve:.0f} m)"
        )

    def attempt(level: float):
        effort = flat_effort(level, start_density, runner)
        speed, capped = _equal_effort_speeds(course, runner, effort, level, air,
                                             downhill_speed_ratio_cap)
        time = length / speed
        power = metabolic_power(speed, course.grade, air.density, runner, air.headwind,
                                air.crosswind)
        equivalent = np.full(speed.shape, level)
        if capped.any():
            equivalent[capped] = speed_for_metabolic_power(power[capped], 0.0, start_density,
                                                           runner)
        balance = distance_capacity_balance(equivalent, time, critical_speed, d_prime)
        return effort, speed, time, power, capped, balance

    low = critical_speed
    high = critical_speed * 1.05 + 0.1
    while attempt(high)[-1].min() >= d_prime_reserve:
        low, high = high, high * 1.5
        if high > 12.0:
            raise InputError("critical speed and D′ allow an unrealistically fast pace")
    while high - low > tolerance:
        middle = 0.5 * (low + high)
        if attempt(middle)[-1].min() >= d_prime_reserve:
            low = middle
        else:
            high = middle
    effort, speed, time, power, capped, balance = attempt(low)
    notes = _grade_notes(course, runner)
    notes.append("D′ recovery below critical speed uses Skiba's constants from cycling")
    if capped.any():
        notes.append(
            f"descent speed capped at {downhill_speed_ratio_cap:g} × flat-equivalent speed on "
            f"{capped.mean():.0%} of the course"
        )
    return RunningPlan(
        strategy="fastest", speed=speed, time=time, metabolic_power=power, effort=effort,
        flat_speed=float(low),
        segments=_segments(course, bounds, speed, time, power, effort, air.headwind),
        d_prime_balance=balance, notes=tuple(notes),
    )


RUNNING_STRATEGIES = ("equal-effort", "even-pace", "fastest")
"""Names of the running plans (the CLI's --strategy values)."""


def running_targets(plan: RunningPlan) -> list[SegmentTarget]:
    """The plan's segments as pacing.targets.SegmentTarget rows (for exports and the app).

    Power fields and W′ balance are None; target_pace is the segment's pace [s/km].
    """
    return [
        SegmentTarget(
            index=index, start=row.start, end=row.end, length=row.end - row.start,
            grade=row.grade, target_power=None, power_low=None, power_high=None,
            target_pace=row.pace, speed=row.speed, time=row.time,
            cumulative_time=row.cumulative_time, w_prime_balance=None, headwind=row.headwind,
        )
        for index, row in enumerate(plan.segments)
    ]
