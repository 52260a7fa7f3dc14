"""Energy cost of running on grades and against the air; critical speed and D′.

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
start's air density (`flat_effort`). The race plans built on it (equal effort, even pace,
fastest under critical speed and D′) are in pacing.plan.running.

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

from pacing.errors import InputError
from pacing.physics.cycling import air_speed_components

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

    As in cycling (pacing.physics.cycling.aerodynamic_force): the drag acts along the apparent wind
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
        along = v + head  # as pacing.physics.cycling.air_speed_components, without the yaw angle
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
        typed = ""
        if np.isfinite(flat_speed) and flat_speed > 0:
            minutes, seconds = divmod(round(1000.0 / flat_speed), 60)
            typed = f"{minutes}:{seconds:02d} per km, "
        raise InputError(
            f"flat pace must be 1:24-33:20 per km (0.5-12 m/s), got {typed}{flat_speed:.3g} m/s"
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
