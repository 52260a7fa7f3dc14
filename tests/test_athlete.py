"""The athlete and the setup as a coach describes them (pacing.athlete), and the power-balance
parameters they imply."""

from __future__ import annotations

import pytest

from pacing.athlete import Athlete, Setup, rider_for
from pacing.errors import InputError
from pacing.physics.cycling import MARTIN_1998


def test_the_rider_carries_athlete_plus_bike_and_the_setup_s_position():
    rider = rider_for(Athlete(body_mass=70.0), Setup(bike_mass=8.5, drag_area=0.25,
                                                     rolling_coefficient=0.004),
                      drafting_reduction=0.3)
    assert rider.mass == 78.5
    assert (rider.drag_area, rider.rolling_coefficient) == (0.25, 0.004)
    assert rider.drafting_reduction == 0.3


def test_a_setup_defaults_to_martin_et_al_s_tyres_and_drivetrain():
    # Martin et al. (1998): Crr 0.0032 and drivetrain efficiency 0.976 (docs/references.md,
    # "Cycling power balance (Martin et al. 1998)")
    assert Setup().rolling_coefficient == MARTIN_1998["rolling_coefficient"] == 0.0032
    assert Setup().drivetrain_efficiency == MARTIN_1998["drivetrain_efficiency"] == 0.976


@pytest.mark.parametrize("make, message", [
    (lambda: Athlete(body_mass=10.0), "body mass must be 20-250 kg"),
    (lambda: Athlete(critical_power=0.0), "critical power must be positive"),
    (lambda: Setup(drag_area=2.0), "CdA must be 0.05-1.5"),
    (lambda: Setup(power_share=0.1), "power share must be 0.3-1.2"),
    (lambda: Setup(rolling_coefficient=-0.1), "Crr must be 0-0.1"),
    (lambda: Setup(drivetrain_efficiency=1.2), "drivetrain efficiency must be 0.5-1"),
])
def test_out_of_range_values_are_refused_in_one_line(make, message):
    with pytest.raises(InputError, match=message):
        make()
