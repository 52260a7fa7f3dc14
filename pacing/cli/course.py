"""``pacing course ROUTE.gpx``: summary of a course (distance, ascent, high and low points,
segments) and what the file holds (tracks, gaps, warnings), as a readable table or as JSON
(--json)."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

import numpy as np

from pacing.cli import COMMANDS
from pacing.cli.common import add_course_flags, notices_as_json
from pacing.course.geometry import Course
from pacing.course.segments import describe_segments, split_by_grade, split_every


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``course`` command.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The subcommands of ``pacing`` (pacing.cli.build_parser) [-].
    """
    parser = subparsers.add_parser(
        "course",
        help=COMMANDS["course"],
        description="Summarise a GPX course: distance, ascent (cleaned and raw), descent, "
                    "highest and lowest point, its segments, the tracks of the file and the "
                    "gaps in the recording.",
    )
    add_course_flags(parser)
    parser.set_defaults(run=run)


def course_summary(course: Course, bounds: np.ndarray) -> dict[str, Any]:
    """The course and its segments as plain numbers (SI units; keys name their unit).

    Parameters
    ----------
    course : Course
        The course [-].
    bounds : numpy.ndarray
        Segment boundary point indices [-].

    Returns
    -------
    dict
        name; distance_m, ascent_m, raw_ascent_m, descent_m, highest_m, highest_at_m,
        lowest_m, lowest_at_m [m] (0.1 m); step_m [m]; points [-]; smoothing (method,
        window_m [m], max_grade [-]) or None; segments, one dict each (index, start_m, end_m,
        length_m, ascent_m, descent_m [m], grade, max_grade [-], heading_deg [deg], kind)
        [SI]; warnings (the course's warnings in metric words), notices (code, level, values,
        text), tracks (index, name, points, segments, distance_m [m], duration_s [s], used)
        and gaps (at_m, length_m [m], duration_s [s], handling).
    """
    from pacing.display.notices import describe

    smoothing = course.smoothing
    return {
        "name": course.name,
        "distance_m": round(course.total_distance, 1),
        "ascent_m": round(course.ascent, 1),
        "raw_ascent_m": round(course.raw_ascent, 1),
        "descent_m": round(course.descent, 1),
        "highest_m": round(course.highest_elevation, 1),
        "highest_at_m": round(float(course.distance[int(np.argmax(course.elevation))]), 1),
        "lowest_m": round(course.lowest_elevation, 1),
        "lowest_at_m": round(float(course.distance[int(np.argmin(course.elevation))]), 1),
        "step_m": round(float(course.distance[1] - course.distance[0]), 3),
        "points": int(course.distance.size),
        "smoothing": None if smoothing is None else {
            "method": smoothing.method, "window_m": smoothing.window,
            "max_grade": smoothing.max_grade},
        "segments": [
            {"index": s.index, "start_m": round(s.start, 1), "end_m": round(s.end, 1),
             "length_m": round(s.length, 1), "grade": round(s.mean_grade, 5),
             "max_grade": round(s.max_grade, 5), "ascent_m": round(s.ascent, 1),
             "descent_m": round(s.descent, 1), "heading_deg": round(s.mean_heading, 1),
             "kind": s.kind}
            for s in describe_segments(course, bounds)
        ],
        "warnings": [describe(n, "metric") for n in course.notices if n.level == "warning"],
        "notices": notices_as_json(course.notices),
        "tracks": [track.as_dict() for track in course.tracks],
        "gaps": [gap.as_dict() for gap in course.gaps],
    }


