"""Test rides (pacing.fieldtest.ride): cleaning, air and wind along the ride, laps.

The rides come from our own forward simulation with published noise levels
(tests/test_fieldtest_estimate.py: `simulate_loop_ride`, `noisy_ride`; GNSS horizontal error after
Gløersen et al. 2018, Front Physiol 9:1425, doi:10.3389/fphys.2018.01425).
"""

from __future__ import annotations

import numpy as np
import pytest
from test_fieldtest_estimate import (
    HORIZONTAL_SIGMA,
    MASS,
    TRUE_AREA,
    noisy_ride,
    simulate_loop_ride,
)

from pacing.errors import InputError
from pacing.fieldtest.estimate import PositionTest, estimate_drag
from pacing.fieldtest.ride import (
    detect_laps,
    indices_at_times,
    laps_from_bounds,
    make_ride,
    ride_air,
    ride_wind,
)
from pacing.fieldtest.virtual_elevation import elevation_terms
from pacing.physics.cycling import Rider
from pacing.weather.conditions import Conditions


class TestLaps:
    def test_detects_the_laps_despite_gnss_position_noise(self):
        data = simulate_loop_ride()
        ride = noisy_ride(data, seed=10, horizontal_sigma=HORIZONTAL_SIGMA)
        laps = detect_laps(ride.latitude, ride.longitude)
        assert len(laps) == 6
        true_starts = [int(np.argmin(np.abs(data["distance"] - 2000.0 * i))) for i in range(6)]
        for (start, _), expected in zip(laps, true_starts, strict=True):
            assert abs(start - expected) <= 2

    def test_user_given_laps(self):
        data = simulate_loop_ride()
        ride = noisy_ride(data, seed=11, with_position=False)
        bounds = [int(np.argmin(np.abs(data["distance"] - 2000.0 * i))) for i in range(7)]
        laps = laps_from_bounds(bounds, ride.time.size)
        result = estimate_drag(PositionTest("marked", ride, 1.2, tuple(laps)), Rider(mass=MASS))
        assert result.drag_area == pytest.approx(TRUE_AREA, rel=0.02)

    def test_lap_times_to_indices(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1)
        assert indices_at_times(ride, [0.0, 10.2, 99.6]) == [0, 10, 100]
        with pytest.raises(InputError, match="within the ride"):
            indices_at_times(ride, [1e6])

    def test_a_ride_that_never_returns_has_no_laps(self):
        latitude = 46.0 + np.linspace(0, 0.05, 100)
        with pytest.raises(InputError, match="no lap found"):
            detect_laps(latitude, np.full(100, 7.0))

    def test_bad_bounds(self):
        with pytest.raises(InputError, match="increase"):
            laps_from_bounds([5, 3, 9], 20)


class TestAir:
    def test_ride_air_matches_the_conditions_density(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1)
        density, headwind, crosswind = ride_air(ride, Conditions(temperature=20.0,
                                                                 relative_humidity=0.5))
        # CIPM-2007 at 20 °C, 50 % RH, 101325 Pa: 1.19931 kg/m³ (REFERENCES.md [calc]); the
        # ride lies within ±8 m of sea level (±0.1 % pressure)
        assert np.all(np.abs(density / 1.19931 - 1) < 0.0015)
        assert np.all(headwind == 0) and np.all(crosswind == 0)

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
        assert any("power dropouts" in note for note in ride.notes)

    def test_zero_power_while_the_speed_holds_is_noted(self):
        time, speed, power = self.base()
        power[20:35] = 0.0
        ride = make_ride(time, speed, power)
        assert any("power reads 0 W for 14 s from t = 20 s" in note for note in ride.notes)
        speed[20:35] = np.linspace(9.0, 7.0, 15)  # coasting and slowing: no note
        assert not any("0 W" in note for note in make_ride(time, speed, power).notes)

    def test_stops_are_dropped_with_a_note(self):
        time, speed, power = self.base()
        speed[20:40] = 0.0
        ride = make_ride(time, speed, power)
        assert ride.time.size == 40
        assert ride.pause.sum() == 1
        assert any("dropped 20 samples" in note for note in ride.notes)
        # a pause adds nothing to the trace
        terms = elevation_terms(ride.time, ride.speed, ride.power, 1.2, Rider(), pause=ride.pause)
        assert terms.known[ride.pause][0] == 0.0

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
