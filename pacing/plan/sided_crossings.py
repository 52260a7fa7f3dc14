"""Changes of side in the sided fastest-plan polish: small steps and jumps across CP.

The sided rounds of pacing.plan.slsqp_polish hold every segment on one side of CP and move a
segment resting on CP to the other side when the Lagrangian's slope there says a small step
across lowers it. That test is local, and the problem is not convex at CP: above CP the W′
a segment spends, (P − CP)·t(P), grows ever more slowly with P (t falls with P), so the
first watts above CP cost the most W′ per second gained. A segment can rest on CP because a
small step up does not pay while a large one does; a plan of many segments resting on CP
is then a local optimum slower than one where a few of them ride well above it (on a random
4 km course split into 241 segments: 409.204 s against 409.157 s, 1.2e-4 of the finish, while
a coarser split of it reached 409.181 s).

Here each resting segment's Lagrangian, the others held and the round's multipliers fixed, is
evaluated on its other side at a few powers out to its bound. With the differential W′
balance and the sides held, the deficit D = W′ − W′bal after segment k is
D_{k+1} = D_k + (P − CP)·t_k(P) above CP and D_k·exp((P − CP)·t_k(P)/W′) below, and every
later deficit moves by the same change times Π a_m (a_m the later below-CP segments'
factors), so the change of the Lagrangian L = f − λ·c − Σ μ_j·g_j of a segment's power is
exact and costs one steady evaluation of the resting segments per power tried. Where the
best power tried lowers L by more than JUMP_GAIN, the segment changes side and starts there;
the sided round that follows keeps the answer only if it is faster (pacing.plan.slsqp_polish).

Small steps across CP are judged by the Lagrangian's slope on the other side
(`crossing_strengths`). When they bring back a side pattern met before (a block of segments on
CP flipping back and forth together, one row of W′ balance at the block's end moving with it),
only the strongest of each block crosses (`strongest_of_blocks`): on the 241-segment split
above, a plateau of ten segments on CP then split into a few above and a few below it.

References
----------
Nocedal, J. & Wright, S.J. (2006). Numerical Optimization, 2nd ed. Springer, ch. 12 (the
Lagrangian and its multipliers).
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3 (differential W′ balance)
"""

from __future__ import annotations

from dataclasses import replace
from typing import TYPE_CHECKING

import numpy as np

from pacing.plan.lagrange import steady_w_prime_balance
from pacing.plan.request import w_prime_parameters
from pacing.plan.steady_model import SegmentModel, steady_times

if TYPE_CHECKING:
    from scipy.optimize import OptimizeResult

    from pacing.plan.fastest_problem import SolverLimits
    from pacing.plan.sided_sqp import SqpResult
    from pacing.plan.slsqp_polish import ScaledProblem

CROSSING_SLOPE = 1e-9
"""A segment on CP crosses when the Lagrangian's slope on the other side is beyond this, in
the scaled objective (finish time over the constant plan's) per unit of P/P̄ [-]."""

JUMP_LEVELS = 12
"""Powers tried on the other side of CP, evenly out to the segment's bound [-]."""

JUMP_GAIN = 1e-9
"""Least fall of the Lagrangian, in the scaled objective (finish time over the constant
plan's), for a jump [-]: SLSQP's own stop on the objective (SLSQP_FTOL)."""


def stacked_model(model: SegmentModel, segments: np.ndarray, copies: int) -> SegmentModel:
    """The pieces of `segments` only, repeated `copies` times: segment r of copy g is
    segment g·R + r of the new model (R = segments.size), its own cache starting from the
    model's last speeds.

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    segments : numpy.ndarray
        Segment numbers wanted, increasing [-].
    copies : int
        Copies of them [-].

    Returns
    -------
    SegmentModel
        A model of copies·R segments [-].
    """
    pieces = np.isin(model.segment, segments)
    rank = np.searchsorted(segments, model.segment[pieces])
    count = segments.size
    offsets = (np.arange(copies) * count)[:, None]
    speed = model.speed_guess.get("speed")
    guess = {} if speed is None else {"speed": np.tile(speed[pieces], copies)}
    return replace(model, length=np.tile(model.length[pieces], copies),
                   grade=np.tile(model.grade[pieces], copies),
                   density=np.tile(model.density[pieces], copies),
                   headwind=np.tile(model.headwind[pieces], copies),
                   crosswind=np.tile(model.crosswind[pieces], copies),
                   segment=(offsets + rank[None, :]).ravel(), count=copies * count,
                   mean_grade=np.tile(model.mean_grade[segments], copies), speed_guess=guess)


