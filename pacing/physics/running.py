"""Energy cost of running on grades and against the air.

The runner's metabolic power per kilogram at ground speed v [m/s] on a piece of grade i::

    P_met(v) = Cr(i)·v + ½·ρ·CdA·(1 − d)·V·v_a·v / (η_air·m)          [W/kg]

Cr(i) is the energy cost of running on the grade from treadmill measurements (Minetti et al.
2002; the models are in pacing.physics.running_cost), which has no air resistance in it. The
second term is the mechanical power against the air (as in cycling: v_a = v + w_h the air speed
along the track, V = √(v_a² + w_c²) the apparent wind speed, d the share of drag removed by
drafting) converted to metabolic power with the efficiency of running against a horizontal
impeding force, η_air = 0.361 (Lloyd & Zacks 1972).
With the runner's drag area CdA = 0.9 × 0.266 × BSA and ρ = 1.2 kg/m³ this gives
0.3979·BSA·v³/m W/kg in still air, the di Prampero term 0.4·BSA·v³/m used by Péronnet &
Thibault (1989) (see `air_metabolic_power_di_prampero`). This module uses the first form
because it carries air density, wind and drafting; the second is kept as the published check.

The athlete's *effort* is the metabolic power of the flat-ground pace in still air at the
start's air density (`flat_effort`). The race plans built on it (equal effort, even pace,
fastest under critical speed and D′) are in pacing.plan.running; critical speed and D′ in
pacing.physiology.critical_speed. Check values: docs/references.md, "Running".

References
----------
Minetti, A.E., Moia, C., Roi, G.S., Susta, D. & Ferretti, G. (2002). Energy cost of walking and
running at extreme uphill and downhill slopes. J Appl Physiol 93(3):1039-1046.
doi:10.1152/japplphysiol.01177.2001
Pugh, L.G.C.E. (1971). The influence of wind resistance in running and walking and the
mechanical efficiency of work against horizontal or vertical forces. J Physiol 213(2):255-276.
doi:10.1113/jphysiol.1971.sp009381
Lloyd, B.B. & Zacks, R.M. (1972). The mechanical efficiency of treadmill running against a
horizontal impeding force. J Physiol 223:355-363.
Péronnet, F. & Thibault, G. (1989). Mathematical analysis of running performance and world
running records. J Appl Physiol 67(1):453-465.
Du Bois, D. & Du Bois, E.F. (1916). A formula to estimate the approximate surface area if height
and weight be known. Arch Intern Med 17(6):863-871.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.physics.cycling import air_speed_components
from pacing.physics.running_cost import RUNNING_COST_MODELS

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
    body_mass : float
        m, 20..250 [kg].
    height : float
        Standing height, 1.0..2.5 [m].

    Returns
    -------
    float
        BSA [m²].

    References
    ----------
    Du Bois, D. & Du Bois, E.F. (1916). A formula to estimate the approximate surface area if
    height and weight be known. Arch Intern Med 17(6):863-871.

    Examples
    --------
    0.007184·70^0.425·175^0.725 = 1.848 m² for 70 kg and 1.75 m:

    >>> round(body_surface_area_du_bois(70.0, 1.75), 3)
    1.848
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
    from memory; see the constants).

    Parameters
    ----------
    body_mass : float
        m, 20..250 [kg].
    height : float
        Standing height, 1.0..2.5 [m].
    projected_area_fraction : float, optional
        f, frontal area over body surface area [-].
    drag_coefficient : float, optional
        Cd of the running body [-].

    Returns
    -------
    float
        CdA [m²].

    References
    ----------
    Du Bois & Du Bois (1916), Arch Intern Med 17(6):863-871; docs/references.md, "Running".

    Examples
    --------
    0.9·0.266·1.848 = 0.442 m² for 70 kg and 1.75 m:

    >>> round(runner_drag_area(70.0, 1.75), 3)
    0.442
    """
    return drag_coefficient * projected_area_fraction * body_surface_area_du_bois(body_mass,
                                                                                 height)


