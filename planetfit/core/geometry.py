"""Orbit geometry shared by the likelihood and the derived physics.

Works on scalars and numpy arrays alike. Angles in radians, masses in kg,
periods in days; ``omega_rad`` is the argument of periastron of the planet's
orbit, the convention under which transit happens at true anomaly
pi/2 - omega and the star's velocity is K [cos(f + omega) + e cos omega]
(Winn 2010, "Transits and Occultations", eqs. 1-2, 14-16).
"""

import numpy as np

from planetfit.core.units import G_SI, M_SUN_KG, R_SUN_M, SECONDS_PER_DAY

#: Argument of periastron used for circular orbits (transit at periastron; any value works).
CIRCULAR_OMEGA_RAD = np.pi / 2


def eccentricity_omega(sqrt_e_cos_w, sqrt_e_sin_w):
    """Eccentricity and argument of periastron (rad) from sqrt(e)cos(w), sqrt(e)sin(w)."""
    e = sqrt_e_cos_w**2 + sqrt_e_sin_w**2
    return e, np.arctan2(sqrt_e_sin_w, sqrt_e_cos_w)


def semi_major_axis_m(period_days, total_mass_kg):
    """Kepler's third law: a = (G M P^2 / 4 pi^2)^(1/3), in metres."""
    p = period_days * SECONDS_PER_DAY
    return np.cbrt(G_SI * total_mass_kg * p * p / (4 * np.pi**2))


def cos_inclination(impact, a_over_rstar, e, omega_rad):
    """cos(i) from the impact parameter b = (a/R*) cos i (1 - e^2) / (1 + e sin w) (Winn 2010, eq. 7)."""
    return impact / a_over_rstar * (1 + e * np.sin(omega_rad)) / (1 - e * e)


def planet_mass_kg(k_ms, period_days, e, sin_i, star_mass_kg, iterations=6, initial_kg=None):
    """Planet mass from the exact mass function.

    Solves Mp^3 sin^3 i / (M* + Mp)^2 = P K^3 (1 - e^2)^(3/2) / (2 pi G) by
    Newton's method from ``initial_kg`` or else the Mp << M* solution
    (Cumming et al. 1999; Lovis & Fischer 2010, eq. 14). Converges to machine
    precision in a few steps for Mp < M*.
    """
    f = period_days * SECONDS_PER_DAY * k_ms**3 * (1 - e * e) ** 1.5 / (2 * np.pi * G_SI)
    s3 = sin_i**3
    m = np.cbrt(f * star_mass_kg**2 / s3) if initial_kg is None else initial_kg
    with np.errstate(invalid="ignore", divide="ignore"):
        for _ in range(iterations):
            tot = star_mass_kg + m
            g = m**3 * s3 - f * tot * tot
            dg = 3 * m * m * s3 - 2 * f * tot
            m = m - np.where(dg != 0, g / dg, 0.0)  # K = 0: m = 0 is exact and dg = 0
    return m


def solve_orbit(period_days, k_ms, impact, e, omega_rad, star_mass_msun, star_radius_rsun):
    """Consistent a/R*, inclination and planet mass for a transiting planet.

    a depends on Mp through Kepler's third law, and Mp on i through the mass
    function; a fixed-point pass of three iterations converges to better than
    1e-9 relative for Mp/M* < 0.01 (the later passes start Newton's method
    from the mass of the pass before, which two steps then refine).

    Returns
    -------
    a_over_rstar, cos_i, planet_mass_kg
    """
    mstar = star_mass_msun * M_SUN_KG
    rstar = star_radius_rsun * R_SUN_M
    mp = None
    for _ in range(3):
        a_r = semi_major_axis_m(period_days, mstar + (0.0 if mp is None else mp)) / rstar
        cos_i = cos_inclination(impact, a_r, e, omega_rad)
        sin_i = np.sqrt(np.clip(1 - cos_i * cos_i, 0.0, 1.0))
        mp = planet_mass_kg(k_ms, period_days, e, sin_i, mstar, iterations=6 if mp is None else 2, initial_kg=mp)
    return a_r, cos_i, mp


def transit_duration_days(period_days, a_over_rstar, radius_ratio, impact, cos_i, e, omega_rad):
    """Total transit duration T14 (first to fourth contact), days.

    Winn (2010), eq. 14 with the eccentric factor sqrt(1 - e^2) / (1 + e sin w)
    of eq. 16. NaN when the planet does not transit (b > 1 + k).
    """
    sin_i = np.sqrt(1 - cos_i * cos_i)
    arg = np.sqrt(np.clip((1 + radius_ratio) ** 2 - impact**2, 0, None)) / (a_over_rstar * sin_i)
    t14 = period_days / np.pi * np.arcsin(np.clip(arg, 0, 1))
    t14 = t14 * np.sqrt(1 - e * e) / (1 + e * np.sin(omega_rad))
    return np.where(impact < 1 + radius_ratio, t14, np.nan)


def rv_amplitude_ms(planet_mass_kg, period_days, e, sin_i, star_mass_kg):
    """Semi-amplitude K (m/s) of the star's reflex motion: the mass function solved for K.

    K = (2 pi G / P)^(1/3) Mp sin i / (M* + Mp)^(2/3) / sqrt(1 - e^2)
    (Lovis & Fischer 2010, eq. 14); the inverse of :func:`planet_mass_kg`.
    """
    p = period_days * SECONDS_PER_DAY
    return (
        np.cbrt(2 * np.pi * G_SI / p)
        * planet_mass_kg
        * sin_i
        / np.cbrt(star_mass_kg + planet_mass_kg) ** 2
        / (np.sqrt(1 - e * e))
    )
