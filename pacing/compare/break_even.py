"""Break-even figures: what a setup may give away (or must gain) to tie with the baseline.

The setup's planned power profile is held (its shape; only a scale changes) and root finding on
the inertial simulation (scipy.optimize.brentq) gives the power, drag area or mass at which the
setup's finish time equals the baseline's. Sign convention as in pacing.compare.setups: a time
difference is setup − baseline [s], positive = slower.

References
----------
Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4 (scipy brentq).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np
from scipy import optimize

from pacing.compare.setups import Comparison, SetupResult
from pacing.plan.simulate import simulate


@dataclass(frozen=True)
class BreakEven:
    """What a setup may give away (or must gain) to tie with the baseline on this course.

    Each figure holds everything else of the setup (and its planned power profile) fixed.
    None where no value in the searched range ties.

    Attributes
    ----------
    name : str
        The setup's name [-].
    baseline : str
        The baseline's name [-].
    power : float or None
        The setup's time-weighted mean crank power at which it ties [W].
    power_margin : float or None
        Its mean power − `power` [W]: watts it may lose before it is no longer faster
        (negative: watts it must gain to catch up).
    drag_area : float or None
        The setup's CdA at which it ties [m²].
    drag_area_margin : float or None
        `drag_area` − its CdA [m²]: drag area it may add (negative: the CdA it must save,
        e.g. to pay for extra mass).
    mass : float or None
        The setup's total mass (rider + bike + kit) at which it ties [kg].
    mass_margin : float or None
        `mass` − its mass [kg]: mass it may add (negative: mass it must shed).
    """

    name: str
    baseline: str
    power: float | None
    power_margin: float | None
    drag_area: float | None
    drag_area_margin: float | None
    mass: float | None
    mass_margin: float | None


def _secant_step(x0: float, f0: float, x1: float, f1: float, tolerance: float) -> float:
    """The next step of the search for a root: a little past the secant estimate so the root
    gets bracketed, at most 8× the previous step so a flat stretch does not throw the search
    far away."""
    step = -f1 * (x1 - x0) / (f1 - f0) if f1 != f0 else x1 - x0
    limit = 8.0 * abs(x1 - x0)
    return math.copysign(min(max(abs(step) * 1.05, tolerance * 10.0), limit), step)


def _tie(function: Callable[[float], float], start: float, low: float, high: float,
         tolerance: float) -> float | None:
    """Root of a monotone function in [low, high] near `start`; None if none there.

    Secant steps from start (they converge in a few simulations on these smooth responses);
    once a sign change is seen, brentq finishes inside that bracket. Each step goes a little
    past the secant estimate and at most 8× the previous step, clipped to [low, high].

    Parameters
    ----------
    function : callable
        f(x) → gap [s]; its root is the tie.
    start : float
        First guess (the setup's own value) [unit of x].
    low : float
        Lowest x searched [unit of x].
    high : float
        Highest x searched [unit of x].
    tolerance : float
        Absolute tolerance of the root [unit of x].

    Returns
    -------
    float or None
        The root [unit of x], or None when no sign change is found in [low, high].

    References
    ----------
    Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4.
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
            return float(optimize.brentq(function, min(x0, x1), max(x0, x1), xtol=tolerance))
        x2 = min(max(x1 + _secant_step(x0, f0, x1, f1, tolerance), low), high)
        if x2 == x1:
            return None
        x0, f0 = x1, f1
        x1, f1 = x2, function(x2)
    return None


def break_even(comparison: Comparison, result: SetupResult | str,
               baseline: SetupResult | None = None) -> BreakEven:
    """Break-even power, drag area and mass of a setup against a baseline (root finding on
    the inertial simulation; the setup's planned power profile is held, only scaled).

    Solves T(q) = T_baseline for q = the scale of the power profile, then CdA, then mass,
    with T the simulated finish time of the setup (pacing.plan.simulate.simulate) on the
    comparison's course, air and simulation options.

    Parameters
    ----------
    comparison : Comparison
        The comparison the setup belongs to.
    result : SetupResult or str
        The setup (or its name).
    baseline : SetupResult or None
        The setup to tie with; None for the comparison's baseline.

    Returns
    -------
    BreakEven
        Power [W], CdA [m²] and mass [kg] at which the setup ties, and their margins.

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276.
    Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4.
    """
    chosen = comparison.result(result) if isinstance(result, str) else result
    against = comparison.baseline_result if baseline is None else baseline
    course, air, options = comparison.race.course, comparison.air, comparison.race.options
    target = against.finish_time
    rider = chosen.setup.rider
    profile = np.asarray(chosen.plan.piece_power, dtype=np.float64)

    def gap(power_scale: float = 1.0, drag_area: float | None = None,
            mass: float | None = None) -> float:
        changed = rider
        if drag_area is not None:
            changed = replace(changed, drag_area=drag_area)
        if mass is not None:
            changed = replace(changed, mass=mass)
        ride = simulate(course, profile * power_scale, changed, air, options)
        return float(ride.finish_time - target)

    mean = chosen.mean_power
    scale = _tie(lambda s: gap(power_scale=s), 1.0, 0.2, 3.0, 1e-5)
    cda = _tie(lambda a: gap(drag_area=a), float(rider.drag_area), 0.02, 2.0, 1e-6)
    mass = _tie(lambda m: gap(mass=m), float(rider.mass), 20.0, 400.0, 1e-3)
    tie_power = None if scale is None else mean * scale
    return BreakEven(
        name=chosen.name,
        baseline=against.name,
        power=tie_power,
        power_margin=None if tie_power is None else mean - tie_power,
        drag_area=cda,
        drag_area_margin=None if cda is None else cda - float(rider.drag_area),
        mass=mass,
        mass_margin=None if mass is None else mass - float(rider.mass),
    )


