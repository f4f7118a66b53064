"""The joint log-probability of a config's model: the one hot path.

``log_prob_many`` scores a batch of sampler vectors: the prior of each,
every planet's orbit solved for the whole batch in one vectorised pass,
unphysical orbits rejected, then the sum of every dataset's likelihood
(:mod:`planetfit.fitting.likelihoods`).
"""

import dataclasses
import math

import numpy as np

from planetfit.fitting.components.orbits import SolvedOrbit
from planetfit.fitting.likelihoods import Batch
from planetfit.fitting.linear import edge_warnings
from planetfit.fitting.model import build_model
from planetfit.fitting.workers import WorkerProcesses

#: Samples per batch of conditional draws of the linear parameters; each batch has its own seed, so the draws do
#: not depend on the number of processes (a batch holds its residuals and design columns: 100 x N x (1 + k) floats).
LINEAR_BATCH = 100


def _table(columns, n):
    """Lists of Python floats, one per row, from length-``n`` arrays and scalars (the columns)."""
    table = np.empty((n, len(columns)))
    for j, column in enumerate(columns):
        table[:, j] = column
    return table.tolist()


def _rows(columns, n):
    """Dicts of Python floats, one per row, from a dict of length-``n`` arrays and scalars."""
    keys = list(columns)
    return [dict(zip(keys, row)) for row in _table([columns[k] for k in keys], n)]


def _orbit_rows(orbit, n):
    """One :class:`SolvedOrbit` of Python floats per row, from a batch's orbit."""
    # The fields a planet lacks (None: a/R*, cos i, mass without a transit) are the last ones.
    columns = [getattr(orbit, f.name) for f in dataclasses.fields(SolvedOrbit)]
    return [SolvedOrbit(*row) for row in _table([c for c in columns if c is not None], n)]


def _draw_batch(log_prob, thetas, seed, index):
    return log_prob.draw_linear(thetas, np.random.default_rng([seed, 3, index]))


class LogProbability:
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
        self.layout = self.model.sampled_layout  # what the samplers move; model.layout has every parameter
        self.planets = self.model.planets
        self.photometry, self.velocities = photometry, velocities

    def __call__(self, theta):
        return float(self.log_prob_many(np.reshape(theta, (1, -1)))[0])

    def solve(self, values):
        """Every planet's orbit for parameter values (scalars or arrays), and whether all are physical."""
        orbits = {p.name: p.solve(values, self.model.star) for p in self.planets}
        physical = True
        for p in self.planets:
            physical = physical & p.physical(values, orbits[p.name])
        if self.model.stability is not None:
            physical = physical & self.model.stability.allowed(values, orbits)
        return orbits, physical

    def orbits(self, values):
        """{planet name: SolvedOrbit} for one set of parameter values, or None if any orbit is unphysical."""
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            orbits, physical = self.solve(values)
        return orbits if bool(physical) else None

    def log_likelihood_many(self, thetas):
        """Log-likelihoods (no prior) of an (n, ndim) array of sampler vectors; -inf outside the prior's support."""
        return self.log_prob_many(thetas, with_prior=False)

    def _batch(self, thetas):
        """Log priors (n,), the rows inside the support with physical orbits, and their :class:`Batch` (or None)."""
        lp = np.array([self.layout.log_prior(t) for t in thetas])
        rows = np.flatnonzero(np.isfinite(lp))
        if rows.size == 0:
            return lp, rows, None
        # Unphysical corners (e -> 1, grazing geometry) are rejected, not warned about.
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            values = self.layout.values(thetas[rows])
            orbits, physical = self.solve(values)
            good = np.flatnonzero(np.broadcast_to(physical, rows.shape))
            value_rows = _rows(values, rows.size)
            orbit_rows = {name: _orbit_rows(orbit, rows.size) for name, orbit in orbits.items()}
        batch = Batch([value_rows[j] for j in good], [{name: o[j] for name, o in orbit_rows.items()} for j in good])
        return lp, rows[good], batch if good.size else None

    def log_prob_many(self, thetas, with_prior=True):
        """Log-probabilities (log-likelihoods if not ``with_prior``) of (n, ndim) sampler vectors, shape (n,)."""
        thetas = np.asarray(thetas, dtype=float)
        out = np.full(len(thetas), -math.inf)
        lp, keep, batch = self._batch(thetas)
        if batch is None:
            return out
        ll = np.zeros(keep.size)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            for likelihood in self.model.likelihoods:
                ll += likelihood.log_likelihood(batch)
        out[keep] = np.where(np.isfinite(ll), lp[keep] * with_prior + ll, -math.inf)
        return out

    def max_log_likelihood(self, thetas):
        """The largest log-likelihood over sampler vectors ``thetas``, each at its linear parameters' best fit."""
        _, keep, batch = self._batch(np.asarray(thetas, dtype=float))
        if batch is None:
            return -math.inf
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return float(np.max(sum(lik.profile_log_likelihood(batch) for lik in self.model.likelihoods)))

    def draw_linear(self, thetas, rng):
        """The marginalised parameters of each sample drawn from their conditional posterior.

        Returns
        -------
        draws, edge_mass : dict
            {name: (n,) draws}, {name: (n,) conditional probability beyond a uniform prior's range}.
        clipped : dict
            {name: draws clipped to the range after rejection sampling} (see :mod:`planetfit.fitting.linear`).
        """
        _, keep, batch = self._batch(np.asarray(thetas, dtype=float))
        if keep.size != len(thetas):
            raise ValueError("posterior samples outside the prior's support or with unphysical orbits")
        draws, edge, clipped = {}, {}, {}
        for likelihood in self.model.likelihoods:
            if likelihood.marginal is not None:
                beta, mass, bad = likelihood.draw_linear(batch, rng)
                for j, name in enumerate(likelihood.marginal.names):
                    draws[name], edge[name], clipped[name] = beta[:, j], mass[:, j], bad
        return draws, edge, clipped

    def complete(self, samples, seed, cores=1):
        """Sampler samples with the marginalised parameters drawn in: rows of ``model.layout``'s free vector.

        Each sample's linear parameters come from their conditional posterior
        given the sample (seeded by ``seed``: the same samples give the same
        draws, whatever ``cores``).

        Returns
        -------
        samples : ndarray
            (n, ``model.layout.ndim``), in sampler coordinates.
        warnings : list of str
            Linear parameters whose posterior reaches their uniform prior's edge.
        """
        full = self.model.layout
        samples = np.asarray(samples, dtype=float)
        if full.ndim == self.layout.ndim:
            return samples, []
        tasks = [(samples[i : i + LINEAR_BATCH], seed, i // LINEAR_BATCH) for i in range(0, len(samples), LINEAR_BATCH)]
        with WorkerProcesses(self, cores) as workers:
            results = workers.map(_draw_batch, tasks)
        out = np.empty((len(samples), full.ndim))
        names = [n for n in full.free if n not in self.layout.free]
        for j, name in enumerate(full.free):
            if name in names:
                out[:, j] = full.priors[name].to_sampler(np.concatenate([r[0][name] for r in results]))
            else:
                out[:, j] = samples[:, self.layout.free.index(name)]
        edge = np.column_stack([np.concatenate([r[1][n] for r in results]) for n in names])
        clipped = [sum(r[2][n] for r in results) for n in names]
        return out, edge_warnings(names, [full.priors[n] for n in names], edge, clipped)
