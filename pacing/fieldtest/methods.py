"""The field-test methods: one registry of the ways CdA and Crr are read from test rides.

Every method fits the same unknowns (one CdA per riding position, one Crr shared by all) by
linear least squares over laps (pacing.fieldtest.fit); they differ in what each lap contributes
and in what the ride must carry. `FIELD_TEST_METHODS` lists them by the name the command line
and the page use ("loop", "profile", "regression"); pacing.fieldtest.estimate.estimate_drag
looks its method up here, the command line offers its keys as choices and the page its
`label`s as a menu.

=============  =====================================  ==================================
method         each lap gives                         the ride must carry
=============  =====================================  ==================================
loop           virtual elevation gained over the lap  laps that end where they start
               (loop closure: 0)                      (positions, or laps marked by time)
profile        virtual elevation along the lap,       elevation (the ride's column or a
               against the known profile              known profile)
regression     mean driving force against mean air    steady runs (laps or marked
               speed (one row per lap)                stretches)
=============  =====================================  ==================================

Validity: all three rest on the power balance of Martin et al. (1998) in calm, steady air
(`CALM_WIND`, the wind of Lim et al. 2011's tests) and take cos θ as 1 in the rolling term
(`GRADE_LIMIT`); the regression also assumes steady runs (`STEADY_SPEED_LIMIT`), since the mean
of v² is not v̄² when the speed varies. Notes and check values: docs/references.md,
"CdA from field tests".

References
----------
Chung, R. Estimating CdA with a power meter (self-published notes presenting the virtual
elevation method; no journal version).
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of
a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
Lim, A.C., Homestead, E.P., Edwards, A.G., Carver, T.C., Kram, R. & Byrnes, W.C. (2011).
Measuring changes in aerodynamic/rolling resistances by cycle-mounted power meters. Med Sci
Sports Exerc 43(5):853-860.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from pacing.fieldtest.fit import (
    Columns,
    closure_columns,
    profile_columns,
    regression_columns,
    regression_lap_drag_area,
    virtual_elevation_lap_drag_area,
)
from pacing.fieldtest.laps import LapTerms
from pacing.physics.registry import ModelRegistry

CALM_WIND = 1.0
"""Wind at rider height above which a test is not in calm air [m/s] (Lim et al. 2011 tested
in wind under 1.0 m/s)."""

STEADY_SPEED_LIMIT = 0.10
"""Median coefficient of variation of the speed within laps above which runs are not steady
enough for the regression [-] (our choice: at 10 % the mean of v² exceeds v̄² by about 1 %)."""

GRADE_LIMIT = 0.06
"""Steepest grade for which the rolling term's cos θ is taken as 1 [-]: under 6 % this moves
Crr by less than 0.2 % (1 − cos(atan 0.06) = 0.0018; pacing.fieldtest.virtual_elevation)."""

CHUNG = "Chung, R., Estimating CdA with a power meter (self-published notes)"
MARTIN_1998 = ("Martin, J.C. et al. (1998), Validation of a mathematical model for road cycling "
               "power, J Appl Biomech 14(3):276-291, doi:10.1123/jab.14.3.276")
LIM_2011 = ("Lim, A.C. et al. (2011), Measuring changes in aerodynamic/rolling resistances by "
            "cycle-mounted power meters, Med Sci Sports Exerc 43(5):853-860")


@dataclass(frozen=True)
class FieldTestMethod:
    """One way of reading CdA and Crr from the laps of test rides.

    Attributes
    ----------
    name : str
        Registry key, the name the command line takes ("loop").
    label : str
        Short words for a menu.
    computes : str
        What the fit matches, in one line.
    references : tuple of str
        The published sources (authors, year, journal, DOI where known).
    needs_elevation : bool
        True when the ride must carry elevation (its own column or a known profile).
    needs_closed_laps : bool
        True when every lap must end where it started (loop closure).
    needs_positions : bool
        True when the ride must carry latitude and longitude; no method does, since laps can
        be marked by time instead of found from the positions.
    laps_to_separate : int
        Fewest laps per position with which CdA and Crr can both be fitted [-] (1 when Crr is
        held).
    offset_per_lap : bool
        True when each lap keeps its own height offset (the fit centres its columns per lap).
    trace_follows_measured : bool
        True when a lap's plot compares the virtual elevation with the measured elevation
        (when the ride has one), not with the mean trace of the laps.
    columns : callable
        Laps of one position → least-squares columns (y, drag, rolling), each of shape
        (laps, G) (pacing.fieldtest.fit.Columns).
    lap_drag_area : callable
        (lap, Crr [-]) → CdA of that lap alone [m²].
    wind_limit : float
        Wind at rider height above which the result is flagged [m/s].
    grade_limit : float
        Steepest grade the power balance is used on as written [-].
    steady_speed_limit : float or None
        Median coefficient of variation of the speed within laps above which the runs are
        flagged as unsteady [-]; None when the method does not need steady runs.
    """

    name: str
    label: str
    computes: str
    references: tuple[str, ...]
    needs_elevation: bool
    needs_closed_laps: bool
    needs_positions: bool
    laps_to_separate: int
    offset_per_lap: bool
    trace_follows_measured: bool
    columns: Callable[[Sequence[LapTerms]], Columns]
    lap_drag_area: Callable[[LapTerms, float], float]
    wind_limit: float = CALM_WIND
    grade_limit: float = GRADE_LIMIT
    steady_speed_limit: float | None = None


FIELD_TEST_METHODS: ModelRegistry[FieldTestMethod] = ModelRegistry({
    "loop": FieldTestMethod(
        name="loop",
        label="Chung's virtual elevation: laps close on themselves (no heights needed)",
        computes="virtual elevation, every lap returns to the same height (no elevation data "
                 "needed)",
        references=(CHUNG, MARTIN_1998),
        needs_elevation=False,
        needs_closed_laps=True,
        needs_positions=False,
        laps_to_separate=2,
        offset_per_lap=False,
        trace_follows_measured=False,
        columns=closure_columns,
        lap_drag_area=virtual_elevation_lap_drag_area,
    ),
    "profile": FieldTestMethod(
        name="profile",
        label="Chung's virtual elevation: follow the recorded heights",
        computes="virtual elevation fitted to a known elevation profile",
        references=(CHUNG, MARTIN_1998),
        needs_elevation=True,
        needs_closed_laps=False,
        needs_positions=False,
        laps_to_separate=1,
        offset_per_lap=True,
        trace_follows_measured=False,
        columns=profile_columns,
        lap_drag_area=virtual_elevation_lap_drag_area,
    ),
    "regression": FieldTestMethod(
        name="regression",
        label="Regression of Lim et al. (2011): steady laps, mean force against speed",
        computes="mean force against mean air speed over laps (Lim et al. 2011)",
        references=(LIM_2011, MARTIN_1998),
        needs_elevation=False,
        needs_closed_laps=False,
        needs_positions=False,
        laps_to_separate=2,
        offset_per_lap=False,
        trace_follows_measured=True,
        columns=regression_columns,
        lap_drag_area=regression_lap_drag_area,
        steady_speed_limit=STEADY_SPEED_LIMIT,
    ),
}, what="method")
"""The field-test methods by name (pacing.physics.registry.ModelRegistry); "loop" is the
default."""
