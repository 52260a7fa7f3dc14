"""The laps of a test ride (pacing.fieldtest.laps): found from the positions, marked by sample or
time, and turned into the terms the fit uses.

The rides come from our own forward simulation (tests/test_fieldtest_estimate.py:
`simulate_loop_ride`, `noisy_ride`) with GNSS horizontal error after Gløersen et al. 2018,
Front Physiol 9:1425, doi:10.3389/fphys.2018.01425 (5.29 m as third quartile, abstract).
"""

from __future__ import annotations

import numpy as np
import pytest
from test_fieldtest_estimate import (
    HORIZONTAL_SIGMA,
    MASS,
    TRUE_AREA,
    TRUE_ROLLING,
    noisy_ride,
    simulate_loop_ride,
)

from pacing.errors import InputError
from pacing.fieldtest.estimate import PositionTest
from pacing.fieldtest.laps import (
    build_laps,
    detect_laps,
    indices_at_times,
    lap_distance,
    laps_from_bounds,
    position_air,
    resolve_laps,
)
from pacing.fieldtest.methods import FIELD_TEST_METHODS
from pacing.physics.cycling import Rider


class TestLaps:
    def test_detects_the_laps_despite_gnss_position_noise(self):
        data = simulate_loop_ride()
        ride = noisy_ride(data, seed=10, horizontal_sigma=HORIZONTAL_SIGMA)
        laps = detect_laps(ride.latitude, ride.longitude)
        assert len(laps) == 6
        true_starts = [int(np.argmin(np.abs(data["distance"] - 2000.0 * i))) for i in range(6)]
        for (start, _), expected in zip(laps, true_starts, strict=True):
            assert abs(start - expected) <= 2

    def test_laps_from_bounds_pair_consecutive_boundaries(self):
        assert laps_from_bounds([0, 100, 250], 300) == [(0, 100), (100, 250)]
        with pytest.raises(InputError, match="at least two"):
            laps_from_bounds([5], 20)

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


class TestLapTerms:
    def test_marked_laps_must_lie_inside_the_ride(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1)
        n = ride.time.size
        assert resolve_laps(PositionTest("a", ride, laps=((0, 10), (10, 20))), 20.0) == [
            (0, 10), (10, 20)]
        with pytest.raises(InputError, match="not inside the ride"):
            resolve_laps(PositionTest("a", ride, laps=((0, n),)), 20.0)
        with pytest.raises(InputError, match="has no laps"):
            resolve_laps(PositionTest("a", ride, laps=()), 20.0)

    def test_without_positions_or_marks_the_whole_ride_is_one_lap(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1, with_position=False)
        assert resolve_laps(PositionTest("a", ride), 20.0) == [(0, ride.time.size - 1)]

    def test_lap_distance_follows_the_simulated_distance(self):
        # own forward simulation (RK4 on the Martin et al. 1998 forces) records the distance
        # ridden; the trapezoid rule on 1 Hz speeds gets it to a few centimetres per lap
        data = simulate_loop_ride()
        ride = noisy_ride(data, seed=1)
        distance = lap_distance(ride, 100, 400)
        assert distance[0] == 0.0
        assert distance[-1] == pytest.approx(data["distance"][400] - data["distance"][100],
                                             abs=0.1)

    def test_air_of_a_position_test_is_checked_and_spread_over_the_pieces(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1)
        density, head, cross = position_air(PositionTest("a", ride, 1.2, headwind=2.0))
        assert density.shape == head.shape == cross.shape == (ride.time.size - 1,)
        assert np.all(head == 2.0) and np.all(cross == 0.0)
        for bad in (0.0, 2.5, np.nan):
            with pytest.raises(InputError, match="air density"):
                position_air(PositionTest("a", ride, bad))

    def test_exact_laps_rise_as_the_road_with_the_true_cda_and_crr(self):
        # own forward simulation, no noise: with the true CdA and Crr each lap's virtual
        # elevation gains what the simulated road gains between its end samples (Chung). The
        # simulation holds each lap's power over the following second while the virtual
        # elevation takes the mean of the two ends: a 150 W step at a lap change is worth
        # 0.5·150·0.976 / (80·9.81) ≈ 0.09 m, so 0.15 m bounds it (≈ 0.001 m² of CdA against a
        # rise per unit CdA of over 100 m per lap).
        data = simulate_loop_ride()
        ride = noisy_ride(data, seed=1, power_cv=0.0)
        laps = build_laps(PositionTest("a", ride), 0, Rider(mass=MASS), 20.0, None,
                          FIELD_TEST_METHODS["loop"])
        assert len(laps) == 6
        for lap in laps:
            rise = lap.known[-1] - TRUE_AREA * lap.drag[-1] - TRUE_ROLLING * lap.rolling[-1]
            road = data["elevation"][lap.end] - data["elevation"][lap.start]
            assert rise == pytest.approx(road, abs=0.15)
            assert lap.drag[-1] > 100.0
            assert lap.reference is None and lap.fraction[-1] == 1.0

    def test_methods_that_need_elevation_refuse_a_ride_without(self):
        ride = noisy_ride(simulate_loop_ride(), seed=1, with_elevation=False)
        with pytest.raises(InputError, match="method 'profile' needs elevation"):
            build_laps(PositionTest("a", ride), 0, Rider(mass=MASS), 20.0, None,
                       FIELD_TEST_METHODS["profile"])
        # a known profile replaces the elevation column
        along = np.linspace(0.0, 2000.0, 11)
        laps = build_laps(PositionTest("a", ride), 0, Rider(mass=MASS), 20.0,
                          (along, 0.01 * along), FIELD_TEST_METHODS["profile"])
        assert laps[0].reference[0] == 0.0 and laps[0].reference[-1] == pytest.approx(
            0.01 * laps[0].distance[-1], rel=1e-9)
