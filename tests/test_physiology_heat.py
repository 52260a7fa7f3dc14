"""Specification of pacing.physiology.heat: the fraction of critical power (cycling) or critical
speed (running) an athlete keeps under heat stress, acclimatised or not."""

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.physiology.heat import DEFAULT_HEAT_MODELS, HEAT_MODELS, heat_factor


def test_cycling_loses_what_the_unacclimatised_time_trial_lost_in_the_heat():
    # Racinais et al. (2015), MSSE 47:601: 43.4-km outdoor time trial at about 37 °C against
    # about 8 °C; mean power 16 % lower on day 1 in the heat (Junge et al. 2016, Temperature
    # 3:539, Table 1, which also puts the hot trial at 28 °C WBGT).
    assert float(heat_factor(28.0, "cycling").factor) == pytest.approx(0.84, abs=1e-12)


def test_two_weeks_of_acclimatisation_leave_only_two_percent():
    # Same study after 14 days in the heat: 66 min as in the cool, 2 % less power (Junge et
    # al. 2016, Table 1).
    assert float(heat_factor(28.0, "cycling", acclimatised=True).factor) == pytest.approx(
        0.98, abs=1e-12)


def test_cycling_loss_grows_linearly_between_the_cool_and_the_hot_trial():
    wbgt = np.array([8.0, 13.0, 18.0, 23.0, 28.0])
    np.testing.assert_allclose(heat_factor(wbgt, "cycling").factor,
                               1.0 - 0.16 * (wbgt - 8.0) / 20.0, rtol=1e-12)


def test_no_loss_below_the_cool_reference():
    assert heat_factor([-5.0, 0.0, 8.0], "cycling").factor.tolist() == [1.0, 1.0, 1.0]
    assert heat_factor([0.0, 7.55], "running").factor.tolist() == [1.0, 1.0]


# Ely et al. (2007), MSSE 39:487, abstract: top three men slower than the course record by
# 1.7, 2.5, 3.3 and 4.5 % in WBGT quartiles 5.1-10, 10.1-15, 15.1-20, 20.1-25 °C.
ELY_QUARTILES = [(7.55, 0.017), (12.55, 0.025), (17.55, 0.033), (22.55, 0.045)]


@pytest.mark.parametrize(("wbgt", "slower"), ELY_QUARTILES)
def test_running_speed_follows_the_marathon_quartiles(wbgt, slower):
    # Time 1 + d over the record is speed 1/(1 + d); relative to the coolest quartile the
    # critical speed kept is (1 + 0.017)/(1 + d).
    assert float(heat_factor(wbgt, "running").factor) == pytest.approx(1.017 / (1 + slower),
                                                                       rel=1e-12)


def test_finishing_time_implied_by_the_running_factor():
    # A runner 4.5 % over the record at 22.55 °C WBGT ran 1.045/1.017 as long as at 7.55 °C
    # (Ely et al. 2007): 2:10:00 becomes 2:13:35.
    speed_ratio = float(heat_factor(22.55, "running").factor)
    assert 7800.0 / speed_ratio == pytest.approx(7800.0 * 1.045 / 1.017, rel=1e-12)


def test_beyond_the_source_the_last_slope_continues_and_is_flagged():
    result = heat_factor([20.0, 25.0, 30.0], "running")
    assert result.within_validity.tolist() == [True, True, False]
    slope = (1.017 / 1.045 - 1.017 / 1.033) / 5.0
    assert result.factor[2] == pytest.approx(1.017 / 1.045 + slope * (30.0 - 22.55), rel=1e-12)
    hot = heat_factor([28.0, 35.0, 50.0], "cycling")
    assert hot.within_validity.tolist() == [True, False, False]
    assert hot.factor[2] == pytest.approx(1.0 - 0.16 * (50.0 - 8.0) / 20.0, rel=1e-12)


def test_factor_never_rises_with_heat():
    wbgt = np.linspace(-10.0, 45.0, 200)
    for sport in ("cycling", "running"):
        for acclimatised in (False, True):
            factor = heat_factor(wbgt, sport, acclimatised).factor
            assert np.all(np.diff(factor) <= 0) and np.all(factor <= 1.0)


def test_models_and_defaults():
    assert DEFAULT_HEAT_MODELS == {"cycling": "racinais-2015", "running": "ely-2007"}
    assert {key: (model.sport, model.quantity) for key, model in HEAT_MODELS.items()} == {
        "racinais-2015": ("cycling", "power"), "ely-2007": ("running", "speed")}
    assert heat_factor(20.0, "running").quantity == "speed"


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: heat_factor(20.0, "swimming"), "sport"),
        (lambda: heat_factor(20.0, "cycling", model="ely-2007"), "written for running"),
        (lambda: heat_factor(20.0, "cycling", model="unknown"), "heat model"),
        (lambda: heat_factor(float("nan"), "cycling"), "WBGT"),
        (lambda: heat_factor(80.0, "cycling"), "WBGT"),
    ],
)
def test_bad_heat_inputs_raise_one_line(call, message):
    with pytest.raises(InputError, match=message) as raised:
        call()
    assert "\n" not in str(raised.value)
