"""The star and the planets: their parameters, and each planet's orbit solved for a batch of values.

a/R* follows from Kepler's third law with the sampled masses and period,
and the inclination from the impact parameter, so the transit shape
constrains the stellar density and stellar uncertainties propagate
(:func:`planetfit.core.geometry.solve_orbit`).
"""

import dataclasses

import numpy as np

from planetfit.core.geometry import solve_orbit
from planetfit.core.quantities import STAR, planet_quantity
from planetfit.fitting.components.orbits import ORBITS, SolvedOrbit
from planetfit.fitting.components.registry import component_for
from planetfit.fitting.keplerian import periastron_bjd
from planetfit.fitting.parameters import Parameter
from planetfit.inputs.priors import sampled_squared


class Star:
    """The host's mass and radius; they enter the model only through a transiting planet's a/R*."""

    def __init__(self, block):
        self.mass = Parameter("star", "mass_msun", block.mass_msun, STAR["mass_msun"], "star")
        self.radius = Parameter("star", "radius_rsun", block.radius_rsun, STAR["radius_rsun"], "star")
        self.parameters = [self.mass, self.radius]


class Planet:
    """One planet: ephemeris, semi-amplitude, orbit shape and, if it transits, radius ratio and impact parameter.

    Parameters
    ----------
    block : planet block of the schema
    """

    def __init__(self, block):
        n, self.name, self.transits, self.block = block.name, block.name, block.transits, block

        def declare(key, prior):
            return Parameter(n, key, prior, planet_quantity(key, block.transits), "planet")

        self.period = declare("period_days", block.period_days)
        self.transit_time = declare("transit_bjd", block.transit_bjd)
        self.amplitude = declare("rv_amplitude_ms", block.amplitude_prior)
        self.mass_measured = block.mass_measured
        self.orbit = component_for(block, ORBITS)(block)
        self.radius_ratio = declare("radius_ratio", block.radius_ratio) if self.transits else None
        self.impact = declare("impact", block.impact) if self.transits else None
        incl = None if self.transits else block.inclination_deg
        self.inclination = declare("inclination_deg", incl) if incl is not None else None
        shape = [self.radius_ratio, self.impact] if self.transits else []
        self.parameters = [self.period, self.transit_time, *shape, self.amplitude, *self.orbit.parameters]
        self.timing = None  # individual transit times (IndividualTransitTimes), or None for a linear ephemeris

    def attach_timing(self, timing):
        """Give each observed transit its own mid-time (:mod:`planetfit.fitting.components.timing`)."""
        self.timing = timing
        self.parameters = self.parameters + timing.parameters

    def sample_impact_squared(self):
        """Sample the impact parameter as b^2 where its prior is uniform
        (:class:`~planetfit.inputs.priors.SquaredUniform`).

        The model asks it for planets whose light is fitted: on the hot-giant example (staged sampler, 10,000
        steps) the largest autocorrelation time stayed at 31 and 61 steps in two runs, against 93 and 139 and
        rising when b itself is sampled.
        """
        squared = sampled_squared(self.impact.prior)
        if squared is not self.impact.prior:
            new = dataclasses.replace(self.impact, prior=squared)
            self.parameters = [new if q is self.impact else q for q in self.parameters]
            self.impact = new

    @property
    def prior_only(self):
        """Parameters no likelihood uses: a non-transiting planet's inclination."""
        return [self.inclination] if self.inclination is not None else []

    def solve(self, values, star):
        """The orbit for parameter values (scalars or arrays).

        Returns
        -------
        SolvedOrbit
            With a/R*, cos i and the mass for a transiting planet.
        """
        e, w = self.orbit.shape(values)
        per, t0 = values[self.period.name], values[self.transit_time.name]
        if not self.transits:
            return SolvedOrbit(e, w, periastron_bjd(t0, per, e, w))
        a_r, cos_i, mp = solve_orbit(
            per,
            values[self.amplitude.name],
            values[self.impact.name],
            e,
            w,
            values[star.mass.name],
            values[star.radius.name],
        )
        return SolvedOrbit(e, w, periastron_bjd(t0, per, e, w), a_r, cos_i, mp)

    def physical(self, values, orbit):
        """Whether the orbit is allowed (a boolean array for array values).

        e below the planet's cap and, for a transiting planet, a positive
        radius ratio, a transit (b < 1 + k) and periastron outside the star
        (batman's light curves fail for orbits that cross the star).
        """
        ok = self.orbit.allowed(orbit.eccentricity)
        if not self.transits:
            return ok
        k = values[self.radius_ratio.name]
        with np.errstate(invalid="ignore"):
            return (
                ok
                & (k > 0)
                & (values[self.impact.name] < 1 + k)
                & (np.abs(orbit.cos_i) < 1)
                & (orbit.a_over_rstar * (1 - orbit.eccentricity) > 1 + k)
            )
