"""Specification of pacing.fieldtest.steady_wind: the wind as a vector (meteorological
convention, WMO-No. 8: the direction it blows FROM), head- and crosswind on a piece, the 10 m
wind by the inverted log profile (Stull 1988, ch. 9), and when the headings can tell a wind from
drag."""

from __future__ import annotations

import math

import numpy as np
import pytest
from test_fieldtest_wind_fit import profile_factor

from pacing.fieldtest.steady_wind import (
    head_and_cross,
    heading_spread,
    speed_and_direction,
    speed_at_report_height,
    wind_basis,
    wind_vector,
)

# ---------------------------------------------------------------------------------------------
# The wind as a vector, and heights
# ---------------------------------------------------------------------------------------------


def test_a_wind_from_the_west_blows_east():
    # meteorological convention (WMO-No. 8): the direction is where the wind comes FROM
    east, north = wind_vector(3.0, 270.0)
    assert east == pytest.approx(3.0) and north == pytest.approx(0.0, abs=1e-12)
    assert speed_and_direction([east, north]) == pytest.approx((3.0, 270.0))
    assert speed_and_direction([0.0, 0.0]) == (0.0, 0.0)


@pytest.mark.parametrize("speed, wind_from", [(2.0, 0.0), (4.5, 135.0), (1.0, 359.0)])
def test_speed_and_direction_round_trip(speed, wind_from):
    assert speed_and_direction(wind_vector(speed, wind_from)) == pytest.approx(
        (speed, wind_from))


def test_head_and_cross_follow_the_convention_of_the_project():
    # riding north into a wind from the north: all headwind (DEVELOPERS.md conventions)
    head, cross = head_and_cross(0.0, wind_vector(2.0, 0.0))
    assert float(head) == pytest.approx(2.0) and float(cross) == pytest.approx(0.0, abs=1e-12)
    # riding north, wind from the east (from the right): all crosswind, positive
    head, cross = head_and_cross(0.0, wind_vector(2.0, 90.0))
    assert float(head) == pytest.approx(0.0, abs=1e-12) and float(cross) == pytest.approx(2.0)
    # riding south with a wind from the north: a tailwind
    head, _ = head_and_cross(180.0, wind_vector(2.0, 0.0))
    assert float(head) == pytest.approx(-2.0)


@pytest.mark.parametrize("roughness", [0.0002, 0.03, 0.25])
def test_the_10_m_wind_is_the_log_profile_inverted(roughness):
    # Stull (1988) ch. 9: u(1 m) = u(10 m)·ln(1/z0)/ln(10/z0)
    assert speed_at_report_height(1.0, 1.0, roughness) == pytest.approx(
        1.0 / profile_factor(1.0, roughness), rel=1e-12)


# ---------------------------------------------------------------------------------------------
# Headings: when a wind can be told from drag
# ---------------------------------------------------------------------------------------------


def test_a_circle_spreads_every_way_and_fits_both_components():
    headings = np.linspace(0.0, 360.0, 721)[:-1]
    spread = heading_spread(headings, np.ones_like(headings))
    assert spread.resultant == pytest.approx(0.0, abs=1e-9)
    assert spread.across == pytest.approx(0.5, abs=1e-9)  # mean of sin² over a circle
    assert wind_basis(spread).shape == (2, 2)


def test_an_out_and_back_fits_the_wind_along_the_road_only():
    headings = np.array([30.0] * 50 + [210.0] * 50)
    spread = heading_spread(headings, np.ones_like(headings))
    assert spread.resultant == pytest.approx(0.0, abs=1e-9)
    assert spread.across == pytest.approx(0.0, abs=1e-9)
    assert spread.axis == pytest.approx(30.0)
    basis = wind_basis(spread)
    assert basis.shape == (2, 1)
    # the basis points along the road (30° from north): (sin 30°, cos 30°)
    assert abs(basis[:, 0] @ [math.sin(math.radians(30)), math.cos(math.radians(30))]) == \
        pytest.approx(1.0)


def test_one_heading_cannot_tell_wind_from_drag():
    headings = np.full(100, 75.0) + np.linspace(-10, 10, 100)
    spread = heading_spread(headings, np.ones(100))
    assert spread.resultant > 0.9
    assert wind_basis(spread) is None
    assert wind_basis(None) is None

