"""Altitude and sustainable aerobic power: the fraction of sea-level critical power (or speed)
an athlete keeps at an elevation, acclimatised or not.

Less oxygen in the thinner air lowers the maximal aerobic power and with it what an athlete can
sustain; the thinner air also lowers drag (pacing.physics.air). A model here gives the factor
on critical power (cycling) or critical speed (running) along the course's elevation. The
athlete's limits are taken where they were measured (`reference_elevation`, sea level by
default): the factor is the model's fraction at the piece over its fraction there, at most 1.

Models (`ALTITUDE_MODELS`, docs/race_day_models.md, "Altitude"):

- "bassett-1999": Bassett et al. (1999), fits of the fraction of sea-level maximal aerobic power
  of elite athletes against altitude x [km], one for athletes acclimatised for some weeks and
  one for those not acclimatised;
- "wehrlin-hallen-2006": Wehrlin & Hallén (2006), VO2max of endurance athletes falling
  linearly with altitude from 300 m in acute exposure (not acclimatised only).

References
----------
Bassett, D.R. Jr, Kyle, C.R., Passfield, L., Broker, J.P. & Burke, E.R. (1999). Comparing
cycling world hour records, 1967-1996: modeling with empirical data. Med Sci Sports Exerc
31(11):1665-1676. doi:10.1097/00005768-199911000-00025
Wehrlin, J.P. & Hallén, J. (2006). Linear decrease in VO2max and performance with increasing
altitude in endurance athletes. Eur J Appl Physiol 96(4):404-412.
doi:10.1007/s00421-005-0081-9
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.physics.inputs import check_range, finite_array
from pacing.physics.registry import ModelRegistry

ELEVATION_RANGE = (-500.0, 9000.0)
"""Elevations accepted [m]: below the Dead Sea shore to above the highest road; the models'
validity is narrower (`AltitudeModel.validity_high_m`) and reported, not refused."""

Fraction = Callable[[np.ndarray], np.ndarray]


def bassett_1999_acclimatised(altitude_km: np.ndarray) -> np.ndarray:
    """Fraction of sea-level maximal aerobic power, acclimatised athletes [-].

    y = (−1.122·x² − 1.8356·x + 99.921) / 100,  x = altitude [km] (Bassett et al. 1999).

    Parameters
    ----------
    altitude_km : numpy.ndarray
        Altitude above sea level x, ≥ 0 [km].

    Returns
    -------
    numpy.ndarray
        y [-] (0.99921 at sea level, as published).

    References
    ----------
    Bassett et al. (1999), Med Sci Sports Exerc 31(11):1665-1676.

    Examples
    --------
    At 2 km: (−4.488 − 3.6712 + 99.921)/100 = 0.917618.

    >>> float(bassett_1999_acclimatised(np.array(2.0)))
    0.917618
    """
    return (-1.122 * altitude_km**2 - 1.8356 * altitude_km + 99.921) / 100.0


def bassett_1999_unacclimatised(altitude_km: np.ndarray) -> np.ndarray:
    """Fraction of sea-level maximal aerobic power, athletes not acclimatised [-].

    y = (0.178·x³ − 1.43·x² − 4.07·x + 100) / 100,  x = altitude [km] (Bassett et al. 1999).

    Parameters
    ----------
    altitude_km : numpy.ndarray
        Altitude above sea level x, ≥ 0 [km].

    Returns
    -------
    numpy.ndarray
        y [-].

    References
    ----------
    Bassett et al. (1999), Med Sci Sports Exerc 31(11):1665-1676.

    Examples
    --------
    At 2 km: (1.424 − 5.72 − 8.14 + 100)/100 = 0.87564.

    >>> float(bassett_1999_unacclimatised(np.array(2.0)))
    0.87564
    """
    return (0.178 * altitude_km**3 - 1.43 * altitude_km**2 - 4.07 * altitude_km + 100.0) / 100.0


WEHRLIN_HALLEN_SLOPE = 0.063
"""Loss of VO2max per 1000 m above WEHRLIN_HALLEN_START, 6.3 % (Wehrlin & Hallén 2006)."""

WEHRLIN_HALLEN_START = 0.3
"""Altitude where the linear loss starts, 300 m (their lowest condition) [km]."""


def wehrlin_hallen_2006(altitude_km: np.ndarray) -> np.ndarray:
    """Fraction of low-altitude VO2max in acute exposure, linear from 300 m [-].

    y = 1 − 0.063·max(x − 0.3, 0),  x = altitude [km] (Wehrlin & Hallén 2006, 300-2800 m).

    Parameters
    ----------
    altitude_km : numpy.ndarray
        Altitude above sea level x [km].

    Returns
    -------
    numpy.ndarray
        y [-], 1 up to 300 m.

    References
    ----------
    Wehrlin & Hallén (2006), Eur J Appl Physiol 96(4):404-412.

    Examples
    --------
    At 2.3 km: 1 − 0.063·2.0 = 0.874.

    >>> float(wehrlin_hallen_2006(np.array(2.3)))
    0.874
    """
    return 1.0 - WEHRLIN_HALLEN_SLOPE * np.maximum(altitude_km - WEHRLIN_HALLEN_START, 0.0)


@dataclass(frozen=True)
class AltitudeModel:
    """A published model of aerobic power against altitude.

    Attributes
    ----------
    key : registry key [-].
    source : the publication [-].
    unacclimatised : fraction of sea-level aerobic power against altitude [km] → [-].
    acclimatised : the same after some weeks at altitude, or None when not modelled.
    validity_high_m : highest elevation the source covers [m]; below sea level the sea-level
        value holds.
    """

    key: str
    source: str
    unacclimatised: Fraction
    acclimatised: Fraction | None
    validity_high_m: float


ALTITUDE_MODELS: ModelRegistry[AltitudeModel] = ModelRegistry(
    {
        "bassett-1999": AltitudeModel(
            "bassett-1999",
            "Bassett et al. (1999), Med Sci Sports Exerc 31(11):1665-1676",
            bassett_1999_unacclimatised, bassett_1999_acclimatised, 3000.0),
        "wehrlin-hallen-2006": AltitudeModel(
            "wehrlin-hallen-2006",
            "Wehrlin & Hallén (2006), Eur J Appl Physiol 96(4):404-412",
            wehrlin_hallen_2006, None, 2800.0),
    },
    what="altitude model",
)
"""Published models of aerobic power against altitude, the default first."""

DEFAULT_ALTITUDE_MODEL = "bassett-1999"
"""The model used unless another is asked for."""


@dataclass(frozen=True)
class AltitudeFactor:
    """The factor on critical power / critical speed at each elevation.

    Attributes
    ----------
    factor : numpy.ndarray
        Fraction of the athlete's limit kept, ≤ 1 [-].
    within_validity : numpy.ndarray
        True where the elevation lies in the model's validity range [-].
    model : str
        Key of ALTITUDE_MODELS [-].
    acclimatised : bool
        Whether the acclimatised curve was used [-].
    """

    factor: np.ndarray
    within_validity: np.ndarray
    model: str
    acclimatised: bool


def altitude_factor(elevation: ArrayLike, acclimatised: bool = False,
                    reference_elevation: float = 0.0,
                    model: str = DEFAULT_ALTITUDE_MODEL) -> AltitudeFactor:
    """Factor on critical power (cycling) or critical speed (running) at each elevation [-].

    factor(z) = min(1, y(max(z, 0)) / y(max(z_ref, 0))),

    y the model's fraction of sea-level aerobic power, z_ref where the athlete's limits were
    measured. Running and cycling share the factor: both limits are aerobic.

    Parameters
    ----------
    elevation : float or array_like
        Elevation of each piece of the course [m].
    acclimatised : bool, optional
        Whether the athlete has lived at altitude for some weeks (default not) [-].
    reference_elevation : float, optional
        Elevation where critical power / speed was measured (default sea level) [m].
    model : str, optional
        A key of ALTITUDE_MODELS (default "bassett-1999") [-].

    Returns
    -------
    AltitudeFactor
        Factor per elevation (≤ 1) [-], where it lies within the model's validity.

    Raises
    ------
    pacing.errors.InputError
        For an unknown model, a model without an acclimatised curve when one is asked for,
        or elevations outside -500..9000 m.

    References
    ----------
    Bassett et al. (1999), Med Sci Sports Exerc 31(11):1665-1676; Wehrlin & Hallén (2006),
    Eur J Appl Physiol 96(4):404-412.

    Examples
    --------
    An athlete tested at sea level keeps 87.6 % of critical power at 2000 m, 91.8 % when
    acclimatised (Bassett et al. 1999):

    >>> altitude_factor([0.0, 2000.0]).factor.round(4).tolist()
    [1.0, 0.8756]
    >>> altitude_factor([0.0, 2000.0], acclimatised=True).factor.round(4).tolist()
    [1.0, 0.9183]
    """
    chosen = ALTITUDE_MODELS.resolve(model)
    fraction = chosen.acclimatised if acclimatised else chosen.unacclimatised
    if fraction is None:
        raise InputError(f"altitude model {chosen.key!r} describes athletes who are not "
                         f"acclimatised only; choose {DEFAULT_ALTITUDE_MODEL!r}")
    elevation = finite_array(elevation, "elevation")
    reference = finite_array(reference_elevation, "reference elevation")
    low, high = ELEVATION_RANGE
    for values in (elevation, reference):
        check_range(values, low, high, f"elevation must be between {low:g} and {high:g} m")
    at_piece = fraction(np.maximum(elevation, 0.0) / 1000.0)
    at_reference = fraction(np.maximum(reference, 0.0) / 1000.0)
    factor = np.minimum(at_piece / at_reference, 1.0)
    within = elevation <= chosen.validity_high_m
    return AltitudeFactor(factor=np.asarray(factor, dtype=float),
                          within_validity=np.asarray(within, dtype=bool),
                          model=chosen.key, acclimatised=bool(acclimatised))
