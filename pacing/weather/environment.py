"""The race's environment in one summary: heat stress and altitude along the course, and what
they take from the athlete's sustainable power (cycling) or speed (running).

`race_environment` takes the weather each piece of the course meets (temperature, humidity,
wind at 10 m, pressure at the piece), its elevation and the time spent on it, and returns an
`Environment`:

- WBGT per piece (pacing.weather.wbgt: Liljegren et al. 2008 with sun information, else the
  Bureau of Meteorology approximation, which assumes moderate sun and light wind, with a note);
- the heat factor on critical power / critical speed per piece (pacing.physiology.heat) and one
  for the race: the time-weighted mean of the pieces' factors, Σ tᵢ·fᵢ / Σ tᵢ (the share of the
  athlete's limit available on average over the time actually spent in each heat);
- the altitude factor per piece (pacing.physiology.altitude) and its time-weighted mean;
- the highest WBGT met and its heat-illness risk band (pacing.weather.heat_risk);
- notices: heat risk with the usual cautions, the size of both losses, models used outside
  their sources' ranges.

Sun information, in order of preference: `solar_irradiance` with `sun_elevation`; else
`cloud_cover` with `sun_elevation` (irradiance by Kasten & Czeplak 1980); else `sun_elevation`
alone (a clear sky, the hotter case); else none (the approximation).

References
----------
Liljegren et al. (2008), J Occup Environ Hyg 5(10):645-655; Racinais et al. (2015), Med Sci
Sports Exerc 47(3):601-606; Ely et al. (2007), Med Sci Sports Exerc 39(3):487-493; Bassett et
al. (1999), Med Sci Sports Exerc 31(11):1665-1676; Armstrong et al. (1996), Med Sci Sports
Exerc 28(12):i-x. docs/race_day_models.md.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.notices import Notice, note, warning
from pacing.physics.inputs import finite_array
from pacing.physiology.altitude import (
    ALTITUDE_MODELS,
    DEFAULT_ALTITUDE_MODEL,
    AltitudeFactor,
    altitude_factor,
)
from pacing.physiology.heat import HEAT_MODELS, HeatFactor, heat_factor
from pacing.weather.heat_risk import HEAT_RISK_BANDS, heat_risk_band
from pacing.weather.sun import irradiance_from_cloud_cover
from pacing.weather.wbgt import wbgt_bom_approximation, wbgt_liljegren

NOTICEABLE_LOSS = 0.0005
"""A factor below 1 − this is reported as a loss (0.05 %: a few seconds in hours) [-]."""


@dataclass(frozen=True, eq=False)
class Environment:
    """Heat and altitude along the course and their cost to the athlete's limits.

    Attributes
    ----------
    heat_power_factor : float
        Factor on critical power (cycling) or critical speed (running) for the race's heat,
        the time-weighted mean over the pieces, ≤ 1 [-].
    altitude_power_factor : float
        The same for altitude, ≤ 1 [-].
    heat_power_factor_per_piece : numpy.ndarray
        Heat factor on each piece, ≤ 1 [-].
    altitude_power_factor_per_piece : numpy.ndarray
        Altitude factor on each piece, ≤ 1 [-].
    wbgt : numpy.ndarray
        Wet-bulb globe temperature on each piece [°C].
    wbgt_max_c : float
        Highest WBGT met [°C].
    heat_category : str
        Key of pacing.weather.heat_risk.HEAT_RISK_BANDS for `wbgt_max_c` [-].
    heat_model, altitude_model, wbgt_method : str
        Keys of the models used [-].
    reference_wbgt_c : float or None
        WBGT where the athlete's limits were measured, by the race's WBGT method in the shade;
        the heat factors are relative to it; None: relative to no heat at all [°C].
    notices : tuple of pacing.notices.Notice
        What the user must hear (heat risk, losses, models stretched).
    """

    heat_power_factor: float
    altitude_power_factor: float
    heat_power_factor_per_piece: np.ndarray
    altitude_power_factor_per_piece: np.ndarray
    wbgt: np.ndarray
    wbgt_max_c: float
    heat_category: str
    heat_model: str
    altitude_model: str
    wbgt_method: str
    reference_wbgt_c: float | None = None
    notices: tuple[Notice, ...] = field(default=())

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready summary: factors, highest WBGT, heat category and the models' keys."""
        return {
            "heat_power_factor": float(self.heat_power_factor),
            "altitude_power_factor": float(self.altitude_power_factor),
            "wbgt_max_c": float(self.wbgt_max_c),
            "heat_category": self.heat_category,
            "heat_model": self.heat_model,
            "altitude_model": self.altitude_model,
            "wbgt_method": self.wbgt_method,
            "limits_measured_wbgt_c": (None if self.reference_wbgt_c is None
                                       else float(self.reference_wbgt_c)),
        }


