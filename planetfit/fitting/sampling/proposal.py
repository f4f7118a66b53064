"""An independence Metropolis-Hastings move whose proposal is fitted to the samples of a burn-in.

The proposal is a mixture of multivariate Student-t distributions, one per
mode of the posterior (:mod:`planetfit.fitting.sampling.modes`), each with the mean
and covariance of that mode's burn-in samples. A walker at x proposes
x' ~ g independently of x and accepts with probability
min(1, p(x') g(x) / (p(x) g(x'))) (Hastings 1970, Biometrika 57, 97;
Tierney 1994, Ann. Stat. 22, 1701, sect. 2.3.3). The move keeps the target
only while g is fixed: g is fitted once, before the samples that are kept.
Heavy tails (few degrees of freedom) keep g above the target in its tails,
where an independence sampler would otherwise stick (Tierney 1994, sect. 4).
"""

import dataclasses

import emcee
import numpy as np
from scipy import stats
from scipy.special import logsumexp

#: Degrees of freedom of every component: heavier tails than a Gaussian's, a finite covariance.
PROPOSAL_DF = 5.0
#: Least weight of a mode in the mixture, so that the move proposes every mode found, however few
#: burn-in samples it held.
MIN_MODE_WEIGHT = 0.05


@dataclasses.dataclass
class FittedProposal:
    """A fixed mixture of multivariate t distributions (sampler coordinates).

    ``weights`` (k,), ``locations`` (k, ndim), ``shapes`` (k, ndim, ndim)
    and ``df``; a component's covariance is ``shape * df / (df - 2)``.
    """

    weights: np.ndarray
    locations: np.ndarray
    shapes: np.ndarray
    df: float = PROPOSAL_DF

    def __post_init__(self):
        self.weights = np.asarray(self.weights, dtype=float) / np.sum(self.weights)
        # Each component in standardised coordinates (its correlation matrix): sampler coordinates span
        # ten decades in scale (periods to 1e-5 d, offsets to 1 m/s), beyond scipy's positive-definiteness test.
        self._sds = np.sqrt(np.array([np.diag(shape) for shape in self.shapes]))
        self._components = [
            stats.multivariate_t(np.zeros(sd.size), shape / np.outer(sd, sd), df=self.df)
            for shape, sd in zip(self.shapes, self._sds)
        ]

    @classmethod
    def fit(cls, samples, labels, modes):
        """One component per mode, fitted to the burn-in ``samples`` (n, ndim) assigned to it.

        Parameters
        ----------
        samples : ndarray, shape (n, ndim)
        labels : ndarray of int, shape (n,)
            Index in ``modes`` of each sample's mode.
        modes : list of Mode
            A mode with fewer samples than twice the dimension keeps its
            optimum and Laplace covariance.
        """
        ndim = samples.shape[1]
        weights, locations, shapes = [], [], []
        for j, mode in enumerate(modes):
            inside = samples[labels == j]
            weights.append(max(inside.shape[0] / samples.shape[0], MIN_MODE_WEIGHT))
            if inside.shape[0] >= 2 * ndim:
                locations.append(inside.mean(axis=0))
                shapes.append(np.cov(inside, rowvar=False).reshape(ndim, ndim))
            else:
                locations.append(mode.theta)
                shapes.append(mode.cov)
        return cls(np.array(weights), np.array(locations), np.array(shapes))

    def log_density(self, x):
        """Log density of the mixture at each row of ``x`` (n, ndim)."""
        x = np.atleast_2d(x)
        terms = [
            np.log(w) + np.atleast_1d(c.logpdf((x - loc) / sd)) - np.sum(np.log(sd))
            for w, c, loc, sd in zip(self.weights, self._components, self.locations, self._sds)
        ]
        return logsumexp(terms, axis=0)

    def draw(self, random, n):
        """``n`` draws, shape (n, ndim), from a ``numpy.random.RandomState``."""
        which = random.choice(self.weights.size, size=n, p=self.weights)
        out = np.empty((n, self.locations.shape[1]))
        for j, c in enumerate(self._components):
            chosen = which == j
            if chosen.any():
                z = np.atleast_2d(c.rvs(size=int(chosen.sum()), random_state=random))
                out[chosen] = self.locations[j] + z * self._sds[j]
        return out

    def arrays(self):
        """The arrays that define the proposal, by name (for the chain file)."""
        return {"weights": self.weights, "locations": self.locations, "shapes": self.shapes, "df": np.array(self.df)}


class IndependenceMove(emcee.moves.MHMove):
    """Every walker proposes a draw of a fixed :class:`FittedProposal`, accepted by the Metropolis-Hastings rule."""

    def __init__(self, proposal):
        self.proposal = proposal
        super().__init__(self._propose)

    def _propose(self, coords, random):
        """Proposed positions and ln g(x) - ln g(x'), emcee's ``MHMove`` proposal-ratio convention."""
        new = self.proposal.draw(random, coords.shape[0])
        return new, self.proposal.log_density(coords) - self.proposal.log_density(new)
