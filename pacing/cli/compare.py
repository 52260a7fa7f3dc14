"""``pacing compare ROUTE.gpx --setup NAME:cda=0.32,power=1.0 --setup NAME:cda=0.25,power=0.95``:
setups side by side on a course, what each parameter is worth, and how sure the differences are.

A setup is ``NAME:key=value,key=value`` with the keys
``cda`` [m²], ``power`` (share of --power, e.g. 0.95), ``mass`` (rider + bike + kit total
[kg], replacing --mass for this setup), ``crr`` [-], and ``yaw`` (a CdA-versus-yaw table as
DEG/FACTOR pairs joined by '+', e.g. ``yaw=0/1+10/0.96+20/0.93``). Keys left out take the
values of --cda, --mass and --crr; power defaults to 1.

Time differences are setup − baseline in seconds: positive = slower. Sensitivities are seconds
per step (+0.01 m² CdA, +1 kg, +10 W, +0.001 Crr, +1 m/s wind), positive = slower.
"""

from __future__ import annotations

import argparse
import json
import math
import sys

import numpy as np

from pacing.cli.common import (
    CAUTION,
    add_air_flags,
    add_course_flags,
    add_rider_flags,
    add_simulation_flags,
)
from pacing.display import units
from pacing.errors import InputError

SETUP_KEYS = ("cda", "power", "mass", "crr", "yaw")

DEFAULT_SD = {"cda": 0.005, "crr": 0.0003, "mass": 0.5, "wind": 1.0}
"""Default 1 σ of the inputs: CdA 0.005 m² (≈ 2 % of a road CdA; wind-tunnel repeatability
CV < 2 %, García-López et al. 2008, J Sports Sci 26:277); Crr 0.0003, mass 0.5 kg and forecast
wind 1 m/s are our own round defaults (judgment, from memory), meant to be replaced."""


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    parser = subparsers.add_parser(
        "compare",
        help="compare setups (positions, equipment) on a course",
        description="Ride several setups with the same pacing strategy on a GPX course and "
                    "show the time each gains or loses, break-even figures, sensitivities "
                    "and their uncertainty. Differences are setup minus baseline: positive "
                    "= slower.",
    )
    add_compare_flags(parser)
    parser.set_defaults(run=run)


def add_compare_flags(parser: argparse.ArgumentParser) -> None:
    """Every flag of the compare command."""
    add_course_flags(parser)
    parser.add_argument("--setup", action="append", default=[], metavar="NAME:KEY=VALUE,...",
                        help="a setup, e.g. aero:cda=0.25,power=0.95 (keys: cda [m²], power "
                             "[share of --power], mass [kg, rider+bike total], crr, "
                             "yaw=DEG/FACTOR+DEG/FACTOR); repeat for each setup")
    parser.add_argument("--baseline", default=None,
                        help="name of the setup the others are compared to (default: first)")
    add_rider_flags(parser)
    add_air_flags(parser)
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
    parser.add_argument("--no-break-even", action="store_true",
                        help="skip the break-even search (faster)")


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


def parse_setup(text: str) -> tuple[str, dict]:
    """'NAME:cda=0.25,power=0.95' → ('NAME', {'cda': 0.25, 'power': 0.95}); InputError if
    malformed."""
    if ":" not in text:
        raise InputError(f"--setup must look like NAME:cda=0.25,power=0.95, got {text!r}")
    name, _, body = text.partition(":")
    name = name.strip()
    if not name:
        raise InputError(f"--setup needs a name before ':', got {text!r}")
    values: dict = {}
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


def setups_from_args(args: argparse.Namespace) -> list:
    """The RiderSetups of the --setup flags (defaults from --cda, --mass, --crr)."""
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
        cda = values.get("cda", base.drag_area)
        if not 0.05 <= cda <= 2.0:
            raise InputError(f"--setup {name}: cda must be 0.05-2 m², got {cda:g}")
        mass = values.get("mass", base.mass)
        low, high = MASS_RANGE
        if not low <= mass <= high:
            raise InputError(f"--setup {name}: mass (rider + bike) must be {low:g}-{high:g} kg, "
                             f"got {mass:g}")
        crr = values.get("crr", base.rolling_coefficient)
        if not 0.0 <= crr <= 0.1:
            raise InputError(f"--setup {name}: crr must be 0-0.1, got {crr:g}")
        rider = type(base)(mass=mass, drag_area=cda, rolling_coefficient=crr,
                           drivetrain_efficiency=base.drivetrain_efficiency,
                           drafting_reduction=base.drafting_reduction,
                           yaw_drag_table=values.get("yaw"))
        setups.append(RiderSetup(name, rider, values.get("power", 1.0)))
    return setups


def _request(args: argparse.Namespace):
    """The PlanRequest of the pacing flags (through the plan command's own checks when
    pacing.cli.plan_cycling provides them)."""
    from pacing.cli import plan_cycling
    from pacing.plan.request import PlanRequest

    if hasattr(plan_cycling, "request_from_args"):
        return plan_cycling.request_from_args(args)
    if args.power is None:
        raise InputError("compare needs --power W (the athlete's power at power share 1)")
    return PlanRequest(strategy=args.strategy, mean_power=args.power,
                       critical_power=args.cp, w_prime=args.w_prime,
                       w_prime_reserve=args.w_prime_reserve,
                       max_power_ratio=args.max_power_ratio)


