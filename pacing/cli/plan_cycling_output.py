"""The cycling plan's output of ``pacing plan --sport cycling``: the JSON numbers (SI units
named in each key) and the readable table (km, %, W, km/h, H:MM:SS), of a plain prediction at
a power (`prediction_as_dict`, `prediction_as_table`) or of a strategy's plan (`plan_as_dict`,
`plan_as_table`), every row with the band around its target power, rows holding a joined gap
of the recording marked (pacing.cli.plan_cycling.gap_marked), and what every cycling plan says
about the athlete's limits (`limits_as_dict`).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

import numpy as np
from numpy.typing import ArrayLike

from pacing.cli.common import warnings_as_text
from pacing.cli.plan_cycling import gap_marked
from pacing.display import units
from pacing.plan.prediction import Prediction, SegmentResult
from pacing.plan.strategies import walking_distance
from pacing.plan.targets import DEFAULT_BAND, power_band, segment_gap_lengths

if TYPE_CHECKING:
    from pacing.course.recording import Gap
    from pacing.plan.cycling import RacePlan
    from pacing.plan.race import RaceResult


def prediction_as_dict(prediction: Prediction, segments: list[SegmentResult], *,
                       target_power: ArrayLike | None = None,
                       band: float = DEFAULT_BAND, gaps: Sequence[Gap] = ()) -> dict[str, Any]:
    """JSON-ready numbers, SI units named in each key.

    Parameters
    ----------
    prediction : pacing.plan.prediction.Prediction
        The verified inertial prediction [-].
    segments : list of SegmentResult
        Its segment summaries [-].
    target_power : float or array_like or None, optional
        Target power, one number or one per segment; None for the power ridden on each
        segment [W].
    band : float, optional
        Half-width of the band around the target, a fraction [-].
    gaps : sequence of pacing.course.recording.Gap, optional
        The course's gaps in the recording (Course.gaps) [-].

    Returns
    -------
    dict
        finish_time_s [s], distance_m [m], average_speed_mps and max_speed_mps [m/s],
        average_power_w [W], work_kj [kJ], walking_distance_m (distance walked or ridden
        below walking pace) [m], and per segment start_m, end_m [m], grade [-], power_w
        (the mean crank power of the pieces ridden: walking goes not through the pedals),
        power_low_w, power_high_w (the band ±`band` around the target) [W], speed_mps,
        max_speed_mps [m/s], time_s [s], walking_distance_m [m], gap_m (length of the
        recording's gaps joined by a straight line that start in the segment) [m].
    """
    target = ([s.power for s in segments] if target_power is None
              else np.broadcast_to(np.asarray(target_power, dtype=float), (len(segments),)))
    low, high = power_band(target, band)
    gap = segment_gap_lengths(gaps, [s.end for s in segments])
    return {
        "finish_time_s": prediction.finish_time,
        "distance_m": float(prediction.distance[-1] - prediction.distance[0]),
        "average_speed_mps": prediction.average_speed,
        "average_power_w": prediction.average_power,
        "max_speed_mps": prediction.max_speed,
        "work_kj": prediction.work / 1000.0,
        "walking_distance_m": walking_distance(prediction),
        "segments": [
            {
                "start_m": s.start,
                "end_m": s.end,
                "grade": s.grade,
                "power_w": s.power,
                "power_low_w": float(low[k]),
                "power_high_w": float(high[k]),
                "speed_mps": s.speed,
                "time_s": s.time,
                "max_speed_mps": s.max_speed,
                "walking_distance_m": s.walking_distance,
                "gap_m": float(gap[k]),
            }
            for k, s in enumerate(segments)
        ],
    }


def limits_as_dict(result: RaceResult) -> dict[str, Any]:
    """What every cycling plan's JSON says about the athlete's limits, whatever its strategy.

    Parameters
    ----------
    result : pacing.plan.race.RaceResult
        A cycling plan of the one planning chain [-].

    Returns
    -------
    dict
        min_w_prime_balance_j, the lowest W′ balance (null without CP and W′) [J];
        w_prime_exhausted_at_m, where the balance first falls below zero (null when it never
        does) [m]; w_prime_model, the W′ balance model of the plan ("differential" or
        "integral", pacing.physiology.critical_power) [-]; warnings, the text of the
        warning-level notices in metric words [-].
    """
    from pacing.plan.cycling import RacePlan  # imported when the plan was made

    plan = result.plan
    assert isinstance(plan, RacePlan)  # a cycling result holds a cycling plan
    return {"min_w_prime_balance_j": plan.min_w_prime_balance,
            "w_prime_exhausted_at_m": result.exhausted_at,
            "w_prime_model": result.request.cycling.w_prime_model,
            "warnings": warnings_as_text(result.notices)}


def band_text(low: float, high: float) -> str:
    """"270-286" of a power band [W]."""
    return f"{low:.0f}-{high:.0f}"


BAND_HEADER = f" {'band W':>11}"
"""Heading of the power band column of the tables."""


def prediction_as_table(prediction: Prediction, segments: list[SegmentResult], *,
                        target_power: ArrayLike | None = None,
                        band: float = DEFAULT_BAND, gaps: Sequence[Gap] = ()) -> str:
    """A readable table: km, %, W, km/h, H:MM:SS, and a finish line.

    Parameters
    ----------
    prediction : pacing.plan.prediction.Prediction
        The verified inertial prediction [-].
    segments : list of SegmentResult
        Its segment summaries [-].
    target_power : float or array_like or None, optional
        Target power, one number or one per segment, for a last column with its band; None
        for no band column [W].
    band : float, optional
        Half-width of the band around the target, a fraction [-].
    gaps : sequence of pacing.course.recording.Gap, optional
        The course's gaps in the recording (Course.gaps): a segment holding a joined one
        ends with a mark, "<- joined gap 12.7 km" [-].

    Returns
    -------
    str
        One line per segment, then the finish (and the band's width) [-].
    """
    kmh = 3.6
    header = (f"{'#':>3} {'from km':>8} {'to km':>7} {'grade %':>8} {'power W':>8} "
              f"{'speed km/h':>11} {'time':>9} {'elapsed':>9} {'max km/h':>9}")
    band_edges = None
    if target_power is not None:
        band_edges = power_band(np.broadcast_to(np.asarray(target_power, dtype=float),
                                                (len(segments),)), band)
        header += BAND_HEADER
    lines = [header]
    elapsed = 0.0
    for k, s in enumerate(segments):
        elapsed += s.time
        row = (f"{s.index + 1:>3} {s.start / 1000:8.2f} {s.end / 1000:7.2f} "
               f"{100 * s.grade:8.1f} {s.power:8.0f} {s.speed * kmh:11.1f} "
               f"{units.format_duration(s.time):>9} {units.format_duration(elapsed):>9} "
               f"{s.max_speed * kmh:9.1f}")
        if band_edges is not None:
            row += f" {band_text(band_edges[0][k], band_edges[1][k]):>11}"
        lines.append(row)
    lines[1:] = gap_marked(lines[1:], [s.end for s in segments], gaps)
    distance = float(prediction.distance[-1] - prediction.distance[0])
    lines.append(
        f"finish {units.format_duration(prediction.finish_time)} (H:MM:SS) over "
        f"{distance / 1000:.2f} km; mean {prediction.average_speed * kmh:.1f} km/h, "
        f"mean power {prediction.average_power:.0f} W, max {prediction.max_speed * kmh:.1f} km/h, "
        f"work {prediction.work / 1000:.0f} kJ"
    )
    if target_power is not None:
        lines.append(f"band: ±{100 * band:g} % around the target power")
    return "\n".join(lines)


def plan_as_dict(plan: RacePlan, segments: list[SegmentResult],
                 gaps: Sequence[Gap] = ()) -> dict[str, Any]:
    """The JSON of the plain prediction plus the plan.

    Parameters
    ----------
    plan : pacing.plan.cycling.RacePlan
        The plan with its verified prediction [-].
    segments : list of SegmentResult
        The prediction's segment summaries [-].
    gaps : sequence of pacing.course.recording.Gap, optional
        The course's gaps in the recording (Course.gaps), for each segment's gap_m [-].

    Returns
    -------
    dict
        `prediction_as_dict`'s keys plus strategy, time_saved_s [s], reference_power_w and
        effort_weighted_power_w [W], min_w_prime_balance_j [J] and min_w_prime_distance_m
        [m], binding; per segment power_w (the target), its band power_low_w and
        power_high_w (± the request's band), ridden_power_w [W] and w_prime_balance_j [J].
    """
    result = prediction_as_dict(plan.prediction, segments, target_power=plan.segment_power,
                                band=plan.request.band, gaps=gaps)
    result["strategy"] = plan.strategy
    result["time_saved_s"] = plan.time_saved
    result["reference_power_w"] = plan.reference_power
    result["effort_weighted_power_w"] = plan.effort_weighted_power
    result["min_w_prime_balance_j"] = plan.min_w_prime_balance
    result["min_w_prime_distance_m"] = plan.min_w_prime_distance
    result["binding"] = list(plan.binding)
    balance = plan.segment_w_prime_balance
    for index, segment in enumerate(result["segments"]):
        segment["ridden_power_w"] = segment["power_w"]
        segment["power_w"] = float(plan.segment_power[index])
        segment["w_prime_balance_j"] = None if balance is None else float(balance[index])
    return result


def plan_as_table(plan: RacePlan, segments: list[SegmentResult],
                  gaps: Sequence[Gap] = ()) -> str:
    """The prediction table with the target power per segment and a summary of the plan.

    Parameters
    ----------
    plan : pacing.plan.cycling.RacePlan
        The plan with its verified prediction [-].
    segments : list of SegmentResult
        The prediction's segment summaries [-].
    gaps : sequence of pacing.course.recording.Gap, optional
        The course's gaps in the recording (Course.gaps): rows holding a joined one are
        marked [-].

    Returns
    -------
    str
        `prediction_as_table` with target [W], band [W] and W′ balance [kJ] columns, and a
        line on the time gained [s] and the lowest W′ balance [kJ] [-].
    """
    lines = prediction_as_table(plan.prediction, segments).splitlines()
    header, rows, footer = lines[0], lines[1:1 + len(segments)], lines[1 + len(segments):]
    header += f" {'target W':>9}" + BAND_HEADER
    if plan.segment_w_prime_balance is not None:
        header += f" {'W′ kJ':>6}"
    out = [header]
    low, high = power_band(plan.segment_power, plan.request.band)
    for index, row in enumerate(rows):
        row += f" {plan.segment_power[index]:9.0f} {band_text(low[index], high[index]):>11}"
        if plan.segment_w_prime_balance is not None:
            row += f" {plan.segment_w_prime_balance[index] / 1000:6.1f}"
        out.append(row)
    out[1:] = gap_marked(out[1:], [s.end for s in segments], gaps)
    out.extend(footer[:1])
    out.append(f"band: ±{100 * plan.request.band:g} % around the target power")
    out.extend(footer[1:])
    summary = (f"strategy {plan.strategy}: {plan.time_saved:.1f} s faster than constant "
               f"{plan.reference_power:.0f} W; effort-weighted power "
               f"{plan.effort_weighted_power:.0f} W")
    where = plan.min_w_prime_distance
    if plan.min_w_prime_balance is not None and where is not None:
        summary += (f"; lowest W′ balance {plan.min_w_prime_balance / 1000:.1f} kJ at km "
                    f"{where / 1000:.2f}")
    out.append(summary)
    return "\n".join(out)
