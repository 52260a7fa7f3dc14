"""Specification of finish-time sensitivities and uncertainty (pacing.compare.sensitivity).

Check values: the steady Martin et al. (1998) balance (J Appl Biomech 14(3):276-291,
doi:10.1123/jab.14.3.276; constants as in docs/references.md, "Cycling power balance (Martin
et al. 1998)" [mem]), differentiated by hand and solved by scipy brentq; the law of propagation
of uncertainty (JCGM 100:2008, GUM section 5.1) worked by hand; numpy's percentiles.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from samples import flat_course as flat_road
from samples import martin_steady_speed as steady_speed
from samples import six_km_hill
from scipy import optimize

from pacing.compare.sensitivity import (
    STEPS,
    Sensitivity,
    Spread,
    Uncertainty,
    difference_spread,
    finish_time_spread,
    sampled_difference,
    sampled_finish_time,
    sensitivity,
)
from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import MARTIN_1998, Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course

G = 9.80665  # standard gravity [m/s²]
LENGTH = 100_000.0


def east_course(length=LENGTH, step=100.0):
    """A flat straight road heading east (90°)."""
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, np.zeros_like(distance), heading=90.0)


def hill_course():
    """6 km heading east: 2 km flat, 2 km at 5 %, 2 km down at 4 %, 50 m pieces."""
    distance = np.arange(0.0, 6000.0 + 25.0, 50.0)
    elevation = np.interp(distance, [0, 2000, 4000, 6000], [100, 100, 200, 120])
    return synthetic_course(distance, elevation, heading=90.0)


class Balance:
    """The steady flat-road balance η·P = v·F(v) of Martin et al. (1998), written out:
    F(v) = k·(v + w)² + Crr·m·g + 0.091 + 0.0087·v, k = ½ρ(CdA + 0.0044), w the headwind."""

    def __init__(self, power=250.0, drag_area=0.28, mass=80.0, rolling=0.0032, density=1.2,
                 headwind=0.0):
        self.power, self.mass, self.rolling, self.headwind = power, mass, rolling, headwind
        self.k = 0.5 * density * (drag_area + 0.0044)
        self.speed = optimize.brentq(lambda v: v * self.force(v) - 0.976 * power, 0.5, 40.0,
                                     xtol=1e-14)

    def force(self, v):
        return (self.k * (v + self.headwind) ** 2 + self.rolling * self.mass * G + 0.091
                + 0.0087 * v)

    def dtime(self, d_force):
        """dT/dx on LENGTH for a change dF/dx of the force at fixed speed [s per unit of x]:
        0 = v·∂F/∂x + (F + v·F′)·dv/dx, T = L/v (implicit differentiation)."""
        v = self.speed
        slope = 2 * self.k * (v + self.headwind) + 0.0087
        dv = -v * d_force / (self.force(v) + v * slope)
        return -LENGTH / v**2 * dv


def test_crr_and_mass_sensitivities_match_the_derivative_of_the_steady_balance():
    # On the flat Crr and mass enter through the rolling force Crr·m·g: ∂F/∂Crr = m·g,
    # ∂F/∂m = Crr·g; per step (+0.001 Crr, +1 kg). The rides start at the unchanged steady
    # speed; on 100 km the settling of the perturbed rides is diluted below 0.3 %.
    conditions = Conditions()
    course = east_course()
    density = float(air_along_course(course, conditions).density[0])
    balance = Balance(density=density)
    sens = sensitivity(course, np.full(1000, 250.0), Rider(mass=80.0, drag_area=0.28),
                       conditions, SimulationOptions(start_speed=balance.speed))
    assert sens.rolling_coefficient == pytest.approx(
        STEPS["rolling_coefficient"] * balance.dtime(80.0 * G), rel=0.003)
    assert sens.mass == pytest.approx(STEPS["mass"] * balance.dtime(0.0032 * G), rel=0.003)


def test_wind_sensitivity_matches_the_derivative_of_the_steady_balance():
    # A 3 m/s forecast wind from the east on a road heading east: a pure headwind w = f·W at
    # rider height, f the log-profile factor read off the air along the course (linear in W).
    # ∂F/∂w = 2k·(v + w); dT/dW = f·dT/dw; central difference over ±1 m/s of W.
    course = east_course()
    conditions = Conditions(wind_speed=3.0, wind_from=90.0)
    air = air_along_course(course, conditions)
    factor = float(air_along_course(course, replace(conditions, wind_speed=1.0)).headwind[0])
    assert float(air.headwind[0]) == pytest.approx(3.0 * factor, rel=1e-12)
    assert np.allclose(air.crosswind, 0.0, atol=1e-12)
    balance = Balance(density=float(air.density[0]), headwind=3.0 * factor)
    sens = sensitivity(course, np.full(1000, 250.0), Rider(mass=80.0, drag_area=0.28),
                       conditions, SimulationOptions(start_speed=balance.speed))
    v, w = balance.speed, balance.headwind
    assert sens.wind == pytest.approx(factor * balance.dtime(2 * balance.k * (v + w)), rel=0.003)
    assert sens.wind_direction == 90.0


def test_crr_below_one_step_takes_a_forward_difference():
    # Crr cannot go below 0: with Crr 0.0005 < 0.001 the sensitivity is T(Crr + 0.001) − T
    course = hill_course()
    conditions = Conditions()
    rider = Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.0005)
    power = np.full(120, 250.0)
    options = SimulationOptions(start_speed=8.0)
    sens = sensitivity(course, power, rider, conditions, options)
    air = air_along_course(course, conditions)
    direct = (simulate(course, power, replace(rider, rolling_coefficient=0.0015), air,
                       options).finish_time - sens.finish_time)
    assert sens.rolling_coefficient == pytest.approx(direct, rel=1e-12)
    assert sens.per_step()["rolling_coefficient"] == sens.rolling_coefficient


@pytest.mark.parametrize("rider, power, message", [
    (Rider(drag_area=0.01), 250.0, "CdA must exceed"),
    (Rider(), 8.0, "mean power must exceed"),
])
def test_values_too_small_for_a_step_are_refused(rider, power, message):
    # (8 W on the flat is ridden at 8 W: above the 2.8 W that holds the walking speed)
    course = east_course(6000.0, 50.0)
    with pytest.raises(InputError, match=message):
        sensitivity(course, np.full(120, power), rider, Conditions(),
                    SimulationOptions(start_speed=2.0))


# ------------------------------------------------------------------------ linearized spread

MADE_UP = Sensitivity(finish_time=3600.0, drag_area=10.0, mass=2.0, power=-30.0,
                      rolling_coefficient=5.0, wind=8.0, wind_direction=0.0)
"""Invented sensitivities [s per step] for worked examples."""


def test_finish_time_spread_by_hand():
    # GUM 5.1 with independent inputs: σ_T² = Σ (S_x·σ_x/h_x)². By hand: CdA 10·0.005/0.01 =
    # 5 s, Crr 5·0.0005/0.001 = 2.5 s, mass 2·1/1 = 2 s, wind 8·0.5/1 = 4 s;
    # σ_T = √(25 + 6.25 + 4 + 16) = √51.25 = 7.159 s
    spread = finish_time_spread(MADE_UP, Uncertainty(drag_area=0.005, rolling_coefficient=0.0005,
                                                     mass=1.0, wind=0.5))
    assert spread.contributions == pytest.approx({"drag_area": 5.0, "rolling_coefficient": 2.5,
                                                  "mass": 2.0, "wind": 4.0}, rel=1e-12)
    assert spread.standard_deviation == pytest.approx(math.sqrt(51.25), rel=1e-12)
    assert spread.samples is None and spread.interval() is None


def test_difference_spread_by_hand():
    # Shared inputs enter through S_B − S_A; the CdA errors are independent, each with its
    # own σ: √((10·0.005/0.01)² + (12·0.002/0.01)²) = √(25 + 5.76) s; Crr (6 − 5)·0.0005/0.001
    # = 0.5 s, mass (2.5 − 2)·1 = 0.5 s, wind (7 − 8)·0.5 = 0.5 s (absolute)
    second = replace(MADE_UP, drag_area=12.0, rolling_coefficient=6.0, mass=2.5, wind=7.0)
    spread = difference_spread(MADE_UP, second, Uncertainty(0.005, 0.0005, 1.0, 0.5),
                               Uncertainty(drag_area=0.002))
    assert spread.contributions["drag_area"] == pytest.approx(math.sqrt(25 + 5.76), rel=1e-12)
    for name in ("rolling_coefficient", "mass", "wind"):
        assert spread.contributions[name] == pytest.approx(0.5, rel=1e-12)
    assert spread.standard_deviation == pytest.approx(math.sqrt(30.76 + 0.75), rel=1e-12)
    # the same setup twice with only shared errors: no spread at all
    assert difference_spread(MADE_UP, MADE_UP, Uncertainty(0.0, 0.001, 2.0, 1.0)
                             ).standard_deviation == 0.0


def test_interval_and_sample_spread_of_known_samples():
    # numpy's linear percentiles of 1..100: the 5th at index 4.95 → 5.95, the 95th at 94.05
    # → 95.05; the sample σ (ddof 1) of 1..n is √(n(n + 1)/12) = √(10100/12) = 29.011
    spread = Spread(0.0, {}, np.arange(1.0, 101.0))
    assert spread.interval(0.9) == pytest.approx((5.95, 95.05), rel=1e-12)
    assert spread.sampled_standard_deviation == pytest.approx(math.sqrt(10100 / 12), rel=1e-12)
    assert Spread(0.0, {}, np.array([1.0])).sampled_standard_deviation is None


# ------------------------------------------------------------------------ Monte Carlo


def test_without_uncertainty_every_draw_is_the_unchanged_ride():
    course = hill_course()
    conditions = Conditions(wind_speed=2.0, wind_from=45.0)
    rider = Rider(mass=80.0, drag_area=0.30)
    power = np.full(120, 250.0)
    options = SimulationOptions(start_speed=8.0)
    base = simulate(course, power, rider, air_along_course(course, conditions),
                    options).finish_time
    times = sampled_finish_time(course, power, rider, conditions, Uncertainty(), samples=3,
                                options=options)
    np.testing.assert_allclose(times, base, rtol=1e-12)
    same = sampled_difference(course, (rider, power), (rider, power), conditions,
                              Uncertainty(rolling_coefficient=0.0005, mass=1.0, wind=0.5),
                              samples=3, seed=2, options=options)
    np.testing.assert_allclose(same, 0.0, atol=1e-9)  # shared errors cancel exactly


def test_the_first_draws_do_not_depend_on_how_many_are_taken():
    course = hill_course()
    pair = ((Rider(mass=80.0, drag_area=0.30), np.full(120, 250.0)),
            (Rider(mass=80.0, drag_area=0.27), np.full(120, 240.0)))
    options = SimulationOptions(start_speed=8.0)
    uncertainty = Uncertainty(drag_area=0.005, wind=0.5)
    few = sampled_difference(course, *pair, Conditions(), uncertainty, samples=2, seed=4,
                             options=options)
    more = sampled_difference(course, *pair, Conditions(), uncertainty, samples=4, seed=4,
                              options=options)
    np.testing.assert_array_equal(few, more[:2])
    assert np.all(few != 0.0)


@pytest.mark.parametrize("samples", [1, 2.5, 100_001])
def test_a_bad_sample_count_is_refused(samples):
    with pytest.raises(InputError, match="samples"):
        sampled_finish_time(hill_course(), np.full(120, 250.0), Rider(), Conditions(),
                            Uncertainty(), samples=samples)


@pytest.mark.parametrize("field", ["drag_area", "rolling_coefficient", "mass", "wind"])
def test_an_uncertainty_must_be_finite_and_not_negative(field):
    for value in (-1e-3, math.nan, math.inf):
        with pytest.raises(InputError, match="uncertainty"):
            Uncertainty(**{field: value})


# ------------------------------------------------- moved from tests/test_compare_setups.py

def test_cda_sensitivity_matches_the_derivative_of_the_steady_cubic():
    """Flat, windless course at constant power, started at the steady speed.

    Steady balance (Martin et al. 1998): η·P = v·F(v), F(v) = ½ρ(CdA + F_w)v² + Crr·m·g + a + b·v.
    Differentiate at constant P with respect to CdA:
        0 = ½ρv³ + (F + v·F′)·dv/dCdA,  F′ = ρ(CdA + F_w)·v + b
        ⇒ dv/dCdA = −½ρv³ / (F + v·F′).
    Time T = L/v ⇒ dT/dCdA = −L/v²·dv/dCdA. Per 0.01 m²: S = 0.01·dT/dCdA.
    The central difference is second order. The perturbed rides start at the baseline's
    steady speed and settle to their own within a few hundred metres; that fixed cost (both
    perturbations shorten the difference, measured 0.15 s on 20 km) is diluted on a 100 km
    course: agreement within 0.3 %.
    """
    length = 100_000.0
    course = flat_road(length, step=100.0)
    conditions = Conditions()
    density = float(air_along_course(course, conditions).density[0])
    rider = Rider(mass=80.0, drag_area=0.28)
    v = steady_speed(250.0, 0.28, 80.0, density)
    m = MARTIN_1998
    k = 0.5 * density * (0.28 + m["wheel_drag_area"])
    force = (k * v**2 + m["rolling_coefficient"] * 80.0 * STANDARD_GRAVITY
             + m["bearing_force_constant"] + m["bearing_force_per_speed"] * v)
    slope = 2.0 * k * v + m["bearing_force_per_speed"]
    dv = -0.5 * density * v**3 / (force + v * slope)
    expected = 0.01 * (-length / v**2 * dv)
    sens = sensitivity(course, np.full(1000, 250.0), rider, conditions,
                       SimulationOptions(start_speed=v))
    assert sens.finish_time == pytest.approx(length / v, rel=1e-5)
    assert sens.drag_area == pytest.approx(expected, rel=0.003)


def test_sensitivity_signs_and_the_wind_forward_difference():
    course = six_km_hill()
    conditions = Conditions(wind_speed=0.0, wind_from=90.0)  # forecast: calm; from the east
    rider = Rider(mass=80.0, drag_area=0.30)
    sens = sensitivity(course, np.full(600, 250.0), rider, conditions)
    assert sens.drag_area > 0 and sens.mass > 0 and sens.rolling_coefficient > 0
    assert sens.power < 0
    assert sens.wind > 0  # the course heads east: wind from the east is a headwind
    air_1 = air_along_course(course, Conditions(wind_speed=1.0, wind_from=90.0))
    direct = simulate(course, 250.0, rider, air_1).finish_time - sens.finish_time
    assert sens.wind == pytest.approx(direct, rel=1e-12)
    assert set(sens.per_step()) == set(STEPS)


def test_power_sensitivity_is_consistent_with_the_cubic():
    """On the flat, dT/dP = −L/v²·η/(F + v·F′) (same implicit differentiation); per 10 W.
    100 km course as in the CdA test, agreement within 0.3 %."""
    length = 100_000.0
    course = flat_road(length, step=100.0)
    conditions = Conditions()
    density = float(air_along_course(course, conditions).density[0])
    v = steady_speed(250.0, 0.28, 80.0, density)
    m = MARTIN_1998
    k = 0.5 * density * (0.28 + m["wheel_drag_area"])
    force = (k * v**2 + m["rolling_coefficient"] * 80.0 * STANDARD_GRAVITY
             + m["bearing_force_constant"] + m["bearing_force_per_speed"] * v)
    slope = 2.0 * k * v + m["bearing_force_per_speed"]
    expected = 10.0 * (-length / v**2) * m["drivetrain_efficiency"] / (force + v * slope)
    sens = sensitivity(course, np.full(1000, 250.0), Rider(mass=80.0, drag_area=0.28),
                       conditions, SimulationOptions(start_speed=v))
    assert sens.power == pytest.approx(expected, rel=0.003)


def test_linearized_spread_adds_contributions_in_quadrature_and_matches_monte_carlo():
    course = six_km_hill(step=50.0)  # 120 pieces: many simulations stay fast
    conditions = Conditions(wind_speed=3.0, wind_from=90.0)
    rider = Rider(mass=80.0, drag_area=0.30)
    power = np.full(120, 250.0)
    options = SimulationOptions(start_speed=8.0)  # rolling start: fewer steps, faster
    sens = sensitivity(course, power, rider, conditions, options)
    uncertainty = Uncertainty(drag_area=0.005, rolling_coefficient=0.0003, mass=0.5, wind=0.5)
    spread = finish_time_spread(sens, uncertainty)
    parts = spread.contributions
    assert parts["drag_area"] == pytest.approx(sens.drag_area * 0.5)
    assert spread.standard_deviation == pytest.approx(
        np.sqrt(sum(v**2 for v in parts.values())))
    samples = sampled_finish_time(course, power, rider, conditions, uncertainty, samples=200,
                                  seed=1, options=options)
    # 200 normal draws: the sample σ lies within ±10 % of σ about 95 % of the time (χ² with
    # 199 degrees of freedom); 15 % leaves room for the curvature of the response. The seed
    # is fixed, so the test is deterministic.
    assert np.std(samples, ddof=1) == pytest.approx(spread.standard_deviation, rel=0.15)
    again = sampled_finish_time(course, power, rider, conditions, uncertainty, samples=5,
                                seed=1, options=options)
    assert again == pytest.approx(samples[:5])


def test_shared_errors_cancel_in_the_difference_of_two_setups():
    course = six_km_hill(step=50.0)  # 120 pieces: many simulations stay fast
    conditions = Conditions(wind_speed=3.0, wind_from=90.0)
    a = Rider(mass=80.0, drag_area=0.30)
    b = Rider(mass=80.0, drag_area=0.28)
    power = np.full(120, 250.0)
    options = SimulationOptions(start_speed=8.0)  # rolling start: fewer steps, faster
    sens_a = sensitivity(course, power, a, conditions, options)
    sens_b = sensitivity(course, power, b, conditions, options)
    shared_only = Uncertainty(drag_area=0.0, rolling_coefficient=0.0005, mass=1.0, wind=1.0)
    single = finish_time_spread(sens_a, shared_only).standard_deviation
    difference = difference_spread(sens_a, sens_b, shared_only)
    assert difference.standard_deviation < 0.15 * single
    assert difference.contributions["drag_area"] == 0.0
    sampled = sampled_difference(course, (a, power), (b, power), conditions, shared_only,
                                 samples=40, seed=3, options=options)
    assert np.std(sampled, ddof=1) < 0.15 * single
    own = Uncertainty(drag_area=0.005)
    both = difference_spread(sens_a, sens_b, own)
    assert both.standard_deviation == pytest.approx(
        np.hypot(sens_a.drag_area, sens_b.drag_area) * 0.5)


def test_negative_uncertainty_is_refused():
    with pytest.raises(InputError, match="uncertainty"):
        Uncertainty(drag_area=-0.01)



@pytest.mark.parametrize("name", ["drag_area", "rolling_coefficient", "mass", "wind"])
def test_an_uncertainty_wider_than_its_input_s_range_is_refused(name):
    # issue 14: `compare --sd-cda 1e308` printed "± inf" and cut JSON
    with pytest.raises(InputError) as error:
        Uncertainty(**{name: 1e308})
    assert "\n" not in str(error.value) and "at most" in str(error.value)


# ------------------------------------------------------------------------ draws together

def one_by_one(course, power, rider, conditions, uncertainty, samples, seed, options):
    """The Monte Carlo definition, one full simulation per draw: normal errors in the order
    CdA, Crr, mass, wind (row by row), clipped at CdA 0.01 m², Crr 0, mass 20 kg, wind 0."""
    generator = np.random.default_rng(seed)
    scale = np.array([uncertainty.drag_area, uncertainty.rolling_coefficient,
                      uncertainty.mass, uncertainty.wind])
    times = []
    for d_cda, d_crr, d_mass, d_wind in generator.standard_normal((samples, 4)) * scale:
        changed = replace(rider, drag_area=np.maximum(rider.drag_area + d_cda, 0.01),
                          rolling_coefficient=np.maximum(
                              np.asarray(rider.rolling_coefficient) + d_crr, 0.0),
                          mass=max(rider.mass + d_mass, 20.0))
        wind = replace(conditions, wind_speed=max(conditions.wind_speed + d_wind, 0.0))
        times.append(simulate(course, power, changed, air_along_course(course, wind),
                              options).finish_time)
    return np.array(times)


@pytest.fixture(params=["compiled", "python"])
def kernel_policy(request, monkeypatch):
    """Run the test with the compiled kernels and again as plain Python (pacing.kernels)."""
    if request.param == "compiled":
        pytest.importorskip("numba")
    monkeypatch.setenv("PACING_KERNELS", request.param)
    return request.param


@pytest.mark.parametrize("rider", [
    Rider(mass=80.0, drag_area=0.30),
    Rider(mass=70.0, drag_area=np.linspace(0.02, 0.35, 120), rolling_coefficient=0.0005,
          yaw_drag_table=((0.0, 1.0), (15.0, 0.92)), drafting_reduction=0.2)])
def test_draws_ridden_together_are_the_draws_ridden_one_by_one(rider, kernel_policy):
    course = hill_course()
    conditions = Conditions(wind_speed=0.8, wind_from=200.0, temperature=28.0)
    uncertainty = Uncertainty(drag_area=0.03, rolling_coefficient=0.001, mass=3.0, wind=1.5)
    options = SimulationOptions(start_speed=6.0, coasting_speed=15.0)
    power = 200.0 + 60.0 * np.sin(np.arange(120) / 10.0)
    expected = one_by_one(course, power, rider, conditions, uncertainty, 12, 3, options)
    times = sampled_finish_time(course, power, rider, conditions, uncertainty, samples=12,
                                seed=3, options=options)
    np.testing.assert_allclose(times, expected, rtol=1e-12)


def test_sampled_times_are_the_same_compiled_and_as_plain_python(monkeypatch):
    pytest.importorskip("numba")
    course = hill_course()
    pair = ((Rider(mass=80.0, drag_area=0.30), np.full(120, 250.0)),
            (Rider(mass=80.0, drag_area=0.27), np.full(120, 240.0)))
    uncertainty = Uncertainty(drag_area=0.01, rolling_coefficient=0.0005, mass=2.0, wind=1.0)
    conditions = Conditions(wind_speed=3.0, wind_from=90.0)
    results = {}
    for policy in ("python", "compiled"):
        monkeypatch.setenv("PACING_KERNELS", policy)
        results[policy] = (
            sampled_finish_time(course, pair[0][1], pair[0][0], conditions, uncertainty,
                                samples=6, seed=9),
            sampled_difference(course, *pair, conditions, uncertainty, samples=6, seed=9))
    for python, compiled in zip(results["python"], results["compiled"], strict=True):
        np.testing.assert_array_equal(python, compiled)


def test_a_drawn_wind_beyond_what_conditions_accept_is_refused():
    with pytest.raises(InputError, match="wind speed must be between 0 and 60"):
        sampled_finish_time(hill_course(), np.full(120, 250.0), Rider(),
                            Conditions(wind_speed=55.0), Uncertainty(wind=20.0), samples=50)


# ------------------------------------------------------------- in the race day's air (issue 16)

def air_of_wind(course, density, speed_10m, wind_from, conditions):
    """The test's own air: a density and a wind at 10 m per piece (speed [m/s], from [deg])
    reduced to the rider's height by the neutral log profile u(z) = u₁₀·ln(z/z₀)/ln(10/z₀)
    (Stull 1988, An Introduction to Boundary Layer Meteorology, §9.7.5; from memory) and
    split into the components against and across the heading (common practice)."""
    from pacing.weather.conditions import CourseAir

    pieces = np.asarray(course.heading).size
    factor = (math.log(conditions.rider_height / conditions.roughness_length)
              / math.log(conditions.wind_height / conditions.roughness_length))
    at_rider = factor * np.broadcast_to(np.asarray(speed_10m, dtype=float), (pieces,))
    angle = np.radians(np.asarray(wind_from, dtype=float) - np.asarray(course.heading))
    return CourseAir(density=np.full(pieces, float(density)), headwind=at_rider * np.cos(angle),
                     crosswind=at_rider * np.sin(angle))


def finite_differences(course, power, rider, finish_in, options):
    """Central differences on the simulated finish time: ±0.01 m² of CdA and, through
    `finish_in(scale)`, the day's wind scaled."""
    def finish(r=rider, air=None):
        return simulate(course, power, r, air if air is not None else finish_in(1.0),
                        options).finish_time

    drag = 0.5 * (finish(replace(rider, drag_area=rider.drag_area + 0.01))
                  - finish(replace(rider, drag_area=rider.drag_area - 0.01)))
    return drag, finish


