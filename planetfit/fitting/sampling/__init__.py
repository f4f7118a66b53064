"""The samplers: from a log-probability to posterior samples, behind one interface.

:mod:`~planetfit.fitting.sampling.sampler` holds the :class:`Sampler` protocol
(start or resume, sample, return :class:`Draws`: samples, weights and facts)
and one class per ``sampling.method``: :class:`EmceeSampler` (ensemble MCMC,
:mod:`.mcmc`, with the staged ``moves`` of :mod:`.burnin` and
:mod:`.proposal`, and :mod:`.ess`) and :class:`DynestySampler` (nested
sampling, :mod:`.nested`, its signed :mod:`.checkpoint`). :func:`sampler_for`
decodes the config's sampling block, once. Beside them: the optimiser's start
(:mod:`.optimiser`, :mod:`.periodogram` seeds, :mod:`.laplace`), separated
modes (:mod:`.modes`, :mod:`.density_modes`) and samples.h5
(:mod:`.chainfile`, the one module that reads or writes it).

The model side (parameters, components, likelihoods, linear parameters,
the joint log-probability, predictions) stays in :mod:`planetfit.fitting`: it is
what is sampled, and samplers see only ``LogProbability``'s
``log_prob_many`` / ``log_likelihood_many`` and its ``layout``.
:mod:`planetfit.fitting.workers` stays there too: ``LogProbability``'s
``complete`` also shares its batches among processes.
"""

from planetfit.fitting.sampling.sampler import Draws, DynestySampler, EmceeSampler, Sampler, sampler_for

__all__ = ["Draws", "DynestySampler", "EmceeSampler", "Sampler", "sampler_for"]
