"""A road test of CdA and Crr as plain data, for the web app's panel (no Streamlit here):
read the uploaded test rides (one per riding position) into position tests, refuse the same
ride uploaded twice (its laps would count twice), run the fit, and put each ride's notices in
words.

The estimation is pacing.fieldtest.wind_estimate.estimate_drag_in_wind (Chung's virtual
elevation, or the regression of Lim et al. 2011, with a steady wind estimated from the laps
when the user does not give one); rides are read by pacing.io.rides.read_ride. The panel
(ui.fieldtest_panel) draws the inputs and the results (ui.fieldtest_results).
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from pacing.display.notices import describe
from pacing.errors import InputError, first_line
from pacing.notices import Notice

BOOTSTRAP_DRAWS = 1000
"""Bootstrap draws for the 95 % intervals (pacing.fieldtest.estimate.estimate_drag's default)."""


@dataclass(frozen=True, eq=False)
class FieldTestRun:
    """A finished field test.

    Attributes
    ----------
    result : pacing.fieldtest.estimate_result.FieldTestResult
        CdA per position, Crr, intervals and warnings.
    tests : tuple of pacing.fieldtest.estimate.PositionTest
        The position tests it used.
    air_density : float
        Mean air density over the rides [kg/m³].
    notes : tuple of (str, pacing.notices.Notice)
        Notes and warnings of reading and cleaning each ride, after the position's label.
    """

    result: Any
    tests: tuple[Any, ...]
    air_density: float
    notes: tuple[tuple[str, Notice], ...]


def note_lines(notes: Sequence[tuple[str, Notice]], system: str,
               level: str = "note") -> list[str]:
    """Each ride's notices of one level in words after its label ("hoods: dropped 3 samples
    …").

    Parameters
    ----------
    notes : sequence of (str, pacing.notices.Notice)
        Position label and notice of reading and cleaning its ride.
    system : str
        "metric" or "imperial".
    level : str
        "note" (what was filled or dropped) or "warning" (what may mislead, e.g. power
        dropouts).

    Returns
    -------
    list of str
        One line per notice of that level.
    """
    return [f"{label}: {describe(notice, system)}" for label, notice in notes
            if notice.level == level]


def read_tests(files: Sequence[tuple[Any, ...]],
               conditions: Any) -> tuple[list[Any], list[tuple[str, Notice]]]:
    """PositionTests (pacing.fieldtest.estimate) from uploaded files with their air.

    Parameters
    ----------
    files : sequence of tuple
        (file name, bytes, position label) per ride, optionally with a fourth item: lap
        boundaries as times from the ride start [s] (empty: laps found from the positions);
        an empty label takes the file name.
    conditions : pacing.weather.conditions.Conditions
        The air and wind of the test day.

    Returns
    -------
    tuple
        (tests, notes): one PositionTest per file; notes of reading and cleaning as
        (position label, pacing.notices.Notice).
    """
    from pacing.fieldtest.estimate import PositionTest
    from pacing.fieldtest.laps import indices_at_times, laps_from_bounds
    from pacing.fieldtest.ride import ride_air
    from pacing.io.rides import read_ride

    tests: list[PositionTest] = []
    notes: list[tuple[str, Notice]] = []
    if not files:
        raise InputError("upload at least one test ride (CSV or GPX)")
    refuse_duplicates(files)
    for index, (file_name, data, label, *rest) in enumerate(files):
        lap_times = tuple(rest[0]) if rest and rest[0] else ()
        suffix = Path(file_name).suffix.lower().lstrip(".")
        try:
            ride = read_ride(bytes(data), name=Path(file_name).stem,
                             kind=suffix if suffix in ("csv", "gpx") else None)
        except InputError as error:
            raise InputError(f"{file_name}: {first_line(error)}") from None
        label = (label or "").strip() or ride.name
        if label in (t.label for t in tests):
            label = f"{label} ({index + 1})"
        laps = None
        if lap_times:
            try:
                laps = tuple(laps_from_bounds(indices_at_times(ride, lap_times),
                                              ride.time.size))
            except InputError as error:
                raise InputError(f"{file_name}: {first_line(error)}") from None
        air = ride_air(ride, conditions)
        tests.append(PositionTest(label, ride, air.density, laps, air.headwind, air.crosswind))
        notes.extend((label, notice) for notice in ride.notes)
    return tests, notes


def refuse_duplicates(files: Sequence[tuple[Any, ...]]) -> None:
    """Refuse the same ride uploaded twice: its laps would count twice in the fit.

    Two files are the same ride when their bytes are identical (SHA-256), whatever their
    names; the message names both.

    Parameters
    ----------
    files : sequence of tuple
        (file name, bytes, …) per ride.

    Raises
    ------
    InputError
        One line naming the two files.
    """
    seen: dict[bytes, str] = {}
    for file_name, data, *_ in files:
        digest = hashlib.sha256(bytes(data)).digest()
        if digest in seen:
            raise InputError(f"{file_name} is the same ride as {seen[digest]}: uploading a "
                             "test ride twice would count its laps twice; remove one (a "
                             "second position needs a ride of its own)")
        seen[digest] = file_name


def run_fieldtest(files: Sequence[tuple[Any, ...]], total_mass: float, conditions: Any,
                  method: str = "loop", rolling_coefficient: float | None = None,
                  drivetrain_efficiency: float = 0.976,
                  bootstrap: int = BOOTSTRAP_DRAWS, wind_given: bool = True) -> FieldTestRun:
    """Read the rides and estimate CdA per position and a shared Crr.

    Parameters
    ----------
    files : sequence of tuple
        (file name, bytes, position label[, lap times [s]]) per ride (see read_tests).
    total_mass : float
        Rider + bike + kit [kg], 20-300.
    conditions : pacing.weather.conditions.Conditions
        The air and wind of the test day.
    method : str
        Key of pacing.fieldtest.methods.FIELD_TEST_METHODS.
    rolling_coefficient : float or None
        Crr to hold [-], or None to fit it.
    drivetrain_efficiency : float
        Drivetrain efficiency [-], 0.5-1.
    bootstrap : int
        Draws for the intervals [-], 0 to pacing.fieldtest.checks.MAX_BOOTSTRAP_DRAWS.
    wind_given : bool
        True: the wind of `conditions` is the day's (calm at 0), used as given and checked
        against the laps; False: the wind is estimated from the laps
        (pacing.fieldtest.wind_estimate).

    Returns
    -------
    FieldTestRun
        The result, the tests, the mean air density [kg/m³] and the rides' notes.
    """
    from pacing.fieldtest.checks import check_bootstrap_draws
    from pacing.fieldtest.wind_estimate import estimate_drag_in_wind
    from pacing.physics.cycling import Rider

    check_bootstrap_draws(bootstrap)
    if not (np.isfinite(total_mass) and 20.0 <= total_mass <= 300.0):
        raise InputError(f"rider + bike mass must be 20-300 kg, got {total_mass:g}")
    if not 0.5 <= drivetrain_efficiency <= 1.0:
        raise InputError(f"drivetrain efficiency must be 0.5-1, got {drivetrain_efficiency:g}")
    tests, notes = read_tests(files, conditions)
    rider = Rider(mass=float(total_mass), drivetrain_efficiency=float(drivetrain_efficiency))
    result = estimate_drag_in_wind(tests, rider, method=method,
                                   wind=conditions if wind_given else None,
                                   rolling_coefficient=rolling_coefficient, bootstrap=bootstrap)
    for position in result.positions:
        if not np.isfinite(position.drag_area):
            raise InputError(f"no finite CdA for {position.label!r}: check the laps")
    if not np.isfinite(result.rolling_coefficient):
        raise InputError("no finite Crr: check the laps")
    density = float(np.mean([np.mean(t.air_density) for t in tests]))
    return FieldTestRun(result=result, tests=tuple(tests), air_density=density,
                        notes=tuple(notes))
