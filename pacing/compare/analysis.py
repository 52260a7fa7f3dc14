"""A whole comparison of setups in one call: the one place where the command line
(pacing.cli.compare) and the page (ui.comparison) get their numbers.

From the race request (course, segments, conditions, plan request, simulation options), the
setups and how sure their inputs are, `analyse_setups` works out:

1. the setups side by side through the planning chain (pacing.compare.setups.compare_setups);
2. what each parameter is worth for each setup (pacing.compare.sensitivity.sensitivity);
3. the linearized 1 σ of each finish time and of each difference to the baseline
   (finish_time_spread, difference_spread), with Monte Carlo draws when asked
   (sampled_finish_time, sampled_difference);
4. the break-even power, CdA and mass of each setup against the baseline (break_even);
5. the position-by-segment plan (mixed_plan);
6. the notices: what the user must be told beside these numbers (pacing.notices), e.g. a setup
   whose plan overdraws W′, or Monte Carlo draws cut at a physical limit.

Sign convention (as in pacing.compare.setups): a time difference is setup − baseline [s];
positive = slower. Everything is SI; the words are pacing.display.compare_words'.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, replace

import numpy as np

from pacing.compare.break_even import BreakEven, break_even
from pacing.compare.mixed import MixedPlan, mixed_plan
from pacing.compare.sensitivity import (
    DRAW_FLOORS,
    Sensitivity,
    Spread,
    Uncertainty,
    day_wind,
    difference_spread,
    finish_time_spread,
    sampled_difference,
    sampled_finish_time,
    sensitivity,
)
from pacing.compare.setups import Comparison, RiderSetup, SetupResult, compare_setups
from pacing.errors import InputError
from pacing.notices import Notice, note
from pacing.plan.race import RaceRequest
from pacing.plan.race_day import RaceDay, RaceDayResult, race_day_notices, shared_race_day
from pacing.weather.conditions import CourseAir

DEFAULT_UNCERTAINTY = Uncertainty(drag_area=0.005, rolling_coefficient=0.0003, mass=0.5,
                                  wind=1.0)
"""Default 1 σ of the inputs, for the command line and the page alike: CdA 0.005 m² (≈ 2 % of a
road CdA; wind-tunnel repeatability CV < 2 %, García-López et al. 2008, J Sports Sci 26:277,
see docs/references.md, "Typical CdA, Crr, drafting"); Crr 0.0003, mass 0.5 kg and forecast
wind 1 m/s are our own round defaults (judgement, from memory), meant to be replaced."""

MAX_SAMPLES = 10_000
"""Most Monte Carlo draws of one comparison (each draw is one simulation per setup)."""

MAX_DRAWN_PIECES = 4_000_000
"""Most course pieces the Monte Carlo draws of one comparison simulate (draws × setups ×
pieces): the inertial simulation takes about 9 µs a piece on one core (17.7 s for 2 million
pieces, measured for issue 14), so this is about half a minute."""


def check_draw_work(samples: int, setups: int, pieces: int) -> None:
    """Refuse Monte Carlo draws whose simulations would take minutes, in one line.

    Parameters
    ----------
    samples : int
        Monte Carlo draws asked for [-].
    setups : int
        Setups compared (each draw simulates every one) [-].
    pieces : int
        Pieces of the course [-].

    Raises
    ------
    InputError
        When samples × setups × pieces is above MAX_DRAWN_PIECES, with the most samples
        this course allows.
    """
    work = samples * max(setups, 1) * pieces
    if work > MAX_DRAWN_PIECES:
        allowed = MAX_DRAWN_PIECES // (max(setups, 1) * max(pieces, 1))
        raise InputError(f"{samples} samples × {setups} setups × {pieces} course pieces is "
                         f"more than this comparison works through "
                         f"({MAX_DRAWN_PIECES:.0e} simulated pieces); give at most "
                         f"{allowed} samples, or a longer resampling step")


CLIPPED_SHARE = 0.01
"""Share of the draws cut at a floor above which the user is told [-]."""


@dataclass(frozen=True, eq=False)
class SetupsAnalysis:
    """Everything a comparison of setups shows (SI).

    Attributes
    ----------
    comparison : Comparison
        The setups side by side (pacing.compare.setups.Comparison): finish times, deltas,
        each setup's plan and chain notices.
    uncertainty : Uncertainty
        The 1 σ of CdA [m²], Crr [-], mass [kg] and wind speed [m/s] the spreads use.
    sensitivities : mapping of str to Sensitivity
        Setup name → seconds of finish time per step of each parameter (positive = slower).
    finish_time_spreads : mapping of str to Spread
        Setup name → 1 σ of its finish time [s] (with the Monte Carlo samples when drawn).
    difference_spreads : mapping of str to Spread
        Setup name → 1 σ of its difference to the baseline [s], every setup but the baseline
        (with the Monte Carlo samples when drawn).
    break_evens : mapping of str to BreakEven
        Setup name → break-even power [W], CdA [m²] and mass [kg] against the baseline, every
        setup but the baseline; empty when not asked for.
    mixed : MixedPlan or None
        The position-by-segment plan; None with fewer than two positions of one bike.
    samples : int
        Monte Carlo draws per setup, 0 for none [-].
    notices : tuple of Notice
        What the user must be told beside the numbers, in order.
    race_day : RaceDayResult or None
        The race day whose air all setups share (pacing.plan.race_day.shared_race_day);
        None without one.
    """

    comparison: Comparison
    uncertainty: Uncertainty
    sensitivities: Mapping[str, Sensitivity]
    finish_time_spreads: Mapping[str, Spread]
    difference_spreads: Mapping[str, Spread]
    break_evens: Mapping[str, BreakEven]
    mixed: MixedPlan | None
    samples: int
    notices: tuple[Notice, ...]
    race_day: RaceDayResult | None = None

    def spread(self, name: str) -> Spread:
        """The spread shown beside a setup: of its difference to the baseline, or of its own
        finish time for the baseline itself.

        Parameters
        ----------
        name : str
            A setup's name [-].

        Returns
        -------
        Spread
            1 σ [s] and its parts.
        """
        if name == self.comparison.baseline_result.name:
            return self.finish_time_spreads[name]
        return self.difference_spreads[name]

    @property
    def spreads(self) -> dict[str, Spread]:
        """Setup name → `spread(name)`, in the order of the setups."""
        return {r.name: self.spread(r.name) for r in self.comparison.results}


def analyse_setups(race: RaceRequest, setups: Iterable[RiderSetup],
                   baseline: str | int | None = None,
                   uncertainty: Uncertainty = DEFAULT_UNCERTAINTY, samples: int = 0,
                   seed: int = 0, break_even_figures: bool = True,
                   air: CourseAir | None = None) -> SetupsAnalysis:
    """Compare setups on a race and work out what each is worth and how sure that is.

    Parameters
    ----------
    race : RaceRequest
        The race (pacing.plan.race.RaceRequest, cycling, strategy "constant" or "fastest"):
        course, bounds, conditions, the plan request with its power figures at power share 1
        [W], simulation options. Its rider is replaced by each setup's.
    setups : iterable of RiderSetup
        1..MAX_SETUPS setups with unique names.
    baseline : str, int or None
        Name or index of the setup the others are measured against; None for the first [-].
    uncertainty : Uncertainty
        1 σ of CdA [m²], Crr [-], total mass [kg] and forecast wind speed [m/s].
    samples : int
        Monte Carlo draws on top of the linearized spread: 0 for none, else 2..MAX_SAMPLES [-].
    seed : int
        Seed of the draws [-].
    break_even_figures : bool
        Also search the break-even power, CdA and mass (a few simulations per setup) [-].
    air : CourseAir or None
        The air on every piece of the course; None works it out from race.conditions.

    Returns
    -------
    SetupsAnalysis

    Raises
    ------
    InputError
        For bad setups, an unknown baseline, a strategy other than "constant" and "fastest",
        or a number of samples out of range (one line).

    References
    ----------
    Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation
    of a mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
    doi:10.1123/jab.14.3.276 (every ride).
    JCGM 100:2008, Evaluation of measurement data — Guide to the expression of uncertainty in
    measurement, section 5.1 (the linearized spreads).
    """
    if samples and not 2 <= samples <= MAX_SAMPLES:
        raise InputError(f"samples must be 0 or 2-{MAX_SAMPLES}, got {samples}")
    # one race day's air for all setups, at the race's times; heat and altitude always count
    race, day_air, day = shared_race_day(race if race.race_day is not None
                                         else replace(race, race_day=RaceDay()))
    air = day_air if air is None else air
    setups = list(setups)
    check_draw_work(samples, len(setups), int(np.asarray(race.course.distance).size) - 1)
    comparison = compare_setups(race, setups, baseline, air)
    sensitivities = _sensitivities(comparison)
    finish, difference = _linear_spreads(comparison, sensitivities, uncertainty)
    if samples:
        finish, difference = _sampled_spreads(comparison, uncertainty, samples, seed,
                                              finish, difference)
    base = comparison.baseline_result
    breaks = {r.name: break_even(comparison, r) for r in comparison.results
              if r is not base} if break_even_figures else {}
    return SetupsAnalysis(
        comparison=comparison, uncertainty=uncertainty, sensitivities=sensitivities,
        finish_time_spreads=finish, difference_spreads=difference, break_evens=breaks,
        mixed=mixed_plan(comparison), samples=int(samples),
        notices=(*race.course.notices, *setup_notices(comparison),
                 *clipped_draw_notices(comparison, uncertainty, samples),
                 *race_day_notices(day)),
        race_day=day.race_day,
    )


def _sensitivities(comparison: Comparison) -> dict[str, Sensitivity]:
    """Each setup's sensitivities, its plan's power profile held, in the comparison's air
    (the race day's: every number of a comparison in the same air)."""
    race = comparison.race
    return {r.name: sensitivity(race.course, r.plan.piece_power, r.setup.rider,
                                race.conditions, race.options, air=comparison.air)
            for r in comparison.results}


def _linear_spreads(comparison: Comparison, sensitivities: Mapping[str, Sensitivity],
                    uncertainty: Uncertainty) -> tuple[dict[str, Spread], dict[str, Spread]]:
    """Linearized spreads: of every finish time, and of every difference to the baseline."""
    base = comparison.baseline_result
    finish = {name: finish_time_spread(sens, uncertainty)
              for name, sens in sensitivities.items()}
    difference = {r.name: difference_spread(sensitivities[base.name], sensitivities[r.name],
                                            uncertainty)
                  for r in comparison.results if r is not base}
    return finish, difference


def _sampled_spreads(comparison: Comparison, uncertainty: Uncertainty, samples: int,
                     seed: int, finish: Mapping[str, Spread],
                     difference: Mapping[str, Spread]
                     ) -> tuple[dict[str, Spread], dict[str, Spread]]:
    """The spreads with their Monte Carlo samples attached (the same seed for every setup),
    drawn in the comparison's air."""
    race = comparison.race
    base = comparison.baseline_result
    sampled_finish, sampled_delta = dict(finish), dict(difference)
    for r in comparison.results:
        sampled_finish[r.name] = replace(finish[r.name], samples=sampled_finish_time(
            race.course, r.plan.piece_power, r.setup.rider, race.conditions, uncertainty,
            samples, seed, race.options, air=comparison.air))
        if r is not base:
            sampled_delta[r.name] = replace(difference[r.name], samples=sampled_difference(
                race.course, (base.setup.rider, base.plan.piece_power),
                (r.setup.rider, r.plan.piece_power), race.conditions, uncertainty, samples,
                seed, race.options, air=comparison.air))
    return sampled_finish, sampled_delta


def setup_notices(comparison: Comparison) -> list[Notice]:
    """The chain's warnings about each setup's plan, named after the setup.

    A plan that overdraws W′ ("w-prime-exhausted") becomes "setup-w-prime-exhausted", a ride
    partly walked ("walking") "setup-walking", each with the setup's name as `label` and the
    chain's values (distance_m [m], lowest_balance_j [J]; walking_distance_m, distance_m [m]).
    Notes that every setup shares (the fastest plan's binding limits) stay on each setup's
    result (SetupResult.notices).

    Parameters
    ----------
    comparison : Comparison
        Setups side by side.

    Returns
    -------
    list of Notice
    """
    found = []
    for result in comparison.results:
        for notice in result.notices:
            values = {"label": result.name, **notice.values}
            if notice.code == "w-prime-exhausted":
                found.append(Notice("setup-w-prime-exhausted", values, notice.level))
            elif notice.code == "walking":
                found.append(Notice("setup-walking", values, notice.level))
    return found


def _lowest(setups: Iterable[SetupResult], name: str) -> float:
    return min(float(np.min(np.asarray(getattr(r.setup.rider, name), dtype=np.float64)))
               for r in setups)


def clipped_draw_notices(comparison: Comparison, uncertainty: Uncertainty,
                         samples: int) -> list[Notice]:
    """Notes where the Monte Carlo draws of an input cross its physical floor (DRAW_FLOORS)
    often enough to matter: those draws are cut at the floor, so the sampled spread is not the
    spread of a normal input.

    The share of normal draws x + σ·Z below a floor f is Φ((f − x)/σ) = ½·erfc((x − f)/(σ√2))
    (x the day's wind speed (DayWind), or the lowest CdA, Crr or mass of the setups).

    Parameters
    ----------
    comparison : Comparison
        Setups side by side.
    uncertainty : Uncertainty
        1 σ of CdA [m²], Crr [-], mass [kg] and wind speed [m/s].
    samples : int
        Monte Carlo draws per setup; none, no notice [-].

    Returns
    -------
    list of Notice
        One note "uncertainty-clipped" per input whose expected share of cut draws exceeds
        CLIPPED_SHARE (label: the input's name as in DRAW_FLOORS; share [-]; count: the draws
        [-]).
    """
    if not samples:
        return []
    values = {"drag_area": _lowest(comparison.results, "drag_area"),
              "rolling_coefficient": _lowest(comparison.results, "rolling_coefficient"),
              "mass": _lowest(comparison.results, "mass"),
              "wind": day_wind(comparison.race.course, comparison.race.conditions,
                               air=comparison.air).speed}
    found = []
    for name, floor in DRAW_FLOORS.items():
        sigma = float(getattr(uncertainty, name))
        if sigma <= 0:
            continue
        share = 0.5 * math.erfc((values[name] - floor) / (sigma * math.sqrt(2.0)))
        if share > CLIPPED_SHARE:
            found.append(note("uncertainty-clipped", label=name, share=share,
                              count=int(samples)))
    return found
