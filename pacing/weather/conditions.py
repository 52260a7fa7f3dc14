"""The weather on race day and the air it makes along a course.

`Conditions` holds what a coach reads off a forecast (temperature, humidity, sea-level pressure,
wind). `air_along_course` turns it into what the power balance needs on every piece of a
course: air density, headwind and crosswind (pacing.physics.cycling.air_speed_components combines
them with the rider's speed into the apparent wind and yaw).

Per piece (length N-1, see pacing.course.geometry):

- elevation: mean of the piece's two end points;
- pressure: ICAO standard atmosphere from the sea-level pressure
(pacing.physics.atmosphere.standard_pressure);
- temperature: given at the start's elevation (course.elevation[0]), following the standard
  lapse rate 6.5 K/km elsewhere (pacing.physics.atmosphere.temperature_at_elevation);
- density: humid air by CIPM-2007 (or another model of pacing.physics.air.AIR_DENSITY_MODELS);
- wind: reduced from its measurement height to the rider's height by the log wind profile
  (pacing.physics.wind.wind_at_height), split by the piece's heading
  (pacing.physics.wind.wind_components).

References
----------
ICAO (1993), Doc 7488/3; Picard et al. (2008), Metrologia 45:149-155; Wieringa (1992), J Wind
Eng Ind Aerodyn 41:357-368. Check values: docs/references.md, "Air" and "Wind".
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from pacing.errors import InputError
from pacing.physics.air import AIR_DENSITY_MODELS, DEFAULT_AIR_DENSITY_MODEL
from pacing.physics.atmosphere import standard_pressure, temperature_at_elevation
from pacing.physics.inputs import TEMPERATURE_RANGE
from pacing.physics.wind import wind_at_height, wind_components

if TYPE_CHECKING:
    from pacing.course.geometry import Course
    from pacing.weather.timeline import WeatherAt

SEA_LEVEL_PRESSURE_RANGE = (85000.0, 110000.0)
"""Sea-level pressures accepted [Pa]. Recorded extremes lie near 87 and 108.4 kPa (common
practice); the range also catches a value typed in hPa or kPa."""

WIND_SPEED_LIMIT = 60.0
"""Largest wind speed accepted [m/s]: no race is held in more."""


WIND_HEIGHT_RANGE = (0.5, 200.0)
"""Heights at which a wind speed is accepted [m]: from a hand-held anemometer to a tall mast
(the logarithmic profile is not meant for the layer just above the ground)."""

ROUGHNESS_LENGTH_RANGE = (0.0001, 2.0)
"""Roughness lengths accepted [m]: from calm open water to the roughest Davenport-Wieringa class
("chaotic", z0 ≥ 2 m; Wieringa 1992)."""


PRESSURE_KINDS = ("qnh", "mslp", "station")
"""What Conditions.sea_level_pressure holds: "qnh" (reduced to sea level by the standard
atmosphere, the altimeter setting; carried back by the ICAO ratio, as always), "mslp"
(mean-sea-level pressure as weather services publish it, reduced with the actual temperature)
or "station" (measured at the start's elevation)."""

STATION_PRESSURE_RANGE = (45000.0, 110000.0)
"""Station pressures accepted [Pa]: up to about 6000 m above sea level (ICAO: 47.2 kPa)."""

NUMBER_FIELDS = ("temperature", "relative_humidity", "sea_level_pressure", "wind_speed",
                 "wind_from", "wind_height", "roughness_length", "rider_height")
"""The fields of Conditions, all numbers."""


@dataclass(frozen=True)
class Conditions:
    """The air on race day.

    Attributes
    ----------
    temperature : float
        Air temperature at the start's elevation, -60..60 [°C].
    relative_humidity : float
        Relative humidity as a fraction 0..1 (50 % = 0.5) [-].
    sea_level_pressure : float
        Air pressure reduced to sea level (forecasts give it in hPa: 1013.25 hPa = 101325 Pa)
        [Pa].
    wind_speed : float
        Mean wind speed at wind_height, ≥ 0 [m/s].
    wind_from : float
        Direction the wind blows FROM [deg clockwise from north].
    wind_height : float
        Height of the wind measurement (10 m for weather reports) [m].
    roughness_length : float
        Terrain roughness length z0 (pacing.physics.wind.ROUGHNESS_LENGTHS; 0.03 m = open
        grassland) [m].
    rider_height : float
        Height where the wind acts on the rider, about the middle of the body [m].
    pressure_kind : str
        What `sea_level_pressure` holds (PRESSURE_KINDS): "qnh" (default, as always),
        "mslp" or "station" (then it is the pressure at the start's elevation) [-].
    """

    temperature: float = 20.0
    relative_humidity: float = 0.5
    sea_level_pressure: float = 101325.0
    wind_speed: float = 0.0
    wind_from: float = 0.0
    wind_height: float = 10.0
    roughness_length: float = 0.03
    rider_height: float = 1.0
    pressure_kind: str = "qnh"

    def __post_init__(self) -> None:
        self._check_numbers()
        self._check_air()
        self._check_wind()

    def _check_numbers(self) -> None:
        for name in NUMBER_FIELDS:
            value = getattr(self, name)
            try:
                number = float(value)
            except (TypeError, ValueError):
                raise InputError(f"{name.replace('_', ' ')} must be a number, got {value!r}") \
                    from None
            if not np.isfinite(number):
                raise InputError(f"{name.replace('_', ' ')} must be a finite number")

    def _check_air(self) -> None:
        low, high = TEMPERATURE_RANGE
        _require(low <= self.temperature <= high,
                 f"temperature must be between {low:g} and {high:g} °C, got {self.temperature:g}")
        _require(0.0 <= self.relative_humidity <= 1.0,
                 f"relative humidity must be 0-100 %, got {100 * self.relative_humidity:g} % "
                 f"(fraction {self.relative_humidity:g})")
        _require(self.pressure_kind in PRESSURE_KINDS,
                 f"unknown pressure kind {self.pressure_kind!r}; choose one of "
                 f"{', '.join(PRESSURE_KINDS)}")
        station = self.pressure_kind == "station"
        low, high = STATION_PRESSURE_RANGE if station else SEA_LEVEL_PRESSURE_RANGE
        _require(low <= self.sea_level_pressure <= high,
                 f"{'station' if station else 'sea-level'} pressure must be between {low:g} "
                 f"and {high:g} Pa (1013 hPa = 101300 Pa), got {self.sea_level_pressure:g}")

    def _check_wind(self) -> None:
        _require(0.0 <= self.wind_speed <= WIND_SPEED_LIMIT,
                 f"wind speed must be between 0 and {WIND_SPEED_LIMIT:g} m/s, "
                 f"got {self.wind_speed:g}")
        _require(0.0 <= self.wind_from <= 360.0,
                 f"wind direction must be 0-360 degrees from north, got {self.wind_from:g}")
        low, high = WIND_HEIGHT_RANGE
        _require(low <= self.wind_height <= high,
                 f"wind measurement height must be {low:g}-{high:g} m (weather reports use "
                 f"10 m), got {self.wind_height:g}")
        low, high = ROUGHNESS_LENGTH_RANGE
        _require(low <= self.roughness_length <= high,
                 f"roughness length must be {low:g}-{high:g} m (open terrain 0.03 m), "
                 f"got {self.roughness_length:g}")
        _require(self.roughness_length < self.wind_height,
                 f"the wind must be measured above the roughness length "
                 f"({self.roughness_length:g} m), got {self.wind_height:g} m")
        _require(0.3 <= self.rider_height <= 3.0,
                 f"rider height must be 0.3-3 m, got {self.rider_height:g}")

    @property
    def wind_at_rider(self) -> float:
        """Wind speed reduced to rider_height by the log wind profile [m/s].

        Examples
        --------
        5 m/s at 10 m over open grassland is 5·ln(1/0.03)/ln(10/0.03) = 3.018 m/s at 1 m:

        >>> Conditions(wind_speed=5.0).wind_at_rider
        3.018
        """
        return float(
            wind_at_height(self.wind_speed, self.wind_height, self.rider_height,
                           self.roughness_length)
        )


def _require(condition: bool, message: str) -> None:
    if not condition:
        raise InputError(message)


@dataclass(frozen=True, eq=False)
class CourseAir:
    """The air on every piece of a course (arrays of length N-1).

    Attributes
    ----------
    density : numpy.ndarray
        Air density [kg/m³].
    headwind : numpy.ndarray
        Wind component against the direction of travel (negative = tailwind) [m/s].
    crosswind : numpy.ndarray
        Wind component across the direction of travel (positive = from the rider's right)
        [m/s].
    """

    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray

    def __post_init__(self) -> None:
        shapes = {np.shape(self.density), np.shape(self.headwind), np.shape(self.crosswind)}
        if len(shapes) != 1:
            raise ValueError(f"density, headwind and crosswind differ in shape: {shapes}")


def piece_elevation(course: Course) -> np.ndarray:
    """Elevation of each piece: the mean of its end points [m].

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (elevation per point [m]).

    Returns
    -------
    numpy.ndarray
        Elevation of each piece, length N-1 [m].

    Examples
    --------
    >>> from pacing.course.geometry import synthetic_course
    >>> piece_elevation(synthetic_course([0.0, 500.0, 1000.0], [100.0, 125.0, 120.0])).tolist()
    [112.5, 122.5]
    """
    elevation = np.asarray(course.elevation, dtype=float)
    return 0.5 * (elevation[:-1] + elevation[1:])


def density_along(elevation: np.ndarray, start_elevation: float, conditions: Conditions,
                  density_model: str = DEFAULT_AIR_DENSITY_MODEL) -> np.ndarray:
    """Air density at elevations along a course or a ride, from the day's conditions.

    Pressure by the ICAO standard atmosphere from the sea-level pressure; temperature given at
    `start_elevation` and following the standard lapse rate elsewhere, kept within
    TEMPERATURE_RANGE (the user's own temperature is checked strictly by Conditions: a start
    at the documented bound, 60 °C, must not be refused for 60.0003 °C a few metres lower);
    humid-air density by the chosen model.

    Parameters
    ----------
    elevation : numpy.ndarray
        Elevation of each piece [m].
    start_elevation : float
        Where the conditions' temperature is given [m].
    conditions : Conditions
        The day's air.
    density_model : str
        Key of pacing.physics.air.AIR_DENSITY_MODELS.

    Returns
    -------
    numpy.ndarray
        Density of each piece [kg/m³].

    References
    ----------
    ICAO (1993), Doc 7488/3; Picard et al. (2008), Metrologia 45:149-155.
    """
    model = AIR_DENSITY_MODELS.resolve(density_model)
    pressure = conditions_pressure(elevation, start_elevation, conditions)
    temperature = np.clip(temperature_at_elevation(elevation, conditions.temperature,
                                                   start_elevation), *TEMPERATURE_RANGE)
    return np.asarray(model(temperature, pressure, conditions.relative_humidity), dtype=float)


def conditions_pressure(elevation: np.ndarray, start_elevation: float,
                        conditions: Conditions) -> np.ndarray:
    """Pressure at elevations from the Conditions' single pressure of its kind [Pa].

    "qnh": the ICAO standard atmosphere scaled by the sea-level pressure (as always); "mslp"
    and "station": the hypsometric equation with the day's temperature at the start
    (`pressure_along`).

    Parameters
    ----------
    elevation : numpy.ndarray
        Elevations [m].
    start_elevation : float
        Where the temperature (and a station pressure) is given [m].
    conditions : Conditions
        The day's air.

    Returns
    -------
    numpy.ndarray
        Pressure at each elevation [Pa].
    """
    if conditions.pressure_kind == "qnh":
        return np.asarray(standard_pressure(elevation, conditions.sea_level_pressure),
                          dtype=float)
    kind = "station" if conditions.pressure_kind == "station" else "sea-level"
    return pressure_along(elevation, start_elevation,
                          np.full(np.shape(elevation), conditions.sea_level_pressure), kind,
                          np.full(np.shape(elevation), conditions.temperature),
                          conditions.relative_humidity)


def air_along_course(course: Course, conditions: Conditions,
                     density_model: str = DEFAULT_AIR_DENSITY_MODEL) -> CourseAir:
    """Air density and wind components on every piece of a course.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (elevation per point [m], heading per piece [deg]).
    conditions : Conditions
        The weather.
    density_model : str, optional
        A key of pacing.physics.air.AIR_DENSITY_MODELS: "cipm-2007" (default) or "ideal-gas";
        the old spellings "cipm_2007" and "ideal_gas" are accepted [-].

    Returns
    -------
    CourseAir
        Density [kg/m³], headwind and crosswind [m/s], each of length N-1.

    Raises
    ------
    pacing.errors.InputError
        Where the air is out of the models' range (e.g. a point above the troposphere), or for
        an unknown density model.

    References
    ----------
    ICAO (1993), Doc 7488/3; Picard et al. (2008), Metrologia 45:149-155; Stull (1988), ch. 9.

    Examples
    --------
    At sea level with the default weather (20 °C, 50 %, 101 325 Pa) every piece has the
    CIPM-2007 density 1.19931 kg/m³; a 5 m/s north wind at 10 m blows 3.018 m/s against a rider
    heading north 1 m above open grassland:

    >>> from pacing.course.geometry import synthetic_course
    >>> course = synthetic_course([0.0, 500.0, 1000.0], [0.0, 0.0, 0.0], heading=0.0)
    >>> air = air_along_course(course, Conditions(wind_speed=5.0, wind_from=0.0))
    >>> air.density.round(5).tolist(), air.headwind.round(3).tolist()
    ([1.19931, 1.19931], [3.018, 3.018])
    """
    density = density_along(piece_elevation(course), float(course.elevation[0]), conditions,
                            density_model)
    headwind, crosswind = wind_components(
        np.asarray(course.heading, dtype=float), conditions.wind_from, conditions.wind_at_rider
    )
    return CourseAir(
        density=np.asarray(density, dtype=float),
        headwind=np.asarray(headwind, dtype=float),
        crosswind=np.asarray(crosswind, dtype=float),
    )


def still_air(course: Course, density: float | None = None) -> CourseAir:
    """No wind on any piece, and a given density or that of the default Conditions.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course.
    density : float, optional
        Air density on every piece; None means the density of `Conditions()` (20 °C at the
        start, 50 % humidity, standard pressure) along the course's elevations [kg/m³].

    Returns
    -------
    CourseAir
        Density [kg/m³] and zero wind [m/s] on every piece.

    Examples
    --------
    >>> from pacing.course.geometry import synthetic_course
    >>> air = still_air(synthetic_course([0.0, 500.0, 1000.0], [0.0, 0.0, 0.0]), 1.2)
    >>> air.density.tolist(), air.headwind.tolist()
    ([1.2, 1.2], [0.0, 0.0])
    """
    pieces = np.asarray(course.elevation).size - 1
    if density is None:
        values = air_along_course(course, Conditions()).density
    else:
        if not (np.isfinite(density) and density > 0):
            raise InputError(f"air density must be positive [kg/m³], got {density!r}")
        values = np.full(pieces, float(density))
    zeros = np.zeros(pieces)
    return CourseAir(density=values, headwind=zeros, crosswind=zeros.copy())


def pressure_along(elevation: np.ndarray, start_elevation: float, pressure: np.ndarray,
                   kind: str, start_temperature: np.ndarray,
                   relative_humidity: np.ndarray | float = 0.0) -> np.ndarray:
    """Pressure at each piece's elevation from a weather table's pressure of its kind [Pa].

    The one place where a weather table's pressure is carried to the course, with the day's
    temperature (pacing.physics.atmosphere, hypsometric equation):

    - "sea-level": mean-sea-level pressure as national weather services publish it (MSLP,
      reduced with the actual temperature), `pressure_from_sea_level(kind="mslp")`;
    - "station": measured at the start's elevation, `pressure_from_station`.

    The single weather of Conditions keeps the ICAO ratio (the altimeter setting QNH), as it
    always did.

    Parameters
    ----------
    elevation : numpy.ndarray
        Elevation of each piece [m].
    start_elevation : float
        Where the temperature (and a station pressure) is measured [m].
    pressure : numpy.ndarray
        The pressure at each piece's moment, of `kind` [Pa].
    kind : str
        "sea-level" or "station" (pacing.weather.timeline.TABLE_PRESSURE_KINDS) [-].
    start_temperature : numpy.ndarray
        Air temperature at the start's elevation at each piece's moment [°C].
    relative_humidity : numpy.ndarray or float, optional
        Relative humidity (for the virtual temperature) [-].

    Returns
    -------
    numpy.ndarray
        Pressure at each piece [Pa].

    References
    ----------
    WMO (2018), WMO-No. 8, vol. I ch. 3 (reduction of pressure to sea level); ICAO (1993),
    Doc 7488/3.
    """
    from pacing.physics.atmosphere import pressure_from_sea_level, pressure_from_station

    if kind == "station":
        return np.asarray(pressure_from_station(elevation, pressure, start_elevation,
                                                start_temperature, relative_humidity),
                          dtype=float)
    return np.asarray(pressure_from_sea_level(elevation, pressure, start_temperature,
                                              start_elevation, relative_humidity, kind="mslp"),
                      dtype=float)


def pressure_in_weather(course: Course, weather: WeatherAt, conditions: Conditions,
                        pressure_kind: str = "sea-level") -> np.ndarray:
    """Pressure on every piece in its weather: the table's, else the Conditions' sea-level
    pressure by the ICAO ratio (as `air_along_course`) [Pa].

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course.
    weather : pacing.weather.timeline.WeatherAt
        The weather of each piece, length N-1.
    conditions : Conditions
        The fallback sea-level pressure.
    pressure_kind : str, optional
        What `weather.pressure` is: "sea-level" or "station" [-].

    Returns
    -------
    numpy.ndarray
        Pressure of each piece, length N-1 [Pa].
    """
    elevation = piece_elevation(course)
    if weather.pressure is None:
        return conditions_pressure(elevation, float(course.elevation[0]), conditions)
    return pressure_along(elevation, float(course.elevation[0]), weather.pressure,
                          pressure_kind, weather.temperature, weather.relative_humidity)


def air_in_weather(course: Course, weather: WeatherAt, conditions: Conditions,
                   pressure_kind: str = "sea-level",
                   density_model: str = DEFAULT_AIR_DENSITY_MODEL) -> CourseAir:
    """Air density and wind components on every piece, each in its own weather.

    Like `air_along_course`, with the temperature, humidity, pressure and wind of each piece
    from a weather table at the moment (and place) it is passed
    (pacing.weather.timeline.weather_at). The temperature is given at the start's elevation
    and follows the standard lapse rate elsewhere; a piece without a pressure takes the
    Conditions' sea-level pressure; the wind height, roughness and rider height are the
    Conditions'.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course.
    weather : pacing.weather.timeline.WeatherAt
        The weather of each piece, arrays of length N-1.
    conditions : Conditions
        Wind height, roughness length, rider height and the fallback sea-level pressure.
    pressure_kind : str, optional
        What `weather.pressure` is: "sea-level" or "station" [-].
    density_model : str, optional
        A key of pacing.physics.air.AIR_DENSITY_MODELS [-].

    Returns
    -------
    CourseAir
        Density [kg/m³], headwind and crosswind [m/s], each of length N-1.

    References
    ----------
    ICAO (1993), Doc 7488/3; Picard et al. (2008), Metrologia 45:149-155; Wieringa (1992).
    """
    model = AIR_DENSITY_MODELS.resolve(density_model)
    elevation = piece_elevation(course)
    start_elevation = float(course.elevation[0])
    pressure = pressure_in_weather(course, weather, conditions, pressure_kind)
    temperature = np.clip(temperature_at_elevation(elevation, weather.temperature,
                                                   start_elevation), *TEMPERATURE_RANGE)
    density = np.asarray(model(temperature, pressure, weather.relative_humidity), dtype=float)
    at_rider = wind_at_height(weather.wind_speed, conditions.wind_height,
                              conditions.rider_height, conditions.roughness_length)
    headwind, crosswind = wind_components(np.asarray(course.heading, dtype=float),
                                          weather.wind_from, at_rider)
    return CourseAir(density=density, headwind=np.asarray(headwind, dtype=float),
                     crosswind=np.asarray(crosswind, dtype=float))
