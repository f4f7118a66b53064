"""From a log-likelihood and the priors to the evidence and posterior samples with dynesty.

Static nested sampling (Skilling 2004, AIP Conf. Proc. 735, 395; 2006,
Bayesian Analysis 1, 833) by dynesty (Speagle 2020, MNRAS 493, 3132):
``live_points`` points drawn from the prior through each prior's inverse
CDF (:meth:`ParameterLayout.from_unit_cube`), the worst replaced again and
again by a prior draw of higher likelihood, until the evidence still held
by the live points, ln(Z + L_max X) - ln Z, falls below ``dlogz``. dynesty
picks how to draw by the dimension (uniform draws inside bounding
ellipsoids enlarged by :data:`ENLARGE` below 10 parameters, random walks
up to 20, slices above).
Separated modes are explored by construction: each is weighed by its
evidence without any move between them.

The draws of ``cores`` proposals at a time are shared among forked
processes (:class:`~planetfit.fitting.workers.WorkerProcesses`); dynesty's
own checkpoint file in the run directory lets an interrupted run resume.
The weighted dead points are resampled to equal weights for the later
stages, which take them as they take an MCMC chain's samples.
"""

import dataclasses
import logging
import math
import time
import warnings

import dynesty
import numpy as np
from threadpoolctl import threadpool_limits

from planetfit.core.errors import InputError
from planetfit.fitting.sampling import checkpoint as signed_checkpoint
from planetfit.fitting.sampling import modes as mode_finding
from planetfit.fitting.sampling.mcmc import redrawn_progress
from planetfit.fitting.workers import WorkerProcesses
from planetfit.inputs.schema import SamplingMethod

log = logging.getLogger("planetfit")

#: dynesty's checkpoint file in the run directory (signed: :mod:`planetfit.fitting.sampling.checkpoint`).
CHECKPOINT = "nested_checkpoint.pkl"
#: Seconds between checkpoints.
CHECKPOINT_SECONDS = 60.0
#: Volume factor of dynesty's bounding ellipsoids (its own default for every method but uniform draws). For uniform
#: draws dynesty's default instead enlarges them by bootstrap resampling, which on a posterior with several period
#: aliases (tests/two_seasons.py, 200 live points) took 1,190,000 likelihood calls against 34,000 with this factor,
#: for the same mode fractions.
ENLARGE = 1.25
#: Iterations between progress lines when stderr is not a terminal (no redrawn bar).
PROGRESS_EVERY = 1000
#: Points of highest (marginal) likelihood at which the largest likelihood of every parameter is looked for.
PROFILED_POINTS = 50
EVIDENCE_NOTE = (
    "dynesty's ln Z of the dead and final live points; error sqrt(H / live_points) accumulated over the run "
    "(Skilling 2006), H the information, the statistical scatter of the prior-volume shrinkage only"
)

_SHARED = {}  # name -> function, inherited by forked workers


class _Shared:
    """A function that pickles by name: workers forked after it was made find it in their copy of the registry."""

    def __init__(self, name, function):
        _SHARED[name] = function
        self.name = name

    def __call__(self, x):
        return _SHARED[self.name](x)

    def __reduce__(self):
        return (_shared, (self.name,))


def _shared(name):
    out = _Shared.__new__(_Shared)
    out.name = name
    return out


def _apply(_log_prob, function, item):
    return function(item)


class _Pool:
    """The ``map`` dynesty asks for, over :class:`WorkerProcesses`; ``size`` is dynesty's queue of proposals."""

    def __init__(self, workers):
        self.workers = workers
        self.size = len(workers.workers) + 1

    def map(self, function, items):
        return self.workers.map(_apply, [(function, item) for item in items])


