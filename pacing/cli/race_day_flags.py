"""The race day on the command line: its flags (--weather, --start, --best-start-between,
acclimatisation, where the athlete's limits were measured, the forecast's spread), their
conversion to a RaceDay, and the race day's JSON keys and terminal lines (plan and compare).
docs/race_day_weather.md describes the race day.
"""

from __future__ import annotations

import argparse
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from pacing.cli.common import require
from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.plan.best_start import BestStart
    from pacing.plan.forecast_band import FinishTimeBand, WeatherSpread
    from pacing.plan.race import RaceRequest, RaceResult
    from pacing.plan.race_day import RaceDay, RaceDayResult


def add_race_day_flags(parser: argparse.ArgumentParser) -> None:
    """Add the race day's flags: weather through the race, start time, best start, heat and
    altitude (plan and compare).

    Parameters
    ----------
    parser : argparse.ArgumentParser
        Gets a group "race day": --weather FILE.csv, --start YYYY-MM-DDTHH:MM,
        --best-start-between HH:MM,HH:MM, --heat-acclimatised, --altitude-acclimatised and
        --heat-and-altitude [-].
    """
    group = parser.add_argument_group(
        "race day", "the weather through the race, the start time, heat and altitude; any of "
                    "these lowers the athlete's limits (CP, critical speed) for heat and "
                    "altitude")
    group.add_argument("--weather", default=None, metavar="FILE.csv",
                       help="weather table: time, temperature_c, relative_humidity_pct, "
                            "wind_speed_mps, wind_from_deg [, sea_level_pressure_hpa or "
                            "station_pressure_hpa, latitude, longitude]; replaces the single "
                            "temperature, humidity and wind")
    group.add_argument("--start", default=None, metavar="YYYY-MM-DDTHH:MM",
                       help="start time, local to the race (or with an offset, +02:00); "
                            "default: the weather table's first row")
    group.add_argument("--best-start-between", default=None, metavar="HH:MM,HH:MM",
                       help="plan starts every 10 min in this window (on the day of --start or "
                            "of the table's first row), refine the best to 1 min, and plan it")
    group.add_argument("--heat-acclimatised", action="store_true",
                       help="the athlete is acclimatised to heat")
    group.add_argument("--altitude-acclimatised", action="store_true",
                       help="the athlete is acclimatised to altitude")
    group.add_argument("--heat-and-altitude", action="store_true",
                       help="kept for old scripts: heat and altitude always apply now")
    group.add_argument("--limits-measured-temperature", type=float, default=None, metavar="C",
                       help="air temperature where CP / critical speed was measured [°C] "
                            "(default 20)")
    group.add_argument("--limits-measured-humidity", type=float, default=None, metavar="PCT",
                       help="relative humidity there [%%] (default 50)")
    group.add_argument("--limits-measured-elevation", type=float, default=None, metavar="M",
                       help="elevation there [m] (default 0, sea level)")
    group.add_argument("--weather-spread", default=None,
                       metavar="wind=M/S,direction=DEG,temperature=C",
                       help="standard deviations of the forecast: replay the plan in sampled "
                            "weathers for a 5-50-95 %% finish-time band")
    group.add_argument("--spread-samples", type=int, default=None, metavar="N",
                       help="sampled weathers of the band (default 200)")
    group.add_argument("--spread-seed", type=int, default=0, metavar="N",
                       help="seed of the band's draws (default 0)")