def _weights(piece_time: ArrayLike) -> np.ndarray:
    """Time on each piece [s], checked: finite, ≥ 0, some > 0."""
    time = np.atleast_1d(finite_array(piece_time, "time on a piece"))
    if time.ndim != 1 or np.any(time < 0) or not np.sum(time) > 0:
        raise InputError("time on each piece must be ≥ 0 s with a positive total")
    return time


def _per_piece(value: ArrayLike, pieces: int, name: str) -> np.ndarray:
    """A scalar or per-piece input as an array of `pieces` values."""
    array = finite_array(value, name)
    try:
        return np.broadcast_to(array, (pieces,)).astype(float)
    except ValueError:
        raise InputError(f"{name} must be one value or one per piece ({pieces}), "
                         f"got {array.size}") from None


def _solar(pieces: int, solar_irradiance: ArrayLike | None, sun_elevation: ArrayLike | None,
           cloud_cover: ArrayLike | None) -> tuple[np.ndarray, np.ndarray] | None:
    """Irradiance [W/m²] and sun elevation [deg] per piece, or None without sun information."""
    if sun_elevation is None:
        if solar_irradiance is not None or cloud_cover is not None:
            raise InputError("the sun's elevation is needed with a solar irradiance or a "
                             "cloud cover")
        return None
    elevation = _per_piece(sun_elevation, pieces, "sun elevation")
    if solar_irradiance is not None:
        return _per_piece(solar_irradiance, pieces, "solar irradiance"), elevation
    cover = _per_piece(0.0 if cloud_cover is None else cloud_cover, pieces, "cloud cover")
    return irradiance_from_cloud_cover(elevation, cover), elevation


def _wbgt(weather: dict[str, np.ndarray], sun: tuple[np.ndarray, np.ndarray] | None,
          sun_distance: ArrayLike) -> tuple[np.ndarray, str]:
    """WBGT per piece [°C] and the key of the method used."""
    if sun is None:
        return (np.asarray(wbgt_bom_approximation(weather["temperature"],
                                                  weather["relative_humidity"]), dtype=float),
                "bom-approximation")
    irradiance, elevation = sun
    return (np.asarray(wbgt_liljegren(weather["temperature"], weather["relative_humidity"],
                                      weather["wind_speed"], weather["pressure"], irradiance,
                                      elevation, sun_distance=sun_distance), dtype=float),
            "liljegren-2008")


