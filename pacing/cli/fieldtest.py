"""``pacing fieldtest RIDE.csv --mass KG …``: CdA and Crr from test rides.

    pacing fieldtest RIDE [RIDE ...] --mass KG [--position LABEL ...]
        [--temperature C --humidity PCT --sea-level-pressure PA --wind-speed M/S --wind-from DEG]
        [--method loop|profile|regression] [--crr FIXED] [--fallback-crr TYPICAL]
        [--laps T0,T1,...] [--estimate-wind | --no-estimate-wind] [--json]

Several ride files are several riding positions (one CdA each, one shared Crr); the output
then says whether each position differs from the first beyond the 95 % interval. Lap
boundaries come from the positions in the file (passes near the start point) unless --laps
gives them as times [s]. Units are SI except --humidity [%] and --temperature [°C].
When the laps cannot separate CdA from Crr (all at about one speed), Crr is held at
--fallback-crr and only CdA is fitted; the output says so ("crr_held" in JSON).

The wind: without --wind-speed the steady wind is estimated from the laps with CdA and Crr
(--estimate-wind is on by default then; pacing.fieldtest.wind_estimate), since an untold wind
biases every method. With --wind-speed (0 included: "it was calm") the given wind is used as
before and only checked: a warning says when the laps show a clearly different one.
--estimate-wind / --no-estimate-wind override the default.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from pacing.cli import COMMANDS
from pacing.cli.common import add_air_flags, conditions_from_args, notices_as_json, require
from pacing.display.notices import describe, describe_all, labelled
from pacing.errors import InputError
from pacing.fieldtest.checks import MAX_BOOTSTRAP_DRAWS, check_bootstrap_draws
from pacing.fieldtest.methods import FIELD_TEST_METHODS

if TYPE_CHECKING:
    from pacing.fieldtest.estimate import PositionTest
    from pacing.fieldtest.estimate_result import FieldTestResult
    from pacing.notices import Notice
    from pacing.weather.conditions import Conditions

EPILOG = """\
Ride laps of one loop at clearly different speeds (e.g. 25, 32 and 40 km/h): only speed
variety separates CdA (air drag grows with speed squared) from Crr. Calm air (under 1 m/s),
no braking, one position per file.

