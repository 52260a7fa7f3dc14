"""Critical speed and D′ for running: time limit above critical speed, flat race time, and
the balance of D′ (the distance that can be run above critical speed), by analogy with
critical power and W′ in cycling.

Check values: docs/references.md, "Critical speed and D′".

References
----------
Poole, D.C., Burnley, M., Vanhatalo, A., Rossiter, H.B. & Jones, A.M. (2016). Critical power:
an important fatigue threshold in exercise physiology. Med Sci Sports Exerc 48(11):2320-2334.
Skiba, P.F., Fulford, J., Clarke, D.C., Vanhatalo, A. & Jones, A.M. (2015). Intramuscular
determinants of the ability to recover work capacity above critical power. Eur J Appl Physiol
115(4):703-713. doi:10.1007/s00421-014-3050-3
Kordi, M. et al. (2019). Int J Sports Physiol Perform 14:685 (typical CS and D′ of trained
men: 4.94 ± 0.32 m/s, 123 ± 58 m).
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike

from pacing.errors import InputError
from pacing.physiology.critical_power import w_prime_balance_differential


def critical_speed_time_limit(speed: ArrayLike, critical_speed: float,
                              d_prime: float) -> np.ndarray:
    """Time to exhaustion at a constant speed above critical speed, t = D′/(v − CS) [s].

    Infinite at or below critical speed. The running form of the critical power model.

    Parameters
    ----------
    speed : float or array_like
        Constant running speed v [m/s].
    critical_speed : float
        CS, 0.5..10 [m/s].
    d_prime : float
        D′, the distance that can be run above CS, 0..2000 [m].

    Returns
    -------
    numpy.ndarray
        t_lim [s], the shape of `speed`.

    References
    ----------
    Hughson et al. (1984) (from memory); Poole et al. (2016), Med Sci Sports Exerc
    48(11):2320-2334.

    Examples
    --------
    Trained men's CS 4.94 m/s and D′ 123 m (Kordi et al. 2019) at 5.5 m/s: 123/0.56 = 219.64 s.

    >>> float(critical_speed_time_limit(5.5, 4.94, 123.0))
    219.64
    """
    check_critical_speed(critical_speed, d_prime)
    speed = np.asarray(speed, dtype=float)
    excess = speed - critical_speed
    with np.errstate(divide="ignore"):
        return np.where(excess > 0, d_prime / np.where(excess > 0, excess, 1.0), np.inf)


def critical_speed_flat_race_time(distance: float, critical_speed: float,
                                  d_prime: float) -> float:
    """Fastest time over a flat distance at constant speed by the CS model [s].

    From t = D′/(v − CS) with v = d/t: t = (d − D′)/CS. Requires d > D′.

    Parameters
    ----------
    distance : float
        Race distance d, > D′ [m].
    critical_speed : float
        CS, 0.5..10 [m/s].
    d_prime : float
        D′, 0..2000 [m].

    Returns
    -------
    float
        Race time [s].

    References
    ----------
    Poole et al. (2016), Med Sci Sports Exerc 48(11):2320-2334.

    Examples
    --------
    5 km with CS 4.94 m/s and D′ 123 m: (5000 − 123)/4.94 = 987.247 s.

    >>> critical_speed_flat_race_time(5000.0, 4.94, 123.0)
    987.247
    """
    check_critical_speed(critical_speed, d_prime)
    if distance <= d_prime:
        raise InputError(f"race distance {distance:.0f} m must exceed D′ ({d_prime:.0f} m)")
    return (distance - d_prime) / critical_speed


def distance_capacity_balance(
    equivalent_speed: ArrayLike, time: ArrayLike, critical_speed: float, d_prime: float
) -> np.ndarray:
    """D′ balance at the end of each piece, the running analogue of W′ balance [m].

    `equivalent_speed` is the flat, still-air speed of the same metabolic power, held for
    `time` on each piece. Above CS the balance falls at (u − CS) metres per second; below CS it
    recovers by Skiba's differential form dD/dt = (CS − u)·(D′ − D)/D′, integrated exactly over
    each piece: D′ − D(t) = (D′ − D(0))·exp(−(CS − u)·t/D′). The integration is
    pacing.physiology.critical_power.w_prime_balance_differential with speed for power.

    Caution: Skiba's recovery law was fitted to cycling (power, W′); its use with speed and
    D′ in running is an analogy, not a measured result.

    Parameters
    ----------
    equivalent_speed : array_like
        Flat, still-air speed of each piece's metabolic power, 1-D [m/s].
    time : array_like
        Time spent on each piece, same length [s].
    critical_speed : float
        CS, 0.5..10 [m/s].
    d_prime : float
        D′, 0..2000 [m].

    Returns
    -------
    numpy.ndarray
        D′ balance at the end of each piece [m].

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713 (the cycling form, from memory).

    Examples
    --------
    60 s at CS + 1 m/s spends 60 m of D′ = 123 m; 100 s at CS − 1 m/s then recovers to
    123 − 60·exp(−100/123) = 96.39 m.

    >>> distance_capacity_balance([5.94, 3.94], [60.0, 100.0], 4.94, 123.0).round(2)
    array([63.  , 96.39])
    """
    check_critical_speed(critical_speed, d_prime)
    speed = np.asarray(equivalent_speed, dtype=float)
    time = np.asarray(time, dtype=float)
    if speed.shape != time.shape or speed.ndim != 1:
        raise InputError("equivalent speed and time must be 1-D arrays of equal length")
    # Skiba's equation in speed units: the same integration as W′ balance in
    # pacing.physiology.critical_power
    return w_prime_balance_differential(speed, time, critical_speed, d_prime)


def check_critical_speed(critical_speed: float, d_prime: float) -> None:
    """Raise InputError unless 0.5 ≤ CS ≤ 10 m/s and 0 < D′ ≤ 2000 m.

    Parameters
    ----------
    critical_speed : float
        CS [m/s].
    d_prime : float
        D′ [m].
    """
    if not np.isfinite(critical_speed) or not 0.5 <= critical_speed <= 10.0:
        raise InputError(f"critical speed must be 0.5-10 m/s, got {critical_speed}")
    if not np.isfinite(d_prime) or not 0.0 < d_prime <= 2000.0:
        raise InputError(f"D′ must be 0-2000 m, got {d_prime}")
