"""Forward models: orbit geometry, transit light curves, Keplerian velocities."""
