"""The burn-in of the staged sampler: differential evolution, then proposals fitted and refitted to it.

The walkers start at the optimiser's modes and move with differential
evolution alone (:func:`planetfit.fitting.sampling.mcmc.walker_moves`) until the
burn-in is :data:`BURN_IN_TAUS` of its own autocorrelation times long
(checked every ``check_every`` steps from ``2 * check_every`` on: a short
chain's estimate is low; at most ``max_steps // 4`` steps).
Its later half, each sample assigned to its mode, gives a first
:class:`planetfit.fitting.sampling.proposal.FittedProposal`.

That first proposal rests on few independent samples (differential
evolution's autocorrelation time is long), and an independence move is
only as good as its proposal's covariance: on a 21-parameter Gaussian
target, a multivariate t fitted to 170 independent draws is accepted
about half as often as one fitted to 1,000 (a simulation; the demo's
autocorrelation time fell from 61-76 steps without the refit to 21-26 with it).
So a stage of :data:`REFIT_CHECKS` times ``check_every`` steps follows,
moving with the staged moves and that proposal, and the proposal is
refitted to its samples after their first quarter (one such stage of 400
steps gave the demo autocorrelation times of 21-26 steps over four seeds;
two of 200 steps, each refitting to its own samples, 23-39). None of the
burn-in is kept: the chain that is kept starts at its last positions with
the last proposal fixed, so it is a Markov chain with one transition kernel.
"""

import logging

import emcee
import numpy as np

from planetfit.fitting.sampling import modes as mode_finding
from planetfit.fitting.sampling.proposal import FittedProposal

log = logging.getLogger("planetfit")

#: Length of the burn-in in autocorrelation times of its own chain (estimated; short chains underestimate it).
BURN_IN_TAUS = 6.0
#: Least length of the differential-evolution burn-in, in ``check_every`` steps (a short chain's estimate is low;
#: one check instead of two left the demo's autocorrelation time at 33-37 steps against 17-25, seeds 2 and 7).
MIN_BURN_IN_CHECKS = 2
#: Length of the stage that refits the proposal, in ``check_every`` steps.
REFIT_CHECKS = 2


def run_burn_in(evaluate, initial, moves_for, modes, settings, random_state):
    """Differential evolution from ``initial`` until burnt in, then refits; return (proposal, last positions, steps).

    Parameters
    ----------
    evaluate : callable
        (n, ndim) sampler vectors -> (n,) log-probabilities.
    initial : ndarray, shape (walkers, ndim)
    moves_for : callable
        Proposal (or None) -> the chain's emcee moves: differential
        evolution alone for None, the staged moves for a proposal.
    modes : list of Mode
        The optimiser's modes; the proposal has one component per mode.
    settings : McmcSettings
        ``check_every`` and ``max_steps``.
    random_state : tuple
        State of a ``numpy.random.RandomState`` for emcee.
    """
    sampler = _sampler(evaluate, initial, moves_for(None), random_state)
    limit = max(settings.max_steps // 4, settings.check_every)
    for _ in sampler.sample(initial, iterations=limit, progress=False):
        steps = sampler.iteration
        if steps % settings.check_every == 0:
            tau = float(np.max(sampler.get_autocorr_time(tol=0)))
            log.info("burn-in step %d: autocorrelation %.1f steps (need < %.0f)", steps, tau, steps / BURN_IN_TAUS)
            if steps >= max(BURN_IN_TAUS * tau, MIN_BURN_IN_CHECKS * settings.check_every):
                break
    proposal = _fitted(sampler.get_chain(discard=steps // 2, flat=True), modes)
    last, refit_steps = sampler.get_last_sample(), REFIT_CHECKS * settings.check_every
    sampler = _sampler(evaluate, last.coords, moves_for(proposal), sampler.random_state)
    sampler.run_mcmc(last, refit_steps, progress=False)
    steps += refit_steps
    log.info(
        "burn-in step %d: proposal refitted (acceptance %.3f with the first)",
        steps,
        float(np.mean(sampler.acceptance_fraction)),
    )
    proposal = _fitted(sampler.get_chain(discard=refit_steps // 4, flat=True), modes)
    return proposal, sampler.get_last_sample(), steps


def _sampler(evaluate, initial, moves, random_state):
    """A vectorised emcee sampler for ``initial``'s walkers, continuing the random ``random_state``."""
    nwalkers, ndim = initial.shape
    sampler = emcee.EnsembleSampler(nwalkers, ndim, evaluate, vectorize=True, moves=moves)
    sampler.random_state = random_state
    return sampler


def _fitted(samples, modes):
    """The proposal fitted to ``samples`` (n, ndim), each assigned to its mode."""
    labels = np.zeros(samples.shape[0], dtype=int)
    if len(modes) > 1:
        labels = mode_finding.assign(samples, modes, mode_finding.separating_parameters(modes))
    return FittedProposal.fit(samples, labels, modes)
