"""The field test with a steady wind estimated from the laps, when none is given.

An untold steady wind biases every field-test method: on a loop its square adds a nearly
constant drag that goes into Crr, against a profile its first-order part bends the virtual
elevation and moves CdA. `estimate_drag_in_wind` estimates the wind (speed and the direction it
blows FROM) together with CdA and Crr, then fits the chosen method as pacing.fieldtest.estimate.
estimate_drag does with that wind, and carries the wind's uncertainty into the intervals.

Stage 1, the wind: variable projection over the wind vector at rider height
(pacing.fieldtest.wind_fit), the linear unknowns (CdA per position, Crr) solved inside. What it
fits: the method's own least-squares rows (loop closure, the profile, the regression's runs;
pacing.fieldtest.fit) and, for the methods that have no elevation to follow (loop, regression),
the *shape* of the laps: laps of one loop ridden at different speeds must give the same virtual
elevation at the same place (their mean is the unknown road profile, removed by centring each
grid point across the laps), and an untold wind bends each lap's trace in proportion to its
speed (the wind's work over a stretch is about v·w·Δs per unit drag), so laps at several speeds
reveal it. Stage 2, CdA and Crr: estimate_drag with that wind.

Intervals: the bootstrap over laps of estimate_drag (Efron & Tibshirani 1993), with the wind
refitted in every draw. To keep a thousand draws quick, each lap's rows are computed exactly on
a 3×3 stencil of winds around the estimate (STENCIL_STEP apart) and interpolated
biquadratically inside a draw (exact for terms quadratic in the wind; the air term V·v_a is
nearly so while the wind is small beside the speed).

When no wind is estimated (a wind is given), the fit is estimate_drag's as before; the wind is
still estimated on the side, and a warning says so when it differs clearly from the given one.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
Golub, G.H. & Pereyra, V. (1973). SIAM J Numer Anal 10(2):413-432. doi:10.1137/0710036
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.fieldtest.estimate import (
    TYPICAL_ROLLING_COEFFICIENT,
    PositionTest,
    estimate_drag,
    method_named,
)
from pacing.fieldtest.estimate_result import FieldTestResult
from pacing.fieldtest.fit import GRID_POINTS, normal_equations, solve_normal_equations
from pacing.fieldtest.laps import LAP_RADIUS, LapTerms, _is_closed, build_laps, regression_row
from pacing.fieldtest.methods import FieldTestMethod
from pacing.fieldtest.ride import piece_heading
from pacing.fieldtest.steady_wind import (
    WindEstimate,
    head_and_cross,
    heading_spread,
    speed_and_direction,
    speed_at_report_height,
    wind_basis,
    wind_vector,
)
from pacing.fieldtest.wind_checks import (
    loose_wind_values,
    percentile_interval,
    undeclared_wind_notices,
)
from pacing.fieldtest.wind_fit import (
    SEPARATION_CORRELATION,
    AirTerms,
    fit_wind,
    joint_correlation,
    refit_wind,
)
from pacing.notices import Notice, note, warning
from pacing.physics.cycling import Rider
from pacing.weather.conditions import Conditions

STENCIL_STEP = 1.0
"""Spacing of the 3×3 stencil of winds the bootstrap interpolates between [m/s]."""

SAME_PATH = 0.9
"""Mean resultant length of the laps' headings at the same place above which they follow one
path and their shapes are compared [-] (our choice)."""

CHECK_DRAWS = 200
"""Bootstrap draws of the wind alone when a given wind is only checked [-]."""


# ---------------------------------------------------------------------------------------------
# The laps of every position as functions of the wind
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class _Position:
    """One position's ride as the wind fit sees it: its air terms and its still-air laps."""

    test: PositionTest
    air: AirTerms
    laps: tuple[LapTerms, ...]
    rises: tuple[float, ...]
    heading: np.ndarray
    density: np.ndarray


