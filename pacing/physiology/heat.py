"""Heat and sustainable power or speed: the fraction of critical power (cycling) or critical
speed (running) an athlete keeps under heat stress, acclimatised or not.

Heat stress is measured by the wet-bulb globe temperature (WBGT, pacing.weather.wbgt), which
weighs air temperature, humidity, sun and wind. Each model is a published pair of conditions
(or table) turned into a loss that grows linearly with WBGT between its points, no loss below
the first point (the cool reference) and the last slope continued above the last point (with
a notice: outside the source's range). Models (`HEAT_MODELS`, docs/race_day_models.md, "Heat"):

- "racinais-2015" (cycling, factor on critical power): a 43.4-km outdoor time trial of trained
  cyclists at about 37 °C (28 °C WBGT, Junge et al. 2016) against about 8 °C: mean power 16 %
  lower on the first day in the heat, 2 % after two weeks of acclimatisation (Junge et al.
  2016, Table 1, from Racinais et al. 2015, whose finishing times were 77 and 66 min against
  66 min in the cool);
- "ely-2007" (running, factor on critical speed): marathon results of the top three men
  against the course record by WBGT quartile, 5-25 °C: 1.7, 2.5, 3.3 and 4.5 % slower for
  quartiles centred on 7.55, 12.55, 17.55 and 22.55 °C (Ely et al. 2007). Acclimatisation is
  not reported there: the same curve serves both (a note says so); slower runners lost more.

References
----------
Racinais, S., Périard, J.D., Karlsen, A. & Nybo, L. (2015). Effect of heat and heat
acclimatization on cycling time trial performance and pacing. Med Sci Sports Exerc
47(3):601-606. doi:10.1249/MSS.0000000000000428
Junge, N., Jørgensen, R., Flouris, A.D. & Nybo, L. (2016). Prolonged self-paced exercise in the
heat - environmental factors affecting performance. Temperature 3(4):539-548.
doi:10.1080/23328940.2016.1216257
Ely, M.R., Cheuvront, S.N., Roberts, W.O. & Montain, S.J. (2007). Impact of weather on
marathon-running performance. Med Sci Sports Exerc 39(3):487-493.
doi:10.1249/mss.0b013e31802d3aba
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.physics.inputs import check_range, finite_array
from pacing.physics.registry import ModelRegistry

SPORTS = ("cycling", "running")
"""The sports a heat model is written for."""

WBGT_RANGE = (-30.0, 50.0)
"""WBGT values accepted [°C]; beyond them the input is surely a mistake."""


@dataclass(frozen=True)
class HeatModel:
    """A published relation between heat stress and the loss of sustainable power or speed.

    Attributes
    ----------
    key : registry key [-].
    sport : "cycling" or "running" [-].
    quantity : "power" (factor on critical power) or "speed" (on critical speed) [-].
    source : the publication [-].
    wbgt_c : WBGT of the model's points, increasing [°C].
    loss_unacclimatised : loss of the limit at each point, athletes not acclimatised [-].
    loss_acclimatised : the same after acclimatisation [-].
    validity_c : WBGT range the source covers, low and high [°C].
    acclimatisation_modelled : False when the source does not separate acclimatised athletes.
    """

    key: str
    sport: str
    quantity: str
    source: str
    wbgt_c: tuple[float, ...]
    loss_unacclimatised: tuple[float, ...]
    loss_acclimatised: tuple[float, ...]
    validity_c: tuple[float, float]
    acclimatisation_modelled: bool = True


RACINAIS_2015_WBGT = (8.0, 28.0)
"""WBGT of the cool and the hot time trial [°C]: the cool trials at about 8 °C air (dry and cool,
so WBGT about the air temperature: our assumption), the hot one 28 °C WBGT (the outdoor trials
at 36 °C, 28 °C WBGT, of Junge et al. 2016's abstract: our reading of which study it means)."""

RACINAIS_2015_POWER_DEFICIT = {"unacclimatised": 0.16, "acclimatised": 0.02}
"""Mean power lost in the hot time trial against the cool one, day 1 and after 14 days in the
heat (Junge et al. 2016, Table 1, from Racinais et al. 2015) [-]."""

ELY_2007_QUARTILE_CENTRES = (7.55, 12.55, 17.55, 22.55)
"""Centres of the WBGT quartiles 5.1-10, 10.1-15, 15.1-20 and 20.1-25 °C (Ely et al. 2007) [°C]."""

ELY_2007_TOP_MEN_SLOWER = (0.017, 0.025, 0.033, 0.045)
"""Top three men slower than the course record, per quartile (Ely et al. 2007, abstract) [-]."""


def ely_2007_speed_loss() -> tuple[float, ...]:
    """Loss of speed against the coolest quartile, 1 − (1 + d₁)/(1 + d) [-].

    A time d slower than the record is a speed 1/(1 + d) of the record's; relative to the
    coolest quartile (the reference, no loss) the speed kept is (1 + d₁)/(1 + d).

    Returns
    -------
    tuple of float
        Loss at each quartile centre, 0 at the first [-].

    Examples
    --------
    >>> [round(x, 6) for x in ely_2007_speed_loss()]
    [0.0, 0.007805, 0.015489, 0.026794]
    """
    first = ELY_2007_TOP_MEN_SLOWER[0]
    return tuple(1.0 - (1.0 + first) / (1.0 + slower) for slower in ELY_2007_TOP_MEN_SLOWER)


HEAT_MODELS: ModelRegistry[HeatModel] = ModelRegistry(
    {
        "racinais-2015": HeatModel(
            "racinais-2015", "cycling", "power",
            "Racinais et al. (2015), Med Sci Sports Exerc 47(3):601-606; power deficits as "
            "tabulated by Junge et al. (2016), Temperature 3(4):539-548",
            RACINAIS_2015_WBGT,
            (0.0, RACINAIS_2015_POWER_DEFICIT["unacclimatised"]),
            (0.0, RACINAIS_2015_POWER_DEFICIT["acclimatised"]),
            RACINAIS_2015_WBGT),
        "ely-2007": HeatModel(
            "ely-2007", "running", "speed",
            "Ely et al. (2007), Med Sci Sports Exerc 39(3):487-493 (top three men)",
            ELY_2007_QUARTILE_CENTRES, ely_2007_speed_loss(), ely_2007_speed_loss(),
            (5.0, 25.0), acclimatisation_modelled=False),
    },
    what="heat model",
)
"""Published models of heat stress against sustainable power or speed."""

DEFAULT_HEAT_MODELS = {"cycling": "racinais-2015", "running": "ely-2007"}
"""The model for each sport unless another is asked for."""


@dataclass(frozen=True)
class HeatFactor:
    """The factor on critical power / critical speed at each WBGT.

    Attributes
    ----------
    factor : numpy.ndarray
        Fraction of the athlete's limit kept, 0 < factor ≤ 1 [-].
    within_validity : numpy.ndarray
        True where the WBGT lies in the model's range (or below it: no loss) [-].
    model : str
        Key of HEAT_MODELS [-].
    quantity : str
        "power" (critical power) or "speed" (critical speed) [-].
    """

    factor: np.ndarray
    within_validity: np.ndarray
    model: str
    quantity: str


MINIMUM_FACTOR = 0.5
"""Lowest factor returned [-]: a linear model continued far above its range would reach zero;
beyond about 40 °C WBGT no race is held and the notice of the range already warns."""


def loss_at(wbgt: np.ndarray, points: tuple[float, ...], losses: tuple[float, ...]) -> np.ndarray:
    """Loss interpolated linearly between points, 0 below, last slope continued above [-].

    Parameters
    ----------
    wbgt : numpy.ndarray
        Wet-bulb globe temperature [°C].
    points : tuple of float
        WBGT of the model's points, increasing [°C].
    losses : tuple of float
        Loss at each point, the first 0 [-].

    Returns
    -------
    numpy.ndarray
        Loss [-], the shape of `wbgt`.

    Examples
    --------
    >>> loss_at(np.array([0.0, 18.0, 38.0]), (8.0, 28.0), (0.0, 0.16)).round(3).tolist()
    [0.0, 0.08, 0.24]
    """
    inside = np.interp(wbgt, points, losses)
    slope = (losses[-1] - losses[-2]) / (points[-1] - points[-2])
    above = losses[-1] + slope * (wbgt - points[-1])
    return np.where(wbgt > points[-1], above, inside)


def heat_factor(wbgt: ArrayLike, sport: str, acclimatised: bool = False,
                model: str | None = None) -> HeatFactor:
    """Factor on critical power (cycling) or critical speed (running) under heat stress [-].

    factor = max(1 − loss(WBGT), 0.5), loss linear between the model's points (see the
    module's docstring), 0 at and below the cool reference.

    Parameters
    ----------
    wbgt : float or array_like
        Wet-bulb globe temperature, e.g. per piece of the course [°C].
    sport : str
        "cycling" or "running" [-].
    acclimatised : bool, optional
        Whether the athlete is heat-acclimatised (about two weeks of training in the heat)
        [-].
    model : str, optional
        A key of HEAT_MODELS for `sport`; None takes DEFAULT_HEAT_MODELS[sport] [-].

    Returns
    -------
    HeatFactor
        Factor per value (≤ 1), within the model's range or not, model key and quantity.

    Raises
    ------
    pacing.errors.InputError
        For an unknown sport or model, a model of the other sport, or a WBGT outside
        -30..50 °C.

    References
    ----------
    Racinais et al. (2015), Med Sci Sports Exerc 47(3):601-606; Junge et al. (2016),
    Temperature 3(4):539-548; Ely et al. (2007), Med Sci Sports Exerc 39(3):487-493.

    Examples
    --------
    A cyclist not acclimatised keeps 92 % of critical power at 18 °C WBGT, 99 % when
    acclimatised; a runner 98.45 % of critical speed at 17.55 °C:

    >>> heat_factor([5.0, 18.0], "cycling").factor.round(3).tolist()
    [1.0, 0.92]
    >>> float(heat_factor(18.0, "cycling", acclimatised=True).factor.round(3))
    0.99
    >>> float(heat_factor(17.55, "running").factor.round(4))
    0.9845
    """
    if sport not in SPORTS:
        raise InputError(f"sport must be one of {', '.join(SPORTS)}, got {sport!r}")
    chosen = HEAT_MODELS.resolve(model or DEFAULT_HEAT_MODELS[sport])
    if chosen.sport != sport:
        raise InputError(f"heat model {chosen.key!r} is written for {chosen.sport}, "
                         f"not {sport}")
    wbgt = finite_array(wbgt, "WBGT")
    low, high = WBGT_RANGE
    check_range(wbgt, low, high, f"WBGT must be between {low:g} and {high:g} °C")
    losses = chosen.loss_acclimatised if acclimatised else chosen.loss_unacclimatised
    factor = np.maximum(1.0 - loss_at(wbgt, chosen.wbgt_c, losses), MINIMUM_FACTOR)
    return HeatFactor(factor=np.asarray(factor, dtype=float),
                      within_validity=np.asarray(wbgt <= chosen.validity_c[1], dtype=bool),
                      model=chosen.key, quantity=chosen.quantity)
