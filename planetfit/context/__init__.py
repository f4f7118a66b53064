"""From samples to physics: derived quantities (mass, radius, density, orbit), interior composition,
climate and habitable zone, atmospheric observability, the planet's own light, transit times and dynamics,
posterior diagnostics. Imports the earlier stages only; writes no files."""
