"""Specification of pacing.physiology.altitude: the fraction of critical power / speed an athlete
keeps at altitude, acclimatised or not."""

import numpy as np
import pytest

from pacing.errors import InputError
from pacing.physiology.altitude import ALTITUDE_MODELS, DEFAULT_ALTITUDE_MODEL, altitude_factor


def bassett_acclimatised(km):
    """Bassett et al. (1999), Med Sci Sports Exerc 31(11):1665, acclimatised athletes:
    % of sea-level maximal aerobic power = −1.122·x² − 1.8356·x + 99.921 (from memory)."""
    return (-1.122 * km**2 - 1.8356 * km + 99.921) / 100.0


def bassett_unacclimatised(km):
    """Bassett et al. (1999), not acclimatised: 0.178·x³ − 1.43·x² − 4.07·x + 100 (from
    memory)."""
    return (0.178 * km**3 - 1.43 * km**2 - 4.07 * km + 100.0) / 100.0


ELEVATIONS = np.array([0.0, 500.0, 1000.0, 1500.0, 2000.0, 2300.0, 2500.0, 3000.0])


def test_unacclimatised_factor_is_bassett_s_curve():
    # Bassett et al. (1999), relative to sea level.
    got = altitude_factor(ELEVATIONS).factor
    np.testing.assert_allclose(got, bassett_unacclimatised(ELEVATIONS / 1000.0), rtol=1e-12)


def test_acclimatised_factor_is_bassett_s_curve_relative_to_sea_level():
    # The published fit gives 99.921 % at sea level; the factor is taken relative to the
    # athlete's test elevation, so it is 1 there.
    got = altitude_factor(ELEVATIONS, acclimatised=True).factor
    expected = bassett_acclimatised(ELEVATIONS / 1000.0) / bassett_acclimatised(0.0)
    np.testing.assert_allclose(got, expected, rtol=1e-12)
    assert got[0] == 1.0


def test_acclimatisation_keeps_more_power_at_every_altitude():
    elevation = np.linspace(100.0, 3000.0, 30)
    assert np.all(altitude_factor(elevation, acclimatised=True).factor
                  > altitude_factor(elevation).factor)


def test_mexico_city_costs_about_a_seventh_of_aerobic_power_unacclimatised():
    # 2300 m (Mexico City, where several hour records were set; Bassett et al. 1999):
    # 0.178·2.3³ − 1.43·2.3² − 4.07·2.3 + 100 = 2.166 − 7.565 − 9.361 + 100 = 85.24 %;
    # acclimatised (−5.935 − 4.222 + 99.921)/99.921 = 89.83 %.
    assert float(altitude_factor(2300.0).factor) == pytest.approx(0.8524, abs=5e-5)
    assert float(altitude_factor(2300.0, acclimatised=True).factor) == pytest.approx(
        0.8983, abs=5e-5)


def test_two_independent_studies_agree_within_three_points_up_to_2500_m():
    # Wehrlin & Hallén (2006, acute hypoxia, VO2max −6.3 % per 1000 m above 300 m; from memory)
    # and Bassett et al. (1999, a fit to other studies) differ by less than 3 percentage
    # points from 300 to 2500 m.
    elevation = np.linspace(300.0, 2500.0, 23)
    bassett = altitude_factor(elevation, model="bassett-1999").factor
    wehrlin = altitude_factor(elevation, model="wehrlin-hallen-2006").factor
    assert np.max(np.abs(bassett - wehrlin)) < 0.03


def test_factor_is_relative_to_where_the_athlete_was_tested():
    # A rider tested at 1800 m loses nothing there or lower, and less than a sea-level rider
    # going up to 2500 m.
    at_home = altitude_factor([1000.0, 1800.0, 2500.0], reference_elevation=1800.0).factor
    assert at_home[0] == 1.0 and at_home[1] == pytest.approx(1.0, abs=1e-12)
    assert at_home[2] == pytest.approx(bassett_unacclimatised(2.5) / bassett_unacclimatised(1.8),
                                       rel=1e-12)
    assert at_home[2] > float(altitude_factor(2500.0).factor)


def test_below_sea_level_keeps_the_sea_level_value():
    assert altitude_factor([-400.0, -10.0]).factor.tolist() == [1.0, 1.0]


def test_validity_is_reported_not_refused():
    result = altitude_factor([1000.0, 3500.0])
    assert result.within_validity.tolist() == [True, False]
    assert result.model == DEFAULT_ALTITUDE_MODEL == "bassett-1999"
    assert np.all(result.factor <= 1.0) and np.all(result.factor > 0.0)


def test_models_are_listed():
    assert list(ALTITUDE_MODELS) == ["bassett-1999", "wehrlin-hallen-2006"]


@pytest.mark.parametrize(
    ("call", "message"),
    [
        (lambda: altitude_factor(1000.0, model="unknown"), "altitude model"),
        (lambda: altitude_factor(1000.0, acclimatised=True, model="wehrlin-hallen-2006"),
         "not\\s+acclimatised"),
        (lambda: altitude_factor(float("nan")), "elevation"),
        (lambda: altitude_factor(12000.0), "elevation"),
        (lambda: altitude_factor(1000.0, reference_elevation=-900.0), "elevation"),
    ],
)
def test_bad_altitude_inputs_raise_one_line(call, message):
    with pytest.raises(InputError, match=message) as raised:
        call()
    assert "\n" not in str(raised.value)
