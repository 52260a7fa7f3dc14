"""The warnings of a field test (pacing.fieldtest.checks): each check's threshold and the numbers
its notice carries. The same checks on simulated rides, through estimate_drag, are in
tests/test_fieldtest_estimate.py.
"""

from __future__ import annotations

import numpy as np
import pytest

from pacing.display.notices import describe
from pacing.errors import InputError
from pacing.fieldtest.checks import (
    BRAKING_DECELERATION,
    MAX_BOOTSTRAP_DRAWS,
    PLAUSIBLE_ROLLING,
    USUAL_DRAG_AREA,
    USUAL_ROLLING,
    braking_times,
    check_bootstrap_draws,
    conditions_notices,
    drag_area_notices,
    interval_notices,
    rolling_notices,
    separation_notices,
)
from pacing.fieldtest.methods import FIELD_TEST_METHODS
from pacing.fieldtest.ride import make_ride

LOOP = FIELD_TEST_METHODS["loop"]


def steady_ride(n: int = 60):
    return make_ride(np.arange(float(n)), np.full(n, 9.0), np.full(n, 200.0))


def codes(notices) -> list[str]:
    return [n.code for n in notices]


def test_braking_is_a_fast_slowdown_while_hardly_pedalling():
    ride = steady_ride()
    assert braking_times(ride).size == 0
    speed, power = ride.speed.copy(), ride.power.copy()
    # 1.5 m/s² for three seconds at 0 W: above the 1 m/s² threshold (common practice)
    speed[30:34] = 9.0 - 1.5 * np.arange(4)
    power[30:34] = 0.0
    braking = make_ride(ride.time, speed, power)
    np.testing.assert_array_equal(braking_times(braking), [31.0, 32.0, 33.0])
    # the same slowdown while pedalling hard is not braking
    assert braking_times(make_ride(ride.time, speed, ride.power)).size == 0
    assert BRAKING_DECELERATION == 1.0


def test_braking_and_wind_notices_carry_their_numbers():
    ride = steady_ride()
    speed, power = ride.speed.copy(), ride.power.copy()
    speed[10:18] = 9.0 - 1.1 * np.arange(8)  # stays above the 1 m/s of a stop
    power[10:18] = 0.0
    braking = make_ride(ride.time, speed, power)
    notices = conditions_notices("hoods", braking, 3.0, 4.0, LOOP)
    assert codes(notices) == ["fieldtest-windy", "fieldtest-braking"]
    windy, brakes = notices
    assert windy.values["speed_mps"] == 5.0  # hypot(3, 4)
    assert brakes.values["count"] == 7 and len(brakes.values["times_s"]) == 5
    assert describe(brakes).endswith("(t = 11, 12, 13, 14, 15 s …): brake-free laps give "
                                     "better estimates")
    # calm air (Lim et al. 2011: under 1.0 m/s) raises nothing
    assert conditions_notices("hoods", ride, 0.6, 0.0, LOOP) == []


@pytest.mark.parametrize("area, expected", [
    (-0.01, ["fieldtest-cda-not-physical"]),
    (0.0, ["fieldtest-cda-not-physical"]),
    (0.05, ["fieldtest-cda-unusual"]),
    (0.3, []),
    (0.95, ["fieldtest-cda-unusual"]),
])
def test_drag_area_outside_the_usual_range(area, expected):
    assert codes(drag_area_notices("hoods", area, None)) == expected
    assert USUAL_DRAG_AREA == (0.1, 0.8)


def test_an_interval_reaching_below_zero():
    assert codes(drag_area_notices("hoods", 0.3, (-0.02, 0.5))) == [
        "fieldtest-cda-interval-below-zero"]
    assert codes(rolling_notices(True, 0.004, (-0.001, 0.009))) == [
        "fieldtest-crr-interval-below-zero"]


def test_a_fitted_crr_outside_the_range_of_tyres():
    assert codes(rolling_notices(True, -0.001, None)) == ["fieldtest-crr-negative"]
    assert codes(rolling_notices(True, 0.05, None)) == ["fieldtest-crr-unusual"]
    assert rolling_notices(True, 0.004, None) == []
    # a Crr given or held is not judged
    assert rolling_notices(False, -0.001, None) == []
    assert USUAL_ROLLING == (0.0005, 0.03)


def test_held_crr_gives_cda_over_the_plausible_range_of_tyres():
    # CdA moves with the held Crr by its slope: at Crr 0.006 it is 0.3 − 8·(0.006 − 0.0032)
    (held,) = separation_notices({"reason": "correlation", "correlation": 0.995}, 0.0032,
                                 ["hoods"], [0.3], [-8.0])
    assert held.code == "fieldtest-crr-held"
    low, high = PLAUSIBLE_ROLLING
    assert held.values["drag_area_at_high_rolling_m2"] == (pytest.approx(0.3 - 8 * (high
                                                                                - 0.0032)),)
    assert held.values["drag_area_at_low_rolling_m2"] == (pytest.approx(0.3 - 8 * (low
                                                                               - 0.0032)),)
    assert "'hoods' 0.278-0.306 m²" in describe(held)
    (joint,) = separation_notices({"reason": "singular"}, None, ["hoods"], [0.3], [-8.0])
    assert joint.code == "fieldtest-inseparable"
    assert separation_notices(None, None, ["hoods"], [0.3], [-8.0]) == []


def test_why_there_is_no_interval():
    assert codes(interval_notices(["aero"], 3, 1000, False)) == ["fieldtest-few-laps"]
    assert codes(interval_notices([], 3, 1000, False)) == ["fieldtest-bootstrap-failed"]
    assert interval_notices(["aero"], 3, 0, False) == []  # no interval was asked for
    assert interval_notices([], 3, 1000, True) == []


class TestBootstrapDraws:
    """The work a user can ask for is bounded. Percentile intervals want about 1000 draws
    (Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 13 and 19): the bound
    leaves ten times that."""

    @pytest.mark.parametrize("draws", [0, 1, 1000, MAX_BOOTSTRAP_DRAWS, np.int64(300)])
    def test_up_to_the_bound_is_accepted(self, draws):
        assert check_bootstrap_draws(draws) == int(draws)
        assert isinstance(check_bootstrap_draws(draws), int)

    @pytest.mark.parametrize("draws", [-1, MAX_BOOTSTRAP_DRAWS + 1, 100_000_000, 2.5, True,
                                       "1000", float("nan")])
    def test_outside_it_is_one_line_naming_the_bound(self, draws):
        with pytest.raises(InputError) as caught:
            check_bootstrap_draws(draws, "--bootstrap")
        message = str(caught.value)
        assert message.startswith("--bootstrap must be a whole number from 0 to 10000")
        assert "\n" not in message

    def test_the_bound_leaves_ten_times_what_percentile_intervals_want(self):
        assert MAX_BOOTSTRAP_DRAWS == 10 * 1000