@dataclasses.dataclass
class NestedResult:
    """Equal-weight posterior samples, the evidence and the facts of a nested-sampling run."""

    samples: np.ndarray  # (n, ndim) equal-weight resampling of the dead and live points
    points: np.ndarray  # (m, ndim) the weighted dead and final live points
    log_weights: np.ndarray  # (m,) their importance weights, normalised to sum 1
    log_likelihood: np.ndarray  # (m,) integrated over any marginalised linear parameters
    max_log_likelihood: float  # of every parameter, the linear ones at their best fit
    live_points: int
    iterations: int
    likelihood_calls: int
    ln_evidence: float
    ln_evidence_error: float
    dlogz: float  # evidence left in the live points when the run stopped
    effective_samples: int
    converged: bool
    seconds: float
    warnings: list = dataclasses.field(default_factory=list)
    modes: list = dataclasses.field(default_factory=list)

    def summary(self):
        """The ``sampling`` block of summary.json."""
        return {
            "method": SamplingMethod.NESTED.value,
            "live_points": int(self.live_points),
            "iterations": int(self.iterations),
            "likelihood_calls": int(self.likelihood_calls),
            "dlogz": round(float(self.dlogz), 4),
            "effective_samples": int(self.effective_samples),
            "independent_samples": int(self.effective_samples),
            "ln_evidence": {
                "value": round(float(self.ln_evidence), 3),
                "error": round(float(self.ln_evidence_error), 3),
                "note": EVIDENCE_NOTE,
            },
            "max_log_likelihood": round(float(self.max_log_likelihood), 3),
            "converged": bool(self.converged),
            "seconds": round(self.seconds, 1),
        }


def _log_progress(results, niter, ncall, **_):
    """One line of progress per :data:`PROGRESS_EVERY` iterations (dynesty's ``print_func``)."""
    if niter % PROGRESS_EVERY == 0:
        log.info("iteration %d: %d likelihood calls, ln Z %.2f", niter, ncall, results.logz)


def run_nested(log_prob, settings, checkpoint, rng, cores=1, progress=True, resume=False):
    """Run dynesty until the evidence left in the live points is below ``settings.dlogz``.

    Parameters
    ----------
    log_prob : LogProbability
    settings : NestedSettings
        ``live_points``, ``dlogz``, ``min_effective_samples``, ``max_likelihood_calls``.
    checkpoint : Path
        dynesty's checkpoint file, written every minute; continued when ``resume``.
    rng : numpy.random.Generator
    cores : int
        Processes drawing proposals side by side.
    progress : bool
        Report progress: dynesty's redrawn bar on a terminal, else a logged line every
        :data:`PROGRESS_EVERY` iterations.
    resume : bool
        Continue the run saved in ``checkpoint``.

    Returns
    -------
    NestedResult
    """
    layout = log_prob.layout
    start = time.perf_counter()
    loglike = _Shared("log_likelihood", lambda theta: float(log_prob.log_likelihood_many(theta[None, :])[0]))
    transform = _Shared("prior_transform", layout.from_unit_cube)
    try:
        # One likelihood is too small a job for threaded BLAS (see planetfit.fitting.sampling.mcmc.run_sampler).
        with threadpool_limits(limits=1), WorkerProcesses(log_prob, cores) as workers:
            pool = _Pool(workers) if cores > 1 else None
            resume = resume and checkpoint.exists()
            if resume:
                sampler = _restore(checkpoint, pool, layout.ndim)
                log.info("resuming nested sampling from iteration %d in %s", sampler.it, checkpoint)
            else:
                sampler = signed_checkpoint.attach(_new_sampler(loglike, transform, layout.ndim, settings, rng, pool))
            with warnings.catch_warnings():
                warnings.filterwarnings("ignore", message="You are resuming a finished static run")
                sampler.run_nested(
                    dlogz=settings.dlogz,
                    maxcall=settings.max_likelihood_calls,
                    print_progress=bool(progress),
                    print_func=None if redrawn_progress(progress) else _log_progress,
                    checkpoint_file=str(checkpoint),
                    checkpoint_every=CHECKPOINT_SECONDS,
                    save_bounds=False,
                    resume=resume,
                )
            results = sampler.results
    finally:
        _SHARED.clear()
    return _result(results, log_prob, settings, rng, time.perf_counter() - start)