def air_resistance_power(
    speed: ArrayLike,
    air_density: ArrayLike,
    drag_area: float,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    drafting_reduction: float = 0.0,
) -> np.ndarray:
    """Mechanical power against the air, ½·ρ·CdA·(1 − d)·V·v_a·v [W].

    As in cycling (pacing.physics.cycling.aerodynamic_force): the drag acts along the apparent
    wind and its component along the track is ½ρ·CdA·V·v_a. Negative when a tailwind is faster
    than the runner (the air pushes).

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    air_density : float or array_like
        ρ [kg/m³].
    drag_area : float
        CdA of the runner [m²].
    headwind : float or array_like, optional
        Wind component against the direction of travel at the runner [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel at the runner [m/s].
    drafting_reduction : float, optional
        d, the share of drag removed, 0..1 [-].

    Returns
    -------
    numpy.ndarray
        Mechanical power against the air [W], broadcast from the inputs.

    Examples
    --------
    ½·1.2·0.44·5³ = 33.0 W at 5 m/s in still air:

    >>> float(air_resistance_power(5.0, 1.2, 0.44))
    33.0
    """
    speed = np.asarray(speed, dtype=float)
    along, apparent, _ = air_speed_components(speed, headwind, crosswind)
    return 0.5 * np.asarray(air_density) * drag_area * (1.0 - drafting_reduction) \
        * apparent * along * speed


def air_metabolic_power_di_prampero(
    speed: ArrayLike, body_surface_area: float, body_mass: float
) -> np.ndarray:
    """Metabolic power against still air, di Prampero's form 0.4·BSA·v³/m [W/kg].

    The air term of Péronnet & Thibault (1989) (after di Prampero 1984), in still air at sea
    level. Kept as the published check of `metabolic_power`'s air term, which also handles air
    density, wind and drafting.

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    body_surface_area : float
        BSA [m²].
    body_mass : float
        m [kg].

    Returns
    -------
    numpy.ndarray
        Metabolic power against the air [W/kg], the shape of `speed`.

    References
    ----------
    Péronnet, F. & Thibault, G. (1989). Mathematical analysis of running performance and world
    running records. J Appl Physiol 67(1):453-465.

    Examples
    --------
    About 0.0106·v³ W/kg for 70 kg and 1.75 m (BSA 1.848 m²): 2.28 W/kg at 6 m/s.

    >>> round(float(air_metabolic_power_di_prampero(6.0, 1.848, 70.0)), 2)
    2.28
    """
    speed = np.asarray(speed, dtype=float)
    return DI_PRAMPERO_AIR_COEFFICIENT * body_surface_area * speed**3 / body_mass


