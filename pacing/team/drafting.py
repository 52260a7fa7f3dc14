"""Drafting by position in a line of riders: published drag reductions, settable by the user.

A *drafting set* is a tuple of drag reductions by position in the line, leader first:
``(d_1, d_2, d_3, …)``, each the share of the rider's own (solo) drag area removed at that
position, 0..1. d_1 is the leader's small gain from the riders behind (0 where a source gives
none). Positions past the end of a set keep its last value (an assumption: deeper positions in
a single line measured about as much shelter as the fourth, Defraeye et al. 2014).

References
----------
Broker, J.P., Kyle, C.R. & Burke, E.R. (1999). Racing cyclist power requirements in the 4000-m
individual and team pursuits. Med Sci Sports Exerc 31(11):1677-1685. PMID 10589873
Fitton, B., Symons, D. & Caddy, O. (2018). The impact of relative athlete characteristics on the
drag reductions caused by drafting when cycling in a velodrome. Proc IMechE Part P: J Sports
Eng Technol. doi:10.1177/1754337117692280
Blocken, B., Defraeye, T., Koninckx, E., Carmeliet, J. & Hespel, P. (2013). CFD simulations of
the aerodynamic drag of two drafting cyclists. Comput Fluids 71:435-445.
doi:10.1016/j.compfluid.2012.11.012
Defraeye, T., Blocken, B., Koninckx, E., Hespel, P., Verboven, P., Nicolai, B. & Carmeliet, J.
(2014). Cyclist drag in team pursuit: influence of cyclist sequence, stature, and arm spacing.
J Biomech Eng 136(1):011005. doi:10.1115/1.4025792
docs/team.md, "Drafting by position".
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError

MAXIMUM_REDUCTION = 0.8
"""Largest drag reduction accepted at any position [-] (no study of a line reports more)."""


@dataclass(frozen=True)
class DraftingSet:
    """Drag reductions by position in a line, with where they come from.

    Attributes
    ----------
    reductions : tuple of float
        d by position, leader first [-].
    source : str
        The study [-].
    conditions : str
        How it was measured (method, riders, speed, spacing) [-].
    """

    reductions: tuple[float, ...]
    source: str
    conditions: str


DRAFTING_SETS: dict[str, DraftingSet] = {
    "broker-1999": DraftingSet(
        (0.0, 0.32, 0.39, 0.39),
        "Broker, Kyle & Burke (1999), Med Sci Sports Exerc 31(11):1677-1685",
        "field crank power (SRM) of a men's team pursuit line at 57-60 km/h on a velodrome: "
        "positions 2-4 rode at 70.8 %, 64.1 % and 64.0 % of the leader's 607 W; the drag "
        "reductions are those power ratios divided by the aerodynamic share of the leader's "
        "power at 60 km/h (about 0.92 by the power balance); the leader is the reference (0)"),
    "fitton-2018": DraftingSet(
        (0.04, 0.42, 0.48, 0.47),
        "Fitton, Symons & Caddy (2018), Proc IMechE P, doi:10.1177/1754337117692280",
        "drag area measured on the track (Manchester velodrome) for six elite women in 11 "
        "team-pursuit lines of four; mean reduction against each rider riding alone"),
    "blocken-2013-time-trial": DraftingSet(
        (0.026, 0.138),
        "Blocken et al. (2013), Comput Fluids 71:435-445",
        "CFD of two riders in time-trial position, 0.01 m between the wheels, with a "
        "wind-tunnel check of the leader's gain (1.6 % measured, 1.3 % computed, dropped "
        "position at 0.15 m)"),
    "blocken-2013-dropped": DraftingSet(
        (0.017, 0.231),
        "Blocken et al. (2013), Comput Fluids 71:435-445",
        "CFD of two riders in dropped position (hands on the drops), 0.01 m between the wheels"),
}
"""Published drafting sets by key (lower case, hyphens). "broker-1999" is the default."""

DEFAULT_DRAFTING_SET = "broker-1999"
"""The drafting set used when the user gives none: field power of a team pursuit at race
speed, the most conservative of the sets for positions 2-4."""


def checked_reductions(reductions: Sequence[float]) -> tuple[float, ...]:
    """The drag reductions by position, checked: 1 to 8 finite values in [0, 0.8].

    Parameters
    ----------
    reductions : sequence of float
        d by position, leader first [-].

    Returns
    -------
    tuple of float
        The same values as floats [-].

    Raises
    ------
    InputError
        When a value is missing, not finite or outside [0, MAXIMUM_REDUCTION].

    Examples
    --------
    >>> checked_reductions([0, 0.3, 0.38])
    (0.0, 0.3, 0.38)
    """
    values = tuple(float(value) for value in reductions)
    if not 1 <= len(values) <= 8:
        raise InputError(f"drafting by position needs 1 to 8 values, got {len(values)}")
    for position, value in enumerate(values, start=1):
        if not (np.isfinite(value) and 0.0 <= value <= MAXIMUM_REDUCTION):
            raise InputError(f"drafting reduction at position {position} must be 0 to "
                             f"{MAXIMUM_REDUCTION:g}, got {value:g}")
    return values


def reduction_by_position(reductions: Sequence[float], line_size: int) -> np.ndarray:
    """Drag reduction of each position of a line of `line_size` riders [-].

    d_k from the set for k ≤ its length, its last value beyond; a rider alone (a line of one)
    has no reduction.

    Parameters
    ----------
    reductions : sequence of float
        d by position, leader first [-].
    line_size : int
        Riders in the line, ≥ 1 [-].

    Returns
    -------
    numpy.ndarray
        d for positions 1..line_size [-].

    Examples
    --------
    >>> reduction_by_position((0.0, 0.31, 0.38), 5).tolist()
    [0.0, 0.31, 0.38, 0.38, 0.38]
    >>> reduction_by_position((0.04, 0.42), 1).tolist()
    [0.0]
    """
    if line_size <= 1:
        return np.zeros(max(line_size, 0))
    values = np.asarray(reductions, dtype=float)
    index = np.minimum(np.arange(line_size), values.size - 1)
    return values[index]
