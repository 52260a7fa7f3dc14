"""The printable target card a rider can tape to the stem, drawn: large type, one line per
segment (start, target power or pace, split), columns side by side past ROWS_PER_CARD_COLUMN
segments, the joined gaps and the plan's warnings, and a caution line. pacing.io.exports
writes it as PNG or PDF.

Drawn with matplotlib (imported on first use); the rows are read through
pacing.io.target_rows (SI units there; display units through pacing.display.units here).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from pacing.display.units import format_duration, to_display, unit_label
from pacing.errors import InputError
from pacing.io.target_rows import (
    gap_text,
    row_has,
    row_number,
    row_required,
    row_value,
    target_text,
)

if TYPE_CHECKING:
    from matplotlib.figure import Figure

CAUTION_LINE = (
    "Speeds are estimates, not safe limits. Ride within your skills, the road, "
    "traffic law and race rules."
)
"""Printed on every cycling card and shown beside predicted speeds."""

RUNNING_CAUTION_LINE = (
    "Paces are estimates, not safe limits. Run within your fitness, the footing, the road, "
    "traffic law and race rules."
)
"""Printed on every running card (a card of paces only)."""

ROWS_PER_CARD_COLUMN = 20
"""Segments per column of the printed card; more segments add columns side by side."""
CARD_COLUMN_WIDTH = 3.4
"""Width of one card column [in]."""
CARD_ROW_HEIGHT = 0.40
"""Height of one segment line on the card [in]."""
CARD_HEADER_HEIGHT = 0.95
"""Title and column headings [in]."""
CARD_FOOTER_HEIGHT = 0.60
"""Caution line [in]."""
CARD_WARNING_HEIGHT = 0.45
"""Height of one warning on the card [in]."""


def card_size(segment_count: int, warning_count: int = 0) -> tuple[float, float]:
    """Size of the printed card for a number of segments and of warnings.

    Parameters
    ----------
    segment_count : int
        Segments on the card, ≥ 1 [-].
    warning_count : int, optional
        Warnings printed above the caution line [-].

    Returns
    -------
    tuple of float
        (width, height) [in].

    Raises
    ------
    InputError
        When there is no segment.
    """
    if segment_count < 1:
        raise InputError("there are no segments to put on the card")
    columns = math.ceil(segment_count / ROWS_PER_CARD_COLUMN)
    lines = min(segment_count, ROWS_PER_CARD_COLUMN)
    return (CARD_COLUMN_WIDTH * columns,
            CARD_HEADER_HEIGHT + CARD_ROW_HEIGHT * (lines + 1) + CARD_FOOTER_HEIGHT
            + CARD_WARNING_HEIGHT * warning_count)


def card_figure(rows: Sequence[Any], system: str, title: str,
                warnings: Sequence[str] = ()) -> Figure:
    """The card as a matplotlib Figure, drawn in inches (y down): title and finish, one
    column of segments per ROWS_PER_CARD_COLUMN, warnings, caution."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    warnings = [*_card_gap_lines(rows, system), *warnings]
    width, height = card_size(len(rows), len(warnings))
    figure = Figure(figsize=(width, height))
    FigureCanvasAgg(figure)
    axes = figure.add_axes((0, 0, 1, 1))
    axes.set_axis_off()
    axes.set_xlim(0, width)
    axes.set_ylim(height, 0)  # y grows downward, in inches
    finish = row_required(rows[-1], "cumulative_time")
    axes.text(0.12, 0.38, title[:40], fontsize=15, fontweight="bold", va="center")
    clock = _card_clock_text(rows, system)
    axes.text(0.12, 0.72, f"finish {format_duration(finish)}{clock}",
              fontsize=10 if clock else 12, va="center")
    dist = unit_label("distance", system)
    columns = math.ceil(len(rows) / ROWS_PER_CARD_COLUMN)
    pace_only = not row_has(rows, "target_power") and row_has(rows, "target_pace")
    target_heading = f"pace [{unit_label('pace', system)}]" if pace_only else "target"
    for column in range(columns):
        left = column * CARD_COLUMN_WIDTH + 0.12
        top = CARD_HEADER_HEIGHT + CARD_ROW_HEIGHT * 0.5
        for x, heading in ((0.0, dist), (0.95, target_heading), (2.45, "split")):
            axes.text(left + x, top, heading, fontsize=9, color="0.35", va="center")
        part = rows[column * ROWS_PER_CARD_COLUMN:(column + 1) * ROWS_PER_CARD_COLUMN]
        for line, row in enumerate(part, start=1):
            y = top + CARD_ROW_HEIGHT * line
            if line % 2:
                axes.axhspan(y - CARD_ROW_HEIGHT / 2, y + CARD_ROW_HEIGHT / 2,
                             xmin=column / columns, xmax=(column + 1) / columns,
                             color="0.92", lw=0)
            start = to_display(row_required(row, "start"), "distance", system)
            target = target_text(row, system).replace(" min/km", "").replace(" min/mi", "")
            split = format_duration(row_required(row, "time"))
            split = split[2:] if split.startswith("0:") else split
            axes.text(left, y, f"{start:.1f}", fontsize=15, va="center", family="monospace")
            axes.text(left + 0.95, y, target, fontsize=17, fontweight="bold", va="center")
            axes.text(left + 2.45, y, split, fontsize=13, va="center", family="monospace")
    for number, warning in enumerate(warnings):
        y = (height - CARD_FOOTER_HEIGHT - CARD_WARNING_HEIGHT * (len(warnings) - number)
             + CARD_WARNING_HEIGHT / 2)
        axes.text(0.12, y, wrap_text("⚠ " + warning, width), fontsize=7, va="center",
                  color="#8a2c0d", fontweight="bold")
    caution = RUNNING_CAUTION_LINE if pace_only else CAUTION_LINE
    axes.text(0.12, height - CARD_FOOTER_HEIGHT / 2, wrap_text(caution, width), fontsize=7,
              va="center", color="0.2")
    return figure


def _card_clock_text(rows: Sequence[Any], system: str) -> str:
    """" · start 09:00 · 24–31 °C" on a race day (clock at the start, the air met on the first
    and last segments); "" without one."""
    clock = row_value(rows[0], "clock_time")
    if not clock:
        return ""
    text = f" · start {str(clock)[11:16]}"
    first, last = row_number(rows[0], "temperature"), row_number(rows[-1], "temperature")
    if first is not None and last is not None:
        label = unit_label("temperature", system)
        text += (f" · {to_display(first, 'temperature', system):.0f}–"
                 f"{to_display(last, 'temperature', system):.0f} {label}")
    return text


def _card_gap_lines(rows: Sequence[Any], system: str) -> list[str]:
    """One card line per segment holding a joined gap: "segment 2 from 5.0 km: joined gap
    12.7 km"."""
    lines = []
    for number, row in enumerate(rows, start=1):
        gap = gap_text(row, system)
        if gap is not None:
            start = to_display(row_required(row, "start"), "distance", system)
            lines.append(f"segment {number} from {start:.1f} {unit_label('distance', system)}: "
                         f"{gap}")
    return lines


def wrap_text(text: str, width_inches: float) -> str:
    """The text wrapped to about 15 characters per inch of width [in]."""
    import textwrap

    return "\n".join(textwrap.wrap(text, width=max(20, int(width_inches * 15))))
