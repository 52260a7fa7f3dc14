"""``pacing compare ROUTE.gpx --setup NAME:cda=0.32,power=1.0 --setup NAME:cda=0.25,power=0.95``:
setups side by side on a course, what each parameter is worth, and how sure the differences are.

A setup is ``NAME:key=value,key=value`` with the keys
``cda`` [m²], ``power`` (share of --power, e.g. 0.95), ``mass`` (rider + bike + kit total
[kg], replacing --mass for this setup), ``crr`` [-], and ``yaw`` (a CdA-versus-yaw table as
DEG/FACTOR pairs joined by '+', e.g. ``yaw=0/1+10/0.96+20/0.93``). Keys left out take the
values of --cda, --mass and --crr; power defaults to 1.

Steps: the flags → a RaceRequest (pacing.cli.plan_cycling.race_request_from_args, as the plan
command) and the setups → pacing.compare.analysis.analyse_setups (the one analysis the page
calls too) → table or JSON, with the analysis's notices (JSON "notices"; warnings on stderr,
notes under the table).

Time differences are setup − baseline in seconds: positive = slower. Sensitivities are seconds
per step (+0.01 m² CdA, +1 kg, +10 W, +0.001 Crr, +1 m/s wind), positive = slower.
"""

from __future__ import annotations

import argparse
import itertools
import json
import math
import sys
from typing import TYPE_CHECKING, Any

import numpy as np

from pacing.cli import COMMANDS
from pacing.cli.common import (
    CAUTION,
    add_air_flags,
    add_course_flags,
    add_rider_flags,
    add_simulation_flags,
    notices_as_json,
    report_notices,
)
from pacing.cli.race_day_flags import (
    add_race_day_flags,
)
from pacing.compare.analysis import DEFAULT_UNCERTAINTY, MAX_SAMPLES
from pacing.display import units
from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.compare.analysis import SetupsAnalysis
    from pacing.compare.sensitivity import Sensitivity, Uncertainty
    from pacing.compare.setups import RiderSetup

SETUP_KEYS = ("cda", "power", "mass", "crr", "yaw")

DEFAULT_SD = {"cda": DEFAULT_UNCERTAINTY.drag_area,
              "crr": DEFAULT_UNCERTAINTY.rolling_coefficient,
              "mass": DEFAULT_UNCERTAINTY.mass, "wind": DEFAULT_UNCERTAINTY.wind}