def format_summary(summary: dict[str, Any], by_grade: bool) -> str:
    """A readable summary in km, m and % (one table of segments).

    Parameters
    ----------
    summary : dict
        As made by `course_summary` (SI) [-].
    by_grade : bool
        Whether the segments were cut by terrain (else every so many metres) [-].

    Returns
    -------
    str
        The summary, one line per fact and per segment [-].
    """
    smoothing = summary["smoothing"]
    lines = [
        f"Course: {summary['name']}",
        f"  distance        {summary['distance_m'] / 1000:8.2f} km",
        f"  ascent          {summary['ascent_m']:8.0f} m   (raw track: "
        f"{summary['raw_ascent_m']:.0f} m before cleaning)",
        f"  descent         {summary['descent_m']:8.0f} m",
        f"  highest point   {summary['highest_m']:8.0f} m   at km "
        f"{summary['highest_at_m'] / 1000:.2f}",
        f"  lowest point    {summary['lowest_m']:8.0f} m   at km "
        f"{summary['lowest_at_m'] / 1000:.2f}",
        f"  points          {summary['points']:8d}     every {summary['step_m']:g} m",
    ]
    if smoothing:
        lines.append(f"  elevation       {smoothing['method']} smoothing over "
                     f"{smoothing['window_m']:g} m, grade limit {smoothing['max_grade']:.0%}")
    lines += _file_lines(summary)
    lines.append("")
    lines.append(f"Segments ({'by terrain and turns' if by_grade else 'fixed length'}):")
    lines.append("    #  from km    to km  length km  grade %  steepest %  ascent m  "
                 "descent m  heading deg  kind")
    for s in summary["segments"]:
        lines.append(
            f"  {s['index'] + 1:3d}  {s['start_m'] / 1000:7.2f}  {s['end_m'] / 1000:7.2f}  "
            f"{s['length_m'] / 1000:9.2f}  {s['grade'] * 100:7.1f}  {s['max_grade'] * 100:10.1f}"
            f"  {s['ascent_m']:8.0f}  {s['descent_m']:9.0f}  {s['heading_deg']:11.0f}  "
            f"{s['kind']}")
    return "\n".join(lines)


HANDLED = {"join": "joined", "drop": "dropped"}
"""How a gap's handling reads in the summary."""


def _file_lines(summary: dict[str, Any]) -> list[str]:
    """The tracks of the file (when more than one) and the gaps, as lines of the summary."""
    lines = []
    tracks = summary.get("tracks", [])
    if len(tracks) > 1:
        lines.append(f"  tracks          {len(tracks):8d}")
        for track in tracks:
            duration = track["duration_s"]
            lasting = "" if duration is None else f", {duration / 3600:.2f} h"
            lines.append(f"    {track['index']:3d}  {track['name'] or '(no name)'}: "
                         f"{track['distance_m'] / 1000:.2f} km, {track['points']} points, "
                         f"{track['segments']} segment(s){lasting}"
                         f"{'' if track['used'] else ' (not used)'}")
    for gap in summary.get("gaps", []):
        lines.append(f"  gap             at km {gap['at_m'] / 1000:.2f}: "
                     f"{gap['length_m'] / 1000:.2f} km without points "
                     f"({HANDLED.get(gap['handling'], gap['handling'])})")
    return lines


def run(args: argparse.Namespace) -> int:
    """Run ``pacing course``: print the summary as a table or JSON (--json).

    Parameters
    ----------
    args : argparse.Namespace
        The flags of pacing.cli.common.add_course_flags [-].

    Returns
    -------
    int
        The exit code, 0 [-].

    Raises
    ------
    InputError
        When the file cannot be read as a course.
    """
    from pacing.course.recording import parse_track_choice
    from pacing.display.notices import describe
    from pacing.io.gpx import load_course

    course = load_course(args.route, step=args.step, allow_missing_elevation=args.flat,
                         tracks=parse_track_choice(args.track), gaps=args.gaps)
    for notice in course.notices:
        if notice.level == "warning":
            print(f"pacing course: warning: {describe(notice, 'metric')}", file=sys.stderr)
    if args.segment_length is None:
        bounds = split_by_grade(course)
    else:
        bounds = split_every(course, args.segment_length)
    summary = course_summary(course, bounds)
    if args.json:
        print(json.dumps(summary, indent=2, allow_nan=False))
    else:
        print(format_summary(summary, by_grade=args.segment_length is None))
        for notice in course.notices:
            if notice.level == "note":
                print(f"note: {describe(notice, 'metric')}")
    return 0
