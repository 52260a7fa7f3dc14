"""Segment targets leave the program here: a table with units, CSV, XLSX, GPX with waypoints,
and a printable card (PNG or PDF, drawn by pacing.io.target_card) a rider can tape to the stem.

Input rows are segment targets as made by ``pacing.plan.targets.target_table`` (objects or
dicts, all in SI units; the fields are listed in pacing.io.target_rows, which reads them).

`segment_table` turns them into the one table the app shows; CSV and XLSX write that same
table, so the numbers in a file are the numbers on the screen. Units are converted only at the
edge (through pacing.display.units).
"""

from __future__ import annotations

import csv
import io
from collections.abc import Iterable, Sequence
from typing import TYPE_CHECKING, Any

import pandas as pd

from pacing.display.units import format_duration, format_quantity, to_display, unit_label
from pacing.io.gpx import write_gpx
from pacing.io.target_card import card_figure
from pacing.io.target_rows import (
    checked_rows,
    gap_length,
    gap_text,
    pace_text,
    row_has,
    row_number,
    row_required,
    row_value,
    target_text,
)

if TYPE_CHECKING:
    from pacing.notices import Notice


def segment_table(rows: Iterable[Any], system: str = "metric") -> pd.DataFrame:
    """The segment target table with a unit on every column, in `system` units.

    Columns (metric; imperial swaps km→mi, km/h→mph, min/km→min/mi): "Segment", "From [km]",
    "To [km]", "Length [km]", "Grade [%]", "Target power [W]", "Power low [W]",
    "Power high [W]", "Target pace [min/km]", "Speed [km/h]", "Headwind [km/h]",
    "Split [h:mm:ss]", "Elapsed [h:mm:ss]", "W′ left [kJ]", "Walked [km]" (bike pushed on
    foot), "Gap [km]" (a gap in the recording joined by a straight line), and on a race day
    "Clock [hh:mm]" and "Clock [ISO 8601]" (at the segment's start), "Air [°C]" (°F
    imperial), "Wind [km/h]" and "Wind from [deg]" (the weather met). Power, pace, W′,
    walking, gap and race-day columns appear only when some segment has them.
    Rounded for reading (distances 0.01, grade and speeds 0.1, power 1 W, W′ 0.1 kJ); a
    missing value is an empty cell, never NaN text.

    Parameters
    ----------
    rows : iterable of SegmentTarget or mapping
        Segment targets in SI units (fields: pacing.io.target_rows) [SI].
    system : {"metric", "imperial"}, optional
        The unit system of the table [-].

    Returns
    -------
    pandas.DataFrame
        One row per segment, the columns above [display units].

    Raises
    ------
    InputError
        When there are no rows, or a row lacks start, end, time or cumulative time.
    """
    rows = checked_rows(rows)
    dist = unit_label("distance", system)
    speed = unit_label("speed", system)
    pace = unit_label("pace", system)

    def col(name: str, quantity: str | None = None, factor: float = 1.0, digits: int = 1):
        values = []
        for row in rows:
            value = row_number(row, name)
            if value is not None:
                value = to_display(value, quantity, system) if quantity else value * factor
                value = round(value, digits) + 0.0 if digits else int(round(value))
            values.append(value)
        return values

    table: dict[str, list] = {"Segment": list(range(1, len(rows) + 1))}
    table[f"From [{dist}]"] = col("start", "distance", digits=2)
    table[f"To [{dist}]"] = col("end", "distance", digits=2)
    table[f"Length [{dist}]"] = [
        round(to_display(row_required(r, "end") - row_required(r, "start"), "distance", system), 2)
        for r in rows
    ]
    table["Grade [%]"] = col("grade", factor=100.0, digits=1)
    if row_has(rows, "target_power"):
        table["Target power [W]"] = col("target_power", digits=0)
        if row_has(rows, "power_low") and row_has(rows, "power_high"):
            table["Power low [W]"] = col("power_low", digits=0)
            table["Power high [W]"] = col("power_high", digits=0)
    if row_has(rows, "target_pace"):
        table[f"Target pace [{pace}]"] = [pace_text(r, system) for r in rows]
    table[f"Speed [{speed}]"] = col("speed", "speed", digits=1)
    if row_has(rows, "headwind"):
        table[f"Headwind [{speed}]"] = col("headwind", "wind_speed", digits=1)
    table["Split [h:mm:ss]"] = [format_duration(row_required(r, "time")) for r in rows]
    table["Elapsed [h:mm:ss]"] = [format_duration(row_required(r, "cumulative_time")) for r in rows]
    if row_has(rows, "w_prime_balance"):
        table["W′ left [kJ]"] = col("w_prime_balance", factor=1e-3, digits=1)
    walked = [row_number(row, "walking_distance") or 0.0 for row in rows]
    if any(w > 0 for w in walked):
        table[f"Walked [{dist}]"] = [round(float(to_display(w, "distance", system)), 2) + 0.0
                                     for w in walked]
    gaps = [gap_length(row) for row in rows]
    if any(g > 0 for g in gaps):
        table[f"Gap [{dist}]"] = [round(float(to_display(g, "distance", system)), 2) + 0.0
                                  for g in gaps]
    table.update(_weather_columns(rows, system, col))
    return pd.DataFrame(table)