def test_sensitivities_in_a_race_day_s_air_follow_its_wind_not_the_forecast():
    # The forecast says 2 m/s from the east (a headwind going east); the race day's air has
    # 6 m/s from the west (a tailwind) over a thinner 1.15 kg/m³. Every number follows the
    # day's air: CdA and wind by a plain central difference written here.
    course, options = hill_course(), SimulationOptions(start_speed=8.0)
    conditions = Conditions(wind_speed=2.0, wind_from=90.0)
    rider, power = Rider(mass=78.0, drag_area=0.28), np.full(120, 240.0)

    def day(scale):
        return air_of_wind(course, 1.15, 6.0 * scale, 270.0, conditions)

    sens = sensitivity(course, power, rider, conditions, options, air=day(1.0))
    drag, finish = finite_differences(course, power, rider, day, options)
    assert sens.finish_time == pytest.approx(finish(), rel=1e-12)
    assert sens.drag_area == pytest.approx(drag, rel=1e-9)
    wind = 0.5 * (finish(air=day(7.0 / 6.0)) - finish(air=day(5.0 / 6.0)))
    assert sens.wind == pytest.approx(wind, rel=1e-6)
    assert sens.wind < 0.0  # more tailwind is faster (the forecast's headwind would say +)
    assert sens.wind_direction == pytest.approx(270.0, abs=1e-9)
    assert sensitivity(course, power, rider, conditions, options).wind > 0.0


