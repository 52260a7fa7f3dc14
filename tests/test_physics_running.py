"""Specification of pacing.physics.running: air resistance of a runner, metabolic power and
the speed it buys (the cost on grades: tests/test_physics_running_cost.py; critical speed and
D′: tests/test_physiology_critical_speed.py; the plans: tests/test_plan_running.py).

Each check names its source; values marked [calc] or [mem] are in docs/references.md,
"Running".
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.running import (
    EFFICIENCY_AGAINST_AIR,
    Runner,
    air_metabolic_power_di_prampero,
    air_resistance_power,
    air_share,
    body_surface_area_du_bois,
    flat_effort,
    metabolic_power,
    runner_drag_area,
    speed_for_metabolic_power,
)
from pacing.plan.running import plan_equal_effort

FIVE_MINUTES_PER_KM = 1000.0 / 300.0  # [m/s]
NO_AIR = Runner(body_mass=70.0, drag_area=0.0)  # treadmill runner: Minetti's cost only


def straight_course(length=10000.0, step=10.0, grade=0.0, heading=0.0):
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, grade * distance, heading=heading)


def out_and_back(length=5000.0, step=10.0):
    """Flat, out due north then back due south (a headwind one way is a tailwind back)."""
    distance = np.arange(0.0, 2 * length + step / 2, step)
    heading = np.where(distance[:-1] < length, 0.0, 180.0)
    return synthetic_course(distance, np.zeros_like(distance), heading=heading)


def average_runner():
    return Runner.from_body(70.0, height=1.75)


# --------------------------------------------------------------------------- air resistance


def test_du_bois_body_surface_area():
    # Du Bois & Du Bois 1916: BSA = 0.007184·W^0.425·H_cm^0.725 (formula as given in the
    # admiral R package documentation, compute_bsa "DuBois-DuBois"); 70 kg, 175 cm [calc]
    assert body_surface_area_du_bois(70.0, 1.75) == pytest.approx(
        0.007184 * 70**0.425 * 175**0.725)
    assert body_surface_area_du_bois(70.0, 1.75) == pytest.approx(1.848, abs=1e-3)
    with pytest.raises(InputError):
        body_surface_area_du_bois(70.0, 175.0)  # height typed in cm


def test_default_drag_area_of_a_runner():
    # docs/references.md, "Running" [mem chain]: 0.9 × 0.266 × BSA ≈ 0.44 m² for 70 kg,
    # 1.75 m (from memory)
    assert runner_drag_area(70.0, 1.75) == pytest.approx(0.44, abs=0.005)


def test_air_term_agrees_with_di_prampero_form():
    """Péronnet & Thibault 1989 (after di Prampero): 0.4·BSA·v³/m W/kg in still air [read in a
    secondary copy; docs/references.md, "Running"]. Ours: ½ρ·(0.9·0.266·BSA)·v³/(0.361·m) at
    ρ = 1.2 kg/m³ → 0.398·BSA·v³/m: the two agree within 1 %. The efficiency 0.361 is Lloyd &
    Zacks 1972 (J Physiol 223:355).
    """
    runner = average_runner()
    bsa = body_surface_area_du_bois(70.0, 1.75)
    speed = np.array([3.0, 4.5, 6.0, 8.0])
    ours = metabolic_power(speed, 0.0, 1.2, runner) - metabolic_power(speed, 0.0, 1.2, NO_AIR)
    assert ours == pytest.approx(air_metabolic_power_di_prampero(speed, bsa, 70.0), rel=0.01)
    # ≈ 0.0106·v³ for 70 kg, 1.75 m (docs/references.md, "Running" [calc])
    assert ours[2] / 6.0**3 == pytest.approx(0.0106, abs=0.0002)
    mechanical = air_resistance_power(speed, 1.2, runner.drag_area)
    assert ours * 70.0 * EFFICIENCY_AGAINST_AIR == pytest.approx(mechanical, rel=1e-12)


def test_air_share_near_pugh_at_middle_distance_speed():
    """Pugh 1971 (J Physiol 213:255) [read abstract]: air resistance "may be 7.5 % of the total
    energy cost at middle distance speed"; Pugh 1970 (J Physiol 207:823) [read abstract]:
    "about 8 %" at 6.0 m/s. The model gives 9.5 % at 6.0 m/s (70 kg, 1.75 m, ρ 1.2): the
    di Prampero term is a little above Pugh's estimate; we accept 5-10 %.
    """
    share = air_share(6.0, 1.2, average_runner())
    assert 0.05 < share < 0.10
    # Pugh 1970: 16 % when sprinting at 10 m/s; cube of speed over a linear cost: more at speed
    assert air_share(10.0, 1.2, average_runner()) > 2 * air_share(5.0, 1.2, average_runner())


def test_drafting_removes_the_air_term_as_pugh_found():
    """Pugh 1971 [read abstract]: 1 m behind another runner "virtually eliminated air
    resistance and reduced VO₂ by 6.5 %" at middle-distance speed. With the drag fully
    removed the model saves its air share (9.5 % at 6 m/s): within 3.5 points of Pugh."""
    alone = average_runner()
    behind = Runner(70.0, alone.drag_area, drafting_reduction=1.0)
    saving = 1.0 - metabolic_power(6.0, 0.0, 1.2, behind) / metabolic_power(6.0, 0.0, 1.2, alone)
    assert saving == pytest.approx(0.065, abs=0.035)
    half = Runner(70.0, alone.drag_area, drafting_reduction=0.5)
    assert metabolic_power(6.0, 0.0, 1.2, half) == pytest.approx(
        0.5 * (metabolic_power(6.0, 0.0, 1.2, alone) + metabolic_power(6.0, 0.0, 1.2, behind)))


def test_headwind_and_tailwind_change_speed_by_the_air_term():
    """Equal effort into a 3 m/s headwind solves Cr·v + a·ρ·(v + 3)²·v = Cr·v0 + a·ρ·v0³ with
    a = ½·CdA/(η·m) (di Prampero / Péronnet-Thibault form with wind); scipy brentq is the
    reference."""
    runner = average_runner()
    course = straight_course(2000.0)
    effort = flat_effort(FIVE_MINUTES_PER_KM, 1.2, runner)
    a = runner.air_coefficient * 1.2
    for wind in (3.0, -3.0):
        plan = plan_equal_effort(course, runner, FIVE_MINUTES_PER_KM, headwind=wind)
        expected = brentq(lambda v, w=wind: 3.6 * v + a * (v + w) * abs(v + w) * v - effort,
                          0.1, 20.0, xtol=1e-14)
        assert plan.speed == pytest.approx(expected, rel=1e-10)
        if wind > 0:
            assert expected < FIVE_MINUTES_PER_KM
        else:
            assert expected > FIVE_MINUTES_PER_KM
    # a 3 m/s headwind costs more than a 3 m/s tailwind gives back (quadratic drag)
    slow = 1000 / plan_equal_effort(course, runner, FIVE_MINUTES_PER_KM, headwind=3.0).speed[0]
    fast = 1000 / plan_equal_effort(course, runner, FIVE_MINUTES_PER_KM, headwind=-3.0).speed[0]
    assert slow - 300.0 > 300.0 - fast > 0


def test_vectorized_solver_matches_scipy_on_every_piece():
    rng = np.random.default_rng(5)
    runner = average_runner()
    grade = rng.uniform(-0.3, 0.3, 200)
    head = rng.uniform(-8, 8, 200)
    cross = rng.uniform(-5, 5, 200)
    rho = rng.uniform(0.9, 1.3, 200)
    power = rng.uniform(5, 25, 200)
    speed = speed_for_metabolic_power(power, grade, rho, runner, head, cross)
    for i in range(200):
        def excess(v, i=i):
            return metabolic_power(v, grade[i], rho[i], runner, head[i], cross[i]) - power[i]

        reference = brentq(excess, 1e-6, 50.0, xtol=1e-14)
        assert speed[i] == pytest.approx(reference, rel=1e-9)


def test_bad_runner_and_air_input_is_refused():
    with pytest.raises(InputError):
        Runner(body_mass=10.0)
    with pytest.raises(InputError):
        Runner(drag_area=-0.1)
    with pytest.raises(InputError):
        Runner(cost_model="unknown")
    with pytest.raises(InputError):
        Runner.from_body(70.0)  # neither height nor CdA
    with pytest.raises(InputError):
        speed_for_metabolic_power(-1.0, 0.0, 1.2, NO_AIR)
    course = straight_course(1000.0)
    with pytest.raises(InputError):
        plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM, air_density=12.0)
    with pytest.raises(InputError):
        plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM, headwind=np.zeros(3))
    with pytest.raises(InputError):
        plan_equal_effort(course, NO_AIR, 40.0)  # 40 m/s: not a running pace
    with pytest.raises(InputError):
        plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM, bounds=[0, 50, 20, 100])


# --------------------------------------------------------------------------- properties


@settings(max_examples=60, deadline=None)
@given(
    grade=st.floats(0.0, 0.44), extra=st.floats(0.0, 0.3), pace=st.floats(150.0, 480.0),
    mass=st.floats(45.0, 100.0), height=st.floats(1.5, 2.0), wind=st.floats(-8.0, 8.0),
)
def test_steeper_uphill_is_never_faster(grade, extra, pace, mass, height, wind):
    runner = Runner.from_body(mass, height=height)
    effort = flat_effort(1000.0 / pace, 1.2, runner)
    steeper = min(grade + extra, 0.45)
    speed = speed_for_metabolic_power(effort, np.array([grade, steeper]), 1.2, runner, wind)
    assert speed[1] <= speed[0] * (1 + 1e-12)


@settings(max_examples=60, deadline=None)
@given(
    wind=st.floats(-9.0, 9.0), more=st.floats(0.0, 9.0), grade=st.floats(-0.3, 0.3),
    cross=st.floats(0.0, 5.0), pace=st.floats(150.0, 480.0),
)
def test_more_headwind_is_never_faster(wind, more, grade, cross, pace):
    runner = average_runner()
    effort = flat_effort(1000.0 / pace, 1.2, runner)
    head = np.array([wind, min(wind + more, 9.0)])
    speed = speed_for_metabolic_power(effort, grade, 1.2, runner, head, cross)
    assert speed[1] <= speed[0] * (1 + 1e-12)


def test_air_term_is_the_cycling_drag_law():
    # wind as in cycling (pacing.physics.cycling, Martin et al. 1998 drag along the apparent wind)
    from pacing.physics.cycling import Rider, aerodynamic_force

    rider = Rider(drag_area=0.44, wheel_drag_area=0.0)
    speed = np.array([2.0, 4.0, 6.0])
    for head, cross in [(0.0, 0.0), (3.0, 2.0), (-8.0, 1.0)]:
        assert air_resistance_power(speed, 1.15, 0.44, head, cross) == pytest.approx(
            aerodynamic_force(speed, 1.15, rider, head, cross) * speed, rel=1e-12)


def test_flat_pace_out_of_range_is_refused_with_the_range_as_speed_and_pace():
    # 0:30 per km is 33.3 m/s; the edges (command line, app) refuse a typed pace in its own
    # words before this, so the core says the speed and the accepted range
    with pytest.raises(InputError, match=r"0\.5-12 m/s \(1:24-33:20 per km\), got 33\.3 m/s"):
        flat_effort(1000.0 / 30.0, 1.2, average_runner())
    with pytest.raises(InputError, match="got nan m/s"):
        flat_effort(float("nan"), 1.2, average_runner())
