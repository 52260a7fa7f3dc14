"""The fastest cycling plan's problem as its solvers share it: what is asked, the limits a plan
must keep, and the report of how the plan was found.

The solve itself (Lagrange, priced limits, SLSQP) is in pacing.plan.fastest, the Lagrange
multiplier and the priced limits in pacing.plan.lagrange and pacing.plan.priced_limits, the
coarse start for fine splits in pacing.plan.coarse_start. Every solver counts its steady-state
evaluations of the whole course in the problem's `counter`, a one-element list (reported as
SolverReport.evaluations).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from pacing.plan.lagrange import fourth_power_mean, steady_w_prime_balance
from pacing.plan.request import PlanRequest, w_prime_parameters
from pacing.plan.steady_model import SegmentModel, steady_times


@dataclass(frozen=True)
class SolverReport:
    """How the fastest plan was found, and evidence that it is optimal.

    Attributes
    ----------
    method : str
        How the plan was found, its steps joined by "+": the start, "lagrange" (coupling
        constraint and bounds only, then alone), "constant" (constant power: the start of
        the structured SQP), "lagrange+price" or "lagrange+ceiling" (a limit priced, or a
        common power ceiling), with "grouped+" in front when the plan started from the
        coarser problem's (whose own method follows); then the polish that improved it,
        "+structured-sqp" (the structured SQP, pacing.plan.sided_sqp: a W′ reserve in the
        differential model, no effort cap) or "+slsqp" (scipy's SLSQP); "+blend" at the end
        when only a share of the plan, the rest constant power, kept the limits on the
        verified ride (pacing.plan.cycling). A name, not a contract: tests and callers check
        the limits and the finish time [-].
    multiplier : float or None
        λ, time saved per joule-equivalent of the coupling constraint (Lagrange stage); None
        when not used [1/J].
    iterations : int
        Solver iterations (outer root finding + SLSQP iterations) [-].
    evaluations : int
        Steady-state evaluations of the whole course [-].
    stationarity : float
        Largest relative KKT stationarity residual over free segments (≈ 0 at the optimum:
        every free segment has the same marginal time per joule); NaN when a limit binds [-].
    message : str
        The solver's own message [-].
    correction_rounds : int
        Times the plan was re-solved because the verified ride broke a limit the solver held
        (or kept it with slack) [-].
    active : tuple of str
        Limits held by the solver at its solution ("w-prime-reserve", "effort-cap") [-].
    """

    method: str
    multiplier: float | None = None
    iterations: int = 0
    evaluations: int = 0
    stationarity: float = 0.0
    message: str = ""
    correction_rounds: int = 0
    active: tuple[str, ...] = ()


@dataclass(frozen=True)
class SolverLimits:
    """The limits a plan must keep.

    Attributes
    ----------
    reserve : float or None
        Lowest W′ balance allowed at a segment end; None when not checked [J].
    cap : float or None
        Highest time-weighted 4th-power mean power (the solver's effort measure); None when
        not checked [W].
    """

    reserve: float | None = None
    cap: float | None = None


@dataclass(frozen=True, eq=False)
class FastestProblem:
    """One fastest-plan problem in the steady-state segment model.

    Attributes
    ----------
    model : SegmentModel
        The course's segments [-].
    request : PlanRequest
        Mean power, constraint and the athlete's limits [-].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    counter : list of int
        One-element count of the steady evaluations of the whole course so far [-].
    """

    model: SegmentModel
    request: PlanRequest
    lower: np.ndarray
    upper: np.ndarray
    counter: list[int] = field(default_factory=lambda: [0])

    def keeps(self, power: np.ndarray, limits: SolverLimits, slack: float = 0.0) -> bool:
        """Whether a plan keeps the limits, each within `slack` of W′ or the cap (counted).

        Parameters
        ----------
        power : numpy.ndarray
            Segment powers, length K [W].
        limits : SolverLimits
            The W′ reserve [J] and effort cap [W] to keep [-].
        slack : float, optional
            Allowed shortfall, relative to W′ for the reserve and to the cap for the cap [-].

        Returns
        -------
        bool
            True when every given limit is kept [-].
        """
        time, _ = steady_times(self.model, power)
        self.counter[0] += 1
        request = self.request
        return ((limits.reserve is None
                 or steady_w_prime_balance(power, time, request).min()
                 >= limits.reserve - slack * w_prime_parameters(request)[1])
                and (limits.cap is None
                     or fourth_power_mean(power, time) <= limits.cap * (1 + slack)))

    def finish(self, power: np.ndarray) -> float:
        """Steady finish time of a plan (not counted).

        Parameters
        ----------
        power : numpy.ndarray
            Segment powers, length K [W].

        Returns
        -------
        float
            The sum of the segments' steady times [s].
        """
        return float(steady_times(self.model, power)[0].sum())
