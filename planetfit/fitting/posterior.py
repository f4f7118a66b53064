"""The joint log-probability of a config's model: the one hot path.

``log_prob_many`` scores a batch of sampler vectors: the prior of each,
every planet's orbit solved for the whole batch in one vectorised pass,
unphysical orbits rejected, then the sum of every dataset's likelihood
(:mod:`planetfit.fitting.likelihoods`).
"""

import math

import numpy as np

from planetfit.fitting.components.stability import HillStabilityPrior
from planetfit.fitting.likelihoods import Batch
from planetfit.fitting.model import build_model


def _rows(columns, n):
    """Dicts of Python floats, one per row, from a dict of length-``n`` arrays and scalars."""
    keys = list(columns)
    table = np.empty((n, len(keys)))
    for j, key in enumerate(keys):
        table[:, j] = columns[key]
    return [dict(zip(keys, row)) for row in table.tolist()]


class JointPosterior:
    """Log-probability of the joint model of a config's datasets.

    Parameters
    ----------
    config : Config
    photometry : list of Photometry
    velocities : list of Velocities

    Notes
    -----
    Callable on one parameter vector, and :meth:`log_prob_many` on a batch.
    Returns ``-inf`` outside the prior support or for unphysical orbits (no
    transit for a transiting planet, periastron inside the star, e above
    the planet's cap) and, with ``dynamics: {stability_prior: hill}``, for
    Hill-unstable systems.
    """

    def __init__(self, config, photometry, velocities):
        self.config = config
        self.model = build_model(config, photometry, velocities)
        self.layout = self.model.layout
        self.planets = self.model.planets
        self.photometry, self.velocities = photometry, velocities
        hill = config.dynamics.hill_prior and len(self.planets) > 1
        self.stability = HillStabilityPrior(self.planets, self.model.star) if hill else None

    def __call__(self, theta):
        return float(self.log_prob_many(np.reshape(theta, (1, -1)))[0])

    def solve(self, values):
        """Every planet's orbit for parameter values (scalars or arrays), and whether all are physical."""
        orbits = {p.name: p.solve(values, self.model.star) for p in self.planets}
        physical = True
        for p in self.planets:
            physical = physical & p.physical(values, orbits[p.name])
        if self.stability is not None:
            physical = physical & self.stability.allowed(values, orbits)
        return orbits, physical

    def orbits(self, values):
        """Per planet orbit dict for one set of parameter values, or None if any orbit is unphysical."""
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            orbits, physical = self.solve(values)
        return orbits if bool(physical) else None

    def log_likelihood_many(self, thetas):
        """Log-likelihoods (no prior) of an (n, ndim) array of sampler vectors; -inf outside the prior's support."""
        return self.log_prob_many(thetas, with_prior=False)

    def log_prob_many(self, thetas, with_prior=True):
        """Log-probabilities (log-likelihoods if not ``with_prior``) of (n, ndim) sampler vectors, shape (n,)."""
        thetas = np.asarray(thetas, dtype=float)
        out = np.full(len(thetas), -math.inf)
        lp = np.array([self.layout.log_prior(t) for t in thetas])
        rows = np.flatnonzero(np.isfinite(lp))
        if rows.size == 0:
            return out
        # Unphysical corners (e -> 1, grazing geometry) are rejected, not warned about.
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            values = self.layout.values(thetas[rows])
            orbits, physical = self.solve(values)
            good = np.flatnonzero(np.broadcast_to(physical, rows.shape))
            if good.size == 0:
                return out
            value_rows = _rows(values, rows.size)
            orbit_rows = {name: _rows(orbit, rows.size) for name, orbit in orbits.items()}
            batch = Batch([value_rows[j] for j in good], [{name: o[j] for name, o in orbit_rows.items()} for j in good])
            ll = np.zeros(good.size)
            for likelihood in self.model.likelihoods:
                ll += likelihood.log_likelihood(batch)
        keep = rows[good]
        out[keep] = np.where(np.isfinite(ll), lp[keep] * with_prior + ll, -math.inf)
        return out
