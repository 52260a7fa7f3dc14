"""Heat-illness risk by WBGT: the bands of a published scheme for distance races.

The bands are data (`HEAT_RISK_BANDS`); the advice that goes with each (hydration, cooling,
the organiser's heat policy and medical staff first) is in words at the edges
(pacing.display.weather_words). A WBGT comes from pacing.weather.wbgt.

References
----------
Armstrong, L.E., Epstein, Y., Greenleaf, J.E., Haymes, E.M., Hubbard, R.W., Roberts, W.O. &
Thompson, P.D. (1996). ACSM position stand: heat and cold illnesses during distance running.
Med Sci Sports Exerc 28(12):i-x. doi:10.1097/00005768-199610000-00050
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.physics.inputs import finite_array
from pacing.physics.registry import ModelRegistry


@dataclass(frozen=True)
class HeatRiskBand:
    """A band of WBGT and the risk of exertional heat illness it carries.

    Attributes
    ----------
    key : registry key, our own plain word [-].
    low_c : lowest WBGT of the band (inclusive) [°C].
    high_c : highest WBGT of the band (exclusive; infinity for the last) [°C].
    flag : the flag colour of the source's scheme [-].
    caution : True where the race's notices must speak of the heat [-].
    warns : True where that caution is a warning; False: a note (the amber band, met on a
        mild day in the shade estimate, is said without alarm) [-].
    """

    key: str
    low_c: float
    high_c: float
    flag: str
    caution: bool
    warns: bool = False


HEAT_RISK_BANDS: ModelRegistry[HeatRiskBand] = ModelRegistry(
    {
        "cool": HeatRiskBand("cool", -np.inf, 10.0, "white", False),
        "low": HeatRiskBand("low", 10.0, 18.0, "green", False),
        "moderate": HeatRiskBand("moderate", 18.0, 23.0, "amber", True),
        "high": HeatRiskBand("high", 23.0, 28.0, "red", True, warns=True),
        "extreme": HeatRiskBand("extreme", 28.0, np.inf, "black", True, warns=True),
    },
    what="heat risk band",
)
"""WBGT bands for distance races, ACSM position stand (Armstrong et al. 1996): white < 10 °C
(heat risk low, hypothermia possible), green 10-18, amber 18-23, red 23-28, black ≥ 28 °C
(extreme risk: the organiser's heat policy may delay or cancel)."""


def heat_risk_band(wbgt: float) -> str:
    """Key of the HEAT_RISK_BANDS band a WBGT falls in [-].

    Parameters
    ----------
    wbgt : float
        Wet-bulb globe temperature [°C].

    Returns
    -------
    str
        "cool", "low", "moderate", "high" or "extreme" [-].

    References
    ----------
    Armstrong et al. (1996), ACSM position stand, Med Sci Sports Exerc 28(12):i-x.

    Examples
    --------
    >>> [heat_risk_band(w) for w in (8.0, 18.0, 22.9, 27.99, 31.0)]
    ['cool', 'moderate', 'moderate', 'high', 'extreme']
    """
    value = float(finite_array(wbgt, "WBGT"))
    for band in HEAT_RISK_BANDS.values():
        if band.low_c <= value < band.high_c:
            return band.key
    raise AssertionError("the bands cover every finite WBGT")