def _uncertainty(args: argparse.Namespace):
    from pacing.compare.sensitivity import Uncertainty

    return Uncertainty(drag_area=args.sd_cda, rolling_coefficient=args.sd_crr,
                       mass=args.sd_mass, wind=args.sd_wind)


def analyse(args: argparse.Namespace) -> dict:
    """Validate, load, compare, and compute sensitivities, break-even figures and spreads.

    Returns a dict of library results (keys: course, comparison, sensitivity (per setup),
    spread, difference, sampled, sampled_difference, break_even, mixed, uncertainty).
    """
    from pacing.cli.common import conditions_from_args, load_course_and_bounds
    from pacing.cli.plan_cycling import simulation_options_from_args, validate_args
    from pacing.compare.sensitivity import (
        difference_spread,
        finish_time_spread,
        sampled_difference,
        sampled_finish_time,
        sensitivity,
    )
    from pacing.compare.setups import break_even, compare_setups, mixed_plan
    from pacing.weather.conditions import air_along_course

    validate_args(args)
    if args.samples and not 2 <= args.samples <= 10_000:
        raise InputError(f"--samples must be 0 or 2-10000, got {args.samples}")
    setups = setups_from_args(args)
    request = _request(args)
    uncertainty = _uncertainty(args)
    conditions = conditions_from_args(args)
    course, bounds = load_course_and_bounds(args)
    air = air_along_course(course, conditions)
    options = simulation_options_from_args(args)
    comparison = compare_setups(course, bounds, setups, air, request, args.baseline, options)
    base = comparison.baseline_result
    sens = {r.name: sensitivity(course, r.plan.piece_power, r.setup.rider, conditions, options)
            for r in comparison.results}
    spread = {name: finish_time_spread(s, uncertainty) for name, s in sens.items()}
    difference = {r.name: difference_spread(sens[base.name], sens[r.name], uncertainty)
                  for r in comparison.results if r is not base}
    sampled, sampled_diff = {}, {}
    if args.samples:
        for r in comparison.results:
            sampled[r.name] = sampled_finish_time(course, r.plan.piece_power, r.setup.rider,
                                                  conditions, uncertainty, args.samples,
                                                  args.seed, options)
            if r is not base:
                sampled_diff[r.name] = sampled_difference(
                    course, (base.setup.rider, base.plan.piece_power),
                    (r.setup.rider, r.plan.piece_power), conditions, uncertainty,
                    args.samples, args.seed, options)
    breaks = {}
    if not args.no_break_even:
        breaks = {r.name: break_even(course, r, base, air, options)
                  for r in comparison.results if r is not base}
    return {
        "course": course, "comparison": comparison, "sensitivity": sens, "spread": spread,
        "difference": difference, "sampled": sampled, "sampled_difference": sampled_diff,
        "break_even": breaks, "mixed": mixed_plan(course, comparison, air, options),
        "uncertainty": uncertainty,
    }


def _finite(value):
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


def sensitivity_as_dict(sens) -> dict:
    """JSON keys of a Sensitivity (seconds per step, positive = slower)."""
    return {
        "s_per_0_01_cda": sens.drag_area,
        "s_per_kg": sens.mass,
        "s_per_10_w": sens.power,
        "s_per_0_001_crr": sens.rolling_coefficient,
        "s_per_1_mps_wind": sens.wind,
        "wind_from_deg": sens.wind_direction,
    }


def _sd(samples) -> float | None:
    return None if samples is None else float(np.std(samples, ddof=1))


def as_dict(result: dict) -> dict:
    """JSON-ready numbers, SI units named in each key."""
    comparison = result["comparison"]
    course = result["course"]
    base = comparison.baseline_result
    bounds = comparison.bounds
    distance = np.asarray(course.distance, dtype=float)
    elevation = np.asarray(course.elevation, dtype=float)
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
            "finish_time_sd_s": result["spread"][r.name].standard_deviation,
            "delta_sd_s": (result["difference"][r.name].standard_deviation
                           if r is not base else 0.0),
            "segment_delta_s": [float(v) for v in r.segment_delta],
            "sensitivity": sensitivity_as_dict(result["sensitivity"][r.name]),
        })
    uncertainty = result["uncertainty"]
    sampled = result["sampled"]
    mixed = result["mixed"]
    return {
        "strategy": comparison.request.strategy,
        "baseline": base.name,
        "distance_m": float(distance[-1] - distance[0]),
        "setups": setups,
        "segments": [{"start_m": float(distance[a]), "end_m": float(distance[b]),
                      "grade": float((elevation[b] - elevation[a]) / (distance[b] - distance[a]))}
                     for a, b in zip(bounds[:-1], bounds[1:], strict=True)],
        "sensitivity": sensitivity_as_dict(result["sensitivity"][base.name]),
        "break_even": {name: {
            "baseline": be.baseline,
            "power_w": _finite(be.power), "power_margin_w": _finite(be.power_margin),
            "cda_m2": _finite(be.drag_area), "cda_margin_m2": _finite(be.drag_area_margin),
            "mass_kg": _finite(be.mass), "mass_margin_kg": _finite(be.mass_margin),
        } for name, be in result["break_even"].items()},
        "uncertainty": {
            "sd_cda_m2": uncertainty.drag_area, "sd_crr": uncertainty.rolling_coefficient,
            "sd_mass_kg": uncertainty.mass, "sd_wind_mps": uncertainty.wind,
            "finish_time_sd_s": {k: v.standard_deviation for k, v in result["spread"].items()},
            "delta_sd_s": {k: v.standard_deviation for k, v in result["difference"].items()},
            "samples": len(next(iter(sampled.values()))) if sampled else 0,
            "sampled_finish_time_sd_s": {k: _sd(v) for k, v in sampled.items()},
            "sampled_delta_sd_s": {k: _sd(v) for k, v in result["sampled_difference"].items()},
        },
        "mixed": None if mixed is None else {
            "positions": list(mixed.names),
            "finish_time_s": mixed.finish_time,
            "best_single": mixed.best_single,
            "gain_s": mixed.gain,
            "faster": bool(mixed.faster),
        },
    }


