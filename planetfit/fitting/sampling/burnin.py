"""The burn-in of the staged sampler: differential evolution, then a proposal fitted to its later half.

The walkers start at the optimiser's modes and move with differential
evolution alone (:func:`planetfit.fitting.sampling.mcmc.walker_moves`) until the
burn-in is :data:`BURN_IN_TAUS` of its own autocorrelation times long
(checked every ``check_every`` steps from ``2 * check_every`` on: a short
chain's estimate is low; at most ``max_steps // 4`` steps).
Its later half, each sample assigned to its mode, gives the
:class:`planetfit.fitting.sampling.proposal.FittedProposal`. The burn-in is not kept:
the chain that is kept starts at its last positions with the proposal
fixed, so it is a Markov chain with one transition kernel.
"""

import logging

import emcee
import numpy as np

from planetfit.fitting.sampling import modes as mode_finding
from planetfit.fitting.sampling.proposal import FittedProposal

log = logging.getLogger("planetfit")

#: Length of the burn-in in autocorrelation times of its own chain (estimated; short chains underestimate it).
BURN_IN_TAUS = 6.0


def run_burn_in(evaluate, initial, moves, modes, settings, random_state):
    """Differential evolution from ``initial`` until burnt in; return (proposal, last positions, steps).

    Parameters
    ----------
    evaluate : callable
        (n, ndim) sampler vectors -> (n,) log-probabilities.
    initial : ndarray, shape (walkers, ndim)
    moves : list
        The differential-evolution moves of the chain.
    modes : list of Mode
        The optimiser's modes; the proposal has one component per mode.
    settings : McmcSettings
        ``check_every`` and ``max_steps``.
    random_state : tuple
        State of a ``numpy.random.RandomState`` for emcee.
    """
    nwalkers, ndim = initial.shape
    sampler = emcee.EnsembleSampler(nwalkers, ndim, evaluate, vectorize=True, moves=moves)
    sampler.random_state = random_state
    limit = max(settings.max_steps // 4, settings.check_every)
    for _ in sampler.sample(initial, iterations=limit, progress=False):
        steps = sampler.iteration
        if steps % settings.check_every == 0:
            tau = float(np.max(sampler.get_autocorr_time(tol=0)))
            log.info("burn-in step %d: autocorrelation %.1f steps (need < %.0f)", steps, tau, steps / BURN_IN_TAUS)
            if steps >= max(BURN_IN_TAUS * tau, 2 * settings.check_every):
                break
    samples = sampler.get_chain(discard=steps // 2, flat=True)
    labels = np.zeros(samples.shape[0], dtype=int)
    if len(modes) > 1:
        labels = mode_finding.assign(samples, modes, mode_finding.separating_parameters(modes))
    proposal = FittedProposal.fit(samples, labels, modes)
    return proposal, sampler.get_last_sample(), steps
