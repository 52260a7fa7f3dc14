"""A race recording's arrays (pacing.review.recording): stops and gaps kept, blanks filled,
speed and distance from each other or from the positions."""

from __future__ import annotations

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.review.recording import make_race_recording


def test_stops_are_kept_not_dropped():
    time = np.arange(0.0, 30.0)
    speed = np.where((time >= 10) & (time < 20), 0.0, 10.0)
    race = make_race_recording(time, np.full(30, 200.0), speed=speed)
    assert race.time.size == 30 and race.duration == 29.0
    assert race.speed[15] == 0.0
    # trapezoidal distance: 10 s at 10 m/s, two half-speed steps, 9 s at 10 m/s, … (by hand)
    assert race.distance[-1] == pytest.approx(10 * 9 + 5 + 5 + 10 * 9)


def test_blank_power_is_interpolated_with_a_note_and_a_long_gap_with_a_warning():
    time = np.arange(0.0, 40.0)
    power = np.full(40, 200.0)
    power[5:7] = np.nan
    power[20:35] = np.nan
    race = make_race_recording(time, power, speed=np.full(40, 10.0))
    assert np.all(race.power == 200.0)
    filled = [n for n in race.notes if n.code == "review-ride-filled"]
    assert filled[0].level == "warning" and filled[0].values["count"] == 17
    assert filled[0].values["longest_s"] == 16.0


def test_speed_from_the_distance_column():
    time = np.arange(0.0, 20.0)
    race = make_race_recording(time, np.full(20, 200.0), distance=8.0 * time + 100.0)
    assert race.speed == pytest.approx(np.full(20, 8.0))
    assert race.distance[0] == 0.0 and race.distance[-1] == pytest.approx(152.0)


def test_distance_from_positions_on_the_equator_is_geodesic():
    """0.001° of longitude on the equator is 111.319 491 m on WGS84 (geographiclib
    Geodesic.WGS84.Inverse(0, 0, 0, 0.001), Karney 2013)."""
    from geographiclib.geodesic import Geodesic

    time = np.arange(0.0, 11.0)
    longitude = 0.001 * time
    race = make_race_recording(time, np.full(11, 200.0), latitude=np.zeros(11),
                               longitude=longitude)
    reference = Geodesic.WGS84.Inverse(0.0, 0.0, 0.0, 0.01)["s12"]
    assert race.distance[-1] == pytest.approx(reference, rel=1e-9)
    assert race.notes[0].code == "review-ride-speed-from-positions"


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"time": np.arange(5.0)}, "at least 10 samples"),
    ({"time": np.r_[np.arange(10.0), 5.0]}, "does not increase at sample 11"),
    ({"power": np.full(12, np.nan)}, "no power"),
    ({"power": np.r_[np.full(11, 100.0), -5.0]}, "power is -5 W at sample 12"),
    ({"speed": None}, "no speed, distance or positions"),
    ({"latitude": np.zeros(12)}, "both latitude and longitude"),
])
def test_bad_arrays_are_refused_in_one_line(kwargs, message):
    arrays = {"time": np.arange(12.0), "power": np.full(12, 100.0), "speed": np.full(12, 5.0)}
    arrays.update(kwargs)
    size = arrays["time"].size
    for key in ("power", "speed"):
        if arrays[key] is not None and arrays[key].size != size:
            arrays[key] = np.resize(arrays[key], size)
    with pytest.raises(InputError, match=message):
        make_race_recording(**arrays)
