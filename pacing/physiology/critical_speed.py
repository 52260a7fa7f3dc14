"""Critical speed and D′ for running: time limit above critical speed, flat race time, and
the balance of D′ (the distance that can be run above critical speed), by analogy with
critical power and W′ in cycling."""

from __future__ import annotations

import numpy as np

from pacing.errors import InputError
from pacing.physiology.critical_power import w_prime_balance_differential


def critical_speed_time_limit(speed: np.ndarray, critical_speed: float,
                              d_prime: float) -> np.ndarray:
    """Time to exhaustion at a constant speed above critical speed, t = D′/(v − CS) [s].

    Infinite at or below critical speed. The running form of the critical power model
    (Hughson et al. 1984; Poole et al. 2016, Med Sci Sports Exerc 48:2320).

    Parameters
    ----------
    speed : [m/s]; critical_speed : CS [m/s]; d_prime : D′, distance above CS [m].
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
    distance : [m]; critical_speed : [m/s]; d_prime : [m].
    """
    check_critical_speed(critical_speed, d_prime)
    if distance <= d_prime:
        raise InputError(f"race distance {distance:.0f} m must exceed D′ ({d_prime:.0f} m)")
    return (distance - d_prime) / critical_speed


def distance_capacity_balance(
    equivalent_speed: np.ndarray, time: np.ndarray, critical_speed: float, d_prime: float
) -> np.ndarray:
    """D′ balance at the end of each piece, the running analogue of W′ balance [m].

    `equivalent_speed` is the flat, still-air speed of the same metabolic power, held for
    `time` on each piece. Above CS the balance falls at (u − CS) metres per second; below CS it
    recovers by Skiba's differential form dD/dt = (CS − u)·(D′ − D)/D′, integrated exactly over
    each piece: D′ − D(t) = (D′ − D(0))·exp(−(CS − u)·t/D′).

    Caution: Skiba's recovery law was fitted to cycling (power, W′); its use with speed and
    D′ in running is an analogy, not a measured result.

    Parameters
    ----------
    equivalent_speed : per piece [m/s]; time : per piece [s]; critical_speed : [m/s];
    d_prime : [m].

    The integration is pacing.physiology.critical_power.w_prime_balance_differential with speed for
    power.

    References
    ----------
    Skiba et al. (2015), Eur J Appl Physiol 115:703-713.
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
    """Raise InputError unless 0.5 <= CS <= 10 m/s and 0 < D′ <= 2000 m."""
    if not np.isfinite(critical_speed) or not 0.5 <= critical_speed <= 10.0:
        raise InputError(f"critical speed must be 0.5-10 m/s, got {critical_speed}")
    if not np.isfinite(d_prime) or not 0.0 < d_prime <= 2000.0:
        raise InputError(f"D′ must be 0-2000 m, got {d_prime}")
