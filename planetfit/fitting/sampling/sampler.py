"""The one interface of every sampler, one class per ``sampling.method``, and the one place that picks it.

A :class:`Sampler` starts or resumes sampling a
:class:`~planetfit.fitting.log_probability.LogProbability` into a run's files
and returns :class:`Draws`: the equal-weight posterior samples, the
sampler's own points with their weights, and the facts of the run (the
``sampling`` block of summary.json, also kept in samples.h5). Its
``kind`` (:class:`~planetfit.inputs.schema.SamplingMethod`) says what else
it can give: an ensemble's walkers (chain diagnostics, posterior.nc, a
convergence figure, an export) or weighted points and the evidence.
"""

import dataclasses
from typing import Protocol

import numpy as np

from planetfit.fitting.sampling import chainfile
from planetfit.fitting.sampling.mcmc import run_sampler
from planetfit.fitting.sampling.nested import run_nested
from planetfit.inputs.schema import McmcSettings, NestedSettings, SamplingMethod


@dataclasses.dataclass
class Draws:
    """Posterior samples of one run, the sampler's points with their weights, and the facts of the run."""

    samples: np.ndarray  # (n, ndim) equal-weight samples, sampler coordinates
    points: np.ndarray  # (m, ndim) the sampler's points: a chain's kept samples, or nested sampling's dead and live
    log_weights: np.ndarray  # (m,) the points' weights, normalised to sum 1 (equal for a chain)
    facts: dict  # the ``sampling`` block of summary.json


class Sampler(Protocol):
    """What the pipeline asks of a sampler."""

    #: The method; its ``has_walkers`` and ``weighted`` say which diagnostics the sampler's output allows.
    kind: SamplingMethod

    def check_resumable(self, files, ndim):
        """Raise :class:`~planetfit.core.errors.InputError` if ``files`` hold nothing this config can continue.

        ``files``: the run's files (``samples`` and ``checkpoint`` paths, as
        :class:`planetfit.rundir.RunDirectory` names them); ``ndim``: the free parameters sampled.
        """

    def sample(self, log_prob, files, rng, cores=1, progress=True, resume=False):
        """Start (or with ``resume`` continue) sampling ``log_prob`` into ``files``; return :class:`Draws`."""


def _equal_weights(samples):
    return np.full(len(samples), -np.log(max(len(samples), 1)))


@dataclasses.dataclass
class EmceeSampler:
    """``method: mcmc``: emcee's walkers (:func:`planetfit.fitting.sampling.mcmc.run_sampler`) into samples.h5."""

    settings: McmcSettings
    kind = SamplingMethod.MCMC

    def check_resumable(self, files, ndim):
        chainfile.check_resumable(files.samples, ndim, self.settings.walkers)

    def sample(self, log_prob, files, rng, cores=1, progress=True, resume=False):
        result = run_sampler(
            log_prob, log_prob.layout, self.settings, files.samples, rng, cores=cores, progress=progress, resume=resume
        )
        facts = result.summary()
        facts.update(
            discard=result.discard, thin=result.thin, cores=cores, warnings=list(result.warnings), modes=result.modes
        )
        chainfile.write_facts(files.samples, log_prob.layout.free, facts, result.autocorr_history)
        return Draws(result.samples, result.samples, _equal_weights(result.samples), facts)


@dataclasses.dataclass
class DynestySampler:
    """``method: nested``: dynesty's live points (:func:`planetfit.fitting.sampling.nested.run_nested`), its
    checkpoint for a resume, the weighted points and equal-weight samples into samples.h5."""

    settings: NestedSettings
    kind = SamplingMethod.NESTED

    def check_resumable(self, files, ndim):
        """Nothing before sampling: the checkpoint is checked (signature, parameters) when it is restored."""

    def sample(self, log_prob, files, rng, cores=1, progress=True, resume=False):
        result = run_nested(
            log_prob, self.settings, files.checkpoint, rng, cores=cores, progress=progress, resume=resume
        )
        facts = dict(result.summary(), cores=cores, warnings=list(result.warnings), modes=result.modes)
        facts["phase_seconds"] = {"sampling": result.seconds}
        chainfile.write_nested(files.samples, log_prob.layout.free, facts, result)
        return Draws(result.samples, result.points, result.log_weights, facts)


#: The sampler of each variant of the config's sampling block.
SAMPLERS = {McmcSettings: EmceeSampler, NestedSettings: DynestySampler}


def sampler_for(settings):
    """The sampler the config's sampling block (:class:`McmcSettings` or :class:`NestedSettings`) asks for."""
    return SAMPLERS[type(settings)](settings)
