"""Bulk effective sample size of an ensemble chain, per parameter, in numpy (arviz not needed).

The draws of each parameter, pooled over walkers and steps, are replaced by
the normal scores of their ranks (Vehtari, Gelman, Simpson, Carpenter &
Buerkner 2021, Bayesian Analysis 16, 667, eq. 14: ``(r - 3/8) / (S + 1/4)``),
so heavy tails and bounded parameters do not distort the estimate ("bulk").
The integrated autocorrelation time of these scores is emcee's estimator for
an ensemble: the autocorrelation function averaged over walkers, summed over
Sokal's (1997) automatic window (Goodman & Weare 2010; Foreman-Mackey et al.
2013). The effective sample size is then steps x walkers / tau. Walkers of
one ensemble are not independent chains, so they are not read as such (as
split R-hat would).
"""

import emcee
import numpy as np
from scipy.special import ndtri


def rank_normalised(x):
    """Normal scores of the pooled ranks of ``x`` (any shape), same shape (Vehtari et al. 2021, eq. 14)."""
    flat = np.asarray(x, dtype=float).ravel()
    ranks = np.empty(flat.size)
    ranks[np.argsort(flat, kind="stable")] = np.arange(1, flat.size + 1)
    return ndtri((ranks - 0.375) / (flat.size + 0.25)).reshape(np.shape(x))


def bulk_ess(chain):
    """Bulk effective sample size of each parameter of an ensemble chain.

    Parameters
    ----------
    chain : ndarray, shape (steps, walkers, ndim)
        Burn-in discarded, not thinned.

    Returns
    -------
    ndarray, shape (ndim,)
        ``steps * walkers / tau`` with ``tau`` the integrated autocorrelation
        time (in steps) of the rank-normalised draws, at least 1 (so never
        more than the number of draws).
    """
    steps, walkers, ndim = chain.shape
    scores = np.stack([rank_normalised(chain[:, :, j]) for j in range(ndim)], axis=-1)
    tau = emcee.autocorr.integrated_time(scores, tol=0, quiet=True)
    return steps * walkers / np.maximum(tau, 1.0)
