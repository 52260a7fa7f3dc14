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
from test_fieldtest_estimate import (
    MASS,
    POWER_CV,
    TRUE_AREA,
    noisy_ride,
    simulate_loop_ride,
)

from pacing.display.notices import describe, describe_all
from pacing.errors import InputError
from pacing.fieldtest.estimate import PositionTest, estimate_drag
from pacing.fieldtest.ride import DROPOUT_SPEED, make_ride, ride_air, ride_wind, zero_power_dropouts
from pacing.notices import note
from pacing.physics.cycling import Rider
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


class TestPowerDropouts:
    """0 W logged while the rider pedals at speed is a lost reading, not a real zero: it is
    left out of the energy balance, bridged from the readings on either side, and counted."""

    def base(self, n=62):
        # 30 km/h (8.33 m/s) at 250 W, one sample a second; 0 W every fifth sample from the
        # fifth misses the last one
        return np.arange(float(n)), np.full(n, 30 / 3.6), np.full(n, 250.0)

    def test_every_fifth_sample_at_0_w_is_counted_and_bridged(self):
        time, speed, power = self.base()
        power[4::5] = 0.0
        ride = make_ride(time, speed, power)
        assert np.all(ride.power == 250.0)
        (notice,) = ride.notes
        assert notice.code == "test-ride-power-dropouts" and notice.level == "warning"
        assert dict(notice.values) == {"count": 12, "zero_count": 12, "share": 12 / 62,
                                       "longest_s": 2.0, "speed_mps": DROPOUT_SPEED}
        assert describe(notice).startswith(
            "power dropouts: 12 samples without a real power reading (19 % of the ride, 12 of "
            "them logged as 0 W while pedalling faster than 4 m/s), the longest gap between "
            "readings 2 s")
        # 4 m/s = 8.9 mph (1 mph = 0.44704 m/s exactly, NIST SP 811 (2008), App. B.8)
        assert "faster than 8.9 mph" in describe(notice, "imperial")

    def test_zeros_and_blanks_count_together(self):
        time, speed, power = self.base()
        power[[10, 30]] = 0.0
        power[[31, 50]] = np.nan
        values = notes_of(make_ride(time, speed, power))["test-ride-power-dropouts"]
        assert values["count"] == 4 and values["zero_count"] == 2
        assert values["longest_s"] == 3.0  # samples 29 and 32 bracket 30-31

    def test_bridged_power_follows_the_readings_on_either_side(self):
        time, speed, power = self.base()
        power[:] = 200.0 + 2.0 * time
        power[[10, 21, 22]] = 0.0
        ride = make_ride(time, speed, power)
        np.testing.assert_allclose(ride.power, 200.0 + 2.0 * time)

    @pytest.mark.parametrize("change, zeros", [
        ("coasting", 1),        # the rider stops pedalling: the readings around are low
        ("slow", 1),            # walking pace: 0 W is no surprise
        ("long", 3),            # 4 s between readings: longer than a gap bridged (3 s)
        ("first and last", 2),  # no reading on one side
    ])
    def test_zeros_that_may_be_real_are_kept(self, change, zeros):
        time, speed, power = self.base()
        if change == "coasting":
            power[19:22] = (30.0, 0.0, 30.0)
        elif change == "slow":
            speed[18:23] = 3.0
            power[20] = 0.0
        elif change == "long":
            power[20:23] = 0.0
        else:
            power[[0, -1]] = 0.0
        ride = make_ride(time, speed, power)
        assert "test-ride-power-dropouts" not in notes_of(ride)
        assert np.count_nonzero(ride.power == 0.0) == zeros

    def test_zero_power_dropouts_can_be_turned_off(self):
        time, speed, power = self.base()
        power[4::5] = 0.0
        lost = zero_power_dropouts(time, speed, power)
        assert lost.sum() == 12 and not lost[0]
        assert not zero_power_dropouts(time, speed, power, dropout_speed=np.inf).any()
        ride = make_ride(time, speed, power, dropout_speed=np.inf)
        assert ride.notes == () and np.count_nonzero(ride.power == 0.0) == 12

    def test_a_ride_with_0_w_every_fifth_sample_recovers_the_true_cda(self):
        """The forward model of tests/test_fieldtest_estimate.py (Martin et al. 1998 forces,
        power-meter noise of Maier et al. 2017) rides six laps at 17-52 km/h; the head unit
        logs 0 W every fifth second. Taken as real zeros, a fifth of the energy goes missing
        and CdA comes out far too low; left out, CdA is as good as from the clean ride."""
        data = simulate_loop_ride()
        rng = np.random.default_rng(1)
        power = data["power"] * (1 + POWER_CV * rng.standard_normal(data["time"].size))
        lost = power.copy()
        lost[4::5] = 0.0

        def cda(values, **options):
            ride = make_ride(data["time"], data["speed"], values, latitude=data["latitude"],
                             longitude=data["longitude"], **options)
            return estimate_drag(PositionTest("test", ride, 1.2), Rider(mass=MASS),
                                 bootstrap=0).drag_area, ride

        clean, _ = cda(power)
        bridged, ride = cda(lost)
        taken_as_real, _ = cda(lost, dropout_speed=np.inf)
        # the tolerance of the clean ride (tests/test_fieldtest_estimate.py: within 2 %)
        assert clean == pytest.approx(TRUE_AREA, rel=0.02)
        assert bridged == pytest.approx(TRUE_AREA, rel=0.02)
        assert abs(bridged - clean) < 0.005
        assert taken_as_real < 0.9 * TRUE_AREA
        values = notes_of(ride)["test-ride-power-dropouts"]
        # every zero but one on the last sample (no reading after it to bridge from)
        assert values["zero_count"] == np.count_nonzero(lost[:-1] == 0.0)
        assert values["share"] == pytest.approx(0.2, abs=0.001)


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

    def test_the_longest_gap_is_named_where_it_starts(self):
        time, speed, power = self.base()
        power[5] = np.nan  # a short gap first: bridged if it were alone
        power[40:50] = np.nan
        with pytest.raises(InputError, match="power is missing for 11 s from t = 40 s"):
            make_ride(time, speed, power)
        speed[[3, 30, 31, 32, 33, 34]] = np.nan
        with pytest.raises(InputError, match="speed is missing for 6 s from t = 30 s"):
            make_ride(time, speed, power)

    def test_a_column_without_readings_is_one_line(self):
        time, speed, power = self.base()
        with pytest.raises(InputError, match="power has no readings: every value is blank"):
            make_ride(time, speed, np.full(60, np.nan))
        with pytest.raises(InputError, match="speed has no readings"):
            make_ride(time, np.full(60, np.nan), power)

    def test_short_power_dropout_is_bridged_with_a_warning(self):
        time, speed, power = self.base()
        power[20:22] = np.nan
        ride = make_ride(time, speed, power)
        assert np.all(ride.power == 200.0)
        # samples 19 and 22 bracket the gap: 3 s between the readings on either side
        assert notes_of(ride) == {"test-ride-power-dropouts": {
            "count": 2, "zero_count": 0, "share": 2 / 60, "longest_s": 3.0, "speed_mps": 4.0}}
        assert describe_all(ride.notes) == [
            "power dropouts: 2 samples without a real power reading (3 % of the ride), the "
            "longest gap between readings 3 s; left out of the energy balance and bridged from "
            "the readings on either side: check the power meter's battery and pairing"]
        assert all(n.level == "warning" for n in ride.notes)

    def test_short_speed_gap_is_filled_with_a_note(self):
        time, speed, power = self.base()
        speed[30] = np.nan
        ride = make_ride(time, speed, power)
        assert np.all(ride.speed == 9.0)
        assert "test-ride-speed-filled" in notes_of(ride)

    def test_zero_power_while_the_speed_holds_is_warned_of(self):
        time, speed, power = self.base()
        power[20:35] = 0.0
        ride = make_ride(time, speed, power)
        assert notes_of(ride)["test-ride-zero-power"] == {"start_s": 20.0, "duration_s": 14.0}
        assert ride.notes[0].level == "warning"
        assert "power reads 0 W for 14 s from t = 20 s" in describe(ride.notes[0])
        # 15 s of 0 W is too long to bridge: the readings stay, nothing is counted as lost
        assert np.all(ride.power[20:35] == 0.0)
        speed[20:35] = np.linspace(9.0, 7.0, 15)  # coasting and slowing: no warning
        assert make_ride(time, speed, power).notes == ()

    def test_stops_are_dropped_with_a_note_giving_the_stretches(self):
        time, speed, power = self.base()
        speed[20:40] = 0.0
        ride = make_ride(time, speed, power)
        assert ride.time.size == 40
        assert ride.pause.sum() == 1
        assert notes_of(ride) == {"test-ride-stops-dropped": {
            "count": 20, "speed_mps": 1.0, "stretch_count": 1, "duration_s": 20.0,
            "longest_s": 20.0, "times_s": (20.0,)}}
        assert ("dropped 20 samples slower than 1 m/s: 1 stop at t = 20 s (20 s long)"
                in describe(ride.notes[0]))
        # 1 mph = 0.44704 m/s exactly (NIST SP 811 (2008), App. B.8): 1 m/s = 2.2 mph
        assert "slower than 2.2 mph" in describe(ride.notes[0], "imperial")
        # the distance does not grow over the pause
        assert ride.distance[20] == ride.distance[19]

    def test_several_stops_are_listed_up_to_five(self):
        time, speed, power = self.base(120)
        for start in (0, 10, 30, 50, 70, 90):  # 3 s each, the first at the start
            speed[start:start + 3] = 0.2
        speed[110:] = 0.0  # and one at the end of the ride
        values = notes_of(make_ride(time, speed, power))["test-ride-stops-dropped"]
        assert values["stretch_count"] == 7
        assert values["times_s"] == (0.0, 10.0, 30.0, 50.0, 70.0)
        # each stop lasts from its first slow sample to the next moving one; the last one
        # (t = 110-119) ends with the ride, at its last sample
        assert values["duration_s"] == 6 * 3.0 + 9.0 and values["longest_s"] == 9.0
        assert "7 stops at t = 0, 10, 30, 50, 70, … s (27 s in all, the longest 9 s)" in \
            describe(make_ride(time, speed, power).notes[0])

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