def race_environment(temperature: ArrayLike, relative_humidity: ArrayLike,
                     wind_speed: ArrayLike, pressure: ArrayLike, elevation: ArrayLike,
                     piece_time: ArrayLike, sport: str, *, heat_acclimatised: bool = False,
                     altitude_acclimatised: bool = False, reference_elevation: float = 0.0,
                     solar_irradiance: ArrayLike | None = None,
                     sun_elevation: ArrayLike | None = None,
                     cloud_cover: ArrayLike | None = None, sun_distance: ArrayLike = 1.0,
                     heat_model: str | None = None,
                     altitude_model: str = DEFAULT_ALTITUDE_MODEL,
                     reference_weather: tuple[float, float] | None = None) -> Environment:
    """Heat and altitude along the course: WBGT, factors on the athlete's limits, notices.

    Parameters
    ----------
    temperature : float or array_like
        Air temperature on each piece [°C].
    relative_humidity : float or array_like
        Relative humidity on each piece, 0..1 [-].
    wind_speed : float or array_like
        Ambient wind speed at 10 m on each piece (not the athlete's air speed) [m/s].
    pressure : float or array_like
        Air pressure at each piece's elevation [Pa].
    elevation : float or array_like
        Elevation of each piece [m].
    piece_time : array_like
        Time spent on each piece, the weights (≥ 0, positive total) [s].
    sport : str
        "cycling" (factors on critical power) or "running" (on critical speed) [-].
    heat_acclimatised : bool, optional
        About two weeks of training in the heat behind the athlete [-].
    altitude_acclimatised : bool, optional
        Some weeks at altitude behind the athlete [-].
    reference_elevation : float, optional
        Where critical power / speed was measured (default sea level) [m].
    solar_irradiance : float or array_like, optional
        Global horizontal irradiance on each piece [W/m²].
    sun_elevation : float or array_like, optional
        Sun's elevation on each piece (pacing.weather.sun.solar_elevation) [deg].
    cloud_cover : float or array_like, optional
        Share of the sky covered on each piece, 0..1 [-].
    sun_distance : float or array_like, optional
        Earth-sun distance (pacing.weather.sun.sun_distance; default 1) [AU].
    heat_model : str, optional
        Key of pacing.physiology.heat.HEAT_MODELS; None takes the sport's default [-].
    altitude_model : str, optional
        Key of pacing.physiology.altitude.ALTITUDE_MODELS [-].
    reference_weather : tuple of float, optional
        (temperature [°C], relative humidity [0..1]) where the athlete's limits were
        measured. The heat factor of each piece is then f(WBGT) / f(WBGT_test), at most 1,
        the test's WBGT by the race's method in the shade (`reference_wbgt`); None: the
        model's factor as it stands (relative to a cool day) [-].

    Returns
    -------
    Environment
        Factors (per piece and for the race), WBGT, heat category, models and notices.

    Raises
    ------
    pacing.errors.InputError
        One line naming the input that is wrong.

    Examples
    --------
    A 30 °C sunny hour at a 2000 m plateau, cyclist tested at sea level:

    >>> env = race_environment(30.0, 0.4, 2.0, 80000.0, [2000.0, 2000.0], [1800.0, 1800.0],
    ...                        "cycling", solar_irradiance=800.0, sun_elevation=60.0)
    >>> env.heat_category, round(env.wbgt_max_c, 1), round(env.heat_power_factor, 3)
    ('high', 27.4, 0.845)
    >>> round(env.altitude_power_factor, 4)
    0.8756
    """
    time = _weights(piece_time)
    pieces = time.size
    weather = {name: _per_piece(value, pieces, name.replace("_", " ")) for name, value in (
        ("temperature", temperature), ("relative_humidity", relative_humidity),
        ("wind_speed", wind_speed), ("pressure", pressure), ("elevation", elevation))}
    sun = _solar(pieces, solar_irradiance, sun_elevation, cloud_cover)
    wbgt, method = _wbgt(weather, sun, sun_distance)
    heat = heat_factor(wbgt, sport, heat_acclimatised, heat_model)
    reference = None
    if reference_weather is not None:
        reference = reference_wbgt(reference_weather, method, weather, time)
        heat = relative_heat_factor(heat, heat_factor(reference, sport, heat_acclimatised,
                                                      heat_model))
    altitude = altitude_factor(weather["elevation"], altitude_acclimatised,
                               reference_elevation, altitude_model)
    wbgt_max = float(np.max(wbgt))
    environment = Environment(  # Σ tᵢ·fᵢ / Σ tᵢ: exactly 1 when every fᵢ is 1
        heat_power_factor=float(np.sum(time * heat.factor) / np.sum(time)),
        altitude_power_factor=float(np.sum(time * altitude.factor) / np.sum(time)),
        heat_power_factor_per_piece=heat.factor,
        altitude_power_factor_per_piece=altitude.factor,
        wbgt=wbgt, wbgt_max_c=wbgt_max, heat_category=heat_risk_band(wbgt_max),
        heat_model=heat.model, altitude_model=altitude.model, wbgt_method=method,
        reference_wbgt_c=reference)
    notices = environment_notices(environment, heat, altitude, weather["elevation"], sport,
                                  heat_acclimatised)
    return Environment(**{**environment.__dict__, "notices": notices})


