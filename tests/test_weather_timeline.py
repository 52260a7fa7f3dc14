"""The weather through the race (pacing.weather.timeline): rows in time and space, their
interpolation and their checks.

Wind is interpolated as a vector (WMO-No. 8 convention: direction the wind blows FROM,
degrees clockwise from north); space by Shepard's (1968) inverse distance squared, written
again here; the great-circle distance by one degree of longitude on the equator of a sphere of
the GRS80 mean radius 6371008.8 m (Moritz 2000).
"""

from __future__ import annotations

import math
from datetime import UTC, datetime, timedelta, timezone

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.errors import InputError
from pacing.weather.timeline import (
    WeatherTable,
    check_covers,
    clock_seconds,
    clock_text,
    framed_table,
    haversine,
    place_weights,
    weather_at,
)


def table(**changes):
    columns = dict(time=np.array([0.0, 3600.0, 7200.0]),
                   temperature=np.array([10.0, 20.0, 30.0]),
                   relative_humidity=np.array([0.8, 0.6, 0.4]),
                   wind_speed=np.array([5.0, 5.0, 5.0]),
                   wind_from=np.array([350.0, 10.0, 10.0]))
    columns.update(changes)
    return WeatherTable(**columns)


def test_direction_interpolates_across_north_not_through_south():
    at = weather_at(table(), [1800.0])
    assert at.wind_from[0] == pytest.approx(0.0, abs=1e-9)
    # the vector mean of two 5 m/s winds 20° apart: 5·cos(10°) (common practice)
    assert at.wind_speed[0] == pytest.approx(5.0 * math.cos(math.radians(10.0)))
    quarter = weather_at(table(), [900.0])
    assert quarter.wind_from[0] == pytest.approx(
        math.degrees(math.atan2(0.75 * math.sin(math.radians(350.0))
                                + 0.25 * math.sin(math.radians(10.0)),
                                0.75 * math.cos(math.radians(350.0))
                                + 0.25 * math.cos(math.radians(10.0)))) % 360.0)
    assert 350.0 < quarter.wind_from[0] < 360.0


def test_temperature_humidity_and_pressure_are_linear_in_time():
    at = weather_at(table(pressure=np.array([101000.0, 100800.0, 100600.0])),
                    [0.0, 900.0, 5400.0, 7200.0])
    np.testing.assert_allclose(at.temperature, [10.0, 12.5, 25.0, 30.0])
    np.testing.assert_allclose(at.relative_humidity, [0.8, 0.75, 0.5, 0.4])
    np.testing.assert_allclose(at.pressure, [101000.0, 100950.0, 100700.0, 100600.0])


def test_a_wind_reversing_passes_through_calm():
    reversing = table(wind_from=np.array([0.0, 180.0, 180.0]))
    at = weather_at(reversing, [1800.0, 2700.0])
    assert at.wind_speed[0] == pytest.approx(0.0, abs=1e-12)
    assert at.wind_speed[1] == pytest.approx(2.5)
    assert at.wind_from[1] == pytest.approx(180.0)


def test_places_are_weighted_by_inverse_distance_squared():
    two_places = WeatherTable(
        time=np.array([0.0, 3600.0, 0.0, 3600.0]), temperature=np.array([10.0, 10.0, 20.0, 20.0]),
        relative_humidity=np.full(4, 0.5), wind_speed=np.zeros(4), wind_from=np.zeros(4),
        latitude=np.array([0.0, 0.0, 0.0, 0.0]), longitude=np.array([0.0, 0.0, 1.0, 1.0]))
    # a point a quarter of the way from the first place: distances d and 3d, weights 1/d², 1/9d²
    at = weather_at(two_places, [1800.0], [0.0], [0.25])
    expected = (10.0 / 1.0 + 20.0 / 9.0) / (1.0 + 1.0 / 9.0)  # Shepard (1968)
    assert at.temperature[0] == pytest.approx(expected, rel=1e-9)
    # on a place: that place alone
    assert weather_at(two_places, [1800.0], [0.0], [1.0]).temperature[0] == pytest.approx(20.0)
    weights = place_weights(two_places, np.array([0.0, 0.0]), np.array([0.5, 0.0]))
    np.testing.assert_allclose(weights.sum(axis=0), 1.0)
    np.testing.assert_allclose(weights[:, 0], [0.5, 0.5])


def test_great_circle_distance_of_one_degree_on_the_equator():
    # 2πR/360 with R = 6371008.8 m (Moritz 2000, GRS80 mean radius R1)
    assert float(haversine(0.0, 0.0, 0.0, 1.0)) == pytest.approx(2 * math.pi * 6371008.8 / 360)


