"""Drag area (CdA) and rolling resistance (Crr) measured on the road from test rides.

Two published methods, both built on the power balance of pacing.physics.cycling (Martin et al.
1998):

*Virtual elevation* (Chung, pacing.fieldtest.virtual_elevation). The power balance gives the rise of
each piece, linear in CdA and Crr; summed along the ride this gives a *virtual elevation* trace,
so both follow from linear least squares, either against a known elevation profile (method
"profile": each lap's trace, shifted by its own offset, should follow the profile) or from loop
closure (method "loop": each lap ends where it started, so its trace must return to its
starting height; no elevation data are needed, so altimeter or GNSS altitude noise cannot
enter).

*Regression* (Lim et al. 2011). On steady runs (laps or marked stretches) the mean driving
force balances the resistance: η·P̄/v̄ = Crr·m·g + CdA·½ρ·V̄·v̄_a + (bearing, wheel, slope and
speed-change terms), with P̄ and v̄ the run's mean power and speed; a straight line through
the runs gives CdA (slope) and Crr (intercept / m·g). Runs whose speed varies much bias it
(the mean of v² is not v̄²): the fit warns then.

CdA and Crr can only be told apart when the speed varies (laps at clearly different speeds, or
hills within a lap for method "profile"); the fit reports the correlation between the two
estimates, and when the laps cannot separate them it holds Crr at a typical value, fits CdA
alone and says so (`FieldTestResult.rolling_held`), rather than trading one against the other
into a negative Crr. A steady
wind that is not given shows up mostly in Crr on a loop (it adds a nearly constant drag);
changing wind, braking or a changing position make the per-lap CdA scatter, which is
reported. Uncertainty comes from a bootstrap over laps (Efron & Tibshirani 1993).

Rides, their cleaning, air and laps are in pacing.fieldtest.ride, the least squares over laps
and its bootstrap in pacing.fieldtest.fit.
Conventions: point arrays (one value per sample) have length N, piece arrays (between samples i
and i+1) length N-1. Laps are (start, end) pairs of sample indices.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291.
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.athlete import Setup
from pacing.errors import InputError
from pacing.fieldtest.fit import (
    GRID_POINTS,
    LapTerms,
    bootstrap_fits,
    build_laps,
    drag_area_per_rolling,
    estimate_correlation,
    lap_matrices,
    normal_equations,
    solve_normal_equations,
)
from pacing.fieldtest.ride import (
    LAP_RADIUS,
    Ride,
)
from pacing.physics.cycling import MARTIN_1998, Rider

METHODS = {
    "loop": "virtual elevation, every lap returns to the same height (no elevation data needed)",
    "profile": "virtual elevation fitted to a known elevation profile",
    "regression": "mean force against mean air speed over laps (Lim et al. 2011)",
}
"""The estimation methods, by name, with a one-line description."""

SEPARATION_LIMIT = 0.99
"""|correlation| of the CdA and Crr estimates above which they are reported as inseparable
when there is no bootstrap interval of Crr to judge by (see `estimate_drag`)."""

TYPICAL_ROLLING_COEFFICIENT = MARTIN_1998["rolling_coefficient"]
"""Crr held when the laps cannot separate CdA from Crr and none is given [-]: 0.0032, the
value in Martin et al. (1998) (pacing.physics.cycling.MARTIN_1998; from memory, REFERENCES.md). Each
0.001 it is off moves the fitted CdA by about m·g·0.001 / (½ρ·v²) (≈ 0.016 m² for 80 kg at
9 m/s in air of 1.2 kg/m³); the warning gives CdA over PLAUSIBLE_ROLLING."""

PLAUSIBLE_ROLLING = (0.0025, 0.006)
"""Crr of road tyres from race tyres on smooth asphalt to ordinary asphalt [-] (from memory,
tabulated in many cycling-physics texts; see REFERENCES.md "Typical CdA, Crr"): the span shown
for CdA when Crr is held."""

LAP_SPREAD_LIMIT = 0.05
"""Coefficient of variation of per-lap CdA above which the laps are reported as inconsistent."""

CALM_WIND = 1.0
"""Wind at rider height above which a warning says the test was not in calm air [m/s]
(Lim et al. 2011 tested in wind under 1.0 m/s)."""

STEADY_SPEED_LIMIT = 0.10
"""Median coefficient of variation of speed within laps above which the regression method
warns that the runs are not steady [-]."""

BRAKING_DECELERATION = 1.0
"""Deceleration while hardly pedalling that marks a sample as braking [m/s²] (common practice:
coasting on a road rarely slows a rider by more than ~0.5 m/s²)."""

@dataclass(frozen=True)
class PositionTest:
    """One riding position's test data: a ride (or marked laps of it) and its conditions.

    Attributes
    ----------
    label : name of the position ("hoods", "aero bars").
    ride : the cleaned ride.
    air_density : [kg/m³], scalar or per piece (length N-1).
    laps : (start, end) sample index pairs; None = detect from positions, or the whole ride
        as one lap when it has none.
    headwind, crosswind : wind components per piece [m/s] (see `ride_wind`), or scalars.
    """

    label: str
    ride: Ride
    air_density: float | np.ndarray = 1.2
    laps: tuple[tuple[int, int], ...] | None = None
    headwind: float | np.ndarray = 0.0
    crosswind: float | np.ndarray = 0.0


@dataclass(frozen=True, eq=False)
class LapTrace:
    """Plot data of one lap (point arrays over the lap's samples).

    time, distance : from the lap start [s], [m].
    virtual_elevation : trace with the fitted CdA and Crr [m], starting at the measured
        elevation of the lap start when known, else at 0.
    reference_elevation : what the trace should follow [m]: the measured/known profile (method
        "profile"), else the mean virtual trace of the position's laps at the same place.
    residual : virtual − reference [m].
    measured_elevation : the ride's elevation column over the lap [m], or None.
    """

    time: np.ndarray
    distance: np.ndarray
    virtual_elevation: np.ndarray
    reference_elevation: np.ndarray
    residual: np.ndarray
    measured_elevation: np.ndarray | None


@dataclass(frozen=True, eq=False)
class PositionEstimate:
    """CdA of one position.

    drag_area : [m²]; drag_area_ci95 : bootstrap 95 % interval [m²] or None (too few laps);
    lap_drag_area : CdA of each lap alone with Crr held at the fitted value [m²];
    traces : plot data per lap.
    """

    label: str
    drag_area: float
    drag_area_ci95: tuple[float, float] | None
    laps: int
    lap_drag_area: np.ndarray
    traces: tuple[LapTrace, ...]


@dataclass(frozen=True)
class PositionDifference:
    """CdA of `label` minus CdA of `baseline` [m²] with its bootstrap 95 % interval; the
    difference is significant when the interval excludes 0."""

    label: str
    baseline: str
    difference: float
    ci95: tuple[float, float] | None
    significant: bool


@dataclass(frozen=True, eq=False)
class FieldTestResult:
    """Estimated CdA per position and a common Crr, with intervals and warnings.

    rolling_coefficient : Crr [-]; rolling_coefficient_ci95 : interval or None;
    rolling_fixed : True when Crr was given, not fitted;
    estimate_correlation : largest |correlation| between a CdA and the Crr estimate [-]
        (0 when Crr was given; when Crr is held, the correlation that made it so);
    bootstrap_drag_area : bootstrap draws, shape (draws, positions) [m²] (empty if none);
    rolling_held : True when the laps could not separate CdA from Crr, so Crr was held at a
        typical value (`fallback_rolling_coefficient` of `estimate_drag`) and only CdA fitted;
        the CdA intervals then hold for that Crr only;
    drag_area_per_rolling : change of each position's fitted CdA per unit change of the Crr
        it is fitted with [m²], d CdA / d Crr (negative: a higher Crr leaves less drag to air).
    """

    method: str
    positions: tuple[PositionEstimate, ...]
    rolling_coefficient: float
    rolling_coefficient_ci95: tuple[float, float] | None
    rolling_fixed: bool
    estimate_correlation: float
    differences: tuple[PositionDifference, ...]
    warnings: tuple[str, ...]
    bootstrap_drag_area: np.ndarray
    rolling_held: bool = False
    drag_area_per_rolling: tuple[float, ...] = ()

    @property
    def drag_area(self) -> float:
        """CdA of the first position [m²]."""
        return self.positions[0].drag_area

    @property
    def drag_area_ci95(self) -> tuple[float, float] | None:
        return self.positions[0].drag_area_ci95

    @property
    def laps(self) -> int:
        """Number of laps used, over all positions."""
        return sum(p.laps for p in self.positions)

    def setup(self, position: str | int = 0, name: str | None = None, **fields) -> Setup:
        """The measured position as a pacing.athlete.Setup (drag_area and rolling_coefficient
        filled in; other Setup fields such as bike_mass from `fields`)."""
        if isinstance(position, str):
            matches = [p for p in self.positions if p.label == position]
            if not matches:
                raise InputError(f"no position named {position!r}")
            estimate = matches[0]
        else:
            estimate = self.positions[position]
        return Setup(name=name or estimate.label, drag_area=round(estimate.drag_area, 4),
                     rolling_coefficient=round(self.rolling_coefficient, 5), **fields)


def _separation_problem(solution: np.ndarray | None, correlation: float,
                        rolling_draws: np.ndarray | None) -> str | None:
    """Why the laps cannot separate CdA from Crr (a few words), or None when they can.

    With bootstrap draws of Crr: when their 95 % interval is wider than the spread of road
    tyres (PLAUSIBLE_ROLLING), the laps say less about Crr than a typical value does. Without
    them: when |correlation| of the two estimates exceeds SEPARATION_LIMIT.
    """
    if solution is None:
        return "the fit is singular"
    if rolling_draws is not None:
        low, high = np.percentile(rolling_draws, [2.5, 97.5])
        span = PLAUSIBLE_ROLLING[1] - PLAUSIBLE_ROLLING[0]
        if high - low > span:
            return (f"correlation {correlation:.3f}; the 95 % interval of Crr, {low:.4f} to "
                    f"{high:.4f}, is wider than the {span:g} spread of road tyres")
        return None
    if correlation > SEPARATION_LIMIT:
        return f"correlation {correlation:.3f}"
    return None


def estimate_drag(
    tests: PositionTest | Sequence[PositionTest],
    rider: Rider,
    method: str = "loop",
    rolling_coefficient: float | None = None,
    lap_radius: float = LAP_RADIUS,
    profile: tuple[np.ndarray, np.ndarray] | None = None,
    bootstrap: int = 1000,
    seed: int = 0,
    fallback_rolling_coefficient: float | None = TYPICAL_ROLLING_COEFFICIENT,
) -> FieldTestResult:
    """CdA of each position and a common Crr from test rides.

    All positions share one Crr (same tyres and road); each has its own CdA. The fit is linear
    least squares on the virtual elevation (methods "loop", "profile") or on lap means
    ("regression"), see the module docstring. Intervals: percentile bootstrap over laps,
    resampled within each position (Efron & Tibshirani 1993); a position with fewer than 3 laps
    gets no interval.

    CdA and Crr are told apart only by speed variety (air drag grows with v², rolling
    resistance does not), between laps or within them on a hilly profile. When the laps cannot
    separate them and no Crr is given, Crr is held at `fallback_rolling_coefficient` and CdA
    alone is fitted (`rolling_held`); a warning says so and gives CdA over the usual range of
    Crr (PLAUSIBLE_ROLLING). "Cannot separate": the fit is singular, or the bootstrap 95 %
    interval of Crr is wider than PLAUSIBLE_ROLLING (the laps tell less about Crr than a
    typical value does), or, without a bootstrap interval (bootstrap 0 or fewer than 3 laps),
    the |correlation| of the two estimates exceeds SEPARATION_LIMIT. A joint fit there trades
    one against the other freely and can return a negative Crr and a CdA interval reaching
    below 0.

    Parameters
    ----------
    tests : one PositionTest per position (or marked part of a ride).
    rider : mass [kg] of rider + bike, drivetrain efficiency and wheel parameters.
    method : "loop", "profile" or "regression" (see METHODS).
    rolling_coefficient : Crr to hold fixed [-]; None fits it.
    fallback_rolling_coefficient : Crr to hold when the laps cannot separate CdA from Crr [-]
        (default TYPICAL_ROLLING_COEFFICIENT, Martin et al. 1998); None fits both anyway and
        only warns.
    lap_radius : capture radius of automatic lap detection [m].
    profile : known elevation (distance along the lap [m], elevation [m]) for method
        "profile"; default the ride's elevation column.
    bootstrap : number of bootstrap draws (0 for none).
    seed : random seed of the bootstrap.

    Raises
    ------
    InputError : unknown method, too few laps, or no CdA can be fitted (with
        `fallback_rolling_coefficient` None: CdA and Crr cannot be separated).
    """
    if isinstance(tests, PositionTest):
        tests = [tests]
    tests = list(tests)
    if method not in METHODS:
        raise InputError(f"unknown method {method!r}: choose one of {', '.join(METHODS)}")
    if not tests:
        raise InputError("give at least one test ride")
    labels = [t.label for t in tests]
    if len(set(labels)) != len(labels):
        raise InputError("position labels must differ")
    for value, what in ((rolling_coefficient, "Crr"),
                        (fallback_rolling_coefficient, "the fallback Crr")):
        if value is not None and not (np.isfinite(value) and 0 <= value <= 0.1):
            raise InputError(f"{what} must be 0-0.1, got {value}")
    fixed = rolling_coefficient is not None
    warnings: list[str] = []
    lap_sets = [build_laps(t, g, rider, lap_radius, profile, method) for g, t in
                enumerate(tests)]
    for test, laps in zip(tests, lap_sets, strict=True):
        need = 2 if method in ("loop", "regression") and not fixed else 1
        if len(laps) < need:
            hint = "" if test.ride.has_position or test.laps else \
                " (no positions to find laps in: mark the lap boundaries)"
            raise InputError(f"method {method!r} needs at least {need} laps per position; "
                             f"{test.label!r} has {len(laps)}{hint}")
    groups = [lap_matrices(laps, method) for laps in lap_sets]
    equations = normal_equations(groups, method, rolling_coefficient)
    solution = None if equations is None else solve_normal_equations(*equations)
    correlation = 1.0
    if equations is not None and solution is not None:
        correlation = estimate_correlation(equations[0], fixed)
    few = [t.label for t, laps in zip(tests, lap_sets, strict=True) if len(laps) < 3]
    draws = bootstrap_fits(groups, method, rolling_coefficient, bootstrap if solution is not None
                       else 0, seed)
    valid = draws.shape[0] >= max(20, bootstrap // 2) if bootstrap else False
    problem = None if fixed else _separation_problem(
        solution, correlation, draws[:, -1] if valid and not few else None)
    held_value = rolling_coefficient
    held = problem is not None and fallback_rolling_coefficient is not None
    if held:
        # CdA and Crr trade off freely: hold Crr at the typical value, fit CdA alone
        held_value = float(fallback_rolling_coefficient)
        equations = normal_equations(groups, method, held_value)
        solution = None if equations is None else solve_normal_equations(*equations)
        draws = bootstrap_fits(groups, method, held_value, bootstrap, seed)
        valid = draws.shape[0] >= max(20, bootstrap // 2) if bootstrap else False
    if solution is None:
        raise InputError("CdA and Crr cannot be separated from these laps: ride laps at "
                         "clearly different speeds, or give Crr")
    slopes = drag_area_per_rolling(groups, method)
    crr = float(held_value) if held_value is not None else float(solution[-1])
    areas = solution[:len(tests)]
    if held:
        low, high = PLAUSIBLE_ROLLING
        spans = ", ".join(
            f"{test.label!r} {areas[p] + slopes[p] * (high - held_value):.3f}-"
            f"{areas[p] + slopes[p] * (low - held_value):.3f} m²"
            for p, test in enumerate(tests))
        warnings.append(
            f"laps lack speed variety: CdA and Crr cannot be separated ({problem}), so Crr is "
            f"held at {held_value:g} (a typical road value, Martin et al. 1998) and only CdA "
            f"is fitted; its interval counts no Crr error: for Crr {low:g}-{high:g} CdA would "
            f"be {spans}; ride laps at clearly different speeds or give the Crr of your tyres"
        )
    elif problem is not None:
        warnings.append(
            f"laps lack speed variety: CdA and Crr cannot be separated ({problem}); ride laps "
            "at clearly different speeds or give Crr"
        )

    if few and bootstrap:
        warnings.append(f"fewer than 3 laps for {', '.join(few)}: no interval")
    if bootstrap and not valid and not few:
        warnings.append("too many bootstrap draws could not be fitted: no interval")

    def interval(values: np.ndarray) -> tuple[float, float] | None:
        if not valid or few:
            return None
        low, high = np.percentile(values, [2.5, 97.5])
        return float(low), float(high)

    positions = []
    for p, (test, laps) in enumerate(zip(tests, lap_sets, strict=True)):
        lap_areas, traces = _lap_results(laps, method, float(areas[p]), crr)
        positions.append(PositionEstimate(
            label=test.label, drag_area=float(areas[p]),
            drag_area_ci95=interval(draws[:, p]) if draws.size else None, laps=len(laps),
            lap_drag_area=lap_areas, traces=traces))
        if len(laps) >= 3:
            spread = float(np.std(lap_areas, ddof=1) / abs(np.mean(lap_areas)))
            if spread > LAP_SPREAD_LIMIT:
                warnings.append(
                    f"CdA of {test.label!r} varies by {100 * spread:.0f} % between laps: wind "
                    "gusts, braking, drafting or a changing position spoil the data"
                )
        if method == "regression":
            ride = test.ride
            variation = np.median([np.std(ride.speed[lap.start:lap.end + 1])
                                   / np.mean(ride.speed[lap.start:lap.end + 1]) for lap in laps])
            if variation > STEADY_SPEED_LIMIT:
                warnings.append(
                    f"speed varies by {100 * variation:.0f} % within the laps of "
                    f"{test.label!r}: the regression assumes steady runs (Lim et al. 2011); "
                    "prefer method 'loop'"
                )
        wind = float(np.mean(np.hypot(test.headwind, test.crosswind)))
        if wind > CALM_WIND:
            warnings.append(
                f"wind of {wind:.1f} m/s at rider height on {test.label!r}: test rides want "
                f"calm air (under {CALM_WIND:g} m/s, Lim et al. 2011); the result is only as "
                "good as the wind given"
            )
        braking = _braking_times(test.ride)
        if braking.size:
            shown = ", ".join(f"{t:.0f}" for t in braking[:5])
            warnings.append(
                f"braking suspected in {test.label!r} at {braking.size} samples (t = {shown} s"
                f"{' …' if braking.size > 5 else ''}): brake-free laps give better estimates"
            )
        if areas[p] <= 0:
            warnings.append(f"CdA of {test.label!r} came out {areas[p]:.3f} m², which is not "
                            "physical: check mass, power, speed and wind")
        elif not 0.1 <= areas[p] <= 0.8:
            warnings.append(f"CdA of {test.label!r} ({areas[p]:.3f} m²) is outside the usual "
                            "0.1-0.8 m²: check mass, power and wind")
        area_interval = positions[-1].drag_area_ci95
        if area_interval is not None and area_interval[0] <= 0 < areas[p]:
            warnings.append(f"the 95 % interval of CdA of {test.label!r} reaches "
                            f"{area_interval[0]:.3f} m² (below 0): these laps do not pin CdA "
                            "down")
    crr_interval = (None if held_value is not None or not draws.size
                    else interval(draws[:, -1]))
    if held_value is None and crr < 0:
        warnings.append(f"Crr came out {crr:.4f}, below 0, which no tyre has: something the "
                        "model lacks went into it (a power-meter offset, wind, braking, a wrong "
                        "mass); zero the power meter before the test, or give the Crr of your "
                        "tyres")
    elif held_value is None and not 0.0005 <= crr <= 0.03:
        warnings.append(f"Crr ({crr:.4f}) is outside the usual 0.0005-0.03: check the laps")
    if crr_interval is not None and crr_interval[0] < 0 <= crr:
        warnings.append(f"the 95 % interval of Crr reaches {crr_interval[0]:.4f} (below 0): "
                        "the laps determine Crr poorly")
    differences = []
    for p in range(1, len(tests)):
        delta = float(areas[p] - areas[0])
        ci = interval(draws[:, p] - draws[:, 0]) if draws.size else None
        differences.append(PositionDifference(
            label=tests[p].label, baseline=tests[0].label, difference=delta, ci95=ci,
            significant=bool(ci is not None and (ci[0] > 0 or ci[1] < 0))))
    return FieldTestResult(
        method=method, positions=tuple(positions), rolling_coefficient=crr,
        rolling_coefficient_ci95=crr_interval, rolling_fixed=fixed,
        estimate_correlation=0.0 if fixed else correlation, differences=tuple(differences),
        warnings=tuple(warnings),
        bootstrap_drag_area=draws[:, :len(tests)] if draws.size else np.empty((0, len(tests))),
        rolling_held=held, drag_area_per_rolling=slopes,
    )


def _lap_results(laps: list[LapTerms], method: str, area: float,
                 crr: float) -> tuple[np.ndarray, tuple[LapTrace, ...]]:
    """Per-lap CdA (Crr held) and plot traces."""
    lap_areas = []
    virtual = []
    for lap in laps:
        if method == "regression":
            y, x_drag, x_rolling = lap.run
            lap_areas.append((y - crr * x_rolling) / x_drag)
        else:
            rise = 0.0 if lap.reference is None else lap.reference[-1]
            lap_areas.append((lap.known[-1] - rise - crr * lap.rolling[-1]) / lap.drag[-1])
        virtual.append(lap.known - area * lap.drag - crr * lap.rolling)
    grid = np.linspace(0.0, 1.0, GRID_POINTS)
    mean_trace = np.mean([np.interp(grid, lap.fraction, z) for lap, z in
                          zip(laps, virtual, strict=True)], axis=0)
    traces = []
    for lap, z in zip(laps, virtual, strict=True):
        if lap.reference is not None:
            reference = lap.reference
        elif method == "regression" and lap.measured is not None:
            reference = lap.measured
        else:
            reference = np.interp(lap.fraction, grid, mean_trace)
        if method == "profile":
            # the fit allows each lap its own offset
            z = z - np.mean(z - reference)
        base = lap.start_elevation
        traces.append(LapTrace(
            time=lap.time, distance=lap.distance, virtual_elevation=base + z,
            reference_elevation=base + reference, residual=z - reference,
            measured_elevation=None if lap.measured is None else base + lap.measured))
    return np.array(lap_areas), tuple(traces)


def _braking_times(ride: Ride, low_power: float = 20.0) -> np.ndarray:
    """Times [s] of samples that slow faster than BRAKING_DECELERATION while hardly pedalling."""
    rate = np.diff(ride.speed) / np.diff(ride.time)
    if ride.pause is not None:
        rate = np.where(ride.pause, 0.0, rate)
    idle = 0.5 * (ride.power[1:] + ride.power[:-1]) < low_power
    return ride.time[1:][(rate < -BRAKING_DECELERATION) & idle]