def weather_spread_from_args(args: argparse.Namespace) -> WeatherSpread | None:
    """The forecast's spread of --weather-spread, or None.

    Parameters
    ----------
    args : argparse.Namespace
        --weather-spread "wind=M/S,direction=DEG,temperature=C" (any of the three),
        --spread-samples, --spread-seed [-].

    Returns
    -------
    pacing.plan.forecast_band.WeatherSpread or None

    Raises
    ------
    InputError
        For a spread that does not read (one line naming the part).
    """
    from pacing.plan.forecast_band import DEFAULT_BAND_SAMPLES, WeatherSpread

    text = getattr(args, "weather_spread", None)
    if text is None:
        require(getattr(args, "spread_samples", None) is None,
                "--spread-samples needs --weather-spread")
        return None
    names = {"wind": "wind_speed", "direction": "wind_from", "temperature": "temperature"}
    values: dict[str, float] = {}
    for part in str(text).split(","):
        key, _, number = part.partition("=")
        require(key.strip() in names and number.strip() != "",
                f"--weather-spread parts are wind=M/S, direction=DEG, temperature=C; got "
                f"{part.strip()!r}")
        try:
            values[names[key.strip()]] = float(number)
        except ValueError:
            raise InputError(f"--weather-spread {key.strip()} must be a number, got "
                             f"{number.strip()!r}") from None
    samples = getattr(args, "spread_samples", None)
    return WeatherSpread(**values, samples=DEFAULT_BAND_SAMPLES if samples is None else samples,
                         seed=int(getattr(args, "spread_seed", 0) or 0))


def race_day_from_args(args: argparse.Namespace) -> RaceDay:
    """The race day of the flags (always one: heat and altitude always count).

    Parameters
    ----------
    args : argparse.Namespace
        The flags of `add_race_day_flags` (absent ones count as not given) [-].

    Returns
    -------
    pacing.plan.race.RaceDay
        Start [s in the table's frame], weather table, acclimatisation, the test's
        conditions, the forecast's spread [-].

    Raises
    ------
    InputError
        For a start or a weather file that does not read.
    """
    from pacing.io.weather_file import parse_moment, read_weather_table
    from pacing.plan.race_day import RaceDay
    from pacing.weather.timeline import clock_seconds, time_frame

    text = getattr(args, "start", None)
    moment = None if text is None else parse_moment(text, "--start")
    weather = getattr(args, "weather", None)
    require(getattr(args, "best_start_between", None) is None or weather is not None,
            "--best-start-between needs --weather (one weather all day has no best start)")
    humidity = getattr(args, "limits_measured_humidity", None)
    require(humidity is None or 0.0 <= humidity <= 100.0,
            f"--limits-measured-humidity must be 0-100 %, got {humidity}")
    shared: dict[str, Any] = {
        "heat_acclimatised": bool(getattr(args, "heat_acclimatised", False)),
        "altitude_acclimatised": bool(getattr(args, "altitude_acclimatised", False)),
        "limits_temperature": getattr(args, "limits_measured_temperature", None),
        "limits_relative_humidity": None if humidity is None else humidity / 100.0,
        "limits_elevation": getattr(args, "limits_measured_elevation", None),
        "spread": weather_spread_from_args(args)}
    if weather is not None:
        table, start = read_weather_table(weather, moment)
        return RaceDay(start=start, weather=table, **shared)
    offset = None if moment is None else time_frame([moment])
    return RaceDay(start=None if moment is None else clock_seconds(moment, offset),
                   utc_offset=offset, **shared)


def start_window(args: argparse.Namespace, day: RaceDay) -> tuple[float, float]:
    """The window of --best-start-between as clock seconds in the table's frame.

    The day is that of --start, else of the table's first row; times are local to the race.

    Parameters
    ----------
    args : argparse.Namespace
        --best-start-between "HH:MM,HH:MM" [-].
    day : pacing.plan.race.RaceDay
        The race day, with its weather table [-].

    Returns
    -------
    tuple of float
        First and last start [s in the frame].

    Raises
    ------
    InputError
        For a window that does not read or ends before it starts.
    """
    from datetime import datetime, time

    from pacing.weather.timeline import clock_seconds, clock_text

    assert day.weather is not None
    anchor = day.start if day.start is not None else day.weather.span[0]
    date = datetime.fromisoformat(clock_text(anchor, day.offset)).date()
    parts = str(args.best_start_between).split(",")
    require(len(parts) == 2, "--best-start-between must be HH:MM,HH:MM, got "
                             f"{args.best_start_between!r}")
    edges = []
    for part in parts:
        try:
            clock = time.fromisoformat(part.strip())
        except ValueError:
            raise InputError(f"--best-start-between must be HH:MM,HH:MM, got {part.strip()!r}"
                             ) from None
        edges.append(clock_seconds(datetime.combine(date, clock), day.offset))
    require(edges[1] >= edges[0], "--best-start-between must end after it begins "
                                  f"(same day), got {args.best_start_between}")
    return edges[0], edges[1]


