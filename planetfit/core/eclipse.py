"""When the planet passes behind its star: the time of secondary eclipse from the transit ephemeris.

The transit is at true anomaly f = pi/2 - w (inferior conjunction), the
eclipse at f = 3 pi/2 - w (superior conjunction), the convention of the
transit model (batman) and the RVs (radvel). The time between them follows
exactly from Kepler's equation; to first order in e it is
P/2 [1 + (4/pi) e cos w] for an edge-on orbit (Winn 2010, "Transits and
Occultations", eq. 33).

The eclipse is also seen later than the geometry says, by the light travel
time across the orbit. Timed from the system's barycentre, a transit's
signal leaves the planet at distance r_tr sin i in front of the star and an
eclipse's at r_ec sin i behind it, so the observed interval exceeds the
geometric one by (r_tr + r_ec) sin i / c, with r = a (1 - e^2) / (1 + e cos f):

    delay = 2 a (1 - e^2) sin i / [c (1 - e^2 sin^2 w)],

which is 2a/c for an edge-on circular orbit (Loeb 2005, ApJ 623, L45;
Kaplan 2010, ApJ 717, L108). ``a`` is the planet's orbit about the star;
the star's own reflex (a fraction M_p / M_* of it) is neglected.
"""

import numpy as np

from planetfit.core.units import C_SI, SECONDS_PER_DAY


def mean_anomaly(true_anomaly, e):
    """Mean anomaly (rad, in [0, 2 pi)) of a true anomaly on an orbit of eccentricity ``e``."""
    half = 0.5 * np.asarray(true_anomaly)
    ecc_anomaly = 2 * np.arctan2(np.sqrt(1 - e) * np.sin(half), np.sqrt(1 + e) * np.cos(half))
    return np.mod(ecc_anomaly - e * np.sin(ecc_anomaly), 2 * np.pi)


def conjunction_interval_days(period_days, e, omega_rad):
    """Time from inferior conjunction (transit) to the next superior conjunction (eclipse), without light time."""
    m_transit = mean_anomaly(np.pi / 2 - omega_rad, e)
    m_eclipse = mean_anomaly(1.5 * np.pi - omega_rad, e)
    return period_days * np.mod(m_eclipse - m_transit, 2 * np.pi) / (2 * np.pi)


def light_travel_delay_days(a_m, e, omega_rad, sin_i):
    """Extra delay of the eclipse over the transit from light crossing the orbit, days (module notes)."""
    return 2 * a_m * (1 - e * e) * sin_i / (C_SI * (1 - (e * np.sin(omega_rad)) ** 2)) / SECONDS_PER_DAY


def eclipse_bjd(transit_bjd, period_days, e, omega_rad, a_m, sin_i):
    """Observed mid-eclipse (superior conjunction plus light time) after the transit at ``transit_bjd``."""
    return (
        transit_bjd
        + conjunction_interval_days(period_days, e, omega_rad)
        + light_travel_delay_days(a_m, e, omega_rad, sin_i)
    )
