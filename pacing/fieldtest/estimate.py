"""Drag area (CdA) and rolling resistance (Crr) measured on the road from test rides.

Two published methods, both built on the power balance of pacing.physics.cycling (Martin et al.
1998); pacing.fieldtest.methods lists them (`FIELD_TEST_METHODS`) with what each needs and where
each holds:

*Virtual elevation* (Chung, pacing.fieldtest.virtual_elevation). The power balance gives the
rise of each piece, linear in CdA and Crr; summed along the ride this gives a *virtual
elevation* trace, so both follow from linear least squares, either against a known elevation
profile (method "profile": each lap's trace, shifted by its own offset, should follow the
profile) or from loop closure (method "loop": each lap ends where it started, so its trace must
return to its starting height; no elevation data are needed, so altimeter or GNSS altitude noise
cannot enter).

*Regression* (Lim et al. 2011). On steady runs (laps or marked stretches) the mean driving
force balances the resistance: η·P̄/v̄ = Crr·m·g + CdA·½ρ·V̄·v̄_a + (bearing, wheel, slope and
speed-change terms), with P̄ and v̄ the run's mean power and speed; a straight line through
the runs gives CdA (slope) and Crr (intercept / m·g). Runs whose speed varies much bias it
(the mean of v² is not v̄²): the fit warns then.

CdA and Crr can only be told apart when the speed varies (laps at clearly different speeds, or
hills within a lap for method "profile"); the fit reports the correlation between the two
estimates, and when the laps cannot separate them it holds Crr at a typical value, fits CdA
alone and says so (`FieldTestResult.rolling_held`), rather than trading one against the other
into a negative Crr. A steady wind that is not given shows up mostly in Crr on a loop (it adds a
nearly constant drag) and in CdA against a profile; pacing.fieldtest.wind_estimate estimates it
from the laps and fits here with it. Changing wind, braking or a changing position make the
per-lap CdA scatter, which is reported. Uncertainty comes from a bootstrap over laps (Efron &
Tibshirani 1993).

What the user must hear comes back as `FieldTestResult.warnings`, notices (pacing.notices) with
their numbers; pacing.display.fieldtest_words has their sentences.

Rides, their cleaning and air are in pacing.fieldtest.ride, their laps in pacing.fieldtest.laps,
the least squares over laps and its bootstrap in pacing.fieldtest.fit (with Crr held when
needed: pacing.fieldtest.drag_fit), the warnings in pacing.fieldtest.checks, the result's
classes in pacing.fieldtest.estimate_result.
Conventions: point arrays (one value per sample) have length N, piece arrays (between samples i
and i+1) length N-1. Laps are (start, end) pairs of sample indices.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.fieldtest.checks import (
    conditions_notices,
    drag_area_notices,
    interval_notices,
    lap_notices,
    rolling_notices,
    separation_notices,
)
from pacing.fieldtest.drag_fit import bootstrap_interval, fit_drag
from pacing.fieldtest.estimate_result import (
    FieldTestResult,
    LapTrace,
    PositionDifference,
    PositionEstimate,
)
from pacing.fieldtest.fit import GRID_POINTS, Refit, drag_area_per_rolling
from pacing.fieldtest.laps import LAP_RADIUS, LapTerms, build_laps
from pacing.fieldtest.methods import FIELD_TEST_METHODS, FieldTestMethod
from pacing.fieldtest.ride import Ride
from pacing.physics.cycling import MARTIN_1998, Rider

TYPICAL_ROLLING_COEFFICIENT = MARTIN_1998["rolling_coefficient"]
"""Crr held when the laps cannot separate CdA from Crr and none is given [-]: 0.0032, the
value in Martin et al. (1998) (pacing.physics.cycling.MARTIN_1998; from memory, see
docs/references.md, "Cycling power balance (Martin et al. 1998)"). Each 0.001 it is off moves
the fitted CdA by about m·g·0.001 / (½ρ·v²) (≈ 0.016 m² for 80 kg at 9 m/s in air of
1.2 kg/m³); the warning gives CdA over PLAUSIBLE_ROLLING."""

INTERVAL_LAPS = 3
"""Fewest laps per position that get a bootstrap interval."""


@dataclass(frozen=True)
class PositionTest:
    """One riding position's test data: a ride (or marked laps of it) and its conditions.

    Attributes
    ----------
    label : str
        Name of the position ("hoods", "aero bars").
    ride : pacing.fieldtest.ride.Ride
        The cleaned ride.
    air_density : float or numpy.ndarray
        Air density, scalar or per piece (length N-1) [kg/m³].
    laps : tuple of (int, int) or None
        (start, end) sample index pairs; None = detect from positions, or the whole ride as
        one lap when it has none.
    headwind : float or numpy.ndarray
        Wind against the direction of travel per piece, or a scalar [m/s]
        (pacing.fieldtest.ride.ride_air).
    crosswind : float or numpy.ndarray
        Wind across the direction of travel per piece, or a scalar [m/s].
    """

    label: str
    ride: Ride
    air_density: float | np.ndarray = 1.2
    laps: tuple[tuple[int, int], ...] | None = None
    headwind: float | np.ndarray = 0.0
    crosswind: float | np.ndarray = 0.0


# ---------------------------------------------------------------------------------------------
# The request
# ---------------------------------------------------------------------------------------------


def method_named(name: str) -> FieldTestMethod:
    """The field-test method of that name (pacing.fieldtest.methods.FIELD_TEST_METHODS).

    Parameters
    ----------
    name : str
        "loop", "profile" or "regression".

    Returns
    -------
    pacing.fieldtest.methods.FieldTestMethod
        The registry entry.

    Raises
    ------
    InputError
        For an unknown name (one line naming the choices).
    """
    return FIELD_TEST_METHODS.resolve(name)


def _check_request(tests: list[PositionTest], rolling_coefficient: float | None,
                   fallback_rolling_coefficient: float | None) -> None:
    """Refuse no tests, repeated labels and a Crr outside 0-0.1."""
    if not tests:
        raise InputError("give at least one test ride")
    labels = [t.label for t in tests]
    if len(set(labels)) != len(labels):
        raise InputError("position labels must differ")
    for value, what in ((rolling_coefficient, "Crr"),
                        (fallback_rolling_coefficient, "the fallback Crr")):
        if value is not None and not (np.isfinite(value) and 0 <= value <= 0.1):
            raise InputError(f"{what} must be 0-0.1, got {value}")


def _check_lap_counts(tests: Sequence[PositionTest], lap_sets: Sequence[list[LapTerms]],
                      method: FieldTestMethod, fixed: bool) -> None:
    """Refuse a position with fewer laps than the method needs (1 when Crr is held)."""
    need = 1 if fixed else method.laps_to_separate
    for test, laps in zip(tests, lap_sets, strict=True):
        if len(laps) < need:
            hint = "" if test.ride.has_position or test.laps else \
                " (no positions to find laps in: mark the lap boundaries)"
            raise InputError(f"method {method.name!r} needs at least {need} laps per position; "
                             f"{test.label!r} has {len(laps)}{hint}")


# ---------------------------------------------------------------------------------------------
# estimate_drag
# ---------------------------------------------------------------------------------------------


def _differences(tests: Sequence[PositionTest], areas: np.ndarray, draws: np.ndarray,
                 usable: bool) -> tuple[PositionDifference, ...]:
    """Each position's CdA minus the first's, with its bootstrap interval."""
    differences = []
    for p in range(1, len(tests)):
        ci = bootstrap_interval(draws[:, p] - draws[:, 0], usable) if draws.size else None
        differences.append(PositionDifference(
            label=tests[p].label, baseline=tests[0].label, difference=float(areas[p] - areas[0]),
            ci95=ci, significant=bool(ci is not None and (ci[0] > 0 or ci[1] < 0))))
    return tuple(differences)


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
    bootstrap_refit: Refit | None = None,
) -> FieldTestResult:
    """CdA of each position and a common Crr from test rides.

    All positions share one Crr (same tyres and road); each has its own CdA. The fit is linear
    least squares on the virtual elevation (methods "loop", "profile") or on lap means
    ("regression"), see the module docstring and pacing.fieldtest.methods. Intervals:
    percentile bootstrap over laps, resampled within each position (Efron & Tibshirani 1993);
    a position with fewer than INTERVAL_LAPS laps gets no interval.

    CdA and Crr are told apart only by speed variety (air drag grows with v², rolling
    resistance does not), between laps or within them on a hilly profile. When the laps cannot
    separate them and no Crr is given, Crr is held at `fallback_rolling_coefficient` and CdA
    alone is fitted (`rolling_held`); a warning says so and gives CdA over the usual range of
    Crr (PLAUSIBLE_ROLLING). "Cannot separate": the fit is singular, or the bootstrap 95 %
    interval of Crr is wider than PLAUSIBLE_ROLLING (the laps tell less about Crr than a
    typical value does), or, without a bootstrap interval (bootstrap 0 or fewer than 3 laps),
    the |correlation| of the two estimates exceeds SEPARATION_LIMIT (pacing.fieldtest.drag_fit).
    A joint fit there trades one against the other freely and can return a negative Crr and a
    CdA interval reaching below 0.

    Parameters
    ----------
    tests : PositionTest or sequence of PositionTest
        One per position (or marked part of a ride).
    rider : pacing.physics.cycling.Rider
        Mass of rider + bike [kg], drivetrain efficiency [-] and wheel parameters.
    method : str
        Key of pacing.fieldtest.methods.FIELD_TEST_METHODS: "loop", "profile" or
        "regression".
    rolling_coefficient : float or None
        Crr to hold fixed [-]; None fits it.
    lap_radius : float
        Capture radius of automatic lap detection [m].
    profile : tuple of numpy.ndarray or None
        Known elevation (distance along the lap [m], elevation [m]) for method "profile";
        default the ride's elevation column.
    bootstrap : int
        Number of bootstrap draws (0 for none).
    seed : int
        Random seed of the bootstrap.
    fallback_rolling_coefficient : float or None
        Crr to hold when the laps cannot separate CdA from Crr [-] (default
        TYPICAL_ROLLING_COEFFICIENT, Martin et al. 1998); None fits both anyway and only warns.
    bootstrap_refit : pacing.fieldtest.fit.Refit or None
        A refit of each bootstrap draw replacing the refit of its columns (the wind estimate
        of pacing.fieldtest.wind_estimate refits the wind in each draw); None as before.

    Returns
    -------
    FieldTestResult
        CdA per position [m²], Crr [-], intervals and warnings (pacing.notices.Notice).

    Raises
    ------
    InputError
        Unknown method, too few laps, or no CdA can be fitted (with
        `fallback_rolling_coefficient` None: CdA and Crr cannot be separated).

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    Lim, A.C. et al. (2011). Med Sci Sports Exerc 43(5):853-860.
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
    """
    tests = [tests] if isinstance(tests, PositionTest) else list(tests)
    spec = method_named(method)
    _check_request(tests, rolling_coefficient, fallback_rolling_coefficient)
    lap_sets = [build_laps(t, g, rider, lap_radius, profile, spec) for g, t in enumerate(tests)]
    _check_lap_counts(tests, lap_sets, spec, rolling_coefficient is not None)
    groups = [spec.columns(laps) for laps in lap_sets]
    few = [t.label for t, laps in zip(tests, lap_sets, strict=True)
           if len(laps) < INTERVAL_LAPS]
    fit = fit_drag(groups, spec, rolling_coefficient, fallback_rolling_coefficient, bootstrap, seed,
               few, bootstrap_refit)
    slopes = drag_area_per_rolling(groups, spec.offset_per_lap)
    crr = float(fit.held_value) if fit.held_value is not None else float(fit.solution[-1])
    areas = fit.solution[:len(tests)]
    draws, usable = fit.draws, fit.valid and not few
    notices = separation_notices(fit.problem, fit.held_value if fit.held else None,
                                 [t.label for t in tests], [float(a) for a in areas], slopes)
    notices += interval_notices(few, INTERVAL_LAPS, bootstrap, fit.valid)
    positions = []
    for p, (test, laps) in enumerate(zip(tests, lap_sets, strict=True)):
        lap_areas, traces = _lap_results(laps, spec, float(areas[p]), crr)
        positions.append(PositionEstimate(
            label=test.label, drag_area=float(areas[p]),
            drag_area_ci95=bootstrap_interval(draws[:, p], usable) if draws.size else None,
            laps=len(laps), lap_drag_area=lap_areas, traces=traces))
        notices += lap_notices(test.label, test.ride, laps, spec, lap_areas)
        notices += conditions_notices(test.label, test.ride, test.headwind, test.crosswind, spec)
        notices += drag_area_notices(test.label, float(areas[p]), positions[-1].drag_area_ci95)
    crr_interval = (None if fit.held_value is not None or not draws.size
                    else bootstrap_interval(draws[:, -1], usable))
    notices += rolling_notices(fit.held_value is None, crr, crr_interval)
    fixed = rolling_coefficient is not None
    return FieldTestResult(
        method=spec.name, positions=tuple(positions), rolling_coefficient=crr,
        rolling_coefficient_ci95=crr_interval, rolling_fixed=fixed,
        estimate_correlation=0.0 if fixed else fit.correlation,
        differences=_differences(tests, areas, draws, usable), warnings=tuple(notices),
        bootstrap_drag_area=draws[:, :len(tests)] if draws.size else np.empty((0, len(tests))),
        rolling_held=fit.held, drag_area_per_rolling=slopes,
    )


def _lap_results(laps: Sequence[LapTerms], method: FieldTestMethod, area: float,
                 crr: float) -> tuple[np.ndarray, tuple[LapTrace, ...]]:
    """Per-lap CdA with Crr held [m²], and the plot trace of each lap.

    Parameters
    ----------
    laps : sequence of LapTerms
        The laps of one position.
    method : pacing.fieldtest.methods.FieldTestMethod
        The method of the fit.
    area : float
        The position's fitted CdA [m²].
    crr : float
        The fitted or held Crr [-].

    Returns
    -------
    tuple
        (CdA of each lap [m²], LapTrace of each lap).
    """
    lap_areas = [method.lap_drag_area(lap, crr) for lap in laps]
    virtual = [lap.known - area * lap.drag - crr * lap.rolling for lap in laps]
    grid = np.linspace(0.0, 1.0, GRID_POINTS)
    mean_trace = np.mean([np.interp(grid, lap.fraction, z) for lap, z in
                          zip(laps, virtual, strict=True)], axis=0)
    traces = []
    for lap, z in zip(laps, virtual, strict=True):
        if lap.reference is not None:
            reference = lap.reference
        elif method.trace_follows_measured and lap.measured is not None:
            reference = lap.measured
        else:
            reference = np.interp(lap.fraction, grid, mean_trace)
        if method.offset_per_lap:
            # the fit allows each lap its own offset
            z = z - np.mean(z - reference)
        base = lap.start_elevation
        traces.append(LapTrace(
            time=lap.time, distance=lap.distance, virtual_elevation=base + z,
            reference_elevation=base + reference, residual=z - reference,
            measured_elevation=None if lap.measured is None else base + lap.measured))
    return np.array(lap_areas), tuple(traces)