JSON keys: method; cda_m2 and cda_ci95 (first position, m²); crr and crr_ci95; crr_source
("fitted", "given" with --crr, or "typical" when held at --fallback-crr); crr_fixed (given)
and crr_held (held because the laps lack speed variety); laps; estimate_correlation (of the
CdA and Crr estimates, near 1 = inseparable); cda_change_per_0_001_crr_m2; air_density_kg_m3;
positions (label, cda_m2, cda_ci95, laps, lap_cda_m2); differences (position - baseline,
ci95, significant); warnings (of the fit, then of each ride after its label, e.g. power
dropouts); notes (of reading each ride, after its label, e.g. stops dropped); notices (every
warning and note as data: code, level, values in SI, text, and the ride for a ride's notice);
wind (null unless estimated: estimated, speed_mps at 10 m, speed_at_rider_mps, from_deg,
speed_ci95 at 10 m, along_axis_only).
Intervals are 95 % bootstrap intervals over laps, null with fewer than 3 laps; with the wind
estimated, each draw refits the wind.

Without --wind-speed the wind is estimated from the laps (headings or positions needed): a
loop ridden at several speeds, or an out-and-back, tells it from drag; one heading does not.

example: python -m pacing fieldtest hoods.csv aero.csv --mass 82 --position hoods
         --position aero --temperature 14 --humidity 70
"""


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``fieldtest`` command to the command line.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The command line's subcommands.
    """
    parser = subparsers.add_parser(
        "fieldtest",
        help=COMMANDS["fieldtest"],
        description="Estimate drag area (CdA) and rolling resistance (Crr) from test rides\n"
                    "(CSV or GPX with time, speed and power). Several files are several\n"
                    "riding positions: one CdA each, one shared Crr.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("rides", nargs="+", metavar="RIDE",
                        help="test ride file(s), CSV or GPX; one per riding position")
    parser.add_argument("--mass", type=float, required=True, metavar="KG",
                        help="rider + bike + kit [kg]")
    parser.add_argument("--position", action="append", default=None, metavar="LABEL",
                        help="label of each ride's position, in order (default: file names)")
    parser.add_argument("--method", choices=tuple(FIELD_TEST_METHODS), default="loop",
                        help="; ".join(f"{key}: {method.computes}"
                                       for key, method in FIELD_TEST_METHODS.items())
                        + " (default loop)")
    parser.add_argument("--crr", type=float, default=None, metavar="CRR",
                        help="hold Crr at this value (your tyres on this road, 0-0.1) instead "
                             "of fitting it")
    parser.add_argument("--fallback-crr", type=float, default=None, metavar="CRR",
                        help="Crr to hold when the laps cannot separate CdA from Crr (default "
                             "0.0032, Martin et al. 1998)")
    parser.add_argument("--laps", action="append", default=None, metavar="T0,T1,...",
                        help="lap boundaries as times [s] from the ride start (start of the "
                             "first lap, then the end of each lap), one flag per ride "
                             "(default: detected from the positions)")
    parser.add_argument("--lap-radius", type=float, default=20.0, metavar="M",
                        help="a lap closes within this distance of the start [m] (default 20)")
    parser.add_argument("--efficiency", type=float, default=0.976, metavar="FRACTION",
                        help="drivetrain efficiency, 0.5-1 (default 0.976, Martin et al. 1998)")
    parser.add_argument("--bootstrap", type=int, default=1000, metavar="DRAWS",
                        help="bootstrap draws for the intervals (default 1000, 0 for none, "
                             f"at most {MAX_BOOTSTRAP_DRAWS})")
    parser.add_argument("--estimate-wind", action=argparse.BooleanOptionalAction, default=None,
                        help="estimate a steady wind from the laps with CdA and Crr (default: "
                             "on when --wind-speed is not given, off when it is)")
    parser.add_argument("--json", action="store_true", help="print JSON instead of a table")
    add_air_flags(parser)
    # None = no wind given (the wind is then estimated); an explicit 0 means calm
    parser.set_defaults(run=run, wind_speed=None)


def _pair(values: Sequence[float] | None) -> list[float] | None:
    """An interval rounded to 6 decimals for JSON, or None."""
    return None if values is None else [round(float(v), 6) for v in values]


def _check_flags(args: argparse.Namespace) -> None:
    """Refuse flags out of range, and --position or --laps not given once per ride."""
    require(np.isfinite(args.mass) and 20.0 <= args.mass <= 300.0,
            f"--mass must be 20-300 kg (rider + bike), got {args.mass:g}")
    require(0.5 <= args.efficiency <= 1.0, f"--efficiency must be 0.5-1, got {args.efficiency:g}")
    require(0.0 <= args.humidity <= 100.0, f"--humidity must be 0-100 %, got {args.humidity:g}")
    require(args.wind_speed is None or (np.isfinite(args.wind_speed) and args.wind_speed >= 0),
            f"--wind-speed must be 0 m/s or more, got {args.wind_speed}")
    check_bootstrap_draws(args.bootstrap, "--bootstrap")
    for flag, value in (("--crr", args.crr), ("--fallback-crr", args.fallback_crr)):
        require(value is None or (np.isfinite(value) and 0.0 <= value <= 0.1),
                f"{flag} must be 0-0.1 (road tyres are about 0.002-0.01), got {value}")
    require(len(args.position or []) in (0, len(args.rides)),
            f"give one --position per ride ({len(args.rides)}), or none")
    require(len(args.laps or []) in (0, len(args.rides)),
            f"give one --laps per ride ({len(args.rides)}), or none")


def _lap_times(flag: str) -> list[float]:
    """Lap boundaries of a --laps flag as times [s]."""
    try:
        return [float(t) for t in flag.split(",")]
    except ValueError:
        raise InputError(f"--laps must be times in seconds separated by commas, got "
                         f"{flag!r}") from None


def _position_tests(args: argparse.Namespace, conditions: Conditions,
                    ) -> tuple[list[PositionTest], list[tuple[str, Notice]]]:
    """One PositionTest per ride file, with its air, and each ride's notes by label."""
    from pacing.fieldtest.estimate import PositionTest
    from pacing.fieldtest.laps import indices_at_times, laps_from_bounds
    from pacing.fieldtest.ride import ride_air
    from pacing.io.rides import read_ride

    labels = args.position or []
    laps_flags = args.laps or []
    tests: list[PositionTest] = []
    notes: list[tuple[str, Notice]] = []
    for index, path in enumerate(args.rides):
        ride = read_ride(path)
        label = labels[index] if labels else ride.name
        if label in (t.label for t in tests):
            label = f"{label} ({index + 1})"
        laps = None
        if laps_flags:
            bounds = indices_at_times(ride, _lap_times(laps_flags[index]))
            laps = tuple(laps_from_bounds(bounds, ride.time.size))
        air = ride_air(ride, conditions)
        tests.append(PositionTest(label, ride, air.density, laps, air.headwind, air.crosswind))
        notes.extend((label, notice) for notice in ride.notes)
    return tests, notes


def run(args: argparse.Namespace) -> int:
    """Read the rides, estimate CdA and Crr, print a table or JSON.

    Parameters
    ----------
    args : argparse.Namespace
        The parsed flags (see `add_parser`).

    Returns
    -------
    int
        0; bad input raises pacing.errors.InputError (exit code 2).
    """
    from pacing.fieldtest.estimate import TYPICAL_ROLLING_COEFFICIENT
    from pacing.fieldtest.wind_estimate import estimate_drag_in_wind
    from pacing.physics.cycling import Rider
    _check_flags(args)
    wind_given = args.wind_speed is not None
    # the shared builder of the air flags, with no wind given read as calm for the air
    conditions = conditions_from_args(argparse.Namespace(
        **{**vars(args), "wind_speed": args.wind_speed or 0.0}))
    rider = Rider(mass=args.mass, drivetrain_efficiency=args.efficiency)
    tests, notes = _position_tests(args, conditions)
    fallback = TYPICAL_ROLLING_COEFFICIENT if args.fallback_crr is None else args.fallback_crr
    result = estimate_drag_in_wind(
        tests, rider, method=args.method, wind=conditions if wind_given else None,
        estimate_wind=args.estimate_wind, rolling_coefficient=args.crr,
        lap_radius=args.lap_radius, bootstrap=args.bootstrap,
        fallback_rolling_coefficient=fallback)
    if args.json:
        print(json.dumps(_as_json(result, tests, notes), indent=2, allow_nan=False))
    else:
        print(_as_text(result, tests, notes))
    return 0


def _note_lines(notes: Sequence[tuple[str, Notice]], level: str = "note") -> list[str]:
    """Each ride's notices of one level in words, after the ride's label: "hoods: dropped 3
    samples …"."""
    return [f"{label}: {describe(notice)}" for label, notice in notes if notice.level == level]


def _as_json(result: FieldTestResult, tests: Sequence[PositionTest],
             notes: Sequence[tuple[str, Notice]]) -> dict[str, Any]:
    """The result as the JSON object described in EPILOG."""
    return {
        "method": result.method,
        "cda_m2": round(result.drag_area, 5),
        "crr": round(result.rolling_coefficient, 6),
        "cda_ci95": _pair(result.drag_area_ci95),
        "crr_ci95": _pair(result.rolling_coefficient_ci95),
        "crr_source": _crr_source(result),
        "crr_fixed": result.rolling_fixed,
        "crr_held": result.rolling_held,
        "laps": result.laps,
        "estimate_correlation": round(result.estimate_correlation, 4),
        "cda_change_per_0_001_crr_m2": round(0.001 * result.drag_area_per_rolling[0], 5),
        "air_density_kg_m3": round(float(np.mean(tests[0].air_density)), 4),
        "positions": [
            {"label": p.label, "cda_m2": round(p.drag_area, 5),
             "cda_ci95": _pair(p.drag_area_ci95), "laps": p.laps,
             "lap_cda_m2": [round(float(v), 5) for v in p.lap_drag_area]}
            for p in result.positions
        ],
        "differences": [
            {"position": d.label, "baseline": d.baseline, "cda_difference_m2":
             round(d.difference, 5), "ci95": _pair(d.ci95), "significant": d.significant}
            for d in result.differences
        ],
        "wind": _wind_json(result),
        "warnings": describe_all([w for w in result.warnings if w.level == "warning"])
        + _note_lines(notes, "warning"),
        "notes": describe_all([w for w in result.warnings if w.level != "warning"])
        + _note_lines(notes),
        "notices": notices_as_json(result.warnings)
        + [{**entry, "ride": label}
           for label, entry in zip((label for label, _ in notes),
                                   notices_as_json([n for _, n in notes]), strict=True)],
    }


def _wind_json(result: FieldTestResult) -> dict[str, Any] | None:
    """The estimated wind for JSON (10 m and rider height, FROM), or None."""
    wind = result.wind
    if wind is None:
        return None
    return {"estimated": wind.estimated, "speed_mps": round(wind.speed, 3),
            "speed_at_rider_mps": round(wind.speed_at_rider, 3),
            "from_deg": round(wind.wind_from, 1), "speed_ci95": _pair(wind.speed_ci95),
            "along_axis_only": wind.along_axis_only}


def _wind_line(result: FieldTestResult) -> list[str]:
    """The estimated wind in one line for the terminal, or nothing."""
    wind = result.wind
    if wind is None:
        return []
    interval = "" if wind.speed_ci95 is None else \
        f" (95 % interval {wind.speed_ci95[0]:.1f} to {wind.speed_ci95[1]:.1f} m/s)"
    return [f"wind estimated from the laps: {wind.speed:.1f} m/s at 10 m{interval}, "
            f"{wind.speed_at_rider:.1f} m/s at rider height, from {wind.wind_from:.0f}°"]


def _crr_source(result: FieldTestResult) -> str:
    """Where Crr came from: "given", "typical" (held) or "fitted"."""
    if result.rolling_fixed:
        return "given"
    return "typical" if result.rolling_held else "fitted"


def _laps(count: int) -> str:
    """The count with its noun: "1 lap" or "6 laps"."""
    return f"{count} lap" if count == 1 else f"{count} laps"


def _interval(values: Sequence[float] | None, digits: int) -> str:
    """A 95 % interval in words, or "(no interval)"."""
    if values is None:
        return "(no interval)"
    return f"(95 % interval {values[0]:.{digits}f} to {values[1]:.{digits}f})"


def _as_text(result: FieldTestResult, tests: Sequence[PositionTest],
             notes: Sequence[tuple[str, Notice]]) -> str:
    """The result as lines for the terminal: CdA per position, Crr, differences, warnings and
    notes."""
    lines = [f"method: {result.method}, {_laps(result.laps)}, air density "
             f"{float(np.mean(tests[0].air_density)):.3f} kg/m³"]
    for p in result.positions:
        flag = ""
        if p.drag_area <= 0:
            flag = " (not physical: not above 0; see the warnings)"
        elif p.drag_area_ci95 is not None and p.drag_area_ci95[0] <= 0:
            flag = " (undetermined: the interval reaches below 0; see the warnings)"
        lines.append(f"{p.label}: CdA {p.drag_area:.4f} m² {_interval(p.drag_area_ci95, 4)}, "
                     f"{_laps(p.laps)}{flag}")
    crr = f"Crr {result.rolling_coefficient:.5f} "
    if result.rolling_fixed:
        crr += "(held fixed)"
    elif result.rolling_held:
        crr += ("(held at a typical value: the laps cannot separate CdA from Crr, see the "
                "warning)")
    else:
        crr += _interval(result.rolling_coefficient_ci95, 5)
        if result.rolling_coefficient < 0:
            crr += " (not physical: below 0; see the warnings)"
    lines.append(crr)
    lines.extend(_wind_line(result))
    for d in result.differences:
        verdict = "significant" if d.significant else "not significant"
        lines.append(f"{d.label} - {d.baseline}: {d.difference:+.4f} m² "
                     f"{_interval(d.ci95, 4)}, {verdict}")
    lines.extend(labelled(w) for w in result.warnings)
    lines.extend(f"warning: {line}" for line in _note_lines(notes, "warning"))
    lines.extend(f"note: {line}" for line in _note_lines(notes))
    return "\n".join(lines)


if __name__ == "__main__":  # pragma: no cover
    from pacing.cli import main

    sys.exit(main(["fieldtest", *sys.argv[1:]]))
