"""The team plan as files: the turn schedule as CSV, as XLSX with the riders and their W′,
and as a printable card (PNG or PDF, drawn with matplotlib like pacing.io.exports' card).

Tables are in display units (metric or imperial), the notices in words first (CSV comment
lines) or on a sheet of their own (XLSX), the cautions with them. A rider's name that a
spreadsheet would take for a formula (starting with =, +, -, @) is written with a leading
apostrophe.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from pacing.display.units import format_pace, to_display, unit_label
from pacing.errors import InputError
from pacing.io.exports import CARD_DPI, table_to_csv
from pacing.io.target_card import CardLayout, stripe_line, wrap_text
from pacing.team.schedule import RiderRow, TurnRow, plan_notices, turn_rows

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from pacing.team.plan import TeamPlan
    from pacing.team.race import TeamRace

TEAM_CAUTION = ("Caution: targets are model estimates. Ride within your skills, keep the line "
                "safe at every change of lead, obey race rules and the commissaires; consult a "
                "physician before hard efforts.")
"""Written with every team schedule."""

FORMULA_STARTS = ("=", "+", "-", "@")
"""First characters a spreadsheet reads as a formula."""


def safe_text(text: str) -> str:
    """Text a spreadsheet shows as text: a leading apostrophe before a formula's first sign.

    >>> safe_text("=1+1"), safe_text("Ann")
    ("'=1+1", 'Ann')
    """
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def turn_table(rows: Sequence[TurnRow], system: str = "metric",
               lap_length: float | None = None) -> pd.DataFrame:
    """The turn schedule as a table in display units.

    Parameters
    ----------
    rows : sequence of TurnRow
        The turns [SI].
    system : {"metric", "imperial"}
        Units of the table [-].
    lap_length : float or None
        Lap of a velodrome: adds laps and lap time; None on the road (km or mile time) [m].

    Returns
    -------
    pandas.DataFrame
        Turn, leader, from, to, length (laps), time [s], power [W], speed, lap/km time [s]
        (and on the road also as m:ss).
    """
    distance = unit_label("distance", system)
    speed = unit_label("speed", system)
    length = np.array([r.end_m - r.start_m for r in rows])
    speeds = np.array([r.speed_mps for r in rows])
    table = pd.DataFrame({
        "Turn": [r.number for r in rows],
        "Leader": [safe_text(r.leader) for r in rows],
        f"From [{distance}]": np.round(to_display(np.array([r.start_m for r in rows]),
                                                  "distance", system), 3),
        f"To [{distance}]": np.round(to_display(np.array([r.end_m for r in rows]),
                                                "distance", system), 3),
        "Time [s]": np.round([r.duration_s for r in rows], 2),
        "Power [W]": np.round([r.power_w for r in rows], 0),
        f"Speed [{speed}]": np.round(to_display(speeds, "speed", system), 1),
    })
    if lap_length is not None:
        table.insert(4, "Laps", np.round(length / lap_length, 2))
        table["Lap time [s]"] = np.round(lap_length / np.maximum(speeds, 1e-9), 2)
    else:
        unit = 1000.0 if system == "metric" else 1609.344
        name = "km" if system == "metric" else "mi"
        per_unit = unit / np.maximum(speeds, 1e-9)
        table[f"Time per {name} [s]"] = np.round(per_unit, 1)
        table[f"Time per {name} [m:ss]"] = [_minutes_seconds(t) for t in per_unit]
    return table


def _minutes_seconds(seconds: float) -> str:
    """A split as a coach reads it: 80.4 s → "1:20" (whole seconds, rounded) [-]."""
    whole = int(round(float(seconds)))
    return f"{whole // 60}:{whole % 60:02d}"


def rider_table(rows: Sequence[RiderRow], system: str = "metric") -> pd.DataFrame:
    """Each rider's lowest W′ balance, time in front, mean power and drop-out.

    Parameters
    ----------
    rows : sequence of RiderRow
        The riders [SI].
    system : {"metric", "imperial"}
        Units of the table [-].

    Returns
    -------
    pandas.DataFrame
        Rider, lowest W′ [kJ], time in front [s], mean power [W], dropped at [km or mi].
    """
    distance = unit_label("distance", system)
    return pd.DataFrame({
        "Rider": [safe_text(r.name) for r in rows],
        "Lowest W′ [kJ]": np.round([r.min_w_prime_balance_j / 1000 for r in rows], 2),
        "Time in front [s]": np.round([r.lead_time_s for r in rows], 1),
        "Mean power [W]": np.round([r.mean_power_w for r in rows], 0),
        f"Drops out at [{distance}]": [
            None if r.dropped_at_m is None
            else round(float(to_display(r.dropped_at_m, "distance", system)), 3)
            for r in rows],
    })


def schedule_csv(turns: Sequence[TurnRow], notices: Sequence[str] = (),
                 system: str = "metric", lap_length: float | None = None) -> bytes:
    """The turn schedule as CSV: notices and the caution as comment lines first.

    Parameters
    ----------
    turns : sequence of TurnRow
        The turns [SI].
    notices : sequence of str
        The plan's notices in words [-].
    system : {"metric", "imperial"}
        Units [-].
    lap_length : float or None
        Lap of a velodrome [m].

    Returns
    -------
    bytes
        The CSV file, UTF-8 [-].
    """
    return table_to_csv(turn_table(turns, system, lap_length), [*notices, TEAM_CAUTION])


def schedule_xlsx(turns: Sequence[TurnRow], riders: Sequence[RiderRow],
                  balance: pd.DataFrame, notices: Sequence[str] = (), system: str = "metric",
                  lap_length: float | None = None) -> bytes:
    """The schedule as XLSX: sheets "turns", "riders", "W′ balance" and "notes".

    Parameters
    ----------
    turns, riders : sequences of TurnRow, RiderRow
        The plan [SI].
    balance : pandas.DataFrame
        W′ balance along the race, one column per rider (`balance_table`) [display units].
    notices : sequence of str
        The plan's notices in words [-].
    system : {"metric", "imperial"}
        Units [-].
    lap_length : float or None
        Lap of a velodrome [m].

    Returns
    -------
    bytes
        The .xlsx file [-].
    """
    buffer = io.BytesIO()
    with pd.ExcelWriter(buffer, engine="openpyxl") as writer:
        turn_table(turns, system, lap_length).to_excel(writer, sheet_name="turns", index=False)
        rider_table(riders, system).to_excel(writer, sheet_name="riders", index=False)
        balance.to_excel(writer, sheet_name="W′ balance", index=False)
        pd.DataFrame({"notes": [*notices, TEAM_CAUTION]}).to_excel(
            writer, sheet_name="notes", index=False)
        for sheet in writer.book.worksheets:
            sheet.freeze_panes = "A2"
    return buffer.getvalue()


def balance_table(distance_m: np.ndarray, balance_j: np.ndarray, names: Sequence[str],
                  system: str = "metric") -> pd.DataFrame:
    """W′ balance along the race, one column per rider [kJ].

    Parameters
    ----------
    distance_m : numpy.ndarray
        Where each value is taken (end of each cell) [m].
    balance_j : numpy.ndarray
        (riders × points) W′ balance [J].
    names : sequence of str
        The riders [-].
    system : {"metric", "imperial"}
        Units [-].

    Returns
    -------
    pandas.DataFrame
        Distance [km or mi] and one "NAME W′ [kJ]" column per rider.
    """
    table = {f"Distance [{unit_label('distance', system)}]":
             np.round(to_display(np.asarray(distance_m), "distance", system), 3)}
    for name, values in zip(names, balance_j, strict=True):
        table[f"{safe_text(name)} W′ [kJ]"] = np.round(np.asarray(values) / 1000.0, 3)
    return pd.DataFrame(table)


def write_bytes(path: str | Path, data: bytes) -> None:
    """Write a file (replacing it) [-]."""
    Path(path).write_bytes(data)


# ------------------------------------------------------------------------ printable card

TEAM_CARD = CardLayout(rows_per_column=30, column_width=6.4, row_height=0.34,
                       headings_at=1.28, footer_height=0.70, warning_height=0.40,
                       rows_are="turns")
"""The team card: title, finish, counting rule and starting order above the headings, one
turn a line."""
TEAM_CARD_NAME_LENGTH = 10
"""Characters of the leader's name kept on the card [-]."""


