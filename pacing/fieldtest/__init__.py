"""Drag area and rolling resistance from test rides: rides, laps, virtual elevation,
regression, intervals."""
