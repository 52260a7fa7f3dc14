"""Specification of pacing.compare.analysis: one call gives the setups side by side, what each
parameter is worth, how sure the differences are, the break-even figures, the position-by-
segment plan and the notices, for the command line and the page alike."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize

from pacing.compare.analysis import (
    DEFAULT_UNCERTAINTY,
    MAX_SAMPLES,
    analyse_setups,
    clipped_draw_notices,
    setup_notices,
)
from pacing.compare.sensitivity import STEPS, Uncertainty, sampled_finish_time
from pacing.compare.setups import RiderSetup, compare_setups
from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.display.notices import describe
from pacing.errors import InputError
from pacing.physics.cycling import MARTIN_1998, Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.race import RaceRequest
from pacing.plan.request import PlanRequest
from pacing.weather.conditions import Conditions, air_along_course

SETUPS = [RiderSetup("hoods", Rider(mass=80.0, drag_area=0.32)),
          RiderSetup("aero", Rider(mass=80.0, drag_area=0.25), power_share=0.95),
          RiderSetup("light", Rider(mass=78.0, drag_area=0.32))]
ROLLING = SimulationOptions(start_speed=8.0)  # rolling start: fewer steps, quicker tests


def hill_course(step: float = 50.0):
    """6 km heading east: 2 km flat, 2 km at 5 %, 2 km down at 4 %."""
    distance = np.arange(0.0, 6000.0 + step / 2, step)
    elevation = np.interp(distance, [0, 2000, 4000, 6000], [100, 100, 200, 120])
    return synthetic_course(distance, elevation, heading=90.0)


def race_on(course, bounds, request: PlanRequest, conditions: Conditions,
            options: SimulationOptions = ROLLING) -> RaceRequest:
    """The race the setups ride (its rider is replaced by each setup's)."""
    return RaceRequest(course=course, bounds=np.asarray(bounds), conditions=conditions,
                       strategy=request.strategy, rider=Rider(), cycling=request,
                       options=options)


HILL = hill_course()
HILL_RACE = race_on(HILL, [0, 40, 80, 120], PlanRequest(strategy="constant", mean_power=250.0),
                    Conditions(wind_speed=3.0, wind_from=90.0))


@pytest.fixture(scope="module")
def analysis():
    return analyse_setups(HILL_RACE, SETUPS, baseline="hoods", samples=4, seed=2)


def test_the_analysis_holds_every_part_for_every_setup(analysis):
    names = ["hoods", "aero", "light"]
    assert [r.name for r in analysis.comparison.results] == names
    assert list(analysis.sensitivities) == names
    assert list(analysis.finish_time_spreads) == names
    assert list(analysis.difference_spreads) == ["aero", "light"]
    assert list(analysis.break_evens) == ["aero", "light"]
    assert analysis.mixed is not None  # hoods and aero are positions on one bike
    assert analysis.mixed.candidates == ("hoods", "aero")
    assert analysis.samples == 4 and analysis.uncertainty == DEFAULT_UNCERTAINTY
    # beside each setup: the spread of its difference, beside the baseline its own
    assert analysis.spread("hoods") is analysis.finish_time_spreads["hoods"]
    assert analysis.spread("aero") is analysis.difference_spreads["aero"]
    assert list(analysis.spreads) == names
    # a 3 m/s forecast with 1 m/s of doubt, CdA, Crr and mass far from zero: nothing to say
    # heat and altitude always count (issue 16): only their notes and the day's heat caution
    assert [n for n in analysis.notices
            if not n.code.startswith(("heat-", "wbgt-", "altitude-", "limits-"))] == []


def test_linearized_spreads_add_each_input_in_quadrature(analysis):
    """First-order propagation of independent errors (JCGM 100:2008, GUM, section 5.1):
    σ_T² = Σ (S_x·σ_x/h_x)²; for a difference the CdA errors of the two setups are
    independent and the shared inputs (Crr, mass, wind) enter through S_B − S_A."""
    u = analysis.uncertainty
    sigma = {"drag_area": u.drag_area, "rolling_coefficient": u.rolling_coefficient,
             "mass": u.mass, "wind": u.wind}
    base = analysis.sensitivities["hoods"]
    for name, sens in analysis.sensitivities.items():
        by_hand = math.sqrt(sum((getattr(sens, x) * s / STEPS[x]) ** 2
                                for x, s in sigma.items()))
        assert analysis.finish_time_spreads[name].standard_deviation == pytest.approx(by_hand)
        if name == "hoods":
            continue
        cda = [z.drag_area * u.drag_area / STEPS["drag_area"] for z in (base, sens)]
        shared = [(getattr(sens, x) - getattr(base, x)) * sigma[x] / STEPS[x]
                  for x in ("rolling_coefficient", "mass", "wind")]
        by_hand = math.sqrt(sum(v * v for v in cda + shared))
        assert analysis.difference_spreads[name].standard_deviation == pytest.approx(by_hand)


def test_monte_carlo_draws_ride_beside_each_spread_with_the_seed(analysis):
    for spread in analysis.finish_time_spreads.values():
        assert spread.samples is not None and spread.samples.size == 4
        assert spread.sampled_standard_deviation == pytest.approx(
            float(np.std(spread.samples, ddof=1)))
    aero = analysis.comparison.result("aero")
    again = sampled_finish_time(HILL, aero.plan.piece_power, aero.setup.rider,
                                HILL_RACE.conditions, DEFAULT_UNCERTAINTY, 4, 2, ROLLING)
    assert analysis.finish_time_spreads["aero"].samples == pytest.approx(again, rel=1e-12)
    assert analysis.difference_spreads["aero"].samples.size == 4


def test_break_even_figures_only_when_asked_and_no_draws_unless_asked():
    quick = analyse_setups(HILL_RACE, SETUPS[:2], break_even_figures=False)
    assert quick.break_evens == {} and quick.samples == 0
    assert all(s.samples is None for s in quick.finish_time_spreads.values())
    assert quick.comparison.baseline_result.name == "hoods"  # the first, by default


@pytest.mark.parametrize("samples", [1, -3, MAX_SAMPLES + 1])
def test_a_number_of_samples_out_of_range_is_refused_in_one_line(samples):
    with pytest.raises(InputError, match="samples") as error:
        analyse_setups(HILL_RACE, SETUPS, samples=samples)
    assert "\n" not in str(error.value)


def steady_speed(power: float, drag_area: float, mass: float, density: float) -> float:
    """Independent steady speed on flat ground in still air: scipy brentq on
    η·P = v·(½ρ(CdA + F_w)v² + Crr·m·g + a + b·v) (Martin et al. 1998, J Appl Biomech
    14(3):276-291; docs/references.md, "Cycling power balance (Martin et al. 1998)")."""
    m = MARTIN_1998

    def balance(v):
        return v * (0.5 * density * (drag_area + m["wheel_drag_area"]) * v**2
                    + m["rolling_coefficient"] * mass * STANDARD_GRAVITY
                    + m["bearing_force_constant"] + m["bearing_force_per_speed"] * v) \
            - m["drivetrain_efficiency"] * power

    return optimize.brentq(balance, 0.5, 40.0, xtol=1e-14)


def test_a_setup_whose_plan_overdraws_w_prime_is_named_where_it_runs_out():
    """Constant 300 W against CP 250 W and W′ 10 kJ on a flat 10 km, started at the steady
    speed v: above CP, W′ is drawn at P − CP, so it is gone after W′/(P − CP) = 200 s, at
    v·200 s (the critical power model t_lim = W′/(P − CP), Monod & Scherrer 1965, Ergonomics
    8(3):329-338; docs/references.md, "Critical power and W′ balance"); the lowest balance,
    at the finish, is W′ − (P − CP)·L/v. The notice names the first course point past that
    distance, so it sits within one 10 m piece. A setup at 90 % share rides 270 W against a
    CP of 225 W: 222.2 s."""
    length, step = 10_000.0, 10.0
    distance = np.arange(0.0, length + step / 2, step)
    course = synthetic_course(distance, np.zeros_like(distance), heading=0.0)
    conditions = Conditions()
    density = float(air_along_course(course, conditions).density[0])
    hoods = steady_speed(300.0, 0.30, 80.0, density)
    aero = steady_speed(270.0, 0.27, 80.0, density)
    request = PlanRequest(strategy="constant", mean_power=300.0, critical_power=250.0,
                          w_prime=10_000.0)
    race = race_on(course, [0, 500, 1000], request, conditions,
                   SimulationOptions(start_speed=hoods))
    setups = [RiderSetup("hoods", Rider(mass=80.0, drag_area=0.30)),
              RiderSetup("aero", Rider(mass=80.0, drag_area=0.27), power_share=0.9)]
    comparison = compare_setups(race, setups)
    told = setup_notices(comparison)
    assert [(n.code, n.level, n.values["label"]) for n in told] == [
        ("setup-w-prime-exhausted", "warning", "hoods"),
        ("setup-w-prime-exhausted", "warning", "aero")]
    assert hoods * 200.0 <= told[0].values["distance_m"] <= hoods * 200.0 + step + 0.5
    assert told[0].values["lowest_balance_j"] == pytest.approx(
        10_000.0 - 50.0 * length / hoods, rel=1e-4)
    low, high = sorted((hoods, aero))
    assert low * 10_000.0 / 45.0 <= told[1].values["distance_m"] <= (
        high * 10_000.0 / 45.0 + step + 0.5)
    for system in ("metric", "imperial"):
        text = describe(told[0], system)
        assert text.startswith("setup hoods: W′ runs out at") and "nan" not in text


def test_draws_cut_at_calm_are_told_with_the_share_of_a_normal_tail():
    """A normal draw w + σ·Z falls below zero with probability Φ(−w/σ): 1/2 for a calm
    forecast, Φ(−1) = 0.158655 for w = σ (standard normal table, Abramowitz & Stegun 1964,
    Table 26.1); Φ(−3) = 0.00135 stays below the 1 % worth telling."""
    for wind, share in ((0.0, 0.5), (1.0, 0.158655), (3.0, None)):
        race = race_on(HILL, [0, 120], PlanRequest(strategy="constant", mean_power=250.0),
                       Conditions(wind_speed=wind, wind_from=90.0))
        comparison = compare_setups(race, SETUPS[:1])
        told = clipped_draw_notices(comparison, Uncertainty(drag_area=0.005, wind=1.0), 20)
        assert clipped_draw_notices(comparison, Uncertainty(wind=1.0), 0) == []
        if share is None:
            assert told == []
            continue
        assert [(n.code, n.level, n.values["label"]) for n in told] == [
            ("uncertainty-clipped", "note", "wind")]
        assert told[0].values["share"] == pytest.approx(share, abs=1e-6)
        assert told[0].values["count"] == 20
        assert "wind speed" in describe(told[0], "imperial")
    heavy_doubt = Uncertainty(mass=70.0, drag_area=0.3)  # 80 kg ± 70 kg, 0.32 m² ± 0.3 m²
    labels = [n.values["label"] for n in clipped_draw_notices(comparison, heavy_doubt, 5)]
    assert labels == ["drag_area", "mass"]


def test_draws_too_many_for_the_course_are_refused_with_what_is_allowed():
    # issue 14: `compare --samples 10000` on a long course ran for minutes
    from pacing.compare.analysis import MAX_DRAWN_PIECES, check_draw_work

    check_draw_work(20, 2, 2000)  # the golden case: 8·10⁴ simulated pieces
    with pytest.raises(InputError) as error:
        check_draw_work(10_000, 2, 20_000)
    message = str(error.value)
    assert "\n" not in message
    assert f"at most {MAX_DRAWN_PIECES // 40_000} samples" in message


# ------------------------------------------------------------- in the race day's air (issue 16)

def test_every_number_of_a_comparison_is_in_the_race_day_s_air():
    # The single conditions say 3 m/s from the east; the weather table says 6 m/s from the
    # west all morning (20 °C, 50 %: the conditions' air otherwise). The sensitivities and
    # the sampled spreads follow the table: a plain central difference written here on the
    # simulated finish time in the table's air (built from the table's wind by
    # air_along_course, not by the race day).
    from dataclasses import replace

    from pacing.plan.race_day import RaceDay
    from pacing.plan.simulate import simulate
    from pacing.weather.timeline import WeatherTable

    table = WeatherTable(time=np.array([0.0, 7200.0]), temperature=np.full(2, 20.0),
                         relative_humidity=np.full(2, 0.5), wind_speed=np.full(2, 6.0),
                         wind_from=np.full(2, 270.0))
    race = replace(HILL_RACE, race_day=RaceDay(start=0.0, weather=table))
    result = analyse_setups(race, SETUPS[:2], baseline="hoods", uncertainty=Uncertainty(wind=1.0),
                            samples=3, seed=4)
    day = Conditions(wind_speed=6.0, wind_from=270.0)

    def finish(setup_result, wind_speed=6.0, rider=None):
        air = air_along_course(HILL, replace(day, wind_speed=wind_speed))
        return simulate(HILL, setup_result.plan.piece_power,
                        rider or setup_result.setup.rider, air, ROLLING).finish_time

    for r in result.comparison.results:
        sens = result.sensitivities[r.name]
        assert sens.finish_time == pytest.approx(finish(r), rel=1e-9)
        assert sens.wind == pytest.approx(0.5 * (finish(r, 7.0) - finish(r, 5.0)), rel=1e-6)
        rider = r.setup.rider
        assert sens.mass == pytest.approx(0.5 * (
            finish(r, rider=replace(rider, mass=rider.mass + 1.0))
            - finish(r, rider=replace(rider, mass=rider.mass - 1.0))), rel=1e-6)
        assert sens.wind < 0.0 and sens.wind_direction == pytest.approx(270.0)
        # the draws ride the same air: with every σ but the wind's at 0 the draw's wind
        # error e (4th column, row by row) rides the table's wind 6 + e
        errors = np.random.default_rng(4).standard_normal((3, 4))[:, 3] * 1.0
        np.testing.assert_allclose(result.finish_time_spreads[r.name].samples,
                                   [finish(r, 6.0 + e) for e in errors], rtol=1e-9)
