"""Test rides (pacing.fieldtest.ride): cleaning, air and wind along the ride (their laps:
tests/test_fieldtest_laps.py).

The rides come from our own forward simulation with published noise levels
(tests/test_fieldtest_estimate.py: `simulate_loop_ride`, `noisy_ride`; GNSS horizontal error after
Gløersen et al. 2018, Front Physiol 9:1425, doi:10.3389/fphys.2018.01425). What cleaning did
comes back as notes (pacing.notices.Notice), read here by code and values and, through
pacing.display.notices, in words.
"""

from __future__ import annotations

import numpy as np
import pytest
from test_fieldtest_estimate import noisy_ride, simulate_loop_ride

from pacing.display.notices import describe, describe_all
from pacing.errors import InputError
from pacing.fieldtest.ride import make_ride, ride_air, ride_wind
from pacing.notices import note
from pacing.physics.wind import wind_components
from pacing.weather.conditions import Conditions, CourseAir


def notes_of(ride) -> dict[str, dict]:
    """The ride's notes as {code: values}."""
    return {notice.code: dict(notice.values) for notice in ride.notes}


class TestAir:
    def test_ride_air_matches_the_conditions_density(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1)
        air = ride_air(ride, Conditions(temperature=20.0, relative_humidity=0.5))
        assert isinstance(air, CourseAir)
        assert air.density.shape == air.headwind.shape == (ride.time.size - 1,)
        # CIPM-2007 at 20 °C, 50 % RH, 101325 Pa: 1.19931 kg/m³, CoolProp HAPropsSI 1.19936
        # (docs/references.md, "Air"); the ride lies within ±8 m of sea level (±0.1 % pressure)
        assert np.all(np.abs(air.density / 1.19931 - 1) < 0.0015)
        assert np.all(air.headwind == 0) and np.all(air.crosswind == 0)

    def test_ride_air_splits_the_wind_by_the_direction_of_travel(self):
        # a wind measured at rider height (1 m) needs no log-profile reduction; the heading
        # column of the simulated loop gives each piece's direction (circular mean of its ends)
        data = simulate_loop_ride()
        ride = make_ride(data["time"], data["speed"], data["power"], heading=data["heading"])
        air = ride_air(ride, Conditions(wind_speed=3.0, wind_from=200.0, wind_height=1.0,
                                        rider_height=1.0))
        radians = np.radians(data["heading"])
        mean = np.degrees(np.arctan2(np.sin(radians[1:]) + np.sin(radians[:-1]),
                                     np.cos(radians[1:]) + np.cos(radians[:-1])))
        headwind, crosswind = wind_components(mean, 200.0, 3.0)
        np.testing.assert_allclose(air.headwind, headwind, atol=1e-12)
        np.testing.assert_allclose(air.crosswind, crosswind, atol=1e-12)
        # a steady wind's magnitude is the same on every piece
        np.testing.assert_allclose(np.hypot(air.headwind, air.crosswind), 3.0, rtol=1e-12)

    def test_unknown_density_model(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1)
        with pytest.raises(InputError, match="unknown air density model"):
            ride_air(ride, Conditions(), density_model="guess")

    def test_wind_needs_a_direction_of_travel(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1, with_position=False)
        with pytest.raises(InputError, match="direction of travel"):
            ride_wind(ride, 3.0, 90.0)


