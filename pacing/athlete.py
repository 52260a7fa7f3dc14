"""The athlete and the equipment, as a coach describes them, and the physics parameters they
imply.

An Athlete is the person (body mass, physiology); a Setup is a bike with a riding position
(drag area, the share of the athlete's power the position allows, rolling resistance). The
cycling power balance takes a Rider (pacing.physics.cycling), made by `rider_for`.
"""

from __future__ import annotations

from dataclasses import dataclass

from pacing.errors import InputError
from pacing.physics.cycling import MARTIN_1998, Rider


@dataclass(frozen=True)
class Athlete:
    """A person who races.

    Attributes
    ----------
    name : label.
    body_mass : [kg].
    critical_power : cycling critical power (or threshold power) [W]; None if unknown.
    w_prime : work capacity above critical power, W′ [J]; None if unknown.
    height : [m], used for a runner's drag area; None if unknown.
    flat_pace : running pace held on flat ground in still air [s/km]; None if unknown.
    critical_speed : running critical speed [m/s]; None if unknown.
    d_prime : distance capacity above critical speed, D′ [m]; None if unknown.
    """

    name: str = "athlete"
    body_mass: float = 72.0
    critical_power: float | None = 280.0
    w_prime: float | None = 20000.0
    height: float | None = 1.78
    flat_pace: float | None = None
    critical_speed: float | None = None
    d_prime: float | None = None

    def __post_init__(self) -> None:
        if not 20.0 <= self.body_mass <= 250.0:
            raise InputError(f"body mass must be 20-250 kg, got {self.body_mass}")
        for field in ("critical_power", "w_prime", "height", "flat_pace", "critical_speed",
                      "d_prime"):
            value = getattr(self, field)
            if value is not None and not value > 0:
                raise InputError(f"{field.replace('_', ' ')} must be positive, got {value}")


@dataclass(frozen=True)
class Setup:
    """A bike, kit and riding position.

    Attributes
    ----------
    name : label ("road bike, hoods", "TT bike, extensions").
    bike_mass : bike + kit (bottles, shoes, helmet) [kg].
    drag_area : CdA in this position [m²].
    power_share : share of the athlete's power this position allows, e.g. 0.95 [-].
    rolling_coefficient : Crr of the tyres on the course's main surface [-].
    drivetrain_efficiency : [-].
    yaw_drag_table : optional ((yaw [deg], CdA multiplier), ...).
    """

    name: str = "road bike"
    bike_mass: float = 8.0
    drag_area: float = 0.30
    power_share: float = 1.0
    rolling_coefficient: float = MARTIN_1998["rolling_coefficient"]
    drivetrain_efficiency: float = MARTIN_1998["drivetrain_efficiency"]
    yaw_drag_table: tuple[tuple[float, float], ...] | None = None

    def __post_init__(self) -> None:
        if not 0.0 <= self.bike_mass <= 60.0:
            raise InputError(f"bike mass must be 0-60 kg, got {self.bike_mass}")
        if not 0.05 <= self.drag_area <= 1.5:
            raise InputError(f"CdA must be 0.05-1.5 m², got {self.drag_area}")
        if not 0.3 <= self.power_share <= 1.2:
            raise InputError(f"power share must be 0.3-1.2, got {self.power_share}")
        if not 0.0 <= self.rolling_coefficient <= 0.1:
            raise InputError(f"Crr must be 0-0.1, got {self.rolling_coefficient}")
        if not 0.5 <= self.drivetrain_efficiency <= 1.0:
            raise InputError(
                f"drivetrain efficiency must be 0.5-1, got {self.drivetrain_efficiency}"
            )


def rider_for(athlete: Athlete, setup: Setup, drafting_reduction: float = 0.0) -> Rider:
    """The cycling power-balance parameters of an athlete on a setup."""
    return Rider(
        mass=athlete.body_mass + setup.bike_mass,
        drag_area=setup.drag_area,
        rolling_coefficient=setup.rolling_coefficient,
        drivetrain_efficiency=setup.drivetrain_efficiency,
        drafting_reduction=drafting_reduction,
        yaw_drag_table=setup.yaw_drag_table,
    )
