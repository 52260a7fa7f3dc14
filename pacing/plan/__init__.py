"""Plans for a race: the steady segment model the solvers see, the inertial simulation,
the strategies for cycling and running, and segment target tables."""
