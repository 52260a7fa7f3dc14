"""pacing: race-pacing planner for cycling and running.

The numeric core (course geometry, air, cycling and running physics, simulation, physiology,
strategies) works on numpy arrays in SI units; file formats, the database, the command line and
the web app live at the edges and only call the core.
"""

__version__ = "0.3.0"