def plan_the_day(request: RaceRequest, args: argparse.Namespace
                 ) -> tuple[RaceResult, BestStart | None]:
    """Plan through the one chain; with --best-start-between, search the best start first and
    plan at it.

    Parameters
    ----------
    request : pacing.plan.race.RaceRequest
        The request, with its race day when asked [-].
    args : argparse.Namespace
        --best-start-between [-].

    Returns
    -------
    tuple of (pacing.plan.race.RaceResult, pacing.plan.race.BestStart or None)
    """
    from dataclasses import replace

    from pacing.plan.best_start import best_start
    from pacing.plan.race import plan_race

    day = request.race_day
    if day is None or getattr(args, "best_start_between", None) is None:
        return plan_race(request), None
    first, last = start_window(args, day)
    best = best_start(request, first, last)
    return plan_race(replace(request, race_day=replace(day, start=best.start))), best


def race_day_as_json(result: RaceResult, best: BestStart | None = None) -> dict[str, Any]:
    """The race day's top-level JSON: start, environment (heat and altitude) and best start.

    Parameters
    ----------
    result : pacing.plan.race.RaceResult
        A result with its race day [-].
    best : pacing.plan.race.BestStart, optional
        The best-start search [-].

    Returns
    -------
    dict
        start (ISO 8601 or null), fixed_point_iterations, environment {heat_power_factor,
        altitude_power_factor, wbgt_max_c, heat_category, heat_cost_w, heat_cost_s,
        altitude_air_gain_s, altitude_power_loss_s, limit_factor} and best_start {start,
        finish_time_s, grid: [{start, finish_time_s}]} when asked [SI].
    """
    from pacing.plan.race_day import environment_summary
    from pacing.weather.timeline import clock_text

    day = result.race_day
    if day is None:
        return {}
    output: dict[str, Any] = {
        "start": None if day.start is None else clock_text(day.start, day.utc_offset),
        "fixed_point_iterations": day.iterations,
        "environment": environment_summary(day),
    }
    if day.band is not None:
        output["finish_time_band"] = day.band.as_dict()
    if best is not None:
        output["best_start"] = best_start_as_json(best)
    return output


def best_start_as_json(best: BestStart) -> dict[str, Any]:
    """{start, finish_time_s, grid: [{start, finish_time_s}]} of a best-start search (ISO 8601
    clock times) [s]."""
    from pacing.weather.timeline import clock_text

    return {"start": clock_text(best.start, best.utc_offset),
            "finish_time_s": best.finish_time,
            "grid": [{"start": clock_text(start, best.utc_offset), "finish_time_s": finish}
                     for start, finish in best.grid]}


def add_segment_weather(segments: list[dict[str, Any]], targets: Sequence[Any]) -> None:
    """Give each JSON segment its clock_time, temperature_c, wind_speed_mps and wind_from_deg
    (from the chain's target rows, in the same order).

    Parameters
    ----------
    segments : list of dict
        The JSON segments, changed in place [-].
    targets : sequence of pacing.plan.targets.SegmentTarget
        The result's target rows [-].
    """
    for segment, row in zip(segments, targets, strict=True):
        segment["clock_time"] = row.clock_time
        segment["temperature_c"] = row.temperature
        segment["wind_speed_mps"] = row.wind_speed
        segment["wind_from_deg"] = row.wind_from


