"""Model parameters and the sampled vector's layout.

A :class:`Parameter` is declared once, by the component it belongs to: who
owns it (a planet, a band, a dataset), its key, its prior and the
:class:`~planetfit.core.quantities.Quantity` that names it in tables and
figures. Its name, ``owner.key``, is the one string contract: summary.json's
``fitted_parameters`` and the chain file use it.
"""

import dataclasses

import numpy as np

from planetfit.core.quantities import Quantity
from planetfit.inputs.priors import Prior

#: Table groups of fitted parameters, in table order ("timing": a planet's transit-time coordinates, reported in
#: transit_times.csv rather than the table).
GROUPS = ("star", "planet", "instrument", "timing")


@dataclasses.dataclass(frozen=True)
class Parameter:
    """One model parameter.

    Attributes
    ----------
    owner : str
        The planet, band, dataset or block it belongs to (``star`` for the star).
    key : str
        Its key, with its unit in it (``period_days``).
    prior : Prior
    quantity : Quantity
        How tables and figures name it.
    group : {"star", "planet", "instrument", "timing"}
        Where the parameter table lists it.
    """

    owner: str
    key: str
    prior: Prior
    quantity: Quantity
    group: str = "instrument"

    @property
    def name(self):
        """``owner.key``: the parameter's name in summary.json and the chain file."""
        return f"{self.owner}.{self.key}"

    @property
    def qualifier(self):
        """The owner, where the table must say whose parameter it is (instruments and bands)."""
        return self.owner if self.group == "instrument" else ""


class ParameterLayout:
    """Every model parameter, fixed or free, and the sampled vector of the free ones.

    The sampled vector ``theta`` holds each free parameter in its prior's
    sampler coordinate (``ln x`` for log-uniform priors, else ``x``);
    :meth:`values` converts to physical values. A parameter declared by
    several components (a band's limb darkening, a shared GP) appears once.

    Parameters
    ----------
    parameters : iterable of Parameter
        In the order of the vector.
    """

    def __init__(self, parameters):
        self.parameters = {}
        for p in parameters:
            self.parameters.setdefault(p.name, p)
        self.all_names = list(self.parameters)
        self.priors = {n: p.prior for n, p in self.parameters.items()}
        self.free = [n for n, p in self.priors.items() if not p.fixed]
        self.fixed = {n: p.value for n, p in self.priors.items() if p.fixed}
        self._free_priors = [self.priors[n] for n in self.free]

    @property
    def ndim(self):
        return len(self.free)

    @property
    def sampled_labels(self):
        """Names of the sampler coordinates (``ln(name)`` where log-transformed)."""
        return [p.sampler_label(n) for n, p in zip(self.free, self._free_priors)]

    def values(self, theta):
        """Dict of every parameter's physical value (fixed ones filled in); works on (n, ndim) arrays too."""
        out = dict(self.fixed)
        columns = theta.T if isinstance(theta, np.ndarray) and theta.ndim > 1 else theta
        for name, prior, y in zip(self.free, self._free_priors, columns):
            out[name] = prior.from_sampler(y)
        return out

    def to_sampler(self, physical):
        """Sampler coordinates of a vector (or (n, ndim) array) of physical values."""
        physical = np.asarray(physical, dtype=float)
        return np.stack([p.to_sampler(x) for p, x in zip(self._free_priors, physical.T)], axis=-1)

    def log_prior(self, theta):
        """Log prior density of one sampler vector (with the Jacobians of the sampler coordinates)."""
        total = 0.0
        for prior, y in zip(self._free_priors, theta):
            total += prior.log_density_sampler(y)
        return total

    def sample_prior(self, rng, size):
        """Draws from the prior in sampler coordinates, shape (size, ndim)."""
        return self.to_sampler(np.column_stack([p.sample(rng, size) for p in self._free_priors]))

    def from_unit_cube(self, u):
        """Sampler coordinates of points ``u`` of the unit cube (each prior's inverse CDF), shape like ``u``."""
        u = np.asarray(u, dtype=float)
        return self.to_sampler(np.stack([p.from_unit(x) for p, x in zip(self._free_priors, u.T)], axis=-1))

    def geometry(self):
        """Centre, scale (width of the prior's span) and support of each free parameter, in sampler coordinates.

        Returns
        -------
        centre, scale, lower, upper : ndarray
        """
        centre = np.array([p.to_sampler(p.centre) for p in self._free_priors], dtype=float)
        scale = np.array([p.sampler_width for p in self._free_priors], dtype=float)
        lo = np.array([p.to_sampler(p.bounds[0]) if np.isfinite(p.bounds[0]) else -np.inf for p in self._free_priors])
        hi = np.array([p.to_sampler(p.bounds[1]) if np.isfinite(p.bounds[1]) else np.inf for p in self._free_priors])
        return centre, scale, lo, hi