class TestCleaning:
    def base(self, n=60):
        time = np.arange(float(n))
        return time, np.full(n, 9.0), np.full(n, 200.0)

    def test_time_must_increase(self):
        time, speed, power = self.base()
        time[10] = time[9]
        with pytest.raises(InputError, match="time does not increase at sample 11"):
            make_ride(time, speed, power)

    def test_recording_gap_while_moving(self):
        time, speed, power = self.base()
        time[30:] += 20.0
        with pytest.raises(InputError, match="recording gap of 21 s"):
            make_ride(time, speed, power)

    def test_long_power_dropout(self):
        time, speed, power = self.base()
        power[20:30] = np.nan
        with pytest.raises(InputError, match="power is missing for 11 s from t = 20 s"):
            make_ride(time, speed, power)

    def test_short_power_dropout_is_filled_with_a_note(self):
        time, speed, power = self.base()
        power[20:22] = np.nan
        ride = make_ride(time, speed, power)
        assert np.all(ride.power == 200.0)
        # samples 19 and 22 bracket the gap: 3 s between the readings on either side
        assert notes_of(ride) == {"test-ride-power-filled": {"duration_s": 3.0}}
        assert describe_all(ride.notes) == ["filled power dropouts up to 3 s by interpolation"]
        assert all(n.level == "note" for n in ride.notes)

    def test_short_speed_gap_is_filled_with_a_note(self):
        time, speed, power = self.base()
        speed[30] = np.nan
        ride = make_ride(time, speed, power)
        assert np.all(ride.speed == 9.0)
        assert "test-ride-speed-filled" in notes_of(ride)

    def test_zero_power_while_the_speed_holds_is_noted(self):
        time, speed, power = self.base()
        power[20:35] = 0.0
        ride = make_ride(time, speed, power)
        assert notes_of(ride)["test-ride-zero-power"] == {"start_s": 20.0, "duration_s": 14.0}
        assert "power reads 0 W for 14 s from t = 20 s" in describe(ride.notes[0])
        speed[20:35] = np.linspace(9.0, 7.0, 15)  # coasting and slowing: no note
        assert make_ride(time, speed, power).notes == ()

    def test_stops_are_dropped_with_a_note(self):
        time, speed, power = self.base()
        speed[20:40] = 0.0
        ride = make_ride(time, speed, power)
        assert ride.time.size == 40
        assert ride.pause.sum() == 1
        assert notes_of(ride) == {"test-ride-stops-dropped": {"count": 20, "speed_mps": 1.0}}
        assert "dropped 20 samples slower than 1 m/s (stops)" in describe(ride.notes[0])
        # 1 mph = 0.44704 m/s exactly (NIST SP 811 (2008), App. B.8): 1 m/s = 2.2 mph
        assert "slower than 2.2 mph" in describe(ride.notes[0], "imperial")
        # the distance does not grow over the pause
        assert ride.distance[20] == ride.distance[19]

    def test_optional_columns_empty_or_with_gaps_are_noted(self):
        time, speed, power = self.base()
        elevation = np.full(60, np.nan)
        heading = np.full(60, 90.0)
        heading[[5, 6]] = np.nan
        ride = make_ride(time, speed, power, elevation=elevation, heading=heading)
        assert ride.elevation is None
        np.testing.assert_allclose(ride.heading, 90.0)
        assert describe_all(ride.notes) == ["elevation column is empty: ignored",
                                            "filled 2 missing heading values by interpolation"]

    def test_notes_of_reading_come_first(self):
        time, speed, power = self.base()
        speed[20:25] = 0.0
        ride = make_ride(time, speed, power, notes=[note("test-ride-speed-from-distance")])
        assert [n.code for n in ride.notes] == ["test-ride-speed-from-distance",
                                                "test-ride-stops-dropped"]

    def test_negative_power(self):
        time, speed, power = self.base()
        power[5] = -10
        with pytest.raises(InputError, match="power must be finite and not negative"):
            make_ride(time, speed, power)

    def test_bad_power_names_the_first_sample_and_its_time(self):
        # the message points at the row to fix: sample numbers count from 1 like the data rows
        # of a CSV file; later bad samples are counted, not listed
        time, speed, power = self.base()
        power[[7, 20, 30]] = -25.0
        with pytest.raises(InputError) as caught:
            make_ride(time + 100.0, speed, power)
        message = str(caught.value)
        assert "power is negative (-25 W) at sample 8 (t = 107 s)" in message
        assert "2 more samples" in message
        assert "\n" not in message

    def test_non_finite_speed_names_its_sample(self):
        time, speed, power = self.base()
        speed[12] = np.inf
        with pytest.raises(InputError, match=r"speed is not finite \(inf\) at sample 13 "
                                             r"\(t = 12 s\)"):
            make_ride(time, speed, power)
        speed[12] = -1.0
        with pytest.raises(InputError, match=r"speed is negative \(-1 m/s\) at sample 13"):
            make_ride(time, speed, power)

    def test_length_mismatch_and_too_short(self):
        time, speed, power = self.base()
        with pytest.raises(InputError, match="speed has 59 values"):
            make_ride(time, speed[:-1], power)
        with pytest.raises(InputError, match="at least 10 samples"):
            make_ride(time[:5], speed[:5], power[:5])

    def test_latitude_without_longitude(self):
        time, speed, power = self.base()
        with pytest.raises(InputError, match="both latitude and longitude"):
            make_ride(time, speed, power, latitude=np.full(60, 46.0))