@dataclass(frozen=True)
class Runner:
    """Parameters of the running energy balance.

    Attributes
    ----------
    body_mass : float
        m, 20..250 [kg].
    drag_area : float
        CdA, 0..1.5; 0 for no air resistance, as on a treadmill [m²].
    drafting_reduction : float
        Share of the runner's drag removed by running behind others, 0..1; Pugh (1971) found
        1 m behind another runner "virtually eliminated" it [-].
    efficiency_against_air : float
        Metabolic-to-mechanical efficiency of work against the air, 0.05..1 [-].
    cost_model : str
        Key of pacing.physics.running_cost.RUNNING_COST_MODELS [-].

    References
    ----------
    Pugh (1971), J Physiol 213(2):255-276; Lloyd & Zacks (1972), J Physiol 223:355-363.
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
        **options: Any,
    ) -> Runner:
        """A runner whose CdA is given, or else estimated from height and body mass.

        Parameters
        ----------
        body_mass : float
            m [kg].
        height : float, optional
            Standing height, used when `drag_area` is None [m].
        drag_area : float, optional
            CdA; None to estimate it with `runner_drag_area` [m²].
        **options
            The other Runner fields (drafting_reduction [-], efficiency_against_air [-],
            cost_model [-]).

        Returns
        -------
        Runner
            The runner.
        """
        if drag_area is None:
            if height is None:
                raise InputError("give the runner's height or CdA")
            drag_area = runner_drag_area(body_mass, height)
        return cls(body_mass=body_mass, drag_area=drag_area, **options)

    @property
    def air_coefficient(self) -> float:
        """a = ½·CdA·(1 − d)/(η_air·m), so that the air term is a·ρ·V·v_a·v [m²/kg]."""
        return 0.5 * self.drag_area * (1.0 - self.drafting_reduction) / (
            self.efficiency_against_air * self.body_mass
        )


def metabolic_power(
    speed: ArrayLike,
    grade: ArrayLike,
    air_density: ArrayLike,
    runner: Runner,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    outside_range: str = "clip",
) -> np.ndarray:
    """Metabolic power of running at a speed [W/kg].

    P_met = Cr(i)·v + ½·ρ·CdA·(1 − d)·V·v_a·v / (η_air·m)   (module docstring)

    Parameters
    ----------
    speed : float or array_like
        Ground speed v [m/s].
    grade : float or array_like
        i, rise/run [-].
    air_density : float or array_like
        ρ [kg/m³].
    runner : Runner
        The runner's parameters.
    headwind : float or array_like, optional
        Wind component against the direction of travel [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel [m/s].
    outside_range : {"clip", "raise"}, optional
        What to do with grades outside the cost model's range (see
        pacing.physics.running_cost.running_cost_minetti) [-].

    Returns
    -------
    numpy.ndarray
        Metabolic power per kilogram [W/kg], broadcast from the inputs.

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046; Lloyd & Zacks (1972), J Physiol
    223:355-363. docs/references.md, "Running".

    Examples
    --------
    On a treadmill (no air) at 5:00 per km: 3.6 J/(kg·m) × 3.333 m/s = 12.0 W/kg. With a 70 kg,
    1.75 m runner's air resistance (CdA 0.442 m², ρ 1.2 kg/m³) the air adds
    ½·1.2·0.442·3.333³/(0.361·70) = 0.389 W/kg.

    >>> float(metabolic_power(1000 / 300, 0.0, 1.2, Runner(70.0, drag_area=0.0)))
    12.0
    >>> round(float(metabolic_power(1000 / 300, 0.0, 1.2, Runner.from_body(70.0, 1.75))), 3)
    12.389
    """
    speed = np.asarray(speed, dtype=float)
    cost = RUNNING_COST_MODELS[runner.cost_model].cost(grade, outside_range=outside_range)
    along, apparent, _ = air_speed_components(speed, headwind, crosswind)
    return cost * speed + runner.air_coefficient * np.asarray(air_density) * apparent * along \
        * speed


MetabolicBalance = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]]
"""g(v) = P_met(v) − P [W/kg] and its slope dg/dv [J/(kg·m)] at ground speeds v [m/s]."""


def _metabolic_balance(power: np.ndarray, cost: np.ndarray, air: np.ndarray,
                       head: np.ndarray, cross: np.ndarray) -> MetabolicBalance:
    """g(v) = Cr·v + a·ρ·V·v_a·v − P and dg/dv on every piece (`air` = a·ρ)."""

    def g_and_slope(v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        along = v + head  # as pacing.physics.cycling.air_speed_components, without the yaw angle
        apparent = np.hypot(along, cross)
        value = cost * v + air * apparent * along * v - power
        safe = np.where(apparent > 0, apparent, 1.0)
        slope = cost + air * (apparent * along + v * np.where(apparent > 0,
                                                               apparent + along**2 / safe, 0.0))
        return value, slope

    return g_and_slope


def _bracket_running_speed(balance: MetabolicBalance, power: np.ndarray,
                           cost: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(low, high) with g(low) ≤ 0 < g(high): from (0, 2·P/Cr), doubling `high` until it holds
    the root."""
    low = np.zeros(power.shape)
    high = 2.0 * power / cost
    for _ in range(60):
        short = balance(high)[0] < 0
        if not short.any():
            break
        low = np.where(short, high, low)
        high = np.where(short, 2.0 * high, high)
    return low, high


def _newton_in_running_bracket(balance: MetabolicBalance, speed: np.ndarray, low: np.ndarray,
                               high: np.ndarray, tolerance: float,
                               max_iterations: int) -> np.ndarray:
    """Root of the increasing g in [low, high] from `speed`: Newton steps kept inside the
    shrinking bracket, bisection otherwise."""
    for _ in range(max_iterations):
        value, slope = balance(speed)
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