def _positions(tests: Sequence[PositionTest], rider: Rider, spec: FieldTestMethod,
               radius: float, profile: tuple[np.ndarray, np.ndarray] | None,
               ) -> list[_Position]:
    """Each position's air terms and laps (raises InputError without headings)."""
    out = []
    for group, test in enumerate(tests):
        ride = test.ride
        heading = piece_heading(ride)
        calm = dataclasses.replace(test, headwind=0.0, crosswind=0.0)
        laps = tuple(build_laps(calm, group, rider, radius, profile, spec))
        density = np.broadcast_to(np.asarray(test.air_density, float), heading.shape)
        air = AirTerms.of(ride.time, ride.speed, ride.power, density, heading, rider, ride.pause)
        rises = tuple(0.0 if lap.measured is None or _is_closed(ride, lap.start, lap.end, radius)
                      else float(lap.measured[-1]) for lap in laps)
        out.append(_Position(test, air, laps, rises, heading, density))
    return out


def _same_path(position: _Position) -> bool:
    """True when the laps follow one path in one direction (their shapes can be compared)."""
    if len(position.laps) < 2:
        return False
    grid = np.linspace(0.0, 1.0, GRID_POINTS)
    east, north = [], []
    for lap in position.laps:
        middle = 0.5 * (lap.fraction[1:] + lap.fraction[:-1])
        radians = np.radians(position.heading[lap.start:lap.end])
        east.append(np.interp(grid, middle, np.sin(radians)))
        north.append(np.interp(grid, middle, np.cos(radians)))
    resultant = np.hypot(np.mean(east, axis=0), np.mean(north, axis=0))
    return float(np.mean(resultant)) > SAME_PATH


def _lap_rows(position: _Position, spec: FieldTestMethod, vector: np.ndarray, rider: Rider,
              ) -> tuple[np.ndarray, np.ndarray]:
    """Each lap's method rows (laps, 3, G_m) and trace on the grid (laps, 3, GRID) at a wind."""
    terms = position.air.at(vector)
    head, cross = head_and_cross(position.heading, vector)
    grid = np.linspace(0.0, 1.0, GRID_POINTS)
    method_rows, traces = [], []
    for lap, rise in zip(position.laps, position.rises, strict=True):
        cum = np.concatenate((np.zeros((3, 1)), np.cumsum(terms[:, lap.start:lap.end], axis=1)),
                             axis=1)
        run = regression_row(position.test.ride, lap.start, lap.end, float(lap.distance[-1]),
                             rise, position.density, head, cross, rider)
        windy = dataclasses.replace(lap, known=cum[0], drag=cum[1], rolling=cum[2], run=run)
        method_rows.append(np.stack([c[0] for c in spec.columns([windy])]))
        traces.append(np.stack([np.interp(grid, lap.fraction, row) for row in cum]))
    return np.array(method_rows), np.array(traces)


@dataclass(frozen=True, eq=False)
class _Rows:
    """Per-lap rows of every position at one wind, or interpolated on the stencil."""

    method: list[np.ndarray]
    trace: list[np.ndarray | None]


class _Design:
    """The wind fit's rows for all positions: exact at a wind, or from a stencil."""

    def __init__(self, positions: list[_Position], spec: FieldTestMethod, rider: Rider):
        self.positions = positions
        self.spec = spec
        self.rider = rider
        self.shape = [not spec.needs_elevation and _same_path(p) for p in positions]
        self.stencil_method: list[np.ndarray] = []
        self.stencil_trace: list[np.ndarray | None] = []
        self.centre = np.zeros(2)

    def exact(self, vector: np.ndarray) -> _Rows:
        """The rows at a wind vector [m/s]."""
        method, trace = [], []
        for position, shape in zip(self.positions, self.shape, strict=True):
            rows, lines = _lap_rows(position, self.spec, vector, self.rider)
            method.append(rows)
            trace.append(lines if shape else None)
        return _Rows(method, trace)

    def build_stencil(self, centre: np.ndarray) -> None:
        """Exact rows on the 3×3 stencil around `centre` [m/s]."""
        self.centre = centre
        offsets = [(i, j) for i in (-1, 0, 1) for j in (-1, 0, 1)]
        stencil = [self.exact(centre + STENCIL_STEP * np.array(o, float)) for o in offsets]
        groups = range(len(self.positions))
        self.stencil_method = [np.array([s.method[g] for s in stencil]) for g in groups]
        self.stencil_trace = [np.array([s.trace[g] for s in stencil]) if self.shape[g] else None
                              for g in groups]

    def interpolated(self, vector: np.ndarray) -> _Rows:
        """Rows at a wind by biquadratic interpolation on the stencil (`build_stencil`)."""
        d = (np.asarray(vector, float) - self.centre) / STENCIL_STEP
        weights = np.array([a * b for a in _lagrange(d[0]) for b in _lagrange(d[1])])
        method = [np.tensordot(weights, m, axes=1) for m in self.stencil_method]
        trace = [None if t is None else np.tensordot(weights, t, axes=1)
                 for t in self.stencil_trace]
        return _Rows(method, trace)