def _new_sampler(loglike, transform, ndim, settings, rng, pool):
    """dynesty's static sampler with planetfit's settings (queue of one proposal per process)."""
    return dynesty.NestedSampler(
        loglike,
        transform,
        ndim,
        nlive=settings.live_points,
        rstate=np.random.default_rng(int(rng.integers(2**63))),
        pool=pool,
        queue_size=pool.size if pool else None,
        use_pool={"prior_transform": False, "update_bound": False},
        enlarge=ENLARGE,
    )


def _restore(checkpoint, pool, ndim):
    """The sampler saved in ``checkpoint``, checked to sample ``ndim`` parameters."""
    try:
        sampler = signed_checkpoint.restore(checkpoint, pool)  # the signature is checked before unpickling
    except InputError:
        raise
    except Exception as exc:
        raise InputError(
            f"the nested-sampling checkpoint cannot be read ({exc}).",
            file=checkpoint,
            fix="run again with --force to start a new fit in this folder.",
        ) from None
    if sampler.ndim != ndim:
        raise InputError(
            f"the checkpoint samples {sampler.ndim} parameters, but this config has {ndim}.",
            file=checkpoint,
            fix="resume with the config that started the run, or use --force to start a new fit.",
        )
    return sampler


def remaining_dlogz(results):
    """The stopping rule's ln(Z + L_max X) - ln Z when the run stopped (before the live points were added)."""
    dead = len(results.logl) - int(results.nlive)
    if dead < 1:
        return math.inf
    z_dead = results.logz[dead - 1]
    return float(np.logaddexp(z_dead, np.max(results.logl[dead:]) + results.logvol[dead - 1]) - z_dead)


def _result(results, log_prob, settings, rng, seconds):
    """Equal-weight samples, the evidence, the convergence facts, modes and warnings of a finished run."""
    layout = log_prob.layout
    log_w = results.logwt - np.logaddexp.reduce(results.logwt)
    weights = np.exp(log_w)
    points = np.asarray(results.samples)
    ess = int(1.0 / np.sum(weights**2))
    dlogz, calls = remaining_dlogz(results), int(np.sum(results.ncall))
    found = []
    if dlogz > settings.dlogz:
        found.append(
            f"NOT CONVERGED: nested sampling stopped at {calls} likelihood calls (sampling.max_likelihood_calls) "
            f"with ln Z still uncertain by {dlogz:.2f} (target sampling.dlogz = {settings.dlogz:g}); raise "
            "sampling.max_likelihood_calls."
        )
    if ess < settings.min_effective_samples:
        found.append(
            f"NOT CONVERGED: {ess} effective samples, fewer than sampling.min_effective_samples = "
            f"{settings.min_effective_samples}; raise sampling.live_points."
        )
    log_density = results.logl + np.array([layout.log_prior(t) for t in points])
    groups = mode_finding.describe_weighted(points, weights, log_density, layout)
    found += [g.warning() for g in groups]
    for w in found:
        log.warning("WARNING: %s", w)
    return NestedResult(
        samples=dynesty.utils.resample_equal(points, weights, rstate=np.random.default_rng(int(rng.integers(2**63)))),
        points=points,
        log_weights=log_w,
        log_likelihood=np.asarray(results.logl),
        max_log_likelihood=log_prob.max_log_likelihood(points[np.argsort(results.logl)[-PROFILED_POINTS:]]),
        live_points=int(results.nlive),
        iterations=int(results.niter),
        likelihood_calls=calls,
        ln_evidence=float(results.logz[-1]),
        ln_evidence_error=float(results.logzerr[-1]),
        dlogz=dlogz,
        effective_samples=ess,
        converged=dlogz <= settings.dlogz and ess >= settings.min_effective_samples,
        seconds=seconds,
        warnings=found,
        modes=[entry for g in groups for entry in g.entries()],
    )