def with_weather_columns(table: str, targets: Sequence[Any], header: int = 0) -> str:
    """A terminal table with clock, temperature and wind columns added to its segment rows.

    Parameters
    ----------
    table : str
        Lines before, the header line, one line per target row, then footer lines [-].
    targets : sequence of pacing.plan.targets.SegmentTarget
        The rows with their race-day weather [-].
    header : int, optional
        Index of the header line [-].

    Returns
    -------
    str
        The table; unchanged when the rows have no weather [-].
    """
    if not targets or targets[0].temperature is None:
        return table
    lines = table.splitlines()
    lines[header] += f" {'clock':>5} {'°C':>5} {'wind km/h from':>15}"
    for k, row in enumerate(targets, start=header + 1):
        clock = "" if row.clock_time is None else row.clock_time[11:16]
        body, mark, note = lines[k].partition("  <- ")  # a row's remark stays last
        lines[k] = (f"{body} {clock:>5} {row.temperature:5.1f} "
                    f"{3.6 * row.wind_speed:9.1f} {row.wind_from:3.0f}°"
                    + (f"{mark}{note}" if mark else ""))
    return "\n".join(lines)


def race_day_lines(result: RaceResult, best: BestStart | None = None) -> list[str]:
    """Lines under a terminal table: start, heat and altitude costs, the best start.

    Parameters
    ----------
    result : pacing.plan.race.RaceResult
        The result [-].
    best : pacing.plan.race.BestStart, optional
        The best-start search [-].

    Returns
    -------
    list of str
        Empty without a race day [-].
    """
    from pacing.weather.timeline import clock_text

    day = result.race_day
    if day is None:
        return []
    lines = []
    if day.start is not None:
        lines.append(f"start {clock_text(day.start, day.utc_offset)}; weather met per segment "
                     f"in the last columns ({day.iterations} plans to settle the passing times)")
    lines += race_day_cost_lines(day)
    if day.band is not None:
        lines.append(band_line(day.band))
    if best is not None:
        lines.append(best_start_line(best))
    return lines


def band_line(band: FinishTimeBand) -> str:
    """"forecast band: 1:02:10 – 1:03:05 – 1:04:30 (5-50-95 %, 200 sampled weathers, seed 0)"."""
    from pacing.display import units

    return (f"forecast band: {units.format_duration(band.p5)} – "
            f"{units.format_duration(band.p50)} – {units.format_duration(band.p95)} "
            f"(5-50-95 %, {band.samples} sampled weathers, seed {band.seed})")


def race_day_cost_lines(day: RaceDayResult) -> list[str]:
    """"heat costs about N W / N s today" and the altitude trade-off, when there are any.

    Parameters
    ----------
    day : pacing.plan.race_day.RaceDayResult
        A result's race day [-].

    Returns
    -------
    list of str
    """
    costs = day.costs
    if costs is None:
        return []
    temperature, humidity, elevation = day.limits_measured
    lines = [f"heat and altitude relative to the limits' test at {temperature:.0f} °C, "
             f"{100.0 * humidity:.0f} %, {elevation:.0f} m"
             + (" (assumed)" if day.limits_assumed else "")] if day.limit_factor < 1.0 else []
    if costs.heat_time > 0:
        lines.append(f"heat costs about {costs.heat_power:.0f} W / {costs.heat_time:.0f} s "
                     "today" if costs.heat_power > 0 else
                     f"heat costs about {costs.heat_time:.0f} s today")
    if costs.altitude_power_loss > 0 or costs.altitude_air_gain > 0.5:
        lines.append(f"altitude: the thinner air gains {costs.altitude_air_gain:.0f} s, the "
                     f"lower aerobic power loses {costs.altitude_power_loss:.0f} s")
    return lines


def best_start_line(best: BestStart) -> str:
    """"best start 10:20: finish 1:10:02 (14 starts planned)"."""
    from pacing.display import units
    from pacing.weather.timeline import clock_text

    return (f"best start {clock_text(best.start, best.utc_offset)[11:16]}: finish "
            f"{units.format_duration(best.finish_time)} ({len(best.grid)} starts planned)")