def _lagrange(x: float) -> tuple[float, float, float]:
    """Lagrange weights of the nodes −1, 0, 1 at x."""
    return 0.5 * x * (x - 1.0), 1.0 - x * x, 0.5 * x * (x + 1.0)


# ---------------------------------------------------------------------------------------------
# The linear problems
# ---------------------------------------------------------------------------------------------


def _centre_laps(values: np.ndarray) -> np.ndarray:
    """Rows less their mean per lap (axis -1)."""
    return values - values.mean(axis=-1, keepdims=True)


def _stacked(rows: _Rows, picks: Sequence[np.ndarray], spec: FieldTestMethod,
             fixed: float | None) -> tuple[np.ndarray, np.ndarray]:
    """Design (rows, positions [+1]) and target of the wind fit on the picked laps."""
    count = len(picks)
    blocks_y, blocks_x = [], []
    for g, pick in enumerate(picks):
        parts = [rows.method[g][pick]]
        if spec.offset_per_lap:
            parts[0] = _centre_laps(parts[0])
        trace = rows.trace[g]
        if trace is not None and pick.size >= 2:
            lines = _centre_laps(trace[pick])
            parts.append(lines - lines.mean(axis=0, keepdims=True))
        y = np.concatenate([p[:, 0].ravel() for p in parts])
        a = np.concatenate([p[:, 1].ravel() for p in parts])
        b = np.concatenate([p[:, 2].ravel() for p in parts])
        x = np.zeros((y.size, count + (fixed is None)))
        x[:, g] = a
        if fixed is None:
            x[:, -1] = b
        else:
            y = y - fixed * b
        blocks_y.append(y)
        blocks_x.append(x)
    return np.vstack(blocks_x), np.concatenate(blocks_y)


def _method_groups(rows: _Rows, picks: Sequence[np.ndarray]):
    """The method's own columns (y, a, b), each (laps, G_m), of the picked laps."""
    return [(m[pick][:, 0], m[pick][:, 1], m[pick][:, 2])
            for m, pick in zip(rows.method, picks, strict=True)]


# ---------------------------------------------------------------------------------------------
# The wind, and the bootstrap that refits it
# ---------------------------------------------------------------------------------------------


def _point_wind(design: _Design, fixed: float | None, start: np.ndarray,
                ) -> tuple[np.ndarray | None, np.ndarray, float, dict]:
    """(basis or None, wind vector, correlation, inseparable-notice values or {})."""
    used = [p.air.scale > 0 for p in design.positions]
    spread = heading_spread(np.concatenate([p.heading[u] for p, u in
                                            zip(design.positions, used, strict=True)]),
                            np.concatenate([p.air.scale[u] for p, u in
                                            zip(design.positions, used, strict=True)]))
    basis = wind_basis(spread)
    if basis is None:
        return None, start, 1.0, {"reason": "one-heading",
                                  "heading_spread": 1.0 - spread.resultant, "correlation": 1.0}
    picks = [np.arange(len(p.laps)) for p in design.positions]

    def problem(vector: np.ndarray):
        return _stacked(design.exact(vector), picks, design.spec, fixed)

    vector, beta = fit_wind(problem, basis, start)
    correlation = joint_correlation(problem, basis, vector, beta)
    if correlation > SEPARATION_CORRELATION:
        return None, start, correlation, {"reason": "correlation",
                                          "heading_spread": 1.0 - spread.resultant,
                                          "correlation": correlation}
    return basis, vector, correlation, {}


class _Refit:
    """The bootstrap's refit of a draw: the wind on the picked laps, then the method's fit."""

    def __init__(self, design: _Design, basis: np.ndarray, start: np.ndarray):
        self.design, self.basis, self.start = design, basis, start
        self.winds: dict[float | None, list[np.ndarray]] = {}

    def wind(self, picks: Sequence[np.ndarray], fixed: float | None) -> np.ndarray:
        """The wind vector of the picked laps [m/s]."""
        def problem(vector: np.ndarray):
            return _stacked(self.design.interpolated(vector), picks, self.design.spec, fixed)

        return refit_wind(problem, self.basis, self.start)

    def __call__(self, picks: Sequence[np.ndarray], fixed: float | None) -> np.ndarray | None:
        vector = self.wind(picks, fixed)
        groups = _method_groups(self.design.interpolated(vector), picks)
        equations = normal_equations(groups, self.design.spec.offset_per_lap, fixed)
        solution = None if equations is None else solve_normal_equations(*equations)
        if solution is not None:
            self.winds.setdefault(fixed, []).append(vector)
        return solution


