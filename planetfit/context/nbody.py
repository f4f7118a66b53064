"""Short N-body integrations of posterior samples with rebound, judged by the MEGNO chaos indicator.

rebound (Rein & Liu 2012, A&A 537, A128) integrates each sampled system
with its symplectic WHFast integrator (Rein & Tamayo 2015, MNRAS 452, 376)
and the variational equations behind MEGNO (Cincotta & Simo 2000, A&AS
147, 205): the time-averaged MEGNO tends to 2 for quasi-periodic (regular)
orbits and grows linearly with time for chaotic ones. rebound is the
optional ``dynamics`` extra.
"""

import math

import numpy as np

from planetfit.core.errors import InputError
from planetfit.core.stats import stat
from planetfit.core.units import AU_M, G_SI, M_EARTH_KG, M_SUN_KG, SECONDS_PER_DAY
from planetfit.fitting.keplerian import periastron_bjd

#: A sample whose MEGNO stays below this is counted regular (common practice: 2 is the regular limit).
MEGNO_STABLE_BELOW = 2.5
#: Steps per orbit of the innermost planet (WHFast's error is small well below the shortest period).
STEPS_PER_INNER_ORBIT = 30
#: Gravitational constant in au^3 / (M_sun day^2).
G_AU_MSUN_DAY = G_SI * M_SUN_KG * SECONDS_PER_DAY**2 / AU_M**3


def _rebound():
    try:
        import rebound
    except ImportError:
        raise InputError(
            "'stability: nbody' integrates the orbits with rebound, which is not installed.",
            key="dynamics.stability",
            fix="install the optional extra: pip install 'planetfit[dynamics]' (or use 'stability: hill').",
        ) from None
    return rebound


def mutual_hill_radius(star_mass, inner_mass, outer_mass, a_inner, a_outer):
    """Mutual Hill radius of two planets, ((m1 + m2) / (3 M*))^(1/3) (a1 + a2) / 2.

    Chambers, Wetherill & Boss 1996, Icarus 119, 261, eq. 2: the mean of the
    two semi-major axes (masses in one unit, axes in one unit).
    """
    return ((inner_mass + outer_mass) / (3.0 * star_mass)) ** (1.0 / 3.0) * 0.5 * (a_inner + a_outer)


def megno(star_msun, planets, orbits):
    """Time-averaged MEGNO of one coplanar system after ``orbits`` orbits of its outermost planet.

    Parameters
    ----------
    star_msun : float
    planets : list of dict
        Innermost first: ``mass_msun``, ``period_days``, ``e``, ``omega_rad``
        and ``mean_anomaly_rad`` at a common epoch.
    orbits : float

    Returns
    -------
    float
        inf if two planets come within half their mutual Hill radius or one escapes.
    """
    rebound = _rebound()
    sim = rebound.Simulation()
    sim.G = G_AU_MSUN_DAY
    sim.add(m=star_msun)
    for p in planets:
        sim.add(m=p["mass_msun"], P=p["period_days"], e=p["e"], omega=p["omega_rad"], M=p["mean_anomaly_rad"])
    sim.move_to_com()
    a = [sim.particles[i + 1].a for i in range(len(planets))]
    hill = min(
        mutual_hill_radius(star_msun, planets[i]["mass_msun"], planets[i + 1]["mass_msun"], a[i], a[i + 1])
        for i in range(len(planets) - 1)
    )
    sim.integrator = "whfast"
    sim.dt = planets[0]["period_days"] / STEPS_PER_INNER_ORBIT
    sim.exit_min_distance = 0.5 * hill
    sim.exit_max_distance = 10 * max(a)
    sim.init_megno()
    try:
        sim.integrate(orbits * planets[-1]["period_days"], exact_finish_time=0)
    except (rebound.Encounter, rebound.Escape):
        return math.inf
    return float(sim.megno())


def _system(planets, derived, j, epoch_bjd):
    """The ``megno`` planet list of posterior sample ``j``."""
    out = []
    for p in planets:
        q = derived["planets"][p.name]
        per, e, w = q["period_days"][j], q["eccentricity"][j], math.radians(q["omega_deg"][j])
        tp = periastron_bjd(q["transit_bjd"][j], per, e, w)
        out.append(
            {
                "mass_msun": q["mass_earth"][j] * M_EARTH_KG / M_SUN_KG,
                "period_days": per,
                "e": e,
                "omega_rad": w,
                "mean_anomaly_rad": 2 * math.pi * ((epoch_bjd - tp) / per % 1.0),
            }
        )
    return out


def megno_block(planets, derived, settings, rng):
    """MEGNO of ``settings.nbody_samples`` random posterior samples (planets innermost first)."""
    n = derived["star"]["mass_msun"].size
    picks = rng.choice(n, size=min(settings.nbody_samples, n), replace=False)
    epoch = float(np.median(derived["planets"][planets[0].name]["transit_bjd"]))
    values = np.array(
        [
            megno(derived["star"]["mass_msun"][j], _system(planets, derived, j, epoch), settings.nbody_orbits)
            for j in picks
        ]
    )
    return {
        "p_megno_stable": float(np.mean(values < MEGNO_STABLE_BELOW)),
        "megno": stat(np.where(np.isfinite(values), values, np.nan)),
        "megno_stable_below": MEGNO_STABLE_BELOW,
        "nbody_samples": int(picks.size),
        "nbody_orbits": float(settings.nbody_orbits),
        "nbody_ended_early": int(np.sum(~np.isfinite(values))),
    }
