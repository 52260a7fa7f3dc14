"""Course geometry along the distance: resampled points, grades, headings, corner radii.

Conventions (see DEVELOPERS.md):
- N points at a uniform horizontal step; *point* arrays have length N.
- A *piece* is the stretch between point i and i+1; *piece* arrays have length N-1.
- Grade is rise over run (a fraction, 0.05 = 5 %); heading is degrees clockwise from true north
  in [0, 360).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

STRAIGHT_ROAD_RADIUS = 1000.0
"""Corner radius reported for straight road [m]: larger radii never limit speed."""


@dataclass(frozen=True, eq=False)
class Course:
    """A course resampled along its horizontal distance.

    Attributes
    ----------
    distance : horizontal distance from the start of each point [m], length N, uniform step
        except possibly the last piece.
    latitude, longitude : WGS84 position of each point [deg], length N.
    elevation : cleaned elevation of each point [m], length N.
    raw_elevation : elevation of each point before cleaning, resampled [m], length N.
    grade : grade of each piece, rise/run [-], length N-1.
    heading : direction of travel of each piece [deg clockwise from north], length N-1.
    corner_radius : radius of the road's curve at each point [m], capped at
        STRAIGHT_ROAD_RADIUS, length N.
    name : a label for the course.
    raw_ascent : total ascent of the raw track, before resampling and cleaning [m].
    """

    distance: np.ndarray
    latitude: np.ndarray
    longitude: np.ndarray
    elevation: np.ndarray
    raw_elevation: np.ndarray
    grade: np.ndarray
    heading: np.ndarray
    corner_radius: np.ndarray
    name: str = "course"
    raw_ascent: float = float("nan")

    @property
    def piece_length(self) -> np.ndarray:
        """Horizontal length of each piece [m], length N-1."""
        return np.diff(self.distance)

    @property
    def total_distance(self) -> float:
        """Horizontal length of the course [m]."""
        return float(self.distance[-1] - self.distance[0])

    @property
    def ascent(self) -> float:
        """Total ascent of the cleaned profile [m]."""
        rise = np.diff(self.elevation)
        return float(rise[rise > 0].sum())

    @property
    def descent(self) -> float:
        """Total descent of the cleaned profile [m] (a positive number)."""
        rise = np.diff(self.elevation)
        return float(-rise[rise < 0].sum())


def synthetic_course(
    distance: np.ndarray,
    elevation: np.ndarray,
    heading: float | np.ndarray = 0.0,
    corner_radius: float | np.ndarray = STRAIGHT_ROAD_RADIUS,
    name: str = "synthetic",
) -> Course:
    """A course straight from arrays, for tests and for courses described by numbers.

    Parameters
    ----------
    distance : horizontal distance of each point [m], strictly increasing, length N >= 2.
    elevation : elevation of each point [m], length N.
    heading : direction of travel per piece [deg from north], scalar or length N-1.
    corner_radius : per point [m], scalar or length N.
    name : label.

    Latitude and longitude are placed on a flat-earth approximation around (0, 0) following the
    headings; they are for display only.
    """
    distance = np.asarray(distance, dtype=float)
    elevation = np.asarray(elevation, dtype=float)
    if distance.ndim != 1 or distance.size < 2 or elevation.shape != distance.shape:
        raise ValueError("distance and elevation must be 1-D arrays of equal length >= 2")
    step = np.diff(distance)
    if np.any(step <= 0):
        raise ValueError("distance must be strictly increasing")
    heading = np.broadcast_to(np.asarray(heading, dtype=float), step.shape) % 360.0
    radius = np.broadcast_to(np.asarray(corner_radius, dtype=float), distance.shape)
    north = np.concatenate([[0.0], np.cumsum(step * np.cos(np.radians(heading)))])
    east = np.concatenate([[0.0], np.cumsum(step * np.sin(np.radians(heading)))])
    metres_per_degree = 111_195.0
    rise = np.diff(elevation)
    return Course(
        distance=distance,
        latitude=north / metres_per_degree,
        longitude=east / metres_per_degree,
        elevation=elevation,
        raw_elevation=elevation.copy(),
        grade=rise / step,
        heading=np.array(heading),
        corner_radius=np.minimum(np.array(radius), STRAIGHT_ROAD_RADIUS),
        name=name,
        raw_ascent=float(rise[rise > 0].sum()),
    )