def speed_for_metabolic_power(
    power: ArrayLike,
    grade: ArrayLike,
    air_density: ArrayLike,
    runner: Runner,
    headwind: ArrayLike = 0.0,
    crosswind: ArrayLike = 0.0,
    tolerance: float = 1e-12,
    max_iterations: int = 100,
) -> np.ndarray:
    """Ground speed at which running costs a metabolic power, on every piece at once [m/s].

    Solves g(v) = P_met(v) − P = 0 for v > 0. g(0) = −P < 0 and g grows without bound, so a
    root lies in (0, ∞); the bracket starts at (0, 2·P/Cr) and is doubled until it holds the
    root. Newton steps are taken while they stay inside the bracket, bisection otherwise.

    Parameters
    ----------
    power : float or array_like
        Metabolic power per kilogram [W/kg], > 0.
    grade : float or array_like
        i, rise/run, clipped to the cost model's range [-].
    air_density : float or array_like
        ρ [kg/m³].
    runner : Runner
        The runner's parameters.
    headwind : float or array_like, optional
        Wind component against the direction of travel [m/s].
    crosswind : float or array_like, optional
        Wind component across the direction of travel [m/s].
    tolerance : float, optional
        Relative tolerance on speed [-].
    max_iterations : int, optional
        Most Newton-or-bisection steps [-].

    Returns
    -------
    numpy.ndarray
        Ground speed [m/s], broadcast from the inputs.

    References
    ----------
    Minetti et al. (2002), J Appl Physiol 93(3):1039-1046. docs/references.md, "Running".

    Examples
    --------
    Without air, equal effort scales the speed by Cr(0)/Cr(i): the 12 W/kg of 5:00 per km on the
    flat runs +5 % at 1000·Cr(0.05)/(3.6·3.333) = 390.4 s per km (6:30, docs/references.md,
    "Running").

    >>> treadmill = Runner(70.0, drag_area=0.0)
    >>> round(1000 / float(speed_for_metabolic_power(12.0, 0.05, 1.2, treadmill)), 1)
    390.4
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
    balance = _metabolic_balance(power, cost, runner.air_coefficient * rho, head, cross)
    low, high = _bracket_running_speed(balance, power, cost)
    # start from the speed without air, which is close when the air term is small
    speed = np.clip(power / cost, low + 0.25 * (high - low), high - 0.25 * (high - low))
    return _newton_in_running_bracket(balance, speed, low, high, tolerance, max_iterations)


RUNNING_SPEED_RANGE = (0.5, 12.0)
"""Running speeds a plan accepts [m/s]: 33:20 to 1:24 per km, from a walk to beyond any
sprint (the world record 100 m averages about 10.4 m/s; common practice bounds)."""


def flat_effort(flat_speed: float, air_density: float, runner: Runner) -> float:
    """The effort of a flat-ground pace: metabolic power on level ground in still air [W/kg].

    Parameters
    ----------
    flat_speed : float
        Pace on flat ground in still air, as a speed 0.5..12 [m/s].
    air_density : float
        ρ at the start [kg/m³].
    runner : Runner
        The runner's parameters.

    Returns
    -------
    float
        Metabolic power per kilogram [W/kg].

    Examples
    --------
    5:00 per km on a treadmill: 3.6 J/(kg·m) × 1000/300 m/s = 12.0 W/kg.

    >>> flat_effort(1000 / 300, 1.2, Runner(70.0, drag_area=0.0))
    12.0
    """
    low, high = RUNNING_SPEED_RANGE
    if not np.isfinite(flat_speed) or not low <= flat_speed <= high:
        raise InputError(f"flat pace must be {low:g}-{high:g} m/s (1:24-33:20 per km), got "
                         f"{flat_speed:.3g} m/s")
    return float(metabolic_power(flat_speed, 0.0, air_density, runner))


def air_share(speed: float, air_density: float, runner: Runner) -> float:
    """Share of metabolic power spent against still air on level ground [-].

    Parameters
    ----------
    speed : float
        Ground speed [m/s].
    air_density : float
        ρ [kg/m³].
    runner : Runner
        The runner's parameters.

    Returns
    -------
    float
        (P_met − P_met without air) / P_met [-].

    References
    ----------
    Pugh (1971), J Physiol 213(2):255-276 (about 7.5 % at middle-distance speed).

    Examples
    --------
    A 70 kg, 1.75 m runner at 6 m/s in air of 1.2 kg/m³ spends 9.5 % against the air:

    >>> round(air_share(6.0, 1.2, Runner.from_body(70.0, 1.75)), 3)
    0.095
    """
    total = metabolic_power(speed, 0.0, air_density, runner)
    without_air = metabolic_power(speed, 0.0, air_density,
                                  Runner(runner.body_mass, 0.0, cost_model=runner.cost_model))
    return float((total - without_air) / total)