def _signed(seconds: float) -> str:
    sign = "+" if seconds > 0 else "−" if seconds < 0 else " "
    return f"{sign}{units.format_duration(abs(seconds))}"


def as_table(result: dict) -> str:
    """Readable tables: setups, where time is won or lost, what each parameter is worth."""
    data = as_dict(result)
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
    others = [s for s in data["setups"] if s["name"] != data["baseline"]]
    if others:
        lines.append("")
        lines.append("time won (−) or lost (+) per segment against the baseline [s]")
        header = f"{'#':>3} {'from km':>8} {'to km':>7} {'grade %':>8}"
        header += "".join(f" {s['name'][:10]:>10}" for s in others)
        lines.append(header)
        for k, segment in enumerate(data["segments"]):
            row = (f"{k + 1:>3} {segment['start_m'] / 1000:8.2f} {segment['end_m'] / 1000:7.2f} "
                   f"{100 * segment['grade']:8.1f}")
            row += "".join(f" {s['segment_delta_s'][k]:10.1f}" for s in others)
            lines.append(row)
    sens = data["sensitivity"]
    lines += [
        "",
        f"what each change is worth for {data['baseline']} (seconds, + = slower)",
        f"  +0.01 m² CdA {sens['s_per_0_01_cda']:+8.1f}    +1 kg {sens['s_per_kg']:+8.1f}    "
        f"+10 W {sens['s_per_10_w']:+8.1f}    +0.001 Crr {sens['s_per_0_001_crr']:+8.1f}    "
        f"+1 m/s wind from {sens['wind_from_deg']:.0f}° {sens['s_per_1_mps_wind']:+8.1f}",
    ]
    for name, be in data["break_even"].items():
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
        lines.append(f"break-even {name} vs {be['baseline']}: " + ", ".join(parts)
                     + " (each alone)")
    u = data["uncertainty"]
    lines.append(f"uncertainty (1σ): CdA {u['sd_cda_m2']:g} m², Crr {u['sd_crr']:g}, mass "
                 f"{u['sd_mass_kg']:g} kg, wind {u['sd_wind_mps']:g} m/s"
                 + (f"; {u['samples']} Monte Carlo draws" if u["samples"] else ""))
    for s in others:
        sd = s["delta_sd_s"]
        verdict = ("real (beyond 2σ)" if sd > 0 and abs(s["delta_s"]) > 2 * sd
                   else "not clear (within 2σ)" if sd > 0 else "(no uncertainty given)")
        lines.append(f"  {s['name']}: {s['delta_s']:+.1f} ± {sd:.1f} s, difference {verdict}")
    mixed = data["mixed"]
    if mixed is not None:
        runs = []
        for name in mixed["positions"]:
            if runs and runs[-1][0] == name:
                runs[-1][1] += 1
            else:
                runs.append([name, 1])
        plan = ", ".join(f"{name}×{count}" for name, count in runs)
        if len(runs) == 1:
            lines.append(f"position by segment: {runs[0][0]} on every segment "
                         "(no change of position pays on this course)")
            return "\n".join(lines)
        outcome = (f"{mixed['gain_s']:.1f} s faster than {mixed['best_single']} alone"
                   if mixed["faster"] else
                   f"not faster than {mixed['best_single']} alone ({mixed['gain_s']:+.1f} s)")
        lines.append(f"position by segment: {units.format_duration(mixed['finish_time_s'])}, "
                     f"{outcome}; segments: {plan}")
    return "\n".join(lines)


def run(args: argparse.Namespace) -> int:
    """Run ``pacing compare``; returns the exit code."""
    result = analyse(args)
    if args.json:
        json.dump(as_dict(result), sys.stdout, indent=2, allow_nan=False)
        sys.stdout.write("\n")
    else:
        print(as_table(result))
        print(CAUTION)
    return 0
