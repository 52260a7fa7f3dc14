"""The race as the drag fit sees it (pacing.fieldtest.race_fit): its arrays checked, the
pieces left out (stops and gaps, braking, coasting), the blocks of `block_length` seconds with
the linear problem on them at a wind, one fit, and the moving-block bootstrap's draws
(Künsch 1989).

Conventions: point arrays (one value per sample) have length N, piece arrays N-1; SI units.

References
----------
Künsch, H.R. (1989). The jackknife and the bootstrap for general stationary observations. Ann
Stat 17(3):1217-1241. doi:10.1214/aos/1176347265
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.fieldtest.checks import BRAKING_POWER, braking_times
from pacing.fieldtest.ride import MAX_GAP, STOP_SPEED, Ride
from pacing.fieldtest.wind_fit import AirTerms, fit_wind, linear_fit, refit_wind
from pacing.weather.conditions import Conditions

# ---------------------------------------------------------------------------------------------
# Input, and what is left out
# ---------------------------------------------------------------------------------------------


def checked_series(values: ArrayLike, name: str, size: int | None) -> np.ndarray:
    """A finite 1-D float array of `size` values, or a one-line InputError."""
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numbers") from None
    if array.ndim != 1 or (size is not None and array.size != size):
        raise InputError(f"{name} must be a series of {size} numbers, got shape {array.shape}")
    if not np.all(np.isfinite(array)):
        raise InputError(f"{name} has missing or non-finite values at sample "
                         f"{int(np.argmax(~np.isfinite(array))) + 1}")
    return array


def checked_race_arrays(time: ArrayLike, speed: ArrayLike, power: ArrayLike,
                        heading: ArrayLike, course_elevation: ArrayLike,
                        air_density: ArrayLike) -> dict[str, np.ndarray]:
    """The race's arrays checked: lengths, finite, time increasing, speed and power ≥ 0."""
    seconds = checked_series(time, "time", None)
    n = seconds.size
    if n < 3 or np.any(np.diff(seconds) <= 0):
        raise InputError("time must increase from sample to sample (at least 3 samples)")
    arrays = {"time": seconds}
    for name, values in (("speed", speed), ("power", power),
                         ("course elevation", course_elevation)):
        arrays[name] = checked_series(values, name, n)
    headings = checked_series(heading, "heading", None)
    if headings.size not in (n, n - 1):
        raise InputError(f"heading must have {n} values (one per sample) or {n - 1} (one per "
                         f"piece), got {headings.size}")
    arrays["heading"] = ends_heading(headings) if headings.size == n else headings % 360.0
    for name in ("speed", "power"):
        if np.any(arrays[name] < 0):
            raise InputError(f"{name} must not be negative")
    density = np.asarray(air_density, dtype=float)
    if density.ndim == 0:
        density = np.full(n, float(density))
    density = checked_series(density, "air density", n)
    if np.any(density <= 0) or np.any(density > 2.0):
        raise InputError("air density must be between 0 and 2 kg/m³")
    arrays["density"] = 0.5 * (density[1:] + density[:-1])
    return arrays