def test_a_changing_wind_is_scaled_in_proportion_keeping_each_piece_s_direction():
    # A tailwind of 6 m/s (from the west) for the first 3 km, then a 2 m/s headwind (from
    # the east): the day's mean wind is 4 m/s; +1 m/s scales every piece by 5/4, −1 by 3/4.
    course, options = hill_course(), SimulationOptions(start_speed=8.0)
    conditions = Conditions()
    first = np.asarray(course.distance)[:-1] < 3000.0
    speed, wind_from = np.where(first, 6.0, 2.0), np.where(first, 270.0, 90.0)
    rider, power = Rider(mass=80.0, drag_area=0.30), np.full(120, 250.0)

    def day(scale):
        return air_of_wind(course, 1.2, speed * scale, wind_from, conditions)

    sens = sensitivity(course, power, rider, conditions, options, air=day(1.0))
    _, finish = finite_differences(course, power, rider, day, options)
    assert sens.wind == pytest.approx(
        0.5 * (finish(air=day(5.0 / 4.0)) - finish(air=day(3.0 / 4.0))), rel=1e-6)
    assert sens.wind_direction == pytest.approx(270.0, abs=1e-9)  # mean wind: 2 m/s from W


def test_draws_in_a_race_day_s_air_scale_its_wind():
    # The Monte Carlo wind error e (σ 1.5 m/s, the 4th column, row by row) scales the day's
    # wind by (w̄ + e)/w̄, cut at calm; each draw ridden alone in that air.
    course, options = hill_course(), SimulationOptions(start_speed=8.0)
    conditions = Conditions(wind_speed=2.0, wind_from=90.0)
    rider, power = Rider(mass=80.0, drag_area=0.30), np.full(120, 250.0)
    first = np.asarray(course.distance)[:-1] < 3000.0
    speed, wind_from = np.where(first, 3.0, 1.0), np.where(first, 270.0, 180.0)

    def day(scale):
        return air_of_wind(course, 1.18, speed * scale, wind_from, conditions)

    errors = np.random.default_rng(5).standard_normal((8, 4))[:, 3] * 1.5
    expected = [simulate(course, power, rider, day(max(2.0 + e, 0.0) / 2.0),
                         options).finish_time for e in errors]
    times = sampled_finish_time(course, power, rider, conditions, Uncertainty(wind=1.5),
                                samples=8, seed=5, options=options, air=day(1.0))
    np.testing.assert_allclose(times, expected, rtol=1e-9)


def test_a_race_day_air_with_the_forecast_s_wind_gives_the_forecast_s_numbers():
    course, options = hill_course(), SimulationOptions(start_speed=8.0)
    conditions = Conditions(wind_speed=3.0, wind_from=120.0)
    rider, power = Rider(mass=80.0, drag_area=0.30), np.full(120, 250.0)
    alone = sensitivity(course, power, rider, conditions, options)
    shared = sensitivity(course, power, rider, conditions, options,
                         air=air_along_course(course, conditions))
    assert shared == alone
