"""The steady speed at a crank power, one piece at a time: the compiled twin of the vectorised
solver of pacing.physics.cycling_speed (same steps, same numbers bit for bit).

Plain functions of floats and numpy arrays (pacing.kernels): compiled by numba for large jobs,
plain Python under NUMBA_DISABLE_JIT=1. Each piece is solved as the vectorised solver solves
it, operation for operation: g(v) = k·V·v_a + c + b·v − η·P/v and its slope
k·(v_a²/V + V) + b + η·P/v², the bracket [minimum speed, 30 m/s] doubled at the top until it
holds the root, then Newton steps kept inside the shrinking bracket (bisection otherwise) until
a step moves the speed by at most `tolerance`·v. The apparent wind speed is numpy's hypot (the C
library's, also when numba compiles it), as the vectorised solver has it.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

from typing import Any

import numpy as np

KERNELS = ("steady_balance", "steady_speeds")
"""The kernel functions of this module, compiled together (pacing.kernels.compiled)."""

BRACKET_DOUBLINGS = 60
"""Most doublings of the bracket's top [-]."""

Floats = Any
"""A 1-D float array (or a sequence of floats in plain Python)."""

prange = range
"""The pieces' loop of `steady_speeds`: plain `range` here, numba.prange in the compiled family
(pacing.kernels.compiled): the pieces are independent, so they spread over every core."""


def steady_balance(v: float, drive: float, constant: float, k: float, head: float,
                   cross: float, b: float) -> tuple[float, float]:
    """g(v) = k·V·v_a + c + b·v − η·P/v [N] and dg/dv [N·s/m] on one piece.

    `drive` = η·P [W], `constant` the speed-independent resistance c [N], `k` = ½ρ·(CdA·(1 −
    d) + F_w) [kg/m], `head` and `cross` the wind components [m/s], `b` the bearing loss per
    unit speed [N·s/m]; v_a = v + head, V = hypot(v_a, cross).
    """
    along = v + head
    apparent = np.hypot(along, cross)
    value = k * apparent
    value = value * along
    value = value + constant
    value = value + b * v
    value = value - drive / v
    pull = drive / (v * v)
    slope = k * (along * along / apparent + apparent) if apparent > 0 else k * 0.0
    slope = slope + b
    return value, slope + pull


def steady_speeds(drive: Floats, constant: Floats, k: Floats, head: Floats, cross: Floats,
                  b: float, minimum_speed: float, bracket_start: float, tolerance: float,
                  max_iterations: int, speed: Floats) -> None:
    """Steady ground speed of every piece into `speed` [m/s]: `minimum_speed` where g ≥ 0
    there already (no root above it: stalled), else the root of g (module docstring)."""
    for i in prange(len(drive)):
        p, c, ki, hi, xi = drive[i], constant[i], k[i], head[i], cross[i]
        low = minimum_speed
        g_low, _ = steady_balance(low, p, c, ki, hi, xi, b)
        if g_low >= 0:
            speed[i] = minimum_speed
            continue
        high = bracket_start
        g_high, _ = steady_balance(high, p, c, ki, hi, xi, b)
        for _ in range(BRACKET_DOUBLINGS):
            if not g_high < 0:
                break
            low = high
            high = high * 2.0
            g_high, _ = steady_balance(high, p, c, ki, hi, xi, b)
        now = 0.5 * (low + high)
        for _ in range(max_iterations):
            value, slope = steady_balance(now, p, c, ki, hi, xi, b)
            if value < 0:
                low = now
            if value > 0:
                high = now
            # as numpy divides: a zero slope gives an infinite (or no) step, then bisection
            newton = now - value / slope if slope != 0 else np.nan
            # non-strict bounds, as the vectorised solver has them
            new = newton if newton >= low and newton <= high else 0.5 * (low + high)
            converged = abs(new - now) <= tolerance * new
            now = new
            if converged:
                break
        speed[i] = now
