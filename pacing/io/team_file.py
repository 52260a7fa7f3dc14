"""The team plan as files: the turn schedule as CSV, and as XLSX with the riders and their W′.

Tables are in display units (metric or imperial), the notices in words first (CSV comment
lines) or on a sheet of their own (XLSX), the cautions with them. A rider's name that a
spreadsheet would take for a formula (starting with =, +, -, @) is written with a leading
apostrophe.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from pacing.display.units import to_display, unit_label
from pacing.io.exports import table_to_csv
from pacing.team.schedule import RiderRow, TurnRow

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
        Turn, leader, from, to, length (laps), time [s], power [W], speed, lap/km time [s].
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
        table[f"Time per {name} [s]"] = np.round(unit / np.maximum(speeds, 1e-9), 1)
    return table


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