def line_orders(names: Sequence[str], position: np.ndarray) -> list[list[str]]:
    """Who rides where in each turn: the names in line order, leader first.

    Parameters
    ----------
    names : sequence of str
        The riders in team order [-].
    position : numpy.ndarray
        (turns × riders) place in the line, 0 the leader, −1 out of the line
        (pacing.team.turns.Turns.position) [-].

    Returns
    -------
    list of list of str
        One list per turn [-].

    >>> line_orders(["A", "B", "C"], np.array([[0, 1, 2], [2, 0, -1]]))
    [['A', 'B', 'C'], ['B', 'A']]
    """
    orders = []
    for places in np.asarray(position):
        inside = [(int(place), name) for place, name in zip(places, names, strict=True)
                  if place >= 0]
        orders.append([name for _, name in sorted(inside)])
    return orders


def ordinal(number: int) -> str:
    """1 → "1st", 3 → "3rd", 11 → "11th" [-].

    >>> [ordinal(n) for n in (1, 2, 3, 4, 11, 22)]
    ['1st', '2nd', '3rd', '4th', '11th', '22nd']
    """
    suffix = "th" if 10 <= number % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(
        number % 10, "th")
    return f"{number}{suffix}"


def clock_tenths(seconds: float) -> str:
    """Seconds → "M:SS.s" or "H:MM:SS.s" (a pursuit is won by tenths) [-].

    >>> clock_tenths(241.84), clock_tenths(3725.0)
    ('4:01.8', '1:02:05.0')
    """
    tenths = int(round(float(seconds) * 10.0))
    minutes, rest = divmod(tenths, 600)
    hours, minutes = divmod(minutes, 60)
    head = f"{hours}:{minutes:02d}" if hours else f"{minutes}"
    return f"{head}:{rest // 10:02d}.{rest % 10}"


