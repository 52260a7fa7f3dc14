"""The team part's summary line (ui.team_panel): the plan's finish and what it gains on the two
references, equal turns at one speed and equal turns at one leader power (pacing.team.plan)."""

from __future__ import annotations

from pacing.team.plan import TeamPlan
from pacing.team.race import TeamRace


def clock(seconds: float) -> str:
    """A time as "h:mm:ss.s" or "m:ss.s".

    >>> clock(241.34), clock(3725.0)
    ('4:01.3', '1:02:05.0')
    """
    minutes, rest = divmod(seconds, 60.0)
    hours, minutes = divmod(int(minutes), 60)
    head = f"{hours}:{minutes:02d}" if hours else f"{minutes}"
    return f"{head}:{rest:04.1f}"


def _gain(seconds: float) -> str:
    """A gain as a clock from a minute on, else in seconds [-]."""
    return clock(seconds) if seconds >= 60.0 else f"{seconds:.1f} s"


def summary_line(plan: TeamPlan, race: TeamRace) -> str:
    """"Finish 4:01.3 (…); 3.8 s faster than equal turns at constant speed (4:05.1), 2.1 s faster
    than equal turns at one power (4:03.4)".

    Parameters
    ----------
    plan : pacing.team.plan.TeamPlan
        The plan [-].
    race : pacing.team.race.TeamRace
        The race (counting rider) [-].

    Returns
    -------
    str
        One line [-].
    """
    place = race.counts_rider
    suffix = "th" if 10 <= place % 100 <= 20 else {1: "st", 2: "nd", 3: "rd"}.get(place % 10, "th")
    ordinal = f"{place}{suffix}"
    return (f"Finish {clock(plan.ride.finish_time)} (time of the {ordinal} rider across the "
            f"line); {_gain(plan.gain)} faster than equal turns at constant speed "
            f"({clock(plan.equal_turns.finish_time)}), {_gain(plan.power_gain)} faster than "
            f"equal turns at one power ({clock(plan.equal_power.finish_time)}, every leader "
            f"at {plan.equal_power_w:.0f} W)")