@pytest.mark.parametrize(("changes", "message"), [
    ({"time": np.array([0.0, 3600.0, 3600.0])}, "weather row 3: time repeats the time of row 2"),
    ({"time": np.array([0.0, 7200.0, 3600.0])}, "weather row 3: time comes before row 2"),
    ({"temperature": np.array([10.0, 75.0, 30.0])}, "weather row 2: temperature must be"),
    ({"relative_humidity": np.array([0.8, 0.6, 1.4])}, "weather row 3: relative humidity"),
    ({"wind_speed": np.array([-1.0, 5.0, 5.0])}, "weather row 1: wind speed"),
    ({"wind_from": np.array([0.0, 400.0, 5.0])}, "weather row 2: wind direction"),
    ({"temperature": np.array([10.0, np.nan, 30.0])},
     "weather row 2: temperature must be a finite"),
    ({"pressure": np.array([101000.0, 1010.0, 101000.0])}, "weather row 2: sea-level pressure"),
    ({"time": np.array([0.0])}, "at least two rows"),
])
def test_a_bad_table_is_refused_in_one_line_naming_the_row(changes, message):
    if "time" in changes and changes["time"].size == 1:
        changes = {key: np.asarray(value)[:1] for key, value in table().__dict__.items()
                   if isinstance(value, np.ndarray)}
    with pytest.raises(InputError, match=message) as error:
        table(**changes)
    assert "\n" not in str(error.value)


def test_a_race_outside_the_table_is_refused():
    with pytest.raises(InputError, match="before the weather table's first row"):
        check_covers(table(), -1.0, 3600.0)
    with pytest.raises(InputError, match="after the weather table's last row"):
        check_covers(table(), 0.0, 7300.0)
    with pytest.raises(InputError, match="starts at .*, after the weather table's last row"):
        check_covers(table(), 7300.0, 7300.0)
    check_covers(table(), 0.0, 7200.0)


def test_naive_times_are_local_to_the_race_and_aware_ones_set_the_frame():
    plus_two = timezone(timedelta(hours=2))
    moments = [datetime(2026, 7, 14, 8, 0, tzinfo=plus_two), datetime(2026, 7, 14, 12, 0)]
    weather, start = framed_table(moments, datetime(2026, 7, 14, 9, 0),
                                  temperature=[20.0, 30.0], relative_humidity=[0.5, 0.5],
                                  wind_speed=[0.0, 0.0], wind_from=[0.0, 0.0])
    assert weather.utc_offset == 7200.0
    # 12:00 local at +02:00 is 10:00 UTC: four hours after the first row
    assert weather.time[1] - weather.time[0] == 4 * 3600.0
    assert start - weather.time[0] == 3600.0
    assert clock_text(start, weather.utc_offset) == "2026-07-14T09:00:00+02:00"
    assert clock_seconds(datetime(2026, 7, 14, 7, 0, tzinfo=UTC), 7200.0) == start


def test_all_naive_times_stay_on_the_local_clock():
    weather, start = framed_table([datetime(2026, 7, 14, 8), datetime(2026, 7, 14, 12)], None,
                                  temperature=[20.0, 30.0], relative_humidity=[0.5, 0.5],
                                  wind_speed=[0.0, 0.0], wind_from=[0.0, 0.0])
    assert weather.utc_offset is None and start is None
    assert clock_text(weather.time[0], None) == "2026-07-14T08:00:00"


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(0.0, 30.0), min_size=2, max_size=6),
       st.lists(st.floats(0.0, 360.0), min_size=2, max_size=6),
       st.floats(0.0, 1.0))
def test_an_interpolated_wind_is_never_stronger_than_its_rows(speeds, directions, share):
    rows = min(len(speeds), len(directions))
    weather = table(time=3600.0 * np.arange(rows), temperature=np.full(rows, 20.0),
                    relative_humidity=np.full(rows, 0.5), wind_speed=np.array(speeds[:rows]),
                    wind_from=np.array(directions[:rows]))
    moment = share * 3600.0 * (rows - 1)
    at = weather_at(weather, [moment])
    k = min(int(share * (rows - 1)), rows - 2)
    assert 0.0 <= at.wind_from[0] < 360.0
    # the norm of a convex combination is at most the larger norm (triangle inequality)
    assert at.wind_speed[0] <= max(speeds[k], speeds[k + 1]) + 1e-9