def _weather_columns(rows: Sequence[Any], system: str, col: Any) -> dict[str, list]:
    """The race day's columns: clock time and the weather met (none without a race day)."""
    columns: dict[str, list] = {}
    if any(row_value(row, "clock_time") for row in rows):
        clock = [row_value(row, "clock_time") or None for row in rows]
        columns["Clock [hh:mm]"] = [_local_clock(text) for text in clock]
        columns["Clock [ISO 8601]"] = clock
    if row_has(rows, "temperature"):
        columns[f"Air [{unit_label('temperature', system)}]"] = col("temperature",
                                                                   "temperature", digits=1)
    if row_has(rows, "wind_speed"):
        columns[f"Wind [{unit_label('wind_speed', system)}]"] = col("wind_speed", "wind_speed",
                                                                    digits=1)
        columns["Wind from [deg]"] = col("wind_from", digits=0)
    return columns


def _local_clock(text: Any) -> str | None:
    """An ISO 8601 clock time as the race's local "hh:mm" (its own offset kept), for a coach
    reading the table; None stays None."""
    if not text:
        return None
    from datetime import datetime

    return datetime.fromisoformat(str(text)).strftime("%H:%M")


def table_to_csv(table: pd.DataFrame, notices: Sequence[str] = ()) -> bytes:
    """The table as UTF-8 CSV (comma separated, header row, no index).

    Parameters
    ----------
    table : pandas.DataFrame
        The segment table (`segment_table`) [display units].
    notices : sequence of str, optional
        The plan's warnings and notes in words ("warning: …"), written first as comment lines
        starting with "# " (read back with ``pandas.read_csv(..., comment="#")``); none, and
        the file is the bare table [-].

    Returns
    -------
    bytes
        The CSV file, UTF-8 [-].
    """
    buffer = io.StringIO()
    for line in notices:
        buffer.write("# " + " ".join(str(line).split()) + "\n")
    table.to_csv(buffer, index=False, quoting=csv.QUOTE_MINIMAL)
    return buffer.getvalue().encode("utf-8")


def table_to_xlsx(table: pd.DataFrame, sheet_name: str = "segment targets",
                  title: str | None = None, notices: Sequence[str] = ()) -> bytes:
    """The table as an Excel workbook (openpyxl): header row frozen, columns sized.

    The header is on row 1 and data from row 2 (a title, if given, goes in the workbook's
    properties, not in a cell, so the sheet reads straight back into a table). The plan's
    warnings and notes in words (`notices`), if any, go on a second sheet, "warnings and
    notes", one per row.

    Parameters
    ----------
    table : pandas.DataFrame
        The segment table (`segment_table`) [display units].
    sheet_name : str, optional
        Name of the targets sheet, cut to Excel's 31 characters [-].
    title : str or None, optional
        The workbook's title property [-].
    notices : sequence of str, optional
        The plan's warnings and notes in words [-].

    Returns
    -------
    bytes
        The .xlsx file [-].
    """
    buffer = io.BytesIO()
    with pd.ExcelWriter(buffer, engine="openpyxl") as writer:
        if notices:
            pd.DataFrame({"warnings and notes": list(notices)}).to_excel(
                writer, sheet_name="warnings and notes", index=False)
        table.to_excel(writer, sheet_name=sheet_name[:31], index=False)
        if notices:  # the targets stay the first sheet, the one a reader opens
            writer.book.move_sheet(sheet_name[:31], offset=-1)
        sheet = writer.sheets[sheet_name[:31]]
        sheet.freeze_panes = "A2"
        _durations_as_time(sheet, table)
        for cells in sheet.columns:
            width = max(len(str(c.value)) if c.value is not None else 0 for c in cells)
            sheet.column_dimensions[cells[0].column_letter].width = min(max(width + 2, 8), 40)
        if title:
            writer.book.properties.title = title
    return buffer.getvalue()


CLOCK_COLUMN = "Clock [hh:mm]"
"""The race's local clock, written in the XLSX as a time of day (format hh:mm)."""

DURATION_COLUMNS = ("Split [h:mm:ss]", "Elapsed [h:mm:ss]", CLOCK_COLUMN)
"""Columns written in the XLSX as time values: durations ([h]:mm:ss) and the clock (hh:mm)."""