def _wind_estimate(vector: np.ndarray, draws: Sequence[np.ndarray], heights: Conditions,
                   correlation: float, basis: np.ndarray, design: _Design) -> WindEstimate:
    """The WindEstimate of a fitted vector and its bootstrap draws."""
    at_rider, wind_from = speed_and_direction(vector)
    factor = speed_at_report_height(1.0, heights.rider_height, heights.roughness_length)
    interval = None
    if len(draws):
        interval = percentile_interval(factor * np.hypot(*np.array(draws).T))
    spread = heading_spread(np.concatenate([p.heading for p in design.positions]),
                            np.concatenate([p.air.scale for p in design.positions]))
    return WindEstimate(True, at_rider, factor * at_rider, wind_from, interval, True,
                        correlation, spread, basis.shape[1] == 1)


def _estimated_notice(estimate: WindEstimate) -> Notice:
    """The note giving the estimated wind."""
    values = {"speed_mps": estimate.speed, "speed_at_rider_mps": estimate.speed_at_rider,
              "from_deg": estimate.wind_from, "along_axis_only": estimate.along_axis_only}
    if estimate.speed_ci95 is not None:
        values.update(speed_ci95_low_mps=estimate.speed_ci95[0],
                      speed_ci95_high_mps=estimate.speed_ci95[1])
    return note("fieldtest-wind-estimated", **values)


# ---------------------------------------------------------------------------------------------
# estimate_drag_in_wind
# ---------------------------------------------------------------------------------------------


def estimate_drag_in_wind(
    tests: PositionTest | Sequence[PositionTest],
    rider: Rider,
    method: str = "loop",
    *,
    wind: Conditions | None = None,
    estimate_wind: bool | None = None,
    rolling_coefficient: float | None = None,
    lap_radius: float = LAP_RADIUS,
    profile: tuple[np.ndarray, np.ndarray] | None = None,
    bootstrap: int = 1000,
    seed: int = 0,
    fallback_rolling_coefficient: float | None = TYPICAL_ROLLING_COEFFICIENT,
) -> FieldTestResult:
    """CdA and Crr from test rides, with a steady wind estimated when none is given.

    With `estimate_wind` off (the default when a wind is given) the result is that of
    pacing.fieldtest.estimate.estimate_drag on the tests as given (their headwind and
    crosswind), plus a warning when the wind the laps show differs clearly from `wind`. With it
    on, the wind is estimated (see the module docstring), the tests' own wind is replaced by
    it, and the result carries it (`FieldTestResult.wind`) with a note; when the laps cannot
    separate wind from drag (one heading, or a strong correlation) or the rides have no
    headings, a warning says so and the tests' own wind is kept.

    Parameters
    ----------
    tests : PositionTest or sequence of PositionTest
        One per position; every ride needs headings or positions for the wind.
    rider : pacing.physics.cycling.Rider
        Mass [kg], drivetrain efficiency [-], wheel and bearing parameters.
    method : str
        "loop", "profile" or "regression" (pacing.fieldtest.methods).
    wind : pacing.weather.conditions.Conditions or None
        The wind the user gave (speed at wind_height [m/s], FROM [deg], heights and roughness
        for the 10 m conversion); None when none was given.
    estimate_wind : bool or None
        None: estimate when `wind` is None. True / False: estimate / do not.
    rolling_coefficient, lap_radius, profile, bootstrap, seed, fallback_rolling_coefficient
        As pacing.fieldtest.estimate.estimate_drag (Crr [-], radius [m], profile [m], draws).

    Returns
    -------
    FieldTestResult
        As estimate_drag, with `wind` (pacing.fieldtest.wind_fit.WindEstimate) when the wind
        was estimated or checked, and the wind notices among the warnings.

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    Golub, G.H. & Pereyra, V. (1973). SIAM J Numer Anal 10(2):413-432. doi:10.1137/0710036
    Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
    """
    tests = [tests] if isinstance(tests, PositionTest) else list(tests)
    estimate = wind is None if estimate_wind is None else estimate_wind
    options = dict(rolling_coefficient=rolling_coefficient, lap_radius=lap_radius,
                   profile=profile, bootstrap=bootstrap, seed=seed,
                   fallback_rolling_coefficient=fallback_rolling_coefficient)
    if not estimate and wind is None:
        return estimate_drag(tests, rider, method, **options)  # type: ignore[arg-type]
    spec = method_named(method)
    try:
        design = _Design(_positions(tests, rider, spec, lap_radius, profile), spec, rider)
    except InputError:
        design = None
    if design is None:
        result = estimate_drag(tests, rider, method, **options)  # type: ignore[arg-type]
        if not estimate:
            return result
        return _with(result, None, [warning("fieldtest-wind-inseparable", reason="no-heading",
                                            heading_spread=0.0, correlation=1.0)])
    if estimate or wind is None:
        return _estimated(tests, rider, spec, design, wind, options)
    return _checked(tests, rider, spec, design, wind, options)


