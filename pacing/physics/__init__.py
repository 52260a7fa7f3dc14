"""Physics of moving through air: air density, wind at rider height, the cycling power
balance (Martin et al.) and the running cost (Minetti et al.) with air resistance; competing
published models are listed by name in registries (pacing.physics.registry)."""