def _durations_as_time(sheet: Any, table: pd.DataFrame) -> None:
    """Write the "H:MM:SS" texts of DURATION_COLUMNS as Excel durations: a fraction of a day
    [d] shown as [h]:mm:ss, so a spreadsheet can add and compare them; the "hh:mm" clock as
    a time of day."""
    for position, name in enumerate(table.columns, start=1):
        if name not in DURATION_COLUMNS:
            continue
        for row in range(2, len(table) + 2):
            cell = sheet.cell(row=row, column=position)
            parts = str(cell.value).split(":")
            if len(parts) == 3 and all(part.isdigit() for part in parts):
                hours, minutes, seconds = (int(part) for part in parts)
                cell.value = (hours * 3600 + minutes * 60 + seconds) / 86400.0
                cell.number_format = "[h]:mm:ss"
            elif name == CLOCK_COLUMN and len(parts) == 2 and all(p.isdigit() for p in parts):
                cell.value = (int(parts[0]) * 60 + int(parts[1])) / 1440.0  # time of day [d]
                cell.number_format = "hh:mm"



# ------------------------------------------------------------------- GPX with waypoints

LOCATED_CODES = ("w-prime-exhausted", "d-prime-exhausted")
"""Notice codes whose ``distance_m`` says where on the course they happen."""


def located_warnings(notices: Iterable[Notice], system: str = "metric"
                     ) -> list[tuple[float, str]]:
    """The warnings that happen at one place on the course, with their words.

    Parameters
    ----------
    notices : iterable of pacing.notices.Notice
        The plan's notices [-].
    system : {"metric", "imperial"}, optional
        The unit system of the words [-].

    Returns
    -------
    list of (float, str)
        Where (from the course's first point) and the warning in words [m, -].
    """
    from pacing.display.notices import describe

    return [(float(n.values["distance_m"]), describe(n, system)) for n in notices
            if n.level == "warning" and n.code in LOCATED_CODES and "distance_m" in n.values]


def _segment_at(rows: Sequence[Any], distance: float) -> int:
    """Index of the row whose [start, end) holds `distance` [m] (the last one past the end)."""
    for index, row in enumerate(rows):
        if distance < row_required(row, "end"):
            return index
    return len(rows) - 1


def segment_waypoints(rows: Iterable[Any], system: str = "metric",
                      warnings: Sequence[tuple[float, str]] = ()
                      ) -> list[tuple[float, str, str]]:
    """One waypoint per segment start, with its target.

    Name: "S3 285 W" (or "S3 4:35 min/km"); description: where it starts, the target, the
    expected speed, grade, split and elapsed time, in `system` units, and the length of a
    gap in the recording joined by a straight line ("joined gap 12.7 km"); then, on the
    segment where they happen, the located warnings (e.g. where W′ runs out).

    Parameters
    ----------
    rows : iterable of SegmentTarget or mapping
        Segment targets in SI units (fields: pacing.io.target_rows) [SI].
    system : {"metric", "imperial"}, optional
        The unit system of the words [-].
    warnings : sequence of (float, str), optional
        Where a warning happens and its words (`located_warnings`) [m, -].

    Returns
    -------
    list of (float, str, str)
        Distance of the segment's start from the first point, name, description [m, -, -].

    Raises
    ------
    InputError
        When there are no rows, or a row lacks start, end, time or cumulative time.
    """
    rows = checked_rows(rows)
    points = []
    for number, row in enumerate(rows, start=1):
        start = row_required(row, "start")
        target = target_text(row, system)
        speed = row_number(row, "speed")
        speed_text = (f", {to_display(speed, 'speed', system):.1f} {unit_label('speed', system)}"
                      if speed is not None else "")
        grade = row_number(row, "grade")
        grade_text = f", grade {100 * grade:.1f} %" if grade is not None else ""
        description = (
            f"segment {number} from {to_display(start, 'distance', system):.2f} "
            f"{unit_label('distance', system)}: {target}{speed_text}{grade_text}, "
            f"split {format_duration(row_required(row, 'time'))}, "
            f"elapsed {format_duration(row_required(row, 'cumulative_time'))}"
        )
        gap = gap_text(row, system)
        if gap is not None:
            description += f", {gap}"
        points.append((start, f"S{number} {target}", description))
    for where, words in warnings:
        index = _segment_at(rows, where)
        start, name, description = points[index]
        points[index] = (start, name, f"{description}. Warning: {words}")
    return points


