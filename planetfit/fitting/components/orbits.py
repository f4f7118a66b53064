"""Orbit shapes (circular, or eccentric sampled as sqrt(e) cos w, sqrt(e) sin w) and the solved orbit.

Each variant gives the eccentricity and argument of periastron of a batch of
parameter values (:meth:`shape`) and says which are allowed (:meth:`allowed`).
Sampling sqrt(e) cos w and sqrt(e) sin w with uniform priors gives uniform
priors on e and w (Eastman, Gaudi & Agol 2013, PASP 125, 83, section 3.3.1).
A planet's orbit solved for parameter values is a :class:`SolvedOrbit`.
"""

import dataclasses

import numpy as np

from planetfit.core.geometry import CIRCULAR_OMEGA_RAD, eccentricity_omega
from planetfit.core.quantities import PLANET
from planetfit.fitting.components.base import ORBITS
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema


@dataclasses.dataclass(frozen=True, slots=True)
class SolvedOrbit:
    """One planet's orbit for a batch of parameter values (arrays) or one walker's (floats).

    The last three are known for a transiting planet only (None otherwise):
    its a/R* comes from Kepler's third law with the sampled masses, its
    inclination from the impact parameter (:func:`planetfit.core.geometry.solve_orbit`).
    """

    eccentricity: np.ndarray
    omega_rad: np.ndarray  # argument of periastron of the planet's orbit
    periastron_bjd: np.ndarray
    a_over_rstar: np.ndarray | None = None
    cos_i: np.ndarray | None = None
    mass_kg: np.ndarray | None = None


@ORBITS.register(schema.CircularKeys)
class CircularOrbit:
    """e = 0 (w is then arbitrary: pi/2, so transit happens at periastron)."""

    eccentric = False

    def __init__(self, block):
        self.parameters = []

    def shape(self, values):
        """(e, omega_rad) of parameter values (scalars or arrays)."""
        return 0.0, CIRCULAR_OMEGA_RAD

    def allowed(self, e):
        """Whether eccentricities ``e`` are allowed (always, here)."""
        return np.ones(np.shape(e), dtype=bool)


@ORBITS.register(schema.EccentricKeys)
class EccentricOrbit:
    """e and w from sqrt(e) cos w and sqrt(e) sin w, with e below the planet's ``eccentricity_max``."""

    eccentric = True

    def __init__(self, block):
        self.sqrt_e_cos_w = Parameter(block.name, "sqrt_e_cos_w", block.sqrt_e_cos_w, PLANET["sqrt_e_cos_w"], "planet")
        self.sqrt_e_sin_w = Parameter(block.name, "sqrt_e_sin_w", block.sqrt_e_sin_w, PLANET["sqrt_e_sin_w"], "planet")
        self.parameters = [self.sqrt_e_cos_w, self.sqrt_e_sin_w]
        self.eccentricity_max = block.eccentricity_max

    def shape(self, values):
        return eccentricity_omega(values[self.sqrt_e_cos_w.name], values[self.sqrt_e_sin_w.name])

    def allowed(self, e):
        return np.asarray(e) < self.eccentricity_max