def _trial_powers(side: np.ndarray, lower: np.ndarray, upper: np.ndarray, critical: float
                  ) -> np.ndarray:
    """The powers tried on the other side of CP, shape (JUMP_LEVELS, R) [W]."""
    share = (np.arange(1, JUMP_LEVELS + 1) / JUMP_LEVELS)[:, None]
    far = np.where(side, lower, upper)  # the bound on the other side
    return critical + share * (far - critical)[None, :]


def jump_changes(scaled: ScaledProblem, power: np.ndarray, side: np.ndarray,
                 lower: np.ndarray, upper: np.ndarray, multipliers: np.ndarray,
                 rows: np.ndarray, reserve: float | None
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The change of the Lagrangian L = f − λ·c − Σ μ_j·g_j when one segment resting on CP
    takes a power on its other side, the others held, the multipliers fixed (module
    docstring); infinity where a jump above CP would break the reserve at its own end.

    Parameters are those of `side_jumps`.

    Returns
    -------
    segments : numpy.ndarray
        The resting segments that can cross, increasing [-].
    trials : numpy.ndarray
        The powers tried, shape (JUMP_LEVELS, R) [W].
    change : numpy.ndarray
        The change of L at each, in the scaled objective, shape (JUMP_LEVELS, R) [-].
    """
    critical, w_prime = w_prime_parameters(scaled.request)
    resting = np.abs(power - critical) <= 1e-9 * critical
    resting &= np.where(side, lower < critical, upper > critical)
    segments = np.flatnonzero(resting)
    if segments.size == 0:
        return segments, np.zeros((JUMP_LEVELS, 0)), np.zeros((JUMP_LEVELS, 0))
    time = scaled.evaluate(power / scaled.mean)[0]
    trials = _trial_powers(side[segments], lower[segments], upper[segments], critical)
    trial_time = steady_times(stacked_model(scaled.model, segments, JUMP_LEVELS),
                              trials.ravel())[0].reshape(trials.shape)
    scaled.counter[0] += 1
    balance = steady_w_prime_balance(power, time, scaled.request, scaled.initial)
    first = w_prime if scaled.initial is None else scaled.initial
    before = w_prime - np.concatenate([[first], balance[:-1]])[segments]  # D_k
    excess = (trials - critical) * trial_time
    after = np.where(side[segments], before * np.exp(excess / w_prime), before + excess)
    # above CP a segment's own end is the lowest of its run: it keeps the reserve there
    room = w_prime - (0.0 if reserve is None else reserve)
    allowed = side[segments] | (after <= room)
    # each later row's deficit moves by Π a_m of the below-CP segments between (sides held)
    log_decay = np.concatenate([[0.0], np.cumsum(np.where(side, 0.0, (power - critical)
                                                          * time / w_prime))])
    reach = np.where(rows[:, None] >= segments[None, :],
                     np.exp(log_decay[rows + 1, None] - log_decay[segments + 1][None, :]), 0.0)
    weight = np.asarray(multipliers)[1:1 + rows.size] @ reach  # Σ_j μ_j·A_jk
    now = time[segments]
    change = ((trial_time - now) / scaled.total0
              - multipliers[0] * ((trials - scaled.centre) * trial_time
                                  - (power[segments] - scaled.centre) * now)
              / (scaled.mean * scaled.total0)
              + weight * (after - before) / w_prime)
    return segments, trials, np.where(allowed, change, np.inf)


def side_jumps(scaled: ScaledProblem, power: np.ndarray, side: np.ndarray,
               lower: np.ndarray, upper: np.ndarray, multipliers: np.ndarray,
               rows: np.ndarray, reserve: float | None) -> tuple[np.ndarray, np.ndarray] | None:
    """Segments resting on CP whose Lagrangian falls at a power well across it (module
    docstring); (their new sides, the plan with them at their best power tried [W]) or None.

    Parameters
    ----------
    scaled : pacing.plan.slsqp_polish.ScaledProblem
        The scaled problem (differential W′ balance, no effort cap) [-].
    power : numpy.ndarray
        The round's answer, length K [W].
    side : numpy.ndarray
        The side each segment was held on (True: above CP) [-].
    lower : numpy.ndarray
        Lowest power of each segment, length K [W].
    upper : numpy.ndarray
        Highest power of each segment, length K [W].
    multipliers : numpy.ndarray
        The round's multipliers: the coupling constraint's, then one per row [-].
    rows : numpy.ndarray
        The segment ends whose W′ balance was a constraint, increasing [-].
    reserve : float or None
        The W′ reserve: a segment jumping above CP keeps it at its own end [J].

    Returns
    -------
    tuple of numpy.ndarray or None
        The sides (True: above) and the start of the next round [W], or None when no jump
        lowers the Lagrangian by more than JUMP_GAIN.
    """
    segments, trials, change = jump_changes(scaled, power, side, lower, upper, multipliers,
                                            rows, reserve)
    if segments.size == 0:
        return None
    best = np.argmin(change, axis=0)
    gain = change[best, np.arange(segments.size)]
    jumping = gain < -JUMP_GAIN
    if not jumping.any():
        return None
    moved = segments[jumping]
    new_side, start = side.copy(), power.copy()
    new_side[moved] = ~side[moved]
    start[moved] = trials[best[jumping], np.flatnonzero(jumping)]
    return new_side, start


def crossing_strengths(scaled: ScaledProblem, power: np.ndarray, side: np.ndarray,
                       prices: np.ndarray, coupling_price: float, rows: np.ndarray | None
                       ) -> np.ndarray:
    """How steeply the Lagrangian of each segment resting on CP falls when it takes a small
    step across CP, beyond CROSSING_SLOPE; 0 where it does not.

    The slope on the other side is ∂L/∂x on the held side (≥ 0 at a lower bound, ≤ 0 at an
    upper one) plus Σ μ_j·(J_held − J_other)_jk, J the W′ balance Jacobian on each side's
    formula (pacing.plan.slsqp_polish.w_prime_jacobian).

    Parameters
    ----------
    scaled : pacing.plan.slsqp_polish.ScaledProblem
        The scaled problem [-].
    power : numpy.ndarray
        The round's answer, length K [W].
    side : numpy.ndarray
        The side each segment was held on (True: above CP) [-].
    prices : numpy.ndarray
        The W′ rows' multipliers (more are cut off) [-].
    coupling_price : float
        The coupling constraint's multiplier [-].
    rows : numpy.ndarray or None
        The segment ends whose W′ balance was a constraint; None for all [-].

    Returns
    -------
    numpy.ndarray
        The strengths, length K, in the scaled objective per unit of P/P̄ [-].
    """
    from pacing.plan.slsqp_polish import w_prime_jacobian

    critical, w_prime = w_prime_parameters(scaled.request)
    resting = np.abs(power - critical) <= 1e-9 * critical
    if not resting.any():
        return np.zeros(power.size)
    share = power / scaled.mean
    time, dtime = scaled.evaluate(share)
    prices = prices[: power.size if rows is None else rows.size]  # the W′ rows' multipliers
    held = w_prime_jacobian(power, time, dtime, scaled.request, side, rows, scaled.initial)
    other = w_prime_jacobian(power, time, dtime, scaled.request, ~side, rows, scaled.initial)
    scale = scaled.mean / w_prime
    gradient = (scaled.objective_gradient(share)
                - coupling_price * scaled.coupling_gradient(share)[0] - prices @ held * scale)
    crossed = gradient + prices @ (held - other) * scale
    strength = np.where(side, crossed, -crossed) - CROSSING_SLOPE
    return np.where(resting & (strength > 0), strength, 0.0)


def strongest_of_blocks(strength: np.ndarray) -> np.ndarray:
    """The strongest crossing of each block of consecutive crossing segments.

    Parameters
    ----------
    strength : numpy.ndarray
        Crossing strengths (`crossing_strengths`), length K [-].

    Returns
    -------
    numpy.ndarray
        True at the strongest segment of each block [-].
    """
    crossing = strength > 0
    block = np.cumsum(crossing & ~np.r_[False, crossing[:-1]])
    order = np.lexsort((-strength, block))
    order = order[crossing[order]]
    chosen = np.zeros(strength.size, dtype=bool)
    if order.size:
        chosen[order[np.r_[True, block[order][1:] != block[order][:-1]]]] = True
    return chosen


def crossed_sides(scaled: ScaledProblem, result: OptimizeResult | SqpResult,
                  power: np.ndarray, side: np.ndarray, rows: np.ndarray | None,
                  seen: set[bytes], gradual: bool = False) -> np.ndarray | None:
    """The sides after the small steps across CP that pay (`crossing_strengths`); only the
    strongest of each block where all of them would give a pattern seen before, and
    (`gradual`) only the strongest of each block stepping down from above CP.

    Parameters
    ----------
    scaled : pacing.plan.slsqp_polish.ScaledProblem
        The scaled problem, with its power bounds [-].
    result : scipy.optimize.OptimizeResult or pacing.plan.sided_sqp.SqpResult
        The round's result (its multipliers) [-].
    power : numpy.ndarray
        The round's answer, length K [W].
    side : numpy.ndarray
        The side each segment was held on (True: above CP) [-].
    rows : numpy.ndarray or None
        The segment ends whose W′ balance was a constraint; None for all [-].
    seen : set of bytes
        Side patterns met so far; the new one is added [-].
    gradual : bool
        Split runs above CP one segment per block and round: where no plain SLSQP steps
        found where W′ is spent (above pacing.plan.fastest.FINE_MAX_SEGMENTS), a plateau
        of segments on CP with W′ empty then splits into a few above and a few below CP
        instead of dropping below it whole [-].

    Returns
    -------
    numpy.ndarray or None
        The new sides, or None when no segment crosses [-].
    """
    multipliers = np.asarray(result.multipliers)
    prices = multipliers[1:] if rows is None or rows.size > 0 else np.zeros(0)
    strength = crossing_strengths(scaled, power, side, prices, float(multipliers[0]), rows)
    critical = w_prime_parameters(scaled.request)[0]
    lower, upper = scaled.bounds
    strength[np.where(side, lower >= critical, upper <= critical)] = 0.0  # cannot cross
    if not strength.any():
        return None
    if gradual:  # a run above CP is split at its strongest crossing only
        crossed = side ^ ((strength > 0) & ~side) ^ strongest_of_blocks(
            np.where(side, strength, 0.0))
    else:
        crossed = side ^ (strength > 0)
    if crossed.tobytes() in seen:
        crossed = side ^ strongest_of_blocks(strength)
    seen.add(crossed.tobytes())
    return crossed


def kept_finish(scaled: ScaledProblem, limits: SolverLimits, power: np.ndarray) -> float:
    """The scaled finish time of a sided round's answer when it keeps the coupling constraint
    and the W′ reserve (within 1e-8 in the scaled constraints), else infinity.

    Parameters
    ----------
    scaled : pacing.plan.slsqp_polish.ScaledProblem
        The scaled problem [-].
    limits : SolverLimits
        The W′ reserve [J] to keep [-].
    power : numpy.ndarray
        The answer, length K [W].

    Returns
    -------
    float
        Finish time over the constant plan's, or infinity [-].
    """
    ratio = power / scaled.mean
    kept = abs(float(scaled.coupling(ratio)[0])) <= 1e-8 and (
        limits.reserve is None
        or float(scaled.balance_constraint(limits.reserve)["fun"](ratio).min()) >= -1e-8)
    return scaled.objective(ratio) if kept else np.inf
