"""Virtual elevation (pacing.fieldtest.virtual_elevation) against the Martin et al. (1998) model's
worked values (docs/references.md, "Cycling power balance (Martin et al. 1998)") and our own
forward simulation (tests/test_fieldtest_estimate.py, `simulate_loop_ride`)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from test_fieldtest_estimate import MASS, TRUE_AREA, TRUE_ROLLING, simulate_loop_ride

from pacing.fieldtest.virtual_elevation import elevation_terms, virtual_elevation
from pacing.physics.cycling import Rider

# ---------------------------------------------------------------------------------------------
# Virtual elevation against the Martin model's worked values
# ---------------------------------------------------------------------------------------------


class TestVirtualElevationWorkedValues:
    """Steady rides at the worked powers of docs/references.md, "Cycling power balance (Martin
    et al. 1998)" (m = 80 kg, ρ = 1.2, CdA 0.269, Crr 0.0032; values [calc] from the published
    equation)."""

    rider = Rider(mass=80.0, drag_area=0.269)

    def test_flat_ride_at_the_model_power_stays_level(self):
        time = np.arange(60.0)
        trace = virtual_elevation(time, np.full(60, 10.0), np.full(60, 195.6), 1.2, self.rider)
        # 195.6 W at 10 m/s on the flat ([calc], docs/references.md); 0.05 W of rounding → < 5 mm
        assert abs(trace[-1]) < 0.005

    def test_climb_at_the_model_power_rises_at_six_percent(self):
        time = np.arange(61.0)
        trace = virtual_elevation(time, np.full(61, 5.0), np.full(61, 275.3), 1.2, self.rider)
        # 275.3 W at 5 m/s on 6 % ([calc], docs/references.md): rise = v·t·sin(atan 0.06)
        expected = 5.0 * 60.0 * 0.06 / np.sqrt(1 + 0.06**2)
        # cos θ taken as 1 in the rolling term: Crr·(1 − cos θ)·s ≈ 0.0006 m here
        assert trace[-1] == pytest.approx(expected, abs=0.02)

    def test_trace_follows_the_simulated_profile(self):
        data = simulate_loop_ride()
        rider = Rider(mass=MASS, drag_area=TRUE_AREA, rolling_coefficient=TRUE_ROLLING)
        trace = virtual_elevation(data["time"], data["speed"], data["power"], 1.2, rider,
                                  start_elevation=data["elevation"][0])
        # own forward simulation, exact data: the trace drifts only by discretisation
        assert np.max(np.abs(trace - data["elevation"])) < 1.0


def test_a_pause_adds_nothing_to_the_trace():
    # a piece that bridges a dropped stop carries no energy balance: its rise is 0 in every
    # part, whatever the speeds at its ends
    time = np.arange(6.0)
    speed = np.array([9.0, 9.0, 2.0, 9.0, 9.0, 9.0])
    pause = np.array([False, True, False, False, False])
    terms = elevation_terms(time, speed, np.full(6, 200.0), 1.2, Rider(), pause=pause)
    assert terms.known[1] == terms.per_drag_area[1] == terms.per_rolling_coefficient[1] == 0.0
    assert terms.known[0] != 0.0


@settings(max_examples=30, deadline=None)
@given(area=st.floats(0.15, 0.5), rolling=st.floats(0.0, 0.02))
def test_virtual_elevation_is_linear_in_drag_area_and_rolling_coefficient(area, rolling):
    data = simulate_loop_ride()
    args = (data["time"][:300], data["speed"][:300], data["power"][:300], 1.2)
    terms = elevation_terms(*args, Rider(mass=MASS))
    trace = virtual_elevation(*args, Rider(mass=MASS, drag_area=area,
                                           rolling_coefficient=rolling))
    expected = np.cumsum(terms.known - area * terms.per_drag_area
                         - rolling * terms.per_rolling_coefficient)
    np.testing.assert_allclose(trace[1:], expected, rtol=1e-9, atol=1e-9)


@settings(max_examples=30, deadline=None)
@given(extra=st.floats(1.0, 100.0))
def test_more_power_at_the_same_speeds_means_a_higher_trace(extra):
    data = simulate_loop_ride()
    rider = Rider(mass=MASS, drag_area=TRUE_AREA)
    args = (data["time"][:200], data["speed"][:200])
    low = virtual_elevation(*args, data["power"][:200], 1.2, rider)
    high = virtual_elevation(*args, data["power"][:200] + extra, 1.2, rider)
    assert np.all(np.diff(high - low) > 0)
