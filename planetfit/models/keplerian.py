"""Keplerian radial velocity of the star, using radvel's Kepler solver."""

import numpy as np
from radvel import kepler as _kepler
from radvel import orbit as _orbit


def radial_velocity_ms(times_bjd, period_days, transit_bjd, e, omega_rad, k_ms):
    """Stellar radial velocity (m/s) of one Keplerian orbit at ``times_bjd``.

    Parameters
    ----------
    times_bjd : ndarray
    period_days, transit_bjd, e, omega_rad, k_ms : float
        Period, time of inferior conjunction (transit), eccentricity,
        argument of periastron of the planet's orbit, semi-amplitude.

    Notes
    -----
    radvel's ``rv_drive`` computes K [cos(f + w) + e cos w] with its C
    Kepler solver; transit happens at f = pi/2 - w, as in the transit model.
    """
    tp = _orbit.timetrans_to_timeperi(transit_bjd, period_days, e, omega_rad)
    return _kepler.rv_drive(np.asarray(times_bjd, dtype=float), np.array([period_days, tp, e, omega_rad, k_ms]))
