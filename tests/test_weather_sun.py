"""Specification of pacing.weather.sun: the sun's elevation and distance, and the irradiance
under a cloud cover."""

import math

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.weather.sun import irradiance_from_cloud_cover, solar_elevation, sun_distance


def meeus_elevation(seconds, latitude, longitude):
    """The sun's elevation by Meeus, Astronomical Algorithms (2nd ed. 1998), chapters 12 and 25
    (the low-accuracy solar coordinates with the apparent-longitude and obliquity corrections,
    0.01°), written here independently of the code: Julian centuries T, geometric mean longitude
    and anomaly, equation of the centre, apparent longitude, obliquity, Greenwich mean sidereal
    time, hour angle."""
    day = seconds / 86400.0 + 2440587.5 - 2451545.0
    t = day / 36525.0
    mean_longitude = 280.46646 + 36000.76983 * t + 0.0003032 * t * t
    anomaly = math.radians(357.52911 + 35999.05029 * t - 0.0001537 * t * t)
    centre = ((1.914602 - 0.004817 * t - 0.000014 * t * t) * math.sin(anomaly)
              + (0.019993 - 0.000101 * t) * math.sin(2 * anomaly)
              + 0.000289 * math.sin(3 * anomaly))
    node = math.radians(125.04 - 1934.136 * t)
    apparent = math.radians(mean_longitude + centre - 0.00569 - 0.00478 * math.sin(node))
    obliquity = math.radians(23.0 + (26.0 + (21.448 - t * (46.815 + t * (0.00059 - t * 0.001813)))
                                     / 60.0) / 60.0 + 0.00256 * math.cos(node))
    ascension = math.atan2(math.cos(obliquity) * math.sin(apparent), math.cos(apparent))
    declination = math.asin(math.sin(obliquity) * math.sin(apparent))
    sidereal = math.radians((280.46061837 + 360.98564736629 * day + 0.000387933 * t * t
                             - t**3 / 38710000.0) % 360.0)
    hour_angle = sidereal + math.radians(longitude) - ascension
    phi = math.radians(latitude)
    return math.degrees(math.asin(math.sin(phi) * math.sin(declination)
                                  + math.cos(phi) * math.cos(declination) * math.cos(hour_angle)))


def test_solar_elevation_matches_meeus_through_a_year():
    # Michalsky (1988) in the code against Meeus (1998) here (independent formulas): within
    # 0.03° at every hour, place and season drawn.
    rng = np.random.default_rng(16)
    seconds = rng.uniform(1704067200.0, 1798761600.0, 400)  # 2024-2026
    latitude = rng.uniform(-60.0, 70.0, 400)
    longitude = rng.uniform(-180.0, 180.0, 400)
    ours = solar_elevation(seconds, latitude, longitude)
    meeus = [meeus_elevation(*row) for row in zip(seconds, latitude, longitude, strict=True)]
    np.testing.assert_allclose(ours, meeus, atol=0.03)


def test_noon_sun_at_the_solstice_is_ninety_degrees_less_latitude_plus_obliquity():
    # Common practice: at the June solstice the noon sun stands 90° − φ + 23.44° high.
    noon = 1782043200.0  # 2026-06-21 12:00 UTC
    assert float(solar_elevation(noon, 51.48, 0.0)) == pytest.approx(90 - 51.48 + 23.44,
                                                                     abs=0.1)


def test_sun_distance_at_perihelion_and_aphelion():
    # Common practice: about 0.9833 AU in early January, 1.0167 AU in early July.
    assert float(sun_distance(1767657600.0)) == pytest.approx(0.9833, abs=2e-4)  # 2026-01-06
    assert float(sun_distance(1783296000.0)) == pytest.approx(1.0167, abs=2e-4)  # 2026-07-06


def test_cloud_cover_dims_the_clear_sky_by_kasten_and_czeplak():
    # Kasten & Czeplak (1980): G = (910·sin h − 30)·(1 − 0.75·N^3.4); overcast keeps a quarter.
    clear = 910.0 * math.sin(math.radians(50.0)) - 30.0
    got = irradiance_from_cloud_cover(50.0, np.array([0.0, 0.5, 1.0]))
    np.testing.assert_allclose(got, [clear, clear * (1 - 0.75 * 0.5**3.4), 0.25 * clear],
                               rtol=1e-12)
    assert float(irradiance_from_cloud_cover(-5.0, 0.0)) == 0.0


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: solar_elevation(0.0, 95.0, 0.0), "latitude"),
        (lambda: solar_elevation(0.0, 45.0, 200.0), "longitude"),
        (lambda: solar_elevation(float("nan"), 45.0, 0.0), "time"),
        (lambda: irradiance_from_cloud_cover(40.0, 1.2), "cloud cover"),
    ],
)
def test_bad_sun_inputs_raise_one_line(call, message):
    with pytest.raises(InputError, match=message):
        call()