def _with(result: FieldTestResult, estimate: WindEstimate | None,
          notices: Sequence[Notice]) -> FieldTestResult:
    """The result with the wind estimate and the wind notices first among its warnings."""
    return dataclasses.replace(result, wind=estimate,
                               warnings=tuple(notices) + tuple(result.warnings))


def _given_vector(wind: Conditions | None) -> np.ndarray:
    """The given wind at rider height as a vector [m/s] (calm when none)."""
    return np.zeros(2) if wind is None else wind_vector(wind.wind_at_rider, wind.wind_from)


def _estimated(tests: list[PositionTest], rider: Rider, spec: FieldTestMethod,
               design: _Design, wind: Conditions | None, options: dict) -> FieldTestResult:
    """estimate_drag with the estimated wind, its bootstrap refitting the wind per draw."""
    fixed = options["rolling_coefficient"]
    basis, vector, correlation, problem = _point_wind(design, fixed, _given_vector(wind))
    if basis is None:
        result = estimate_drag(tests, rider, spec.name, **options)
        return _with(result, None, [warning("fieldtest-wind-inseparable", **problem)])
    design.build_stencil(vector)
    refit = _Refit(design, basis, vector)
    windy = []
    for position in design.positions:
        head, cross = head_and_cross(position.heading, vector)
        windy.append(dataclasses.replace(position.test, headwind=head, crosswind=cross))
    result = estimate_drag(windy, rider, spec.name, bootstrap_refit=refit, **options)
    held = None if not (result.rolling_held or result.rolling_fixed) \
        else result.rolling_coefficient
    heights = wind or Conditions()
    estimate = _wind_estimate(vector, refit.winds.get(held, []), heights, correlation, basis,
                              design)
    loose = loose_wind_values(estimate)
    if loose:
        result = estimate_drag(tests, rider, spec.name, **options)
        return _with(result, None, [warning("fieldtest-wind-inseparable", **loose)])
    notices = [_estimated_notice(estimate)]
    if wind is not None:
        notices += undeclared_wind_notices(estimate, wind)
    return _with(result, estimate, notices)


def _checked(tests: list[PositionTest], rider: Rider, spec: FieldTestMethod, design: _Design,
             wind: Conditions, options: dict) -> FieldTestResult:
    """estimate_drag as given, and a warning when the laps show a clearly different wind."""
    result = estimate_drag(tests, rider, spec.name, **options)
    fixed = result.rolling_coefficient if (result.rolling_held or result.rolling_fixed) \
        else None
    basis, vector, correlation, _ = _point_wind(design, fixed, _given_vector(wind))
    if basis is None:
        return result
    design.build_stencil(vector)
    refit = _Refit(design, basis, vector)
    rng = np.random.default_rng(options["seed"])
    draws = []
    for _ in range(min(CHECK_DRAWS, options["bootstrap"])):
        picks = [rng.integers(0, len(p.laps), len(p.laps)) for p in design.positions]
        draws.append(refit.wind(picks, fixed))
    estimate = _wind_estimate(vector, draws, wind, correlation, basis, design)
    return _with(result, result.wind, undeclared_wind_notices(estimate, wind))