def _turn_cells(row: TurnRow, system: str, lap_length: float | None) -> list[str]:
    """Turn, leader, laps or from–to distance, target power, lap or km/mi time."""
    length = row.end_m - row.start_m
    speed = max(row.speed_mps, 1e-9)
    if lap_length is not None:
        where = f"{length / lap_length:.1f}"
        split = f"{lap_length / speed:.2f}"
    else:
        start, end = to_display(np.array([row.start_m, row.end_m]), "distance", system)
        where = f"{start:.2f}–{end:.2f}"
        split = format_pace(1000.0 / speed if system == "metric" else 1609.344 / speed)
    return [str(row.number), row.leader[:TEAM_CARD_NAME_LENGTH], where, f"{row.power_w:.0f}",
            split]


TEAM_CARD_COLUMNS = (0.0, 0.45, 1.8, 3.0, 4.05, 4.95)
"""Left edge of each column within a card column: turn, leader, laps or distance, power,
lap or km time, the line behind (by starting number) [in]."""


def _headings(system: str, lap_length: float | None) -> list[str]:
    """Column headings of the card."""
    track = lap_length is not None
    per = "per km" if system == "metric" else "per mi"
    return ["turn", "leader", "laps" if track else unit_label("distance", system),
            "power [W]", "lap [s]" if track else per, "behind (no.)"]