def reference_wbgt(reference_weather: tuple[float, float], method: str,
                   weather: dict[str, np.ndarray], piece_time: np.ndarray) -> float:
    """WBGT where the athlete's limits were measured, by the race's method, in the shade [°C].

    The Bureau of Meteorology approximation takes temperature and humidity only; Liljegren
    et al. (2008) takes them with no sun (irradiance 0), the race's time-weighted wind speed
    and pressure.

    Parameters
    ----------
    reference_weather : tuple of float
        Temperature [°C] and relative humidity [0..1] of the test.
    method : str
        Key of the race's WBGT method [-].
    weather : dict of numpy.ndarray
        The race's per-piece "wind_speed" [m/s at 10 m] and "pressure" [Pa].
    piece_time : numpy.ndarray
        Time on each piece, the weights [s].

    Returns
    -------
    float
        WBGT of the test [°C].

    Examples
    --------
    20 °C and 50 % by the approximation: 0.567·20 + 0.393·11.65 + 3.94:

    >>> round(reference_wbgt((20.0, 0.5), "bom-approximation", {}, np.ones(1)), 2)
    19.86
    """
    temperature, humidity = reference_weather
    if method == "bom-approximation":
        return float(wbgt_bom_approximation(temperature, humidity))
    share = piece_time / np.sum(piece_time)
    return float(wbgt_liljegren(temperature, humidity, float(np.sum(share * weather["wind_speed"])),
                                float(np.sum(share * weather["pressure"])), 0.0, 90.0))


def relative_heat_factor(race: HeatFactor, test: HeatFactor) -> HeatFactor:
    """The race's heat factors relative to the test's, at most 1 [-]:
    f_race / f_test, min 1."""
    factor = np.minimum(race.factor / np.asarray(test.factor, dtype=float), 1.0)
    return HeatFactor(factor=factor, within_validity=race.within_validity, model=race.model,
                      quantity=race.quantity)


def environment_notices(environment: Environment, heat: HeatFactor, altitude: AltitudeFactor,
                        elevation: np.ndarray, sport: str,
                        heat_acclimatised: bool) -> tuple[Notice, ...]:
    """The notices of an environment: heat risk, losses, models outside their sources' ranges.

    Parameters
    ----------
    environment : Environment
        The summary (its own notices are ignored).
    heat : pacing.physiology.heat.HeatFactor
        The heat factors per piece.
    altitude : pacing.physiology.altitude.AltitudeFactor
        The altitude factors per piece.
    elevation : numpy.ndarray
        Elevation of each piece [m].
    sport : str
        "cycling" or "running" [-].
    heat_acclimatised : bool
        Whether the athlete was said to be heat-acclimatised [-].

    Returns
    -------
    tuple of pacing.notices.Notice
        Warnings first, then notes.
    """
    found: list[Notice] = []
    band = HEAT_RISK_BANDS[environment.heat_category]
    if band.caution:
        made = warning if band.warns else note
        found.append(made("heat-risk", wbgt_max_c=environment.wbgt_max_c,
                           category=band.key, flag=band.flag))
    heat_model = HEAT_MODELS[heat.model]
    if not np.all(heat.within_validity):
        found.append(warning("heat-model-outside-validity", model=heat.model,
                             wbgt_c=environment.wbgt_max_c,
                             low_c=heat_model.validity_c[0], high_c=heat_model.validity_c[1]))
    altitude_model = ALTITUDE_MODELS[altitude.model]
    if not np.all(altitude.within_validity):
        found.append(warning("altitude-model-outside-validity", model=altitude.model,
                             elevation_m=float(np.max(elevation)),
                             high_m=altitude_model.validity_high_m))
    if environment.heat_power_factor < 1.0 - NOTICEABLE_LOSS:
        found.append(note("heat-power-loss", factor=environment.heat_power_factor,
                          model=heat.model, sport=sport, quantity=heat.quantity,
                          acclimatised=bool(heat_acclimatised)))
    if heat_acclimatised and not heat_model.acclimatisation_modelled:
        found.append(note("heat-acclimatisation-not-modelled", model=heat.model))
    if environment.altitude_power_factor < 1.0 - NOTICEABLE_LOSS:
        found.append(note("altitude-power-loss", factor=environment.altitude_power_factor,
                          model=altitude.model, acclimatised=altitude.acclimatised,
                          sport=sport))
    if environment.wbgt_method == "bom-approximation":
        found.append(note("wbgt-without-sun", method=environment.wbgt_method))
    return tuple(sorted(found, key=lambda notice: notice.level != "warning"))