"""Default 1 σ of the --sd-* flags: pacing.compare.analysis.DEFAULT_UNCERTAINTY (its sources
are given there)."""


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Register ``pacing compare``.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The subcommands of ``pacing``.
    """
    parser = subparsers.add_parser(
        "compare",
        help=COMMANDS["compare"],
        description="Ride several setups with the same pacing strategy on a GPX course and "
                    "show the time each gains or loses, break-even figures, sensitivities "
                    "and their uncertainty. Differences are setup minus baseline: positive "
                    "= slower.",
    )
    add_compare_flags(parser)
    parser.set_defaults(run=run)


def add_compare_flags(parser: argparse.ArgumentParser) -> None:
    """Every flag of the compare command.

    Parameters
    ----------
    parser : argparse.ArgumentParser
        The command's parser.
    """
    add_course_flags(parser)
    parser.add_argument("--setup", action="append", default=[], metavar="NAME:KEY=VALUE,...",
                        help="a setup, e.g. aero:cda=0.25,power=0.95 (keys: cda [m²], power "
                             "[share of --power], mass [kg, rider+bike total], crr, "
                             "yaw=DEG/FACTOR+DEG/FACTOR); repeat for each setup")
    parser.add_argument("--baseline", default=None,
                        help="name of the setup the others are compared to (default: first)")
    add_rider_flags(parser)
    add_air_flags(parser)
    add_race_day_flags(parser)
    _add_pacing_flags(parser)
    _add_uncertainty_flags(parser)
    parser.add_argument("--no-break-even", action="store_true",
                        help="skip the break-even search (faster)")


def _add_pacing_flags(parser: argparse.ArgumentParser) -> None:
    plan = parser.add_argument_group("pacing (the same for every setup)")
    plan.add_argument("--power", type=float, default=None,
                      help="the athlete's constant or mean crank power at power share 1 [W]")
    plan.add_argument("--strategy", choices=("constant", "fastest"), default="constant")
    plan.add_argument("--cp", type=float, default=None, help="critical power [W]")
    plan.add_argument("--w-prime", type=float, default=None, help="W′ [J]")
    plan.add_argument("--w-prime-reserve", type=float, default=0.0,
                      help="W′ balance never to go below [J] (default 0)")
    plan.add_argument("--max-power-ratio", type=float, default=None,
                      help="segment power at most this multiple of CP (or of the mean power)")
    plan.add_argument("--target-time", default=None, help=argparse.SUPPRESS)  # not compared
    add_simulation_flags(plan)


def _add_uncertainty_flags(parser: argparse.ArgumentParser) -> None:
    spread = parser.add_argument_group("uncertainty (1 standard deviation)")
    spread.add_argument("--sd-cda", type=float, default=DEFAULT_SD["cda"],
                        help=f"of each setup's CdA [m²] (default {DEFAULT_SD['cda']})")
    spread.add_argument("--sd-crr", type=float, default=DEFAULT_SD["crr"],
                        help=f"of Crr (default {DEFAULT_SD['crr']})")
    spread.add_argument("--sd-mass", type=float, default=DEFAULT_SD["mass"],
                        help=f"of the total mass [kg] (default {DEFAULT_SD['mass']})")
    spread.add_argument("--sd-wind", type=float, default=DEFAULT_SD["wind"],
                        help=f"of the forecast wind speed [m/s] (default {DEFAULT_SD['wind']})")
    spread.add_argument("--samples", type=int, default=0,
                        help="Monte Carlo draws on top of the linearized spread (default 0)")
    spread.add_argument("--seed", type=int, default=0, help="seed of the draws (default 0)")


# ------------------------------------------------------------------------------ the setups

def _value(text: str, key: str, name: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise InputError(f"--setup {name}: {key} must be a number, got {text!r}") from None
    if not math.isfinite(value):
        raise InputError(f"--setup {name}: {key} must be a finite number, got {text!r}")
    return value


def _yaw_table(text: str, name: str) -> tuple[tuple[float, float], ...]:
    pairs = []
    for item in text.split("+"):
        parts = item.split("/")
        if len(parts) != 2:
            raise InputError(f"--setup {name}: yaw must be DEG/FACTOR pairs joined by '+', "
                             f"got {text!r}")
        yaw, factor = (_value(p, "yaw", name) for p in parts)
        if not (0.0 <= yaw <= 90.0 and 0.1 <= factor <= 3.0):
            raise InputError(f"--setup {name}: yaw pairs need 0-90 deg and a factor 0.1-3, "
                             f"got {item!r}")
        pairs.append((yaw, factor))
    return tuple(sorted(pairs))


def parse_setup(text: str) -> tuple[str, dict[str, Any]]:
    """One --setup flag in parts.

    Parameters
    ----------
    text : str
        'NAME:cda=0.25,power=0.95' (keys of SETUP_KEYS: cda [m²], power [-], mass [kg],
        crr [-], yaw DEG/FACTOR pairs).

    Returns
    -------
    tuple of (str, dict)
        ('NAME', {'cda': 0.25, 'power': 0.95}).

    Raises
    ------
    InputError
        When malformed (one line naming the setup).
    """
    if ":" not in text:
        raise InputError(f"--setup must look like NAME:cda=0.25,power=0.95, got {text!r}")
    name, _, body = text.partition(":")
    name = name.strip()
    if not name:
        raise InputError(f"--setup needs a name before ':', got {text!r}")
    values: dict[str, Any] = {}
    for item in filter(None, (part.strip() for part in body.split(","))):
        key, equals, raw = item.partition("=")
        key = key.strip().lower()
        if not equals or key not in SETUP_KEYS:
            raise InputError(f"--setup {name}: expected KEY=VALUE with KEY one of "
                             f"{', '.join(SETUP_KEYS)}, got {item!r}")
        if key in values:
            raise InputError(f"--setup {name}: {key} given twice")
        values[key] = _yaw_table(raw, name) if key == "yaw" else _value(raw, key, name)
    return name, values


def _checked(name: str, what: str, value: float, low: float, high: float,
             unit: str = "") -> float:
    if not low <= value <= high:
        raise InputError(f"--setup {name}: {what} must be {low:g}-{high:g}{unit}, "
                         f"got {value:g}")
    return value


def setups_from_args(args: argparse.Namespace) -> list[RiderSetup]:
    """The RiderSetups of the --setup flags (defaults from --cda, --mass, --crr).

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags.

    Returns
    -------
    list of RiderSetup
        One per --setup, in the order given.
    """
    from pacing.cli.plan_cycling import MASS_RANGE, rider_from_args
    from pacing.compare.setups import MAX_SETUPS, RiderSetup

    if not args.setup:
        raise InputError("give at least one --setup NAME:cda=...,power=...")
    if len(args.setup) > MAX_SETUPS:
        raise InputError(f"at most {MAX_SETUPS} --setup flags, got {len(args.setup)}")
    base = rider_from_args(args)
    setups = []
    for text in args.setup:
        name, values = parse_setup(text)
        cda = _checked(name, "cda", values.get("cda", base.drag_area), 0.05, 2.0, " m²")
        mass = _checked(name, "mass (rider + bike)", values.get("mass", base.mass),
                        *MASS_RANGE, " kg")
        crr = _checked(name, "crr", values.get("crr", base.rolling_coefficient), 0.0, 0.1)
        rider = type(base)(mass=mass, drag_area=cda, rolling_coefficient=crr,
                           drivetrain_efficiency=base.drivetrain_efficiency,
                           drafting_reduction=base.drafting_reduction,
                           yaw_drag_table=values.get("yaw"))
        setups.append(RiderSetup(name, rider, values.get("power", 1.0)))
    return setups


def _uncertainty(args: argparse.Namespace) -> Uncertainty:
    from pacing.compare.sensitivity import Uncertainty

    return Uncertainty(drag_area=args.sd_cda, rolling_coefficient=args.sd_crr,
                       mass=args.sd_mass, wind=args.sd_wind)


def analyse(args: argparse.Namespace) -> SetupsAnalysis:
    """Validate, load and analyse: the flags' race request and setups through
    pacing.compare.analysis.analyse_setups (the one analysis the page calls too).

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags.

    Returns
    -------
    SetupsAnalysis
        The comparison, sensitivities, spreads, break-even figures, mixed plan and notices.
    """
    from pacing.cli.plan_cycling import race_request_from_args, validate_args
    from pacing.compare.analysis import analyse_setups

    validate_args(args)
    if args.samples and not 2 <= args.samples <= MAX_SAMPLES:
        raise InputError(f"--samples must be 0 or 2-{MAX_SAMPLES}, got {args.samples}")
    setups = setups_from_args(args)
    race = race_request_from_args(args)
    day = race.race_day
    if day is not None and getattr(args, "best_start_between", None) is not None:
        from dataclasses import replace

        from pacing.cli.race_day_flags import start_window
        from pacing.plan.best_start import best_start

        best = best_start(race, *start_window(args, day))
        race = replace(race, race_day=replace(day, start=best.start))
        args.best_start_found = best
    return analyse_setups(race, setups, args.baseline, _uncertainty(args), args.samples,
                          args.seed, not args.no_break_even)


# ------------------------------------------------------------------------------ JSON

def _finite(value: float | None) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def sensitivity_as_dict(sens: Sensitivity) -> dict[str, float]:
    """JSON keys of a Sensitivity (seconds per step, positive = slower).

    Parameters
    ----------
    sens : Sensitivity
        Seconds of finish time per step of each parameter [s].

    Returns
    -------
    dict
        s_per_0_01_cda, s_per_kg, s_per_10_w, s_per_0_001_crr, s_per_1_mps_wind [s] and
        wind_from_deg [deg].
    """
    return {
        "s_per_0_01_cda": sens.drag_area,
        "s_per_kg": sens.mass,
        "s_per_10_w": sens.power,
        "s_per_0_001_crr": sens.rolling_coefficient,
        "s_per_1_mps_wind": sens.wind,
        "wind_from_deg": sens.wind_direction,
    }


def _setups_as_list(analysis: SetupsAnalysis) -> list[dict[str, Any]]:
    comparison = analysis.comparison
    base = comparison.baseline_result
    setups = []
    for r in comparison.results:
        rider = r.setup.rider
        setups.append({
            "name": r.name,
            "cda_m2": float(rider.drag_area),
            "power_share": float(r.setup.power_share),
            "mass_kg": float(rider.mass),
            "crr": float(np.mean(rider.rolling_coefficient)),
            "mean_power_w": r.mean_power,
            "finish_time_s": r.finish_time,
            "delta_s": r.delta,
            "finish_time_sd_s": analysis.finish_time_spreads[r.name].standard_deviation,
            "delta_sd_s": (analysis.difference_spreads[r.name].standard_deviation
                           if r is not base else 0.0),
            "segment_delta_s": [float(v) for v in r.segment_delta],
            "sensitivity": sensitivity_as_dict(analysis.sensitivities[r.name]),
        })
    return setups


def _segments_as_list(analysis: SetupsAnalysis) -> list[dict[str, float]]:
    course = analysis.comparison.race.course
    bounds = analysis.comparison.bounds
    distance = np.asarray(course.distance, dtype=np.float64)
    elevation = np.asarray(course.elevation, dtype=np.float64)
    return [{"start_m": float(distance[a]), "end_m": float(distance[b]),
             "grade": float((elevation[b] - elevation[a]) / (distance[b] - distance[a]))}
            for a, b in zip(bounds[:-1], bounds[1:], strict=True)]


def _uncertainty_as_dict(analysis: SetupsAnalysis) -> dict[str, Any]:
    u = analysis.uncertainty
    sampled = bool(analysis.samples)
    return {
        "sd_cda_m2": u.drag_area, "sd_crr": u.rolling_coefficient,
        "sd_mass_kg": u.mass, "sd_wind_mps": u.wind,
        "finish_time_sd_s": {k: v.standard_deviation
                             for k, v in analysis.finish_time_spreads.items()},
        "delta_sd_s": {k: v.standard_deviation for k, v in analysis.difference_spreads.items()},
        "samples": analysis.samples,
        "sampled_finish_time_sd_s": {k: v.sampled_standard_deviation for k, v in
                                     analysis.finish_time_spreads.items()} if sampled else {},
        "sampled_delta_sd_s": {k: v.sampled_standard_deviation for k, v in
                               analysis.difference_spreads.items()} if sampled else {},
    }


def as_dict(analysis: SetupsAnalysis) -> dict[str, Any]:
    """JSON-ready numbers, SI units named in each key.

    Parameters
    ----------
    analysis : SetupsAnalysis
        What `analyse` returns.

    Returns
    -------
    dict
        strategy, baseline, distance_m [m], setups, segments, sensitivity (of the baseline),
        break_even, uncertainty, mixed, and notices (code, level, values, text).
    """
    comparison = analysis.comparison
    distance = comparison.distance
    mixed = analysis.mixed
    return {
        "strategy": comparison.strategy,
        "baseline": comparison.baseline_result.name,
        "distance_m": float(distance[-1] - distance[0]),
        "setups": _setups_as_list(analysis),
        "segments": _segments_as_list(analysis),
        "sensitivity": sensitivity_as_dict(
            analysis.sensitivities[comparison.baseline_result.name]),
        "break_even": {name: {
            "baseline": be.baseline,
            "power_w": _finite(be.power), "power_margin_w": _finite(be.power_margin),
            "cda_m2": _finite(be.drag_area), "cda_margin_m2": _finite(be.drag_area_margin),
            "mass_kg": _finite(be.mass), "mass_margin_kg": _finite(be.mass_margin),
        } for name, be in analysis.break_evens.items()},
        "uncertainty": _uncertainty_as_dict(analysis),
        "mixed": None if mixed is None else {
            "positions": list(mixed.names),
            "finish_time_s": mixed.finish_time,
            "best_single": mixed.best_single,
            "gain_s": mixed.gain,
            "faster": bool(mixed.faster),
        },
        **_race_day_as_dict(analysis),
        "notices": notices_as_json(analysis.notices),
    }


def _race_day_as_dict(analysis: SetupsAnalysis) -> dict[str, Any]:
    """start and environment of the race day the setups share (none without one)."""
    from pacing.plan.race_day import environment_summary
    from pacing.weather.timeline import clock_text

    day = analysis.race_day
    if day is None:
        return {}
    output = {"start": None if day.start is None else clock_text(day.start, day.utc_offset),
              "environment": environment_summary(day)}
    if day.band is not None:  # the band of the flags' rider, the race day's own plan
        output["finish_time_band"] = day.band.as_dict()
    return output


# ------------------------------------------------------------------------------ table

def _setup_lines(data: dict[str, Any]) -> list[str]:
    lines = [f"{'setup':<16} {'CdA m²':>7} {'power':>6} {'mass kg':>8} {'Crr':>7} "
             f"{'mean W':>7} {'finish':>9} {'vs ' + data['baseline']:>12} {'± 1σ':>7}"]
    for s in data["setups"]:
        label = s["name"] + (" *" if s["name"] == data["baseline"] else "")
        vs = "baseline" if s["name"] == data["baseline"] else f"{s['delta_s']:+.1f} s"
        sd = s["delta_sd_s"] if s["name"] != data["baseline"] else s["finish_time_sd_s"]
        lines.append(f"{label:<16} {s['cda_m2']:7.3f} {100 * s['power_share']:5.0f}% "
                     f"{s['mass_kg']:8.1f} {s['crr']:7.4f} {s['mean_power_w']:7.0f} "
                     f"{units.format_duration(s['finish_time_s']):>9} {vs:>12} "
                     f"{sd:6.1f}s")
    lines.append("(* baseline; differences are setup − baseline, + = slower; ± is 1σ of the "
                 "difference, of the finish time for the baseline)")
    return lines


def _segment_lines(data: dict[str, Any], others: list[dict[str, Any]]) -> list[str]:
    if not others:
        return []
    lines = ["", "time won (−) or lost (+) per segment against the baseline [s]"]
    header = f"{'#':>3} {'from km':>8} {'to km':>7} {'grade %':>8}"
    header += "".join(f" {s['name'][:10]:>10}" for s in others)
    lines.append(header)
    for k, segment in enumerate(data["segments"]):
        row = (f"{k + 1:>3} {segment['start_m'] / 1000:8.2f} {segment['end_m'] / 1000:7.2f} "
               f"{100 * segment['grade']:8.1f}")
        row += "".join(f" {s['segment_delta_s'][k]:10.1f}" for s in others)
        lines.append(row)
    return lines


def _sensitivity_lines(data: dict[str, Any]) -> list[str]:
    sens = data["sensitivity"]
    return [
        "",
        f"what each change is worth for {data['baseline']} (seconds, + = slower)",
        f"  +0.01 m² CdA {sens['s_per_0_01_cda']:+8.1f}    +1 kg {sens['s_per_kg']:+8.1f}    "
        f"+10 W {sens['s_per_10_w']:+8.1f}    +0.001 Crr {sens['s_per_0_001_crr']:+8.1f}    "
        f"+1 m/s wind from {sens['wind_from_deg']:.0f}° {sens['s_per_1_mps_wind']:+8.1f}",
    ]


def _break_even_line(name: str, be: dict[str, Any]) -> str:
    parts = []
    missing = [what for what, key in (("power", "power_margin_w"), ("CdA", "cda_margin_m2"),
                                      ("mass", "mass_margin_kg")) if be[key] is None]
    if be["power_margin_w"] is not None:
        parts.append(f"may lose {be['power_margin_w']:.1f} W" if be["power_margin_w"] >= 0
                     else f"needs {-be['power_margin_w']:.1f} W more")
    if be["cda_margin_m2"] is not None:
        parts.append(f"may add {be['cda_margin_m2']:.4f} m² CdA" if be["cda_margin_m2"] >= 0
                     else f"must save {-be['cda_margin_m2']:.4f} m² CdA")
    if be["mass_margin_kg"] is not None:
        parts.append(f"may add {be['mass_margin_kg']:.2f} kg" if be["mass_margin_kg"] >= 0
                     else f"must shed {-be['mass_margin_kg']:.2f} kg")
    if missing:
        parts.append(f"no {' or '.join(missing)} in range ties")
    return f"break-even {name} vs {be['baseline']}: " + ", ".join(parts) + " (each alone)"


def _uncertainty_lines(data: dict[str, Any], others: list[dict[str, Any]]) -> list[str]:
    u = data["uncertainty"]
    lines = [f"uncertainty (1σ): CdA {u['sd_cda_m2']:g} m², Crr {u['sd_crr']:g}, mass "
             f"{u['sd_mass_kg']:g} kg, wind {u['sd_wind_mps']:g} m/s"
             + (f"; {u['samples']} Monte Carlo draws" if u["samples"] else "")]
    for s in others:
        sd = s["delta_sd_s"]
        verdict = ("real (beyond 2σ)" if sd > 0 and abs(s["delta_s"]) > 2 * sd
                   else "not clear (within 2σ)" if sd > 0 else "(no uncertainty given)")
        lines.append(f"  {s['name']}: {s['delta_s']:+.1f} ± {sd:.1f} s, difference {verdict}")
    return lines


def _mixed_lines(mixed: dict[str, Any] | None) -> list[str]:
    if mixed is None:
        return []
    runs = [(name, len(list(group))) for name, group in itertools.groupby(mixed["positions"])]
    if len(runs) == 1:
        return [f"position by segment: {runs[0][0]} on every segment "
                "(no change of position pays on this course)"]
    plan = ", ".join(f"{name}×{count}" for name, count in runs)
    outcome = (f"{mixed['gain_s']:.1f} s faster than {mixed['best_single']} alone"
               if mixed["faster"] else
               f"not faster than {mixed['best_single']} alone ({mixed['gain_s']:+.1f} s)")
    return [f"position by segment: {units.format_duration(mixed['finish_time_s'])}, "
            f"{outcome}; segments: {plan}"]


def as_table(analysis: SetupsAnalysis) -> str:
    """Readable tables: setups, where time is won or lost, what each parameter is worth.

    Parameters
    ----------
    analysis : SetupsAnalysis
        What `analyse` returns.

    Returns
    -------
    str
        Lines in km, %, W, H:MM:SS and seconds (notices are printed by `run`).
    """
    data = as_dict(analysis)
    others = [s for s in data["setups"] if s["name"] != data["baseline"]]
    lines = _setup_lines(data) + _segment_lines(data, others) + _sensitivity_lines(data)
    lines += [_break_even_line(name, be) for name, be in data["break_even"].items()]
    lines += _uncertainty_lines(data, others) + _mixed_lines(data["mixed"])
    return "\n".join(lines)


def run(args: argparse.Namespace) -> int:
    """Run ``pacing compare``.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags.

    Returns
    -------
    int
        The exit code (0).
    """
    analysis = analyse(args)
    best = getattr(args, "best_start_found", None)
    if args.json:
        report_notices(analysis.notices, table=False)
        output = as_dict(analysis)
        if best is not None:
            from pacing.cli.race_day_flags import best_start_as_json

            output["best_start"] = best_start_as_json(best)
        # whole or not at all: a value JSON cannot hold never leaves half a document
        sys.stdout.write(json.dumps(output, indent=2, allow_nan=False) + "\n")
    else:
        print(as_table(analysis))
        for line in report_notices(analysis.notices, table=True):
            print(line)
        if analysis.race_day is not None:
            from pacing.cli.race_day_flags import band_line, best_start_line, race_day_cost_lines

            lines = race_day_cost_lines(analysis.race_day)
            if analysis.race_day.band is not None:
                lines.append(band_line(analysis.race_day.band))
            print("\n".join([*lines, *([best_start_line(best)] if best else [])]))
        print(CAUTION)
    return 0