def left_out_pieces(time: np.ndarray, speed: np.ndarray,
                    power: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Pieces left out: (stops and gaps, braking, coasting), bool arrays of length N-1.

    Stops: an end slower than STOP_SPEED, or a step longer than MAX_GAP. Braking: the pieces
    of pacing.fieldtest.checks.braking_times. Coasting: mean power under BRAKING_POWER.
    """
    steps = np.diff(time)
    stops = (np.minimum(speed[1:], speed[:-1]) < STOP_SPEED) | (steps > MAX_GAP)
    ride = Ride(time=time, speed=speed, power=power,
                distance=np.concatenate(([0.0], np.cumsum(steps))), pause=stops)
    braking = np.isin(time[1:], braking_times(ride)) & ~stops
    coasting = (0.5 * (power[1:] + power[:-1]) < BRAKING_POWER) & ~stops & ~braking
    return stops, braking, coasting


def ends_heading(heading: np.ndarray) -> np.ndarray:
    """Heading of each piece: circular mean of its two ends [deg]."""
    radians = np.radians(heading)
    east = np.sin(radians[1:]) + np.sin(radians[:-1])
    north = np.cos(radians[1:]) + np.cos(radians[:-1])
    return np.degrees(np.arctan2(east, north)) % 360.0


# ---------------------------------------------------------------------------------------------
# The blocks and the linear problem at a wind
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class RacePieces:
    """The race's pieces (N-1) as the fit sees them: times, speeds, the still-air terms and
    the air terms at a wind (`air`), the course's rise, what is left out, and the heights and
    roughness that turn a wind at rider height into one at 10 m (`heights`)."""

    time: np.ndarray
    speed: np.ndarray
    heading: np.ndarray
    rise: np.ndarray
    left_out: np.ndarray
    air: AirTerms
    heights: Conditions

    def terms(self, vector: np.ndarray) -> np.ndarray:
        """(target, per CdA, per Crr) of each piece at a wind vector, 0 where left out [m],
        shape (3, N-1)."""
        terms = self.air.at(vector)
        terms[0] -= self.rise
        return terms


ROW_STEP = 5
"""Every this many pieces a block gives a row to the fit (and its last piece) [-]: the
virtual elevation changes slowly, so thinning the rows loses little and saves time."""


def block_rows(time: np.ndarray, used_piece: np.ndarray, starts: np.ndarray,
               length: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Rows of blocks: (point index, the block's starting point, block number) per row.

    A block starting at point i covers the pieces starting before time[i] + length; its rows
    are the points ending its used pieces.
    """
    ends = np.searchsorted(time, time[starts] + length, side="left")
    ends = np.minimum(np.maximum(ends, starts + 1), time.size - 1)
    points, bases, labels = [], [], []
    for label, (start, end) in enumerate(zip(starts, ends, strict=True)):
        pieces = np.arange(start, end)
        pieces = pieces[used_piece[pieces]][::-1][::ROW_STEP][::-1]
        points.append(pieces + 1)
        bases.append(np.full(pieces.size, start))
        labels.append(np.full(pieces.size, label))
    return np.concatenate(points), np.concatenate(bases), np.concatenate(labels)


def block_problem(race: RacePieces, rows: tuple[np.ndarray, np.ndarray, np.ndarray],
                  rolling: float | None):
    """The linear problem (design, target) at a wind, on the given block rows."""
    points, bases, labels = rows
    count = int(labels.max()) + 1 if labels.size else 0
    sizes = np.maximum(np.bincount(labels, minlength=count), 1)

    def centred(values: np.ndarray) -> np.ndarray:
        cumulative = np.concatenate((np.zeros((3, 1)), np.cumsum(values, axis=1)), axis=1)
        within = cumulative[:, points] - cumulative[:, bases]
        means = np.stack([np.bincount(labels, row, minlength=count) for row in within])
        return within - (means / sizes)[:, labels]

    def problem(vector: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        target, drag, rolling_column = centred(race.terms(vector))
        if rolling is not None:
            return drag[:, None], target - rolling * rolling_column
        return np.column_stack((drag, rolling_column)), target

    return problem


# ---------------------------------------------------------------------------------------------
# One fit, and the bootstrap's
# ---------------------------------------------------------------------------------------------


def solve_blocks(race: RacePieces, problem_rows, rolling: float | None,
                 basis: np.ndarray | None, start: np.ndarray,
                 quick: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """(wind vector, β) of one fit: the wind fitted when a basis is given, else held; `quick`
    (bootstrap draws): two Gauss-Newton steps from `start` (wind_fit.refit_wind)."""
    problem = block_problem(race, problem_rows, rolling)
    if basis is None:
        beta, _ = linear_fit(*problem(start))
        return start, beta
    if quick:
        vector = refit_wind(problem, basis, start)
        return vector, linear_fit(*problem(vector))[0]
    return fit_wind(problem, basis, start)


def bootstrap_draws(race: RacePieces, blocks: int, length: float, rolling: float | None,
                    basis: np.ndarray | None, start: np.ndarray, count: int,
                    seed: int) -> np.ndarray:
    """Moving-block bootstrap draws: rows (CdA, Crr, wind east, wind north) (Künsch 1989)."""
    used_piece = ~race.left_out
    candidates = np.flatnonzero(used_piece)
    candidates = candidates[race.time[candidates] <= race.time[-1] - 0.5 * length] \
        if race.time[-1] - race.time[0] > length else candidates[:1]
    rng = np.random.default_rng(seed)
    results = []
    for _ in range(count):
        starts = np.sort(rng.choice(candidates, size=blocks, replace=True))
        rows = block_rows(race.time, used_piece, starts, length)
        vector, beta = solve_blocks(race, rows, rolling, basis, start, quick=True)
        crr = rolling if rolling is not None else beta[1]
        results.append((beta[0], crr, vector[0], vector[1]))
    return np.array(results) if results else np.empty((0, 4))
