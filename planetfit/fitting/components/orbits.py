"""Orbit shapes: circular, or eccentric with priors on sqrt(e) cos w, sqrt(e) sin w.

Each variant gives the eccentricity and argument of periastron of a batch of
parameter values (:meth:`shape`) and says which are allowed (:meth:`allowed`).
Uniform priors on sqrt(e) cos w and sqrt(e) sin w give uniform priors on e
and w (Eastman, Gaudi & Agol 2013, PASP 125, 83, section 3.3.1). Where the
planet's light is fitted, the eclipse time fixes e cos w far better than
e sin w and the pair (sqrt(e) cos w, sqrt(e) sin w) becomes a thin curved
ridge; the sampler then moves in (e cos w, e sin w) instead
(:class:`EccentricityVector`), with the Jacobian that keeps the config's prior.
"""

import numpy as np

from planetfit.core.geometry import CIRCULAR_OMEGA_RAD, eccentricity_omega
from planetfit.core.quantities import PLANET
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema
from planetfit.inputs.priors import Prior

#: Eccentricity below which the Jacobian 1 / (2 e) is held at 1 / (2 E_FLOOR): keeps the density finite at e = 0
#: (a prior mass change of order E_FLOOR, 1e-6 of a uniform-e prior).
E_FLOOR = 1e-6


class EccentricityVector:
    """Sampler coordinates (e cos w, e sin w) for the parameters (sqrt(e) cos w, sqrt(e) sin w).

    With x = sqrt(e) cos w, y = sqrt(e) sin w and h = e cos w, k = e sin w:
    in polar form x + iy = sqrt(e) exp(iw), h + ik = e exp(iw), so
    dx dy = sqrt(e) d(sqrt e) dw = de dw / 2 and dh dk = e de dw, and a density
    p(x, y) becomes p(x(h, k), y(h, k)) / (2 e) in (h, k). Any prior on x and y
    is kept (tests/fitting/test_orbits.py samples it through these coordinates).

    Parameters
    ----------
    names : (str, str)
        The parameters ``<planet>.sqrt_e_cos_w`` and ``<planet>.sqrt_e_sin_w``.
    """

    def __init__(self, names):
        self.names = tuple(names)
        owner = self.names[0].rpartition(".")[0]
        self.labels = (f"{owner}.e_cos_w", f"{owner}.e_sin_w")

    @staticmethod
    def to_sampler(x, y):
        """(h, k) = (e cos w, e sin w) of (sqrt(e) cos w, sqrt(e) sin w)."""
        root_e = np.hypot(x, y)
        return x * root_e, y * root_e

    @staticmethod
    def from_sampler(h, k):
        """(sqrt(e) cos w, sqrt(e) sin w) of (h, k) = (e cos w, e sin w)."""
        root_e = np.sqrt(np.hypot(h, k))
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(root_e > 0, h / root_e, 0.0), np.where(root_e > 0, k / root_e, 0.0)

    @staticmethod
    def log_jacobian(h, k):
        """ln |d(x, y) / d(h, k)| = -ln(2 e), with e held at :data:`E_FLOOR` or above."""
        return -np.log(2 * np.maximum(np.hypot(h, k), E_FLOOR))

    @staticmethod
    def ranges(x_range, y_range):
        """Ranges of h and k over the box ``x_range`` x ``y_range`` (infinite ends allowed).

        h = x sqrt(x^2 + y^2) grows with x, and |h| with |y|; k likewise, with the roles swapped.
        """

        def end(x, y2):
            return 0.0 if x == 0 else x * np.sqrt(x * x + y2)

        def one(u, v):
            far = max(v[0] ** 2, v[1] ** 2)
            near = 0.0 if v[0] <= 0 <= v[1] else min(v[0] ** 2, v[1] ** 2)
            return end(u[0], far if u[0] < 0 else near), end(u[1], far if u[1] > 0 else near)

        return one(x_range, y_range), one(y_range, x_range)


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

    def eclipse_coordinates(self):
        """No sampler coordinates of its own (nothing sampled)."""
        return None


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

    def eclipse_coordinates(self):
        """:class:`EccentricityVector` for a fitted eclipse, if both parameters are free in their own coordinate."""
        priors = [self.sqrt_e_cos_w.prior, self.sqrt_e_sin_w.prior]
        if any(p.fixed or type(p).to_sampler is not Prior.to_sampler for p in priors):
            return None
        return EccentricityVector((self.sqrt_e_cos_w.name, self.sqrt_e_sin_w.name))


ORBITS = {schema.CircularKeys: CircularOrbit, schema.EccentricKeys: EccentricOrbit}
