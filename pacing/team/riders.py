"""The riders of a team as a coach describes them, and their power balance in the line.

A rider of a team has a name, a mass (rider + bike + kit), a solo drag area, a critical power,
a W′ and a cap on power; the rest of the power balance (rolling, drivetrain, wheels) takes the
published defaults of pacing.physics.cycling.Rider (Martin et al. 1998) unless given.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError
from pacing.physics.cycling import MARTIN_1998, Rider

MOST_RIDERS = 8
"""Largest team [-]: road team time trials start with up to eight riders."""

CAP_DURATION = 60.0
"""Default cap on a rider's power: the power that empties W′ in this time, CP + W′/60 s [s]
(an assumption of ours; give max_power for a measured value)."""


@dataclass(frozen=True)
class TeamRider:
    """One rider of a team.

    Attributes
    ----------
    name : str
        Name shown in the schedule, unique in the team [-].
    mass : float
        Rider + bike + kit [kg].
    drag_area : float
        CdA riding alone, in the position held in the line [m²].
    critical_power : float
        CP [W].
    w_prime : float
        W′, the work above CP [J].
    max_power : float or None
        Cap on power [W]; None for CP + W′/CAP_DURATION.
    rolling_coefficient : float
        Crr [-].
    """

    name: str
    mass: float
    drag_area: float
    critical_power: float
    w_prime: float
    max_power: float | None = None
    rolling_coefficient: float = MARTIN_1998["rolling_coefficient"]

    def __post_init__(self) -> None:
        name = str(self.name).strip()
        if not name or len(name) > 200 or any(ord(c) < 32 for c in name):
            raise InputError(f"rider name must be 1-200 printable characters, got {self.name!r}")
        object.__setattr__(self, "name", name)
        checks = {
            "mass": (20.0, 300.0, "kg"), "drag_area": (0.05, 1.5, "m²"),
            "critical_power": (50.0, 700.0, "W"), "w_prime": (1000.0, 100000.0, "J"),
            "rolling_coefficient": (0.0, 0.05, ""),
        }
        for field, (low, high, unit) in checks.items():
            value = float(getattr(self, field))
            if not (np.isfinite(value) and low <= value <= high):
                raise InputError(f"rider {name}: {field.replace('_', ' ')} must be {low:g} to "
                                 f"{high:g} {unit}".rstrip() + f", got {value:g}")
        if self.max_power is not None and not (np.isfinite(self.max_power)
                                               and self.max_power > self.critical_power):
            raise InputError(f"rider {name}: max power must exceed critical power "
                             f"({self.critical_power:g} W), got {self.max_power:g}")

    @property
    def power_cap(self) -> float:
        """The cap on power: max_power, or CP + W′/CAP_DURATION [W].

        Examples
        --------
        >>> TeamRider("A", 80.0, 0.22, 400.0, 24000.0).power_cap
        800.0
        """
        if self.max_power is not None:
            return float(self.max_power)
        return self.critical_power + self.w_prime / CAP_DURATION

    def power_model(self, drag_area: float | np.ndarray | None = None) -> Rider:
        """The rider's power balance (Martin et al. 1998), drag area per cell when given.

        Parameters
        ----------
        drag_area : float or numpy.ndarray, optional
            CdA to use (e.g. the solo CdA times 1 − d of each cell's position) [m²].

        Returns
        -------
        pacing.physics.cycling.Rider
            Mass, drag area and Crr of this rider, Martin et al.'s other constants [-].
        """
        area = self.drag_area if drag_area is None else drag_area
        return Rider(mass=self.mass, drag_area=area,
                     rolling_coefficient=self.rolling_coefficient)


@dataclass(frozen=True)
class Team:
    """2 to MOST_RIDERS riders, in their starting order (the first leads off).

    Attributes
    ----------
    riders : tuple of TeamRider
        The riders, first leader first [-].
    """

    riders: tuple[TeamRider, ...]

    def __post_init__(self) -> None:
        riders = tuple(self.riders)
        object.__setattr__(self, "riders", riders)
        if not 2 <= len(riders) <= MOST_RIDERS:
            raise InputError(f"a team needs 2 to {MOST_RIDERS} riders, got {len(riders)}")
        names = [rider.name for rider in riders]
        repeated = sorted({name for name in names if names.count(name) > 1})
        if repeated:
            raise InputError(f"rider names must differ, {repeated[0]!r} is given twice")

    @property
    def size(self) -> int:
        """Number of riders [-]."""
        return len(self.riders)

    def array(self, field: str) -> np.ndarray:
        """One attribute of every rider, in team order (e.g. "critical_power") [unit of it]."""
        return np.array([float(getattr(rider, field)) for rider in self.riders])

    @property
    def power_caps(self) -> np.ndarray:
        """Every rider's cap on power [W]."""
        return np.array([rider.power_cap for rider in self.riders])


def team_of(riders: Sequence[TeamRider]) -> Team:
    """A Team from a sequence of riders (checked).

    Parameters
    ----------
    riders : sequence of TeamRider
        The riders in starting order [-].

    Returns
    -------
    Team
        The team [-].
    """
    return Team(tuple(riders))