def course_with_targets_gpx(course: Any, rows: Iterable[Any], system: str = "metric",
                            warnings: Sequence[tuple[float, str]] = (),
                            notices: Sequence[str] = ()) -> str:
    """The course as a GPX 1.1 track with a waypoint at each segment start carrying its target.

    Uses pacing.io.gpx.write_gpx(course, waypoints) (the project's GPX writer).

    Parameters
    ----------
    course : Course
        The course [-].
    rows : iterable of SegmentTarget or mapping
        Segment targets in SI units (fields: pacing.io.target_rows) [SI].
    system : {"metric", "imperial"}, optional
        The unit system of the waypoints' words [-].
    warnings : sequence of (float, str), optional
        Located warnings (`located_warnings`), told on the waypoint of their segment [m, -].
    notices : sequence of str, optional
        The plan's warnings and notes in words ("warning: …"), one per line of the document's
        description (as the CSV's comment lines and the XLSX's sheet) [-].

    Returns
    -------
    str
        The GPX document [-].

    Raises
    ------
    InputError
        When there are no rows, or a row lacks start, end, time or cumulative time.
    """
    return write_gpx(course, segment_waypoints(rows, system, warnings),
                     "\n".join(notices) or None)


# ---------------------------------------------------------------- the card as PNG or PDF

CARD_DPI = 150
"""Default resolution of the PNG card [dots per inch]."""


def target_card_png(rows: Iterable[Any], system: str = "metric", title: str = "race plan",
                    dpi: int = CARD_DPI, warnings: Sequence[str] = ()) -> bytes:
    """The printable target card as PNG: TARGET_CARD.size(len(rows), len(warnings) + G)
    inches at `dpi`, G the number of segments holding a joined gap.

    Large type: segment start (km or mi), target power or pace, expected split; a line per
    segment holding a gap in the recording joined by a straight line ("joined gap 12.7 km")
    and the plan's warnings in words (e.g. where W′ runs out), then a caution line at the
    bottom.

    Parameters
    ----------
    rows : iterable of SegmentTarget or mapping
        Segment targets in SI units (fields: pacing.io.target_rows) [SI].
    system : {"metric", "imperial"}, optional
        The unit system of the card [-].
    title : str, optional
        Printed at the top, cut to 40 characters [-].
    dpi : int, optional
        Resolution [dots per inch].
    warnings : sequence of str, optional
        The plan's warnings in words, printed above the caution [-].

    Returns
    -------
    bytes
        The PNG image [-].

    Raises
    ------
    InputError
        When there are no rows, or a row lacks start, end, time or cumulative time.
    """
    rows = checked_rows(rows)
    buffer = io.BytesIO()
    card_figure(rows, system, title, warnings).savefig(buffer, format="png", dpi=dpi)
    return buffer.getvalue()


def target_card_pdf(rows: Iterable[Any], system: str = "metric", title: str = "race plan",
                    warnings: Sequence[str] = ()) -> bytes:
    """The printable target card as a one-page PDF (see target_card_png).

    Parameters
    ----------
    rows : iterable of SegmentTarget or mapping
        Segment targets in SI units (fields: pacing.io.target_rows) [SI].
    system : {"metric", "imperial"}, optional
        The unit system of the card [-].
    title : str, optional
        Printed at the top, cut to 40 characters [-].
    warnings : sequence of str, optional
        The plan's warnings in words, printed above the caution [-].

    Returns
    -------
    bytes
        The PDF document [-].

    Raises
    ------
    InputError
        When there are no rows, or a row lacks start, end, time or cumulative time.
    """
    rows = checked_rows(rows)
    buffer = io.BytesIO()
    card_figure(rows, system, title, warnings).savefig(buffer, format="pdf")
    return buffer.getvalue()


# ------------------------------------------------------------------------------ race day

def race_day_lines(race_day: Any, system: str = "metric") -> list[str]:
    """Lines for a file's comments about the race day: where the athlete's limits were taken
    as measured, heat and altitude in numbers, and the forecast's finish-time band.

    Parameters
    ----------
    race_day : pacing.plan.race_day.RaceDayResult or None
        A result's race day [-].
    system : str, optional
        "metric" or "imperial" [-].

    Returns
    -------
    list of str
        Lines without the "# " (table_to_csv adds it; the XLSX's notes sheet takes them as
        they are); none without a race day [-].
    """
    if race_day is None:
        return []
    temperature, humidity, elevation = race_day.limits_measured
    test = (f"{format_quantity(temperature, 'temperature', system, 0)}, "
            f"{100.0 * humidity:.0f} % humidity, "
            f"{format_quantity(elevation, 'elevation', system, 0)}")
    lines = [f"heat and altitude: limits factor {race_day.limit_factor:.4f} against a test at "
             f"{test}" + (" (assumed)" if race_day.limits_assumed else "")]
    environment = race_day.environment
    if environment is not None:
        wbgt = format_quantity(environment.wbgt_max_c, "temperature", system, 1)
        lines.append(f"WBGT up to {wbgt} ({environment.heat_category})")
    band = race_day.band
    if band is not None:
        lines.append(f"forecast band (5-50-95 %): {format_duration(band.p5)} – "
                     f"{format_duration(band.p50)} – {format_duration(band.p95)} "
                     f"({band.samples} sampled weathers, seed {band.seed})")
    return lines