def _card_head(axes: Any, turns: Sequence[TurnRow], orders: Sequence[Sequence[str]],
               counts_rider: int, finish_time_s: float | None, title: str, width: float,
               ) -> None:
    """Title, finish and counting rule, starting order."""
    axes.text(0.12, 0.32, title[:50], fontsize=15, fontweight="bold", va="center")
    finish = sum(r.duration_s for r in turns) if finish_time_s is None else finish_time_s
    riders = len(orders[0])
    axes.text(0.12, 0.66, f"finish {clock_tenths(finish)} · time taken on the "
              f"{ordinal(counts_rider)} rider of {riders} across the line", fontsize=11,
              va="center")
    axes.text(0.12, 0.96, wrap_text("start order: " + ", ".join(
        f"{n} {name}" for n, name in enumerate(orders[0], start=1)), width), fontsize=9,
        va="center")


def team_card_figure(turns: Sequence[TurnRow], orders: Sequence[Sequence[str]],
                     counts_rider: int, system: str = "metric",
                     lap_length: float | None = None, title: str = "team plan",
                     finish_time_s: float | None = None,
                     warnings: Sequence[str] = (), notes: Sequence[str] = ()) -> Figure:
    """The team card as a matplotlib Figure drawn in inches (y down).

    Parameters are those of `team_card_png` (without the resolution).

    Returns
    -------
    matplotlib.figure.Figure
        The card [-].
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    if len(orders) != len(turns):
        raise InputError(f"the card needs a line order per turn: {len(turns)} turns, "
                         f"{len(orders)} orders")
    layout = TEAM_CARD
    width, height = layout.size(len(turns), len(warnings) + len(notes))
    figure = Figure(figsize=(width, height))
    FigureCanvasAgg(figure)
    axes = figure.add_axes((0, 0, 1, 1))
    axes.set_axis_off()
    axes.set_xlim(0, width)
    axes.set_ylim(height, 0)
    _card_head(axes, turns, orders, counts_rider, finish_time_s, title, width)
    start_number = {name: place for place, name in enumerate(orders[0], start=1)}
    columns = layout.columns(len(turns))
    for column in range(columns):
        left = column * layout.column_width + 0.12
        for x, heading in zip(TEAM_CARD_COLUMNS, _headings(system, lap_length), strict=True):
            axes.text(left + x, layout.headings_at, heading, fontsize=9, color="0.35",
                      va="center")
        first = column * layout.rows_per_column
        for line, row in enumerate(turns[first:first + layout.rows_per_column], start=1):
            y = layout.line_y(line)
            if line % 2:
                stripe_line(axes, layout, y, column, columns)
            behind = " ".join(str(start_number[name])
                              for name in orders[first + line - 1][1:])
            cells = [*_turn_cells(row, system, lap_length), behind]
            for x, text, size, bold in zip(TEAM_CARD_COLUMNS, cells, (10, 12, 12, 15, 12, 11),
                                           (False, True, False, True, False, False),
                                           strict=True):
                axes.text(left + x, y, text, fontsize=size, va="center",
                          fontweight="bold" if bold else "normal")
    lines = [("⚠ " + w, "#8a2c0d", "bold") for w in warnings] + [
        (n, "0.2", "normal") for n in notes]
    for number, (text, colour, weight) in enumerate(lines):
        y = layout.warning_y(height, len(lines), number)
        axes.text(0.12, y, wrap_text(text, width), fontsize=7, va="center", color=colour,
                  fontweight=weight)
    axes.text(0.12, height - layout.footer_height / 2, wrap_text(TEAM_CAUTION, width),
              fontsize=7, va="center", color="0.2")
    return figure


def team_card_inputs(race: TeamRace, plan: TeamPlan, system: str = "metric"
                     ) -> dict[str, Any]:
    """The arguments of team_card_png and team_card_pdf for a plan: its turns, the line in
    each turn, the counting rider, the units, the lap, a title, the finish, and the plan's
    warnings and notes in words.

    Parameters
    ----------
    race : pacing.team.race.TeamRace
        The race (counting rider, lap) [-].
    plan : pacing.team.plan.TeamPlan
        The plan [-].
    system : {"metric", "imperial"}
        Units of the card [-].

    Returns
    -------
    dict
        Keyword arguments of team_card_png and team_card_pdf [-].
    """
    from pacing.display.notices import describe

    notices = plan_notices(plan)
    return {"turns": turn_rows(plan.team, plan.ride),
            "orders": line_orders([r.name for r in plan.team.riders], plan.ride.turns.position),
            "counts_rider": race.counts_rider, "system": system, "lap_length": race.lap_length,
            "title": "team pursuit" if race.lap_length is not None else "team time trial",
            "finish_time_s": plan.ride.finish_time,
            "warnings": [describe(n, system) for n in notices if n.level == "warning"],
            "notes": [describe(n, system) for n in notices if n.level != "warning"]}


def team_card_png(turns: Sequence[TurnRow], orders: Sequence[Sequence[str]],
                  counts_rider: int, system: str = "metric", lap_length: float | None = None,
                  title: str = "team plan", finish_time_s: float | None = None,
                  warnings: Sequence[str] = (), notes: Sequence[str] = (),
                  dpi: int = CARD_DPI) -> bytes:
    """The printable turn schedule as PNG (TEAM_CARD.size inches at `dpi`).

    At the top the title, the finish time, the counting rule ("time taken on the 3rd rider of
    4 across the line") and the starting order; one line per turn: turn, leader, laps (track)
    or from–to distance (road), target power, lap time (track) or time per km or mile (road)
    and the line behind the leader by starting number; the plan's warnings and notes; the
    caution at the bottom (model estimates, a safe line at every change of lead, race rules
    and the commissaires, a physician).

    Parameters
    ----------
    turns : sequence of TurnRow
        The turns (pacing.team.schedule.turn_rows) [SI].
    orders : sequence of sequence of str
        The line in each turn, leader first (`line_orders`) [-].
    counts_rider : int
        The rider whose time counts [-].
    system : {"metric", "imperial"}, optional
        Units of the card [-].
    lap_length : float or None, optional
        Lap of a velodrome; None on the road [m].
    title : str, optional
        Printed at the top, cut to 50 characters [-].
    finish_time_s : float or None, optional
        The plan's finish time; None for the sum of the turns [s].
    warnings : sequence of str, optional
        The plan's warnings in words, marked ⚠ [-].
    notes : sequence of str, optional
        The plan's notes in words (who drops out where) [-].
    dpi : int, optional
        Resolution [dots per inch].

    Returns
    -------
    bytes
        The PNG image [-].

    Raises
    ------
    InputError
        No turns, or not one line order per turn.
    """
    buffer = io.BytesIO()
    team_card_figure(turns, orders, counts_rider, system, lap_length, title, finish_time_s,
                     warnings, notes).savefig(buffer, format="png", dpi=dpi)
    return buffer.getvalue()


def team_card_pdf(turns: Sequence[TurnRow], orders: Sequence[Sequence[str]],
                  counts_rider: int, system: str = "metric", lap_length: float | None = None,
                  title: str = "team plan", finish_time_s: float | None = None,
                  warnings: Sequence[str] = (), notes: Sequence[str] = ()) -> bytes:
    """The printable turn schedule as a one-page PDF (see team_card_png).

    Parameters
    ----------
    turns, orders, counts_rider, system, lap_length, title, finish_time_s, warnings, notes
        As in team_card_png.

    Returns
    -------
    bytes
        The PDF document [-].
    """
    buffer = io.BytesIO()
    team_card_figure(turns, orders, counts_rider, system, lap_length, title, finish_time_s,
                     warnings, notes).savefig(buffer, format="pdf")
    return buffer.getvalue()
