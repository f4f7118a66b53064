"""Keplerian radial velocity of the star, using radvel's Kepler solver and orbit helpers."""

import numpy as np
from radvel import kepler as _kepler
from radvel import orbit as _orbit


def periastron_bjd(transit_bjd, period_days, e, omega_rad):
    """Time of periastron from the time of transit (radvel's helper); scalars or arrays."""
    return _orbit.timetrans_to_timeperi(transit_bjd, period_days, e, omega_rad)


def radial_velocity_ms(times_bjd, period_days, periastron, e, omega_rad, k_ms):
    """Stellar radial velocity (m/s) of one Keplerian orbit at ``times_bjd``.

    Parameters
    ----------
    times_bjd : ndarray
    period_days, periastron, e, omega_rad, k_ms : float
        Period, time of periastron (:func:`periastron_bjd`), eccentricity,
        argument of periastron of the planet's orbit, semi-amplitude.

    Notes
    -----
    radvel's ``rv_drive`` computes K [cos(f + w) + e cos w] with its C
    Kepler solver; transit happens at f = pi/2 - w, as in the transit model.
    """
    return _kepler.rv_drive(np.asarray(times_bjd, dtype=float), np.array([period_days, periastron, e, omega_rad, k_ms]))
