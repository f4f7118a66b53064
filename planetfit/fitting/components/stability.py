"""A prior that the system be Hill stable: samples with a Hill-unstable adjacent pair are rejected.

With ``dynamics: {stability_prior: hill}`` every adjacent pair of planets
(ordered by the centres of their period priors) must pass Gladman's (1993)
criterion (:func:`planetfit.core.stability.hill_margin`) for a sample to
have a finite probability: the posterior is then conditioned on a
Hill-stable system, which is an assumption, not a result (the ``dynamics``
block's probabilities are then 1 by construction). Orbits are coplanar;
planets seen only in RVs enter with their minimum masses (sin i = 1).
"""

import numpy as np

from planetfit.core.geometry import planet_mass_kg, semi_major_axis_m
from planetfit.core.stability import hill_margin
from planetfit.core.units import M_SUN_KG, R_SUN_M
from planetfit.fitting.components.base import STABILITY_PRIORS
from planetfit.inputs import schema


@STABILITY_PRIORS.register(schema.Dynamics)
class HillStabilityPrior:
    """Rejects parameter values whose planets include a Hill-unstable adjacent pair.

    Parameters
    ----------
    planets : list of Planet
    star : Star
    """

    def __init__(self, planets, star):
        self.planets = sorted(planets, key=lambda p: p.period.prior.centre)
        self.star = star
        self.parameters = []  # none of its own: it constrains the star's and the planets'

    def _mass_and_axis(self, planet, values, orbit):
        """(mass, semi-major axis) in kg and m for parameter value arrays."""
        if planet.transits:
            return orbit.mass_kg, orbit.a_over_rstar * values[self.star.radius.name] * R_SUN_M
        mstar = values[self.star.mass.name] * M_SUN_KG
        per = values[planet.period.name]
        mass = planet_mass_kg(values[planet.amplitude.name], per, orbit.eccentricity, 1.0, mstar)
        return mass, semi_major_axis_m(per, mstar + mass)

    def allowed(self, values, orbits):
        """Whether every adjacent pair is Hill stable (a boolean array for array values)."""
        mstar = values[self.star.mass.name] * M_SUN_KG
        ok = True
        bodies = [(*self._mass_and_axis(p, values, orbits[p.name]), orbits[p.name].eccentricity) for p in self.planets]
        for (m1, a1, e1), (m2, a2, e2) in zip(bodies, bodies[1:]):
            with np.errstate(divide="ignore", invalid="ignore"):
                margin = hill_margin(mstar, m1, m2, a1, a2, e1, e2)
            ok = ok & ((margin > 1) | (m1 + m2 == 0))
        return ok
