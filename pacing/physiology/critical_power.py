"""Physiology of hard efforts: critical power, W′ balance and effort-weighted power.

All functions work on numpy arrays in SI units: power [W], time and durations [s], work [J].
A power series is given as `power[i]` held for `duration[i]` seconds (samples at arbitrary,
possibly uneven, time steps; a course simulation gives one sample per piece of road).

References
----------
Monod, H. & Scherrer, J. (1965). The work capacity of a synergic muscular group.
Ergonomics 8:329-338. doi:10.1080/00140136508930810
Morton, R.H. (1996). A 3-parameter critical power model. Ergonomics 39(4):611-619.
doi:10.1080/00140139608964484
Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
doi:10.1249/MSS.0b013e3182517a80
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3
Skiba, P.F. & Clarke, D.C. (2021). The W′ balance model: mathematical and methodological
considerations. Int J Sports Physiol Perform 16(11):1561-1572. doi:10.1123/ijspp.2021-0205

Check values: docs/references.md, "Critical power and W′ balance".
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError

EFFORT_WINDOW = 30.0
"""Length of the rolling average in the effort-weighted power [s] (common practice)."""

EFFORT_EXPONENT = 4.0
"""Exponent of the mean in the effort-weighted power [-] (common practice)."""

RESAMPLE_STEP = 1.0
"""Time step of the resampled series used for the effort-weighted power [s]."""

_MAX_LOG_DECAY = 600.0  # keep exp() of cumulative decays inside float range


def _check_critical_power(critical_power: float, w_prime: float) -> None:
    if not np.isfinite(critical_power) or critical_power <= 0:
        raise InputError(f"critical power must be positive, got {critical_power}")
    if not np.isfinite(w_prime) or w_prime <= 0:
        raise InputError(f"W′ must be positive, got {w_prime}")


def _power_series(power: ArrayLike, duration: ArrayLike) -> tuple[np.ndarray, np.ndarray]:
    power, duration = np.broadcast_arrays(
        np.atleast_1d(np.asarray(power, dtype=float)),
        np.atleast_1d(np.asarray(duration, dtype=float)),
    )
    if power.ndim != 1:
        raise InputError("power and duration must be 1-D series")
    if not (np.all(np.isfinite(power)) and np.all(np.isfinite(duration))):
        raise InputError("power and duration must be finite numbers")
    if np.any(duration < 0):
        raise InputError("durations must not be negative")
    return power, duration


def time_to_exhaustion(power: ArrayLike, critical_power: float, w_prime: float) -> np.ndarray:
    """Time a constant power can be held, critical power model [s].

    t_lim = W′ / (P − CP) for P > CP; infinite at or below CP.

    Parameters
    ----------
    power : float or array_like
        Constant power P [W].
    critical_power : float
        CP, > 0 [W].
    w_prime : float
        W′, the work capacity above CP, > 0 [J].

    Returns
    -------
    numpy.ndarray
        t_lim [s], the shape of `power`.

    References
    ----------
    Monod, H. & Scherrer, J. (1965). Ergonomics 8:329-338. doi:10.1080/00140136508930810
    Skiba & Clarke (2021), Int J Sports Physiol Perform 16(11):1561-1572, eq. 1.

    Examples
    --------
    CP 250 W, W′ 20 kJ, held at 400 W: 20000/150 = 133.3 s.

    >>> float(time_to_exhaustion(400.0, 250.0, 20000.0))
    133.3
    """
    _check_critical_power(critical_power, w_prime)
    power = np.asarray(power, dtype=float)
    excess = power - critical_power
    with np.errstate(divide="ignore"):
        return np.where(excess > 0, w_prime / np.where(excess > 0, excess, 1.0), np.inf)


def time_to_exhaustion_morton(
    power: ArrayLike, critical_power: float, w_prime: float, max_power: float
) -> np.ndarray:
    """Time a constant power can be held, Morton's 3-parameter model [s].

    t_lim = W′ / (P − CP) + W′ / (CP − P_max) for CP < P ≤ P_max (0 at P_max, infinite at or
    below CP).

    Parameters
    ----------
    power : float or array_like
        Constant power P, at most P_max [W].
    critical_power : float
        CP, > 0 [W].
    w_prime : float
        W′, > 0 [J].
    max_power : float
        P_max, the instantaneous power asymptote (t_lim = 0), above CP [W].

    Returns
    -------
    numpy.ndarray
        t_lim [s], the shape of `power`.

    References
    ----------
    Morton, R.H. (1996). A 3-parameter critical power model. Ergonomics 39(4):611-619.
    doi:10.1080/00140139608964484

    Examples
    --------
    CP 250 W, W′ 20 kJ, P_max 1000 W, held at 400 W: 20000/150 − 20000/750 = 106.7 s.

    >>> float(time_to_exhaustion_morton(400.0, 250.0, 20000.0, 1000.0))
    106.7
    """
    _check_critical_power(critical_power, w_prime)
    if not max_power > critical_power:
        raise InputError(f"maximal power must exceed critical power, got {max_power}")
    power = np.asarray(power, dtype=float)
    if np.any(power > max_power):
        raise InputError(f"power above the maximal power {max_power:g} W cannot be held")
    excess = power - critical_power
    safe = np.where(excess > 0, excess, 1.0)
    limit = w_prime / safe + w_prime / (critical_power - max_power)
    return np.where(excess > 0, np.maximum(limit, 0.0), np.inf)


def power_for_duration(duration: ArrayLike, critical_power: float, w_prime: float) -> np.ndarray:
    """Highest constant power that can be held for a duration, critical power model [W].

    P = CP + W′ / t (the inverse of `time_to_exhaustion`).

    Parameters
    ----------
    duration : float or array_like
        t, > 0 [s].
    critical_power : float
        CP, > 0 [W].
    w_prime : float
        W′, > 0 [J].

    Returns
    -------
    numpy.ndarray
        P [W], the shape of `duration`.

    References
    ----------
    Monod & Scherrer (1965), Ergonomics 8:329-338.

    Examples
    --------
    Five minutes with CP 250 W and W′ 20 kJ: 250 + 20000/300 = 316.7 W.

    >>> float(power_for_duration(300.0, 250.0, 20000.0))
    316.7
    """
    _check_critical_power(critical_power, w_prime)
    duration = np.asarray(duration, dtype=float)
    if np.any(duration <= 0):
        raise InputError("duration must be positive")
    return critical_power + w_prime / duration


def _affine_scan(decay: np.ndarray, increment: np.ndarray, initial: float) -> np.ndarray:
    """x[i+1] = decay[i]·x[i] + increment[i], x[0] = initial, for every i at once.

    Closed form x_k = e^{L_k}·x_0 + Σ_{i<k} b_i·e^{L_k − L_{i+1}}, L_k = Σ_{i<k} ln d_i, done in
    chunks over which the cumulative decay stays within float range. Returns x[1:].
    """
    log_decay = np.maximum(np.log(np.maximum(decay, 1e-300)), -_MAX_LOG_DECAY)
    out = np.empty(decay.size)
    start, x0 = 0, float(initial)
    while start < decay.size:
        cumulative = np.cumsum(log_decay[start:])
        stop = start + max(1, int(np.searchsorted(-cumulative, _MAX_LOG_DECAY, side="right")))
        level = cumulative[: stop - start]
        out[start:stop] = np.exp(level) * (
            x0 + np.cumsum(increment[start:stop] * np.exp(-level))
        )
        x0 = out[stop - 1]
        start = stop
    return out


def w_prime_balance_differential(
    power: ArrayLike,
    duration: ArrayLike,
    critical_power: float,
    w_prime: float,
    initial_balance: float | None = None,
) -> np.ndarray:
    """W′ balance at the end of each sample, Skiba's differential form [J].

    Above CP the balance falls at the rate of the excess power; below CP it recovers toward W′
    in proportion to the share already spent:

        dW′bal/dt = −(P − CP)                     for P > CP
        dW′bal/dt = (CP − P)·(W′ − W′bal)/W′       for P ≤ CP

    The equation is integrated exactly over each sample of constant power (linear fall, or the
    exponential W′ − (W′ − W′bal)·exp(−(CP − P)·Δt/W′)), so the result does not depend on the
    sampling. The balance can go below zero: that is a plan the athlete cannot hold.

    Parameters
    ----------
    power : array_like
        Power of each sample [W].
    duration : array_like
        Length of each sample [s], ≥ 0.
    critical_power : float
        CP, > 0 [W].
    w_prime : float
        W′, > 0 [J].
    initial_balance : float, optional
        Balance at the start (default W′, fully rested) [J].

    Returns
    -------
    numpy.ndarray
        W′ balance at the end of each sample [J].

    References
    ----------
    Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Eur J Appl
    Physiol 115(4):703-713. doi:10.1007/s00421-014-3050-3 (equation from memory, as summarised
    in Skiba & Clarke 2021). docs/references.md, "Critical power and W′ balance".

    Examples
    --------
    CP 250 W, W′ 20 kJ: 60 s at 400 W spends 9000 J; 60 s at 150 W then recovers to
    20000 − 9000·exp(−100·60/20000) = 13332.6 J.

    >>> w_prime_balance_differential([400.0, 150.0], [60.0, 60.0], 250.0, 20000.0).round(1)
    array([11000. , 13332.6])
    """
    _check_critical_power(critical_power, w_prime)
    power, duration = _power_series(power, duration)
    start = w_prime if initial_balance is None else float(initial_balance)
    excess = power - critical_power
    above = excess > 0
    decay = np.where(above, 1.0, np.exp(np.where(above, 0.0, excess) * duration / w_prime))
    increment = np.where(above, excess * duration, 0.0)
    deficit = _affine_scan(decay, increment, w_prime - start)
    return w_prime - deficit


def recovery_time_constant(critical_power_gap: float) -> float:
    """Time constant of W′ recovery in Skiba's integral form [s].

    τ = 546·exp(−0.01·D_CP) + 316, D_CP = CP − (mean power of the samples below CP).

    Parameters
    ----------
    critical_power_gap : float
        D_CP [W].

    Returns
    -------
    float
        τ [s].

    References
    ----------
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Med Sci Sports Exerc
    44(8):1526-1532. doi:10.1249/MSS.0b013e3182517a80 (constants from memory).

    Examples
    --------
    Recovering 100 W below CP: 546·e^(−1) + 316 = 516.9 s.

    >>> recovery_time_constant(100.0)
    516.9
    """
    return 546.0 * float(np.exp(-0.01 * critical_power_gap)) + 316.0


def w_prime_balance_integral(
    power: ArrayLike,
    duration: ArrayLike,
    critical_power: float,
    w_prime: float,
    initial_balance: float | None = None,
) -> np.ndarray:
    """W′ balance at the end of each sample, Skiba's integral form [J].

        W′bal(t) = W′ − ∫₀ᵗ (P(u) − CP)⁺ · exp(−(t − u)/τ) du

    with τ from `recovery_time_constant` and D_CP the gap between CP and the time-weighted mean
    power of the samples below CP (the whole series; D_CP = 0 when no sample is below CP). The
    integral is evaluated exactly for piecewise-constant power (continuous form, no 1 s
    discretisation): each sample adds (P − CP)⁺·τ·(1 − e^(−Δt/τ)) and the total decays by
    e^(−Δt/τ) per sample.

    Parameters
    ----------
    power : array_like
        Power of each sample [W].
    duration : array_like
        Length of each sample [s], ≥ 0.
    critical_power : float
        CP, > 0 [W].
    w_prime : float
        W′, > 0 [J].
    initial_balance : float, optional
        Balance at the start (default W′); a starting deficit decays like the rest [J].

    Returns
    -------
    numpy.ndarray
        W′ balance at the end of each sample [J].

    References
    ----------
    Skiba, P.F., Chidnok, W., Vanhatalo, A. & Jones, A.M. (2012). Modeling the expenditure and
    reconstitution of work capacity above critical power. Med Sci Sports Exerc 44(8):1526-1532.
    doi:10.1249/MSS.0b013e3182517a80 (equation from memory). docs/references.md, "Critical
    power and W′ balance".

    Examples
    --------
    CP 250 W, W′ 20 kJ, 60 s at 400 W then 60 s at 150 W: τ = 546·e^(−1) + 316 = 516.86 s and
    W′ − 150·τ·(1 − e^(−60/τ))·e^(−60/τ) = 12434.0 J at the end (scipy's quad on the integral
    agrees):

    >>> w_prime_balance_integral([400.0, 150.0], [60.0, 60.0], 250.0, 20000.0).round(1)
    array([11502.7, 12434. ])
    """
    _check_critical_power(critical_power, w_prime)
    power, duration = _power_series(power, duration)
    start = w_prime if initial_balance is None else float(initial_balance)
    below = power < critical_power
    below_time = float(duration[below].sum())
    gap = (
        critical_power - float((power[below] * duration[below]).sum()) / below_time
        if below_time > 0
        else 0.0
    )
    tau = recovery_time_constant(gap)
    decay = np.exp(-duration / tau)
    increment = np.maximum(power - critical_power, 0.0) * tau * (1.0 - decay)
    return w_prime - _affine_scan(decay, increment, w_prime - start)


W_PRIME_BALANCE_MODELS: dict[str, Callable[..., np.ndarray]] = {
    "differential": w_prime_balance_differential,
    "integral": w_prime_balance_integral,
}
"""W′ balance models by name: Skiba et al. 2015 (differential) and 2012 (integral)."""


def w_prime_balance(
    power: ArrayLike,
    duration: ArrayLike,
    critical_power: float,
    w_prime: float,
    model: str = "differential",
    initial_balance: float | None = None,
) -> np.ndarray:
    """W′ balance at the end of each sample with a model from W_PRIME_BALANCE_MODELS [J].

    Parameters
    ----------
    power : array_like
        Power of each sample [W].
    duration : array_like
        Length of each sample [s], ≥ 0.
    critical_power : float
        CP, > 0 [W].
    w_prime : float
        W′, > 0 [J].
    model : {"differential", "integral"}, optional
        Key of W_PRIME_BALANCE_MODELS [-].
    initial_balance : float, optional
        Balance at the start (default W′) [J].

    Returns
    -------
    numpy.ndarray
        W′ balance at the end of each sample [J].

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713 (differential); Skiba et al.
    (2012), Med Sci Sports Exerc 44(8):1526-1532 (integral). docs/references.md, "Critical
    power and W′ balance".

    Examples
    --------
    The differential form's check value (see `w_prime_balance_differential`): 13332.6 J.

    >>> float(w_prime_balance([400.0, 150.0], [60.0, 60.0], 250.0, 20000.0)[-1])
    13332.6
    """
    try:
        function = W_PRIME_BALANCE_MODELS[model]
    except KeyError:
        names = ", ".join(W_PRIME_BALANCE_MODELS)
        raise InputError(f"unknown W′ balance model {model!r}; choose one of {names}") from None
    return function(power, duration, critical_power, w_prime, initial_balance)


def resample_power(
    power: ArrayLike, duration: ArrayLike, step: float = RESAMPLE_STEP
) -> np.ndarray:
    """Mean power over consecutive time steps of equal length [W].

    The work done up to each step boundary is read off the cumulative work of the
    piecewise-constant series, so no energy is lost or invented; a last partial step is dropped.

    Parameters
    ----------
    power : array_like
        Power of each sample [W].
    duration : array_like
        Length of each sample [s], ≥ 0.
    step : float, optional
        Length of the new steps, > 0 [s].

    Returns
    -------
    numpy.ndarray
        Mean power of each whole step [W].

    Examples
    --------
    100 W for 1.5 s then 300 W for 1.5 s: the middle second holds half of each.

    >>> resample_power([100.0, 300.0], [1.5, 1.5]).tolist()
    [100.0, 200.0, 300.0]
    """
    power, duration = _power_series(power, duration)
    if not step > 0:
        raise InputError(f"resampling step must be positive, got {step}")
    elapsed = np.concatenate([[0.0], np.cumsum(duration)])
    work = np.concatenate([[0.0], np.cumsum(power * duration)])
    edges = np.arange(0.0, elapsed[-1] + 1e-9 * step, step)
    return np.diff(np.interp(edges, elapsed, work)) / step


def effort_weighted_power(
    power: ArrayLike,
    duration: ArrayLike,
    window: float = EFFORT_WINDOW,
    exponent: float = EFFORT_EXPONENT,
    step: float = RESAMPLE_STEP,
) -> float:
    """Effort-weighted power: the 4th-power mean of the 30 s rolling mean power [W].

        P_ew = ( mean over t of [ (1/w)·∫_{t−w}^{t} P(u) du ]^4 )^(1/4)

    Surges weigh more than steady riding at the same mean (a common way to weigh them; the
    window and exponent are common practice). The series is resampled to `step` seconds; the
    rolling mean is taken over whole windows inside the series. A series shorter than one
    window gives its plain mean raised the same way (one window).

    Parameters
    ----------
    power : array_like
        Power of each sample, ≥ 0 [W].
    duration : array_like
        Length of each sample [s], ≥ 0.
    window : float, optional
        Length of the rolling mean [s].
    exponent : float, optional
        Exponent of the mean [-].
    step : float, optional
        Resampling step [s].

    Returns
    -------
    float
        P_ew [W].

    Examples
    --------
    A steady ride weighs as its power; 30 s surges to 400 W between 30 s at 100 W weigh more
    than their 250 W mean:

    >>> effort_weighted_power([250.0], [600.0])
    250.0
    >>> effort_weighted_power([400.0, 100.0] * 10, [30.0] * 20) > 250.0
    True
    """
    power, duration = _power_series(power, duration)
    if np.any(power < 0):
        raise InputError("power must not be negative for the effort-weighted power")
    total = float(duration.sum())
    if total <= 0:
        raise InputError("the power series has no duration")
    sampled = resample_power(power, duration, step)
    width = max(1, int(round(window / step)))
    if sampled.size < width:
        return float((power * duration).sum() / total)
    cumulative = np.concatenate([[0.0], np.cumsum(sampled)])
    rolling = (cumulative[width:] - cumulative[:-width]) / width
    return float(np.mean(rolling**exponent) ** (1.0 / exponent))
