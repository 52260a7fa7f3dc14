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
    name : str
        Label [-].
    body_mass : float
        Body mass, 20..250 [kg].
    critical_power : float or None
        Cycling critical power (or threshold power); None if unknown [W].
    w_prime : float or None
        W′, the work capacity above critical power; None if unknown [J].
    height : float or None
        Standing height, used for a runner's drag area; None if unknown [m].
    flat_pace : float or None
        Running pace held on flat ground in still air; None if unknown [s/km].
    critical_speed : float or None
        Running critical speed; None if unknown [m/s].
    d_prime : float or None
        D′, the distance capacity above critical speed; None if unknown [m].
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
    name : str
        Label ("road bike, hoods", "TT bike, extensions") [-].
    bike_mass : float
        Bike + kit (bottles, shoes, helmet), 0..60 [kg].
    drag_area : float
        CdA in this position, 0.05..1.5 [m²].
    power_share : float
        Share of the athlete's power this position allows, e.g. 0.95, 0.3..1.2 [-].
    rolling_coefficient : float
        Crr of the tyres on the course's main surface, 0..0.1 [-].
    drivetrain_efficiency : float
        Share of crank power reaching the wheel, 0.5..1 [-].
    yaw_drag_table : tuple of (float, float) pairs or None
        ((yaw [deg], CdA multiplier [-]), ...); None for no yaw dependence [deg, -].

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291 (default Crr and drivetrain
    efficiency); typical values: docs/references.md, "Typical CdA, Crr".
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
    """The cycling power-balance parameters of an athlete on a setup.

    Parameters
    ----------
    athlete : Athlete
        The person (body mass [kg]).
    setup : Setup
        The bike and position (bike mass [kg], CdA [m²], Crr [-], efficiency [-]).
    drafting_reduction : float, optional
        Share of the rider's own drag area removed by drafting, 0..1 [-].

    Returns
    -------
    pacing.physics.cycling.Rider
        Mass = body + bike, the setup's drag area, Crr, efficiency and yaw table.

    Examples
    --------
    >>> rider_for(Athlete(body_mass=72.0), Setup(bike_mass=8.0)).mass
    80.0
    """
    return Rider(
        mass=athlete.body_mass + setup.bike_mass,
        drag_area=setup.drag_area,
        rolling_coefficient=setup.rolling_coefficient,
        drivetrain_efficiency=setup.drivetrain_efficiency,
        drafting_reduction=drafting_reduction,
        yaw_drag_table=setup.yaw_drag_table,
    )
