"""The printable target card a rider can tape to the stem, drawn: large type, one line per
segment (start, target power or pace, split), columns side by side past
TARGET_CARD.rows_per_column segments, the joined gaps and the plan's warnings, and a caution
line. pacing.io.exports writes it as PNG or PDF; the team card (pacing.io.team_file) shares
its CardLayout.

Drawn with matplotlib (imported on first use); the rows are read through
pacing.io.target_rows (SI units there; display units through pacing.display.units here).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
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

@dataclass(frozen=True)
class CardLayout:
    """Where things go on a printed card, in inches, y downward: a title block, then per
    column a line of headings centred at `headings_at` and one line per row below it
    (`rows_per_column` rows a column, more add columns side by side), then the warnings, each
    `warning_height` high, and the caution in the last `footer_height`."""

    rows_per_column: int
    column_width: float
    row_height: float
    headings_at: float
    footer_height: float
    warning_height: float
    rows_are: str
    """What a row is, for the message when there is none ("segments", "turns")."""

    def columns(self, row_count: int) -> int:
        """Columns the rows take, side by side [-]."""
        return math.ceil(row_count / self.rows_per_column)

    def line_y(self, line: int) -> float:
        """Centre of a row's line, 1 the first row of a column [in]."""
        return self.headings_at + self.row_height * line

    def warning_y(self, height: float, warning_count: int, number: int) -> float:
        """Centre of warning `number` (0 the first) above the caution [in]."""
        return (height - self.footer_height
                - self.warning_height * (warning_count - number - 0.5))

    def size(self, row_count: int, warning_count: int = 0) -> tuple[float, float]:
        """Size of the card for a number of rows and of warnings.

        Parameters
        ----------
        row_count : int
            Rows on the card, ≥ 1 [-].
        warning_count : int, optional
            Warnings printed above the caution line [-].

        Returns
        -------
        tuple of float
            (width, height) [in].

        Raises
        ------
        InputError
            When there is no row.
        """
        if row_count < 1:
            raise InputError(f"there are no {self.rows_are} to put on the card")
        lines = min(row_count, self.rows_per_column)
        return (self.column_width * self.columns(row_count),
                self.line_y(lines) + self.row_height / 2 + self.footer_height
                + self.warning_height * warning_count)


TARGET_CARD = CardLayout(rows_per_column=20, column_width=3.4, row_height=0.40,
                         headings_at=1.15, footer_height=0.60, warning_height=0.45,
                         rows_are="segments")
"""The target card: title and finish above the headings, one segment a line."""


def stripe_line(axes: Any, layout: CardLayout, y: float, column: int, columns: int) -> None:
    """Shade one line of a column across its width (every other line, for the eye)."""
    axes.axhspan(y - layout.row_height / 2, y + layout.row_height / 2, xmin=column / columns,
                 xmax=(column + 1) / columns, color="0.92", lw=0)


def card_figure(rows: Sequence[Any], system: str, title: str,
                warnings: Sequence[str] = ()) -> Figure:
    """The card as a matplotlib Figure, drawn in inches (y down): title and finish, one
    column of segments per TARGET_CARD.rows_per_column, warnings, caution."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    warnings = [*_card_gap_lines(rows, system), *warnings]
    width, height = TARGET_CARD.size(len(rows), len(warnings))
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
    layout = TARGET_CARD
    columns = layout.columns(len(rows))
    pace_only = not row_has(rows, "target_power") and row_has(rows, "target_pace")
    target_heading = f"pace [{unit_label('pace', system)}]" if pace_only else "target"
    for column in range(columns):
        left = column * layout.column_width + 0.12
        for x, heading in ((0.0, dist), (0.95, target_heading), (2.45, "split")):
            axes.text(left + x, layout.headings_at, heading, fontsize=9, color="0.35",
                      va="center")
        first = column * layout.rows_per_column
        for line, row in enumerate(rows[first:first + layout.rows_per_column], start=1):
            y = layout.line_y(line)
            if line % 2:
                stripe_line(axes, layout, y, column, columns)
            start = to_display(row_required(row, "start"), "distance", system)
            target = target_text(row, system).replace(" min/km", "").replace(" min/mi", "")
            split = format_duration(row_required(row, "time"))
            split = split[2:] if split.startswith("0:") else split
            axes.text(left, y, f"{start:.1f}", fontsize=15, va="center", family="monospace")
            axes.text(left + 0.95, y, target, fontsize=17, fontweight="bold", va="center")
            axes.text(left + 2.45, y, split, fontsize=13, va="center", family="monospace")
    for number, warning in enumerate(warnings):
        y = layout.warning_y(height, len(warnings), number)
        axes.text(0.12, y, wrap_text("⚠ " + warning, width), fontsize=7, va="center",
                  color="#8a2c0d", fontweight="bold")
    caution = RUNNING_CAUTION_LINE if pace_only else CAUTION_LINE
    axes.text(0.12, height - layout.footer_height / 2, wrap_text(caution, width), fontsize=7,
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
