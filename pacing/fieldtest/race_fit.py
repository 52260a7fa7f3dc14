"""Drag area on the day: CdA, Crr (and the wind) from a race ridden over a known course.

A race is not a field test: there are no laps, the rider brakes, coasts and stops, and the
course is ridden once. What it has instead is a known course: the race review
(pacing.review) aligns the race file to it and hands over arrays along the course. The fit is
Chung's virtual elevation against the course's elevation: on every piece ridden under power
the power balance (Martin et al. 1998; pacing.fieldtest.virtual_elevation) says how much height
the rider must have gained, linear in CdA and Crr,

    Δh_virtual = known − CdA·per_CdA(wind) − Crr·per_Crr,

and summed along the race this must follow the course's profile. Pieces where the balance
does not hold are left out, on both sides (the virtual rise and the course's rise), so the sums
run on across them: stops and recording gaps, braking (pacing.fieldtest.checks.braking_times)
and coasting (power under BRAKING_POWER, where hidden braking is likely on descents). How much
was left out comes back as a note.

The race is cut into blocks of `block_length` seconds; each block's sums are compared with the
course up to an offset of its own (so errors do not pile up over hours), and the same blocks
carry the uncertainty: a moving-block bootstrap along the race (Künsch 1989) draws as many
blocks as the race has, with replacement, from all blocks of that length starting at any
piece, and refits. When the day's wind is not given it is estimated with CdA and Crr
(pacing.fieldtest.wind_fit: variable projection over a steady wind vector), refitted in every
draw, so the intervals carry its uncertainty.

Conventions: point arrays (one value per sample) have length N, piece arrays N-1; SI units;
wind speeds at 10 m unless named "at rider"; directions in degrees clockwise from north, the
wind's the one it blows FROM.

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Künsch, H.R. (1989). The jackknife and the bootstrap for general stationary observations. Ann
Stat 17(3):1217-1241. doi:10.1214/aos/1176347265
Efron, B. & Tibshirani, R.J. (1993). An Introduction to the Bootstrap. Chapman & Hall.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.fieldtest.checks import PLAUSIBLE_ROLLING, check_bootstrap_draws
from pacing.fieldtest.race_blocks import (
    RacePieces,
    block_problem,
    block_rows,
    bootstrap_draws,
    checked_race_arrays,
    checked_series,
    left_out_pieces,
    solve_blocks,
)
from pacing.fieldtest.race_wind import (
    checked_given_wind,
    fitted_wind,
    wind_notices,
    with_wind_interval,
)
from pacing.fieldtest.steady_wind import WindEstimate
from pacing.fieldtest.wind_checks import loose_wind_values, percentile_interval
from pacing.fieldtest.wind_fit import AirTerms
from pacing.notices import Notice, note, warning
from pacing.physics.cycling import MARTIN_1998, Rider
from pacing.weather.conditions import Conditions

BLOCK_LENGTH = 300.0
"""Default block length of the moving-block bootstrap [s] (our choice: five minutes holds
several climbs and descents of a rolling course, and a race of an hour has a dozen blocks)."""

SHORT_RACE = 600.0
"""Riding time used in the fit under which the result is flagged as weak [s] (our choice)."""

SHORTEST = 60.0
"""Riding time used in the fit under which nothing is fitted [s]."""

TYPICAL_ROLLING_COEFFICIENT = MARTIN_1998["rolling_coefficient"]
"""Crr held when the race cannot separate CdA from Crr [-] (Martin et al. 1998; as the field
test, pacing.fieldtest.estimate)."""


@dataclass(frozen=True, eq=False)
class RaceDragFit:
    """CdA, Crr and the wind of a race day, with intervals and what was left out.

    Attributes
    ----------
    drag_area : float
        CdA [m²].
    drag_area_ci95 : tuple of float or None
        95 % moving-block bootstrap interval [m²].
    rolling_coefficient : float
        Crr [-] (fitted, given, or held at TYPICAL_ROLLING_COEFFICIENT).
    rolling_coefficient_ci95 : tuple of float or None
        Its interval [-]; None when given or held.
    rolling_fixed : bool
        True when Crr was given.
    rolling_held : bool
        True when the race could not separate CdA from Crr and Crr was held.
    wind : WindEstimate
        The wind used: estimated, or the given one (or calm).
    excluded_braking_time, excluded_stop_time, excluded_coasting_time : float
        Time left out for braking, for stops and recording gaps, for coasting [s].
    used_share : float
        Share of the race time used [-].
    block_length : float
        Block length of the bootstrap [s].
    residual_rms : float
        RMS of virtual − course elevation within the blocks [m].
    virtual_elevation : numpy.ndarray
        Virtual elevation with the fitted values [m], length N, from the course's first
        elevation; left-out pieces follow the course.
    used : numpy.ndarray
        True for a sample that ends a piece used in the fit, length N (bool).
    warnings : tuple of pacing.notices.Notice
        Notes and warnings (words in pacing.display.fieldtest_words).
    """

    drag_area: float
    drag_area_ci95: tuple[float, float] | None
    rolling_coefficient: float
    rolling_coefficient_ci95: tuple[float, float] | None
    rolling_fixed: bool
    rolling_held: bool
    wind: WindEstimate
    excluded_braking_time: float
    excluded_stop_time: float
    excluded_coasting_time: float
    used_share: float
    block_length: float
    residual_rms: float
    virtual_elevation: np.ndarray
    used: np.ndarray
    warnings: tuple[Notice, ...]

    @property
    def excluded_time(self) -> float:
        """Time left out of the fit [s]."""
        return self.excluded_braking_time + self.excluded_stop_time + self.excluded_coasting_time

    @property
    def wind_estimated(self) -> bool:
        """True when the wind was estimated from the race."""
        return self.wind.estimated

    @property
    def wind_speed(self) -> float:
        """Wind at 10 m [m/s]."""
        return self.wind.speed

    @property
    def wind_from(self) -> float:
        """Direction the wind blows FROM [deg]."""
        return self.wind.wind_from

    @property
    def wind_speed_at_rider(self) -> float:
        """Wind at rider height [m/s]."""
        return self.wind.speed_at_rider

    @property
    def wind_speed_ci95(self) -> tuple[float, float] | None:
        """95 % interval of the 10 m wind speed [m/s], when estimated."""
        return self.wind.speed_ci95

    def as_json(self) -> dict[str, Any]:
        """The issue's `fitted` object: cda_m2, cda_ci95, crr, crr_ci95, wind_speed_mps (10 m),
        wind_from_deg; rounded, intervals as [low, high] or None."""
        def pair(values: tuple[float, float] | None, digits: int) -> list[float] | None:
            return None if values is None else [round(float(v), digits) for v in values]

        return {"cda_m2": round(self.drag_area, 5), "cda_ci95": pair(self.drag_area_ci95, 5),
                "crr": round(self.rolling_coefficient, 6),
                "crr_ci95": pair(self.rolling_coefficient_ci95, 6),
                "wind_speed_mps": round(self.wind.speed, 3),
                "wind_from_deg": round(self.wind.wind_from, 1)}


def fit_race_drag(
    distance: ArrayLike,
    time: ArrayLike,
    speed: ArrayLike,
    power: ArrayLike,
    heading: ArrayLike,
    course_elevation: ArrayLike,
    air_density: float | ArrayLike,
    rider: Rider,
    *,
    wind: Conditions | None = None,
    estimate_wind: bool | None = None,
    rolling_coefficient: float | None = None,
    bootstrap: int = 500,
    block_length: float = BLOCK_LENGTH,
    seed: int = 0,
    heights: Conditions | None = None,
) -> RaceDragFit:
    """CdA and Crr on the day (and the wind when not given) from a race over a known course.

    Virtual elevation against the course's elevation (Chung), by blocks of `block_length`
    seconds each with its own offset; braking, stops and coasting left out; intervals by a
    moving-block bootstrap along the race (Künsch 1989). See the module docstring.

    Parameters
    ----------
    distance : array_like
        Distance along the course of each sample [m], length N (for the caller's charts;
        the fit uses time and speed).
    time : array_like
        Time of each sample [s], strictly increasing, length N.
    speed : array_like
        Ground speed [m/s], length N.
    power : array_like
        Crank power [W], length N.
    heading : array_like
        Direction of travel [deg clockwise from north], length N (per sample; a piece takes
        the circular mean of its ends) or N-1 (per piece, e.g. the course's own headings).
    course_elevation : array_like
        The course's elevation at each sample's distance [m], length N.
    air_density : float or array_like
        Air density [kg/m³], scalar or length N.
    rider : pacing.physics.cycling.Rider
        Mass [kg], drivetrain efficiency [-], wheel, bearing and yaw terms (its CdA and Crr
        are not used).
    wind : pacing.weather.conditions.Conditions or None
        The day's wind when known (its wind fields only: speed at wind_height [m/s], FROM
        [deg], roughness [m], rider height [m]); None when not known.
    estimate_wind : bool or None
        None: estimate the wind when `wind` is None. True: estimate it anyway (and warn when
        it differs from the given one). False: use the given wind (calm when None).
    rolling_coefficient : float or None
        Crr to hold [-]; None fits it.
    bootstrap : int
        Bootstrap draws (0: no intervals), at most 10 000.
    block_length : float
        Block length [s], 30 s to the race's length.
    seed : int
        Seed of the bootstrap.
    heights : pacing.weather.conditions.Conditions or None
        Whose rider_height [m] and roughness_length [m] turn the estimated wind at rider
        height into the 10 m wind (e.g. the plan's conditions); default `wind`, else
        Conditions() (1 m, open grassland).

    Returns
    -------
    RaceDragFit
        CdA [m²], Crr [-], wind (10 m and rider height) with intervals, what was left out.

    Raises
    ------
    InputError
        Bad arrays, a Crr outside 0-0.1, or less than SHORTEST seconds of usable riding.

    References
    ----------
    Chung, R. Estimating CdA with a power meter (self-published notes).
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    Künsch, H.R. (1989). Ann Stat 17(3):1217-1241. doi:10.1214/aos/1176347265
    """
    checked_series(distance, "distance", None)
    arrays = checked_race_arrays(time, speed, power, heading, course_elevation, air_density)
    check_bootstrap_draws(bootstrap, "bootstrap draws")
    if rolling_coefficient is not None and not 0 <= rolling_coefficient <= 0.1:
        raise InputError(f"Crr must be 0-0.1, got {rolling_coefficient}")
    seconds = arrays["time"]
    if not np.isfinite(block_length) or block_length < 30.0:
        raise InputError(f"block length must be at least 30 s, got {block_length:g}")
    stops, braking, coasting = left_out_pieces(seconds, arrays["speed"], arrays["power"])
    left_out = stops | braking | coasting
    steps = np.diff(seconds)
    used_time = float(steps[~left_out].sum())
    if used_time < SHORTEST:
        raise InputError(f"only {used_time:.0f} s of the race were ridden under power without "
                         f"braking or stopping: at least {SHORTEST:g} s are needed")
    rise = np.diff(arrays["course elevation"]) * ~left_out
    headings = arrays["heading"]
    air = AirTerms.of(seconds, arrays["speed"], arrays["power"], arrays["density"], headings,
                      rider, left_out)
    race = RacePieces(seconds, arrays["speed"], headings, rise, left_out, air,
                 heights or wind or Conditions())
    return _fit(race, arrays, (stops, braking, coasting), wind, estimate_wind,
                rolling_coefficient, bootstrap, float(block_length), seed)


def _fit(race: RacePieces, arrays: dict[str, np.ndarray], parts: tuple[np.ndarray, ...],
         wind: Conditions | None, estimate_wind: bool | None, rolling: float | None,
         bootstrap: int, length: float, seed: int,
         earlier: Sequence[Notice] = ()) -> RaceDragFit:
    """The point fit, the Crr hold, the bootstrap and the result (`earlier`: notices of a
    first try with the wind estimated that did not pin it down)."""
    given_rolling = rolling
    seconds = race.time
    used_piece = ~race.left_out
    starts = np.flatnonzero(np.diff(np.floor((seconds[:-1] - seconds[0]) / length),
                                    prepend=-1) > 0)
    rows = block_rows(seconds, used_piece, starts, length)
    notices: list[Notice] = list(earlier)
    estimate = wind is None if estimate_wind is None else estimate_wind
    basis, vector, wind_estimate = fitted_wind(race, rows, rolling, wind, estimate, notices)
    held = False
    vector, beta = solve_blocks(race, rows, rolling, basis, vector)
    draws = bootstrap_draws(race, starts.size, length, rolling, basis, vector, bootstrap, seed)
    if rolling is None and _crr_too_loose(draws):
        held, rolling = True, TYPICAL_ROLLING_COEFFICIENT
        vector, beta = solve_blocks(race, rows, rolling, basis, vector)
        draws = bootstrap_draws(race, starts.size, length, rolling, basis, vector, bootstrap, seed)
        notices.append(warning("race-fit-crr-held", held_rolling_coefficient=rolling,
                               rolling_low=PLAUSIBLE_ROLLING[0],
                               rolling_high=PLAUSIBLE_ROLLING[1]))
    crr = float(rolling) if rolling is not None else float(beta[1])
    wind_estimate = with_wind_interval(wind_estimate, vector, draws, race.heights)
    loose = loose_wind_values(wind_estimate) if wind_estimate.estimated else {}
    if loose:
        return _fit(race, arrays, parts, wind, False, given_rolling, bootstrap, length, seed,
                    [*earlier, warning("fieldtest-wind-inseparable", **loose)])
    notices += wind_notices(wind_estimate, wind, estimate)
    if not estimate and wind is not None and not earlier:
        notices += checked_given_wind(race, rows, rolling, wind, starts.size, length, seed)
    notices += _excluded_notices(seconds, parts)
    virtual, rms = _virtual_elevation(race, arrays["course elevation"], vector,
                                      float(beta[0]), crr, rows)
    return RaceDragFit(
        drag_area=float(beta[0]),
        drag_area_ci95=percentile_interval(draws[:, 0]) if draws.size else None,
        rolling_coefficient=crr,
        rolling_coefficient_ci95=(percentile_interval(draws[:, 1])
                                  if draws.size and rolling is None else None),
        rolling_fixed=rolling is not None and not held, rolling_held=held,
        wind=wind_estimate,
        excluded_braking_time=float(np.diff(seconds)[parts[1]].sum()),
        excluded_stop_time=float(np.diff(seconds)[parts[0]].sum()),
        excluded_coasting_time=float(np.diff(seconds)[parts[2]].sum()),
        used_share=float(np.diff(seconds)[used_piece].sum() / (seconds[-1] - seconds[0])),
        block_length=length, residual_rms=rms, virtual_elevation=virtual,
        used=np.concatenate(([False], used_piece)), warnings=tuple(notices))


def _crr_too_loose(draws: np.ndarray) -> bool:
    """True when the bootstrap interval of Crr is wider than the spread of road tyres."""
    interval = percentile_interval(draws[:, 1]) if draws.size else None
    return interval is not None and interval[1] - interval[0] > (
        PLAUSIBLE_ROLLING[1] - PLAUSIBLE_ROLLING[0])


def _excluded_notices(time: np.ndarray, parts: tuple[np.ndarray, ...]) -> list[Notice]:
    """The note of what was left out, and a warning when too little is left."""
    steps = np.diff(time)
    stops, braking, coasting = (float(steps[p].sum()) for p in parts)
    total = float(time[-1] - time[0])
    notices = [note("race-fit-excluded", braking_s=braking, stops_s=stops, coasting_s=coasting,
                    share=(braking + stops + coasting) / total)]
    used = total - braking - stops - coasting
    if used < SHORT_RACE:
        notices.append(warning("race-fit-short", used_s=used, limit_s=SHORT_RACE))
    return notices


def _virtual_elevation(race: RacePieces, elevation: np.ndarray, vector: np.ndarray, area: float,
                       crr: float, rows) -> tuple[np.ndarray, float]:
    """(virtual elevation per sample [m], RMS residual within the blocks [m])."""
    target, drag, rolling = race.terms(vector)
    course_rise = np.diff(elevation)
    rise = np.where(race.left_out, course_rise, target + race.rise - area * drag - crr * rolling)
    virtual = elevation[0] + np.concatenate(([0.0], np.cumsum(rise)))
    problem = block_problem(race, rows, crr)
    design, centred = problem(vector)
    residual = centred - design[:, 0] * area
    rms = float(np.sqrt(np.mean(residual ** 2))) if residual.size else 0.0
    return virtual, rms
