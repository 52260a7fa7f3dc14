"""What a field test finds (pacing.fieldtest.estimate.estimate_drag): CdA per position
(`PositionEstimate`) with each lap's trace for the plots (`LapTrace`), each position against the
first (`PositionDifference`), and the whole result with its common Crr, intervals and warnings
(`FieldTestResult`), which also makes the measured position a pacing.athlete.Setup.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from pacing.athlete import Setup
from pacing.errors import InputError
from pacing.fieldtest.steady_wind import WindEstimate
from pacing.notices import Notice


@dataclass(frozen=True, eq=False)
class LapTrace:
    """Plot data of one lap (point arrays over the lap's samples).

    Attributes
    ----------
    time : numpy.ndarray
        Time from the lap start [s].
    distance : numpy.ndarray
        Distance from the lap start [m].
    virtual_elevation : numpy.ndarray
        Trace with the fitted CdA and Crr [m], starting at the measured elevation of the lap
        start when known, else at 0.
    reference_elevation : numpy.ndarray
        What the trace should follow [m]: the measured/known profile (methods that need
        elevation), else the mean virtual trace of the position's laps at the same place.
    residual : numpy.ndarray
        Virtual − reference [m].
    measured_elevation : numpy.ndarray or None
        The ride's elevation column over the lap [m].
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

    Attributes
    ----------
    label : str
        Name of the position.
    drag_area : float
        CdA [m²].
    drag_area_ci95 : tuple of float or None
        Bootstrap 95 % interval [m²]; None with too few laps.
    laps : int
        Number of laps.
    lap_drag_area : numpy.ndarray
        CdA of each lap alone with Crr held at the fitted value [m²].
    traces : tuple of LapTrace
        Plot data per lap.
    """

    label: str
    drag_area: float
    drag_area_ci95: tuple[float, float] | None
    laps: int
    lap_drag_area: np.ndarray
    traces: tuple[LapTrace, ...]


@dataclass(frozen=True)
class PositionDifference:
    """CdA of one position minus that of the first.

    Attributes
    ----------
    label : str
        The position.
    baseline : str
        The first position.
    difference : float
        CdA of `label` minus CdA of `baseline` [m²].
    ci95 : tuple of float or None
        Bootstrap 95 % interval of the difference [m²].
    significant : bool
        True when the interval excludes 0.
    """

    label: str
    baseline: str
    difference: float
    ci95: tuple[float, float] | None
    significant: bool


@dataclass(frozen=True, eq=False)
class FieldTestResult:
    """Estimated CdA per position and a common Crr, with intervals and warnings.

    Attributes
    ----------
    method : str
        Key of pacing.fieldtest.methods.FIELD_TEST_METHODS.
    positions : tuple of PositionEstimate
        CdA per position, in the order given.
    rolling_coefficient : float
        Crr [-].
    rolling_coefficient_ci95 : tuple of float or None
        Bootstrap 95 % interval of Crr [-]; None when held or with too few laps.
    rolling_fixed : bool
        True when Crr was given, not fitted.
    estimate_correlation : float
        Largest |correlation| between a CdA and the Crr estimate [-] (0 when Crr was given;
        when Crr is held, the correlation that made it so).
    differences : tuple of PositionDifference
        Each position against the first.
    warnings : tuple of pacing.notices.Notice
        What may mislead (codes "fieldtest-…"; words in pacing.display.fieldtest_words).
    bootstrap_drag_area : numpy.ndarray
        Bootstrap draws, shape (draws, positions) [m²] (empty if none).
    rolling_held : bool
        True when the laps could not separate CdA from Crr, so Crr was held at a typical value
        (`fallback_rolling_coefficient` of `estimate_drag`) and only CdA fitted; the CdA
        intervals then hold for that Crr only.
    drag_area_per_rolling : tuple of float
        Change of each position's fitted CdA per unit change of the Crr it is fitted with
        [m²], d CdA / d Crr (negative: a higher Crr leaves less drag to air).
    wind : pacing.fieldtest.wind_fit.WindEstimate or None
        The steady wind estimated from the laps (pacing.fieldtest.wind_estimate), None when
        the wind was given or not estimated.
    """

    method: str
    positions: tuple[PositionEstimate, ...]
    rolling_coefficient: float
    rolling_coefficient_ci95: tuple[float, float] | None
    rolling_fixed: bool
    estimate_correlation: float
    differences: tuple[PositionDifference, ...]
    warnings: tuple[Notice, ...]
    bootstrap_drag_area: np.ndarray
    rolling_held: bool = False
    drag_area_per_rolling: tuple[float, ...] = ()
    wind: WindEstimate | None = None

    @property
    def drag_area(self) -> float:
        """CdA of the first position [m²]."""
        return self.positions[0].drag_area

    @property
    def drag_area_ci95(self) -> tuple[float, float] | None:
        """Bootstrap 95 % interval of the first position's CdA [m²], or None."""
        return self.positions[0].drag_area_ci95

    @property
    def laps(self) -> int:
        """Number of laps used, over all positions."""
        return sum(p.laps for p in self.positions)

    def setup(self, position: str | int = 0, name: str | None = None, **fields: Any) -> Setup:
        """The measured position as a pacing.athlete.Setup.

        Parameters
        ----------
        position : str or int
            Label or index of the position.
        name : str or None
            Name of the setup (default the position's label).
        **fields
            Other Setup fields, e.g. bike_mass [kg].

        Returns
        -------
        pacing.athlete.Setup
            With drag_area [m²] rounded to 4 decimals and rolling_coefficient [-] to 5.
        """
        if isinstance(position, str):
            matches = [p for p in self.positions if p.label == position]
            if not matches:
                raise InputError(f"no position named {position!r}")
            estimate = matches[0]
        else:
            estimate = self.positions[position]
        return Setup(name=name or estimate.label, drag_area=round(estimate.drag_area, 4),
                     rolling_coefficient=round(self.rolling_coefficient, 5), **fields)
