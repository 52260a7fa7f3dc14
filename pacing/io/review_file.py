"""The race review's table as a file: segment by segment, planned against ridden (CSV, XLSX).

`review_table` gives the table with a unit on every column in the chosen unit system;
`review_to_csv` writes it as UTF-8 CSV with the review's notices and the time split as comment
lines first ("# …", read back with ``pandas.read_csv(..., comment="#")``); `review_to_xlsx`
as an Excel workbook, the table on its first sheet and the notices and the split on a second
(pacing.io.exports.table_to_xlsx). Missing values are empty cells, never NaN text.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Any

import pandas as pd

from pacing.display.notices import labelled
from pacing.display.units import format_duration, to_display, unit_label
from pacing.errors import InputError
from pacing.io.exports import table_to_csv, table_to_xlsx
from pacing.review.race import RaceReview


def _lowest_kj(value: float | None) -> float | None:
    """A W′ balance [J] in kJ to 0.1, None when unknown."""
    return None if value is None else round(value / 1000.0, 1)


def review_table(review: RaceReview, system: str = "metric") -> pd.DataFrame:
    """The segment table of a race review in `system` units.

    Columns (metric; imperial swaps km→mi, km/h→mph): "Segment", "From [km]", "To [km]",
    "Planned [h:mm:ss]", "Ridden [h:mm:ss]", "Lost [s]" (ridden − planned: negative where time
    was won), "Planned power [W]", "Ridden power [W]", "Planned speed [km/h]",
    "Ridden speed [km/h]", "Stopped [s]", and with CP and W′ "Planned lowest W′ [kJ]" and
    "Ridden lowest W′ [kJ]".

    Parameters
    ----------
    review : pacing.review.race.RaceReview
        The review.
    system : {"metric", "imperial"}
        Unit system.

    Returns
    -------
    pandas.DataFrame
        One row per segment [display units].
    """
    if not review.segments:
        raise InputError("the review has no segments")
    distance, speed = unit_label("distance", system), unit_label("speed", system)
    rows = []
    for k, s in enumerate(review.segments, start=1):
        row: dict[str, Any] = {
            "Segment": k,
            f"From [{distance}]": round(float(to_display(s.start, "distance", system)), 2),
            f"To [{distance}]": round(float(to_display(s.end, "distance", system)), 2),
            "Planned [h:mm:ss]": format_duration(s.planned_time),
            "Ridden [h:mm:ss]": format_duration(s.actual_time),
            "Lost [s]": round(s.delta, 1),
            "Planned power [W]": round(s.planned_power),
            "Ridden power [W]": round(s.actual_power),
            f"Planned speed [{speed}]": round(float(to_display(s.planned_speed, "speed", system)),
                                              1),
            f"Ridden speed [{speed}]": round(float(to_display(s.actual_speed, "speed", system)),
                                             1),
            "Stopped [s]": round(s.stopped_time, 1),
        }
        if s.planned_min_w_prime is not None or s.actual_min_w_prime is not None:
            row["Planned lowest W′ [kJ]"] = _lowest_kj(s.planned_min_w_prime)
            row["Ridden lowest W′ [kJ]"] = _lowest_kj(s.actual_min_w_prime)
        rows.append(row)
    return pd.DataFrame(rows)


def split_lines(review: RaceReview) -> list[str]:
    """The time split as "key value" lines for the CSV's comments [s]."""
    parts = review.attribution.parts()
    line = ", ".join(f"{key} {value:+.1f}" for key, value in parts.items())
    lines = [f"planned_time_s {review.planned_time:.1f}, actual_time_s {review.actual_time:.1f}",
             f"time split (positive: slower than planned): {line}"]
    if review.fitted is not None:
        fitted = review.fitted.as_json()
        lines.append("fitted: " + ", ".join(f"{k} {v}" for k, v in fitted.items()))
    return lines


def review_to_csv(review: RaceReview, system: str = "metric",
                  notices: Sequence[str] | None = None) -> bytes:
    """The review table as UTF-8 CSV, the notices and the time split as comment lines first.

    Parameters
    ----------
    review : pacing.review.race.RaceReview
        The review.
    system : {"metric", "imperial"}
        Unit system of the table and of the notices' words.
    notices : sequence of str or None
        Lines to write first; None for the review's notices in words and the split.

    Returns
    -------
    bytes
        The CSV file.
    """
    if notices is None:
        notices = [*(labelled(n, system) for n in review.notices), *split_lines(review)]
    return table_to_csv(review_table(review, system), notices)


def review_to_xlsx(review: RaceReview, system: str = "metric") -> bytes:
    """The review table as an Excel workbook: the table on the sheet "race review" (header
    frozen), the notices in words and the time split on the sheet "warnings and notes".

    Parameters
    ----------
    review : pacing.review.race.RaceReview
        The review.
    system : {"metric", "imperial"}
        Unit system of the table and of the notices' words.

    Returns
    -------
    bytes
        The .xlsx file.
    """
    notices = [*(labelled(n, system) for n in review.notices), *split_lines(review)]
    return table_to_xlsx(review_table(review, system), sheet_name="race review",
                         title="race review", notices=notices)


def write_review_csv(review: RaceReview, path: str | Path, system: str = "metric") -> Path:
    """Write `review_to_csv` to a file (replaced if it exists) and return its path."""
    return _write(review_to_csv(review, system), path)


def write_review_xlsx(review: RaceReview, path: str | Path, system: str = "metric") -> Path:
    """Write `review_to_xlsx` to a file (replaced if it exists) and return its path."""
    return _write(review_to_xlsx(review, system), path)


def _write(data: bytes, path: str | Path) -> Path:
    """Write `data` to `path` (InputError in one line when it cannot)."""
    target = Path(path)
    try:
        target.write_bytes(data)
    except OSError as error:
        raise InputError(f"cannot write {target}: {error.strerror or error}") from None
    return target
