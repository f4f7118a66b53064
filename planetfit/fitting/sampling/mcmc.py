"""From a log-probability to posterior samples with emcee.

emcee's ensemble sampler (Foreman-Mackey et al. 2013, PASP 125, 306) with
differential-evolution moves (ter Braak 2006; Nelson et al. 2014), every
step written to samples.h5 (:mod:`planetfit.fitting.sampling.chainfile`), which can
be resumed. emcee's snooker move is not used: in emcee 3.1.6 its step is
not a unit-vector projection and its acceptance factor is half of ter Braak
& Vrugt's (2008) (d - 1) ln(|q - z| / |x - z|), so it does not keep the
target distribution (see :func:`walker_moves`). The chain stops when it is
longer than ``autocorr_factor`` times the largest integrated
autocorrelation time (over parameters), that estimate changed by less
than ``autocorr_tolerance`` since the last check, and the bulk effective
sample size of every parameter after burn-in (:mod:`planetfit.fitting.sampling.ess`)
is at least ``min_effective_samples`` -- what a paper's uncertainties rest
on -- or at ``max_steps``. Split R-hat over walkers is not a stopping
target: walkers of one ensemble are not independent chains, and their
R-hat only falls as sqrt(1 + 2 tau / N) with the chain length N
(:mod:`planetfit.report.inference` reports it as a diagnostic). Checks
come every ``check_every`` steps, skipping those that the last estimate
says are too early to pass (Goodman & Weare 2010; emcee's documented
practice). Burn-in of two autocorrelation times is discarded and the chain
thinned by half the shortest one.

With several modes among the optimiser's end points, walkers start in each
in proportion to its Laplace evidence and a tenth of the moves take the
full difference of two walkers, which jumps between modes. Every sample is
assigned to a mode; a run whose walkers did not move between its modes
often enough to measure their weights is not converged, and separated
modes in single parameters that the optimiser missed are looked for in the
samples. Each finding is a warning.

With ``sampling.moves: fitted_proposal`` the chain is staged: a burn-in of
differential evolution, not kept, fits a proposal to the posterior
(:mod:`planetfit.fitting.sampling.burnin`), and the kept chain mixes differential
evolution with an independence move drawing from that fixed proposal
(:mod:`planetfit.fitting.sampling.proposal`), with weight :data:`INDEPENDENCE_WEIGHT`.
"""

import dataclasses
import functools
import logging
import sys
import time

import emcee
import numpy as np
from threadpoolctl import threadpool_limits

from planetfit.fitting.sampling import modes as mode_finding
from planetfit.fitting.sampling.burnin import run_burn_in
from planetfit.fitting.sampling.chainfile import load_modes, load_proposal, open_chain, save_modes, save_proposal
from planetfit.fitting.sampling.ess import bulk_ess
from planetfit.fitting.sampling.optimiser import find_map, initial_walkers
from planetfit.fitting.sampling.periodogram import periodogram_starts
from planetfit.fitting.sampling.proposal import IndependenceMove
from planetfit.fitting.workers import WorkerProcesses
from planetfit.inputs.schema import WalkerMoves

log = logging.getLogger("planetfit")

#: Fraction of the moves of a several-mode chain that take the full difference of two walkers.
JUMP_MOVE_WEIGHT = 0.1
#: Fraction of the moves of a staged chain that draw from the fitted proposal.
INDEPENDENCE_WEIGHT = 0.8


def walker_moves(several_modes=False, proposal=None):
    """The emcee moves of a planetfit chain: differential evolution, and an independence move if a proposal is given.

    With ``several_modes``, a mixture: ``DEMove()`` and, with weight
    :data:`JUMP_MOVE_WEIGHT`, ``DEMove(gamma0=1.0)``: with gamma = 1 a
    walker moves by the whole difference of two others, from one mode to
    another when they lie in different modes (ter Braak 2006, Stat. Comput.
    16, 239, sect. 3). Single-mode chains keep the plain move. With a
    ``proposal`` (:class:`planetfit.fitting.sampling.proposal.FittedProposal`), these
    take ``1 - INDEPENDENCE_WEIGHT`` of the moves and an
    :class:`planetfit.fitting.sampling.proposal.IndependenceMove` the rest.

    Notes
    -----
    With 20% of emcee's ``DESnookerMove`` mixed in, posterior widths came out
    up to 23% too narrow (impact parameter of a synthetic system, against
    importance sampling), and walkers drawn from a known distribution
    drifted to 9-16% lower variances within 100 steps
    (``tests/test_sampling.py``).
    """
    moves = [(emcee.moves.DEMove(), 1.0)]
    if several_modes:
        moves = [(emcee.moves.DEMove(), 1 - JUMP_MOVE_WEIGHT), (emcee.moves.DEMove(gamma0=1.0), JUMP_MOVE_WEIGHT)]
    if proposal is None:
        return moves if several_modes else [moves[0][0]]
    return [(m, w * (1 - INDEPENDENCE_WEIGHT)) for m, w in moves] + [(IndependenceMove(proposal), INDEPENDENCE_WEIGHT)]


@dataclasses.dataclass
class SamplingResult:
    """Flat posterior samples and an honest account of how they were obtained."""

    samples: np.ndarray  # (n, ndim), burn-in discarded and thinned
    log_prob: np.ndarray  # (n,)
    walkers: int
    steps: int
    autocorr_steps: float  # largest integrated autocorrelation time
    independent_samples: int
    acceptance_fraction: float
    converged: bool
    seconds: float
    discard: int
    thin: int
    autocorr_history: list  # [(step, max tau)]
    warnings: list = dataclasses.field(default_factory=list)  # every warning of the sampling stage
    modes: list = dataclasses.field(default_factory=list)  # {parameter, location, ln_p, fraction} per mode
    moves: WalkerMoves = WalkerMoves.DIFFERENTIAL_EVOLUTION  # sampling.moves
    burn_in_steps: int = 0  # steps of the staged sampler's burn-in, not kept (none for differential evolution)
    min_bulk_ess: float = 0.0  # smallest bulk effective sample size over parameters (planetfit.fitting.sampling.ess)
    phase_seconds: dict = dataclasses.field(default_factory=dict)  # wall seconds: optimiser, sampling

    def summary(self):
        """The ``sampling`` block of summary.json."""
        return {
            "walkers": int(self.walkers),
            "steps": int(self.steps),
            "autocorr_steps": round(float(self.autocorr_steps), 2),
            "independent_samples": int(self.independent_samples),
            "acceptance_fraction": round(self.acceptance_fraction, 4),
            "converged": bool(self.converged),
            "seconds": round(self.seconds, 1),
            "moves": self.moves.value,
            "burn_in_steps": int(self.burn_in_steps),
            "min_bulk_ess": round(float(self.min_bulk_ess)),
            "phase_seconds": {k: round(v, 1) for k, v in self.phase_seconds.items()},
        }


def autocorr_estimate(backend):
    """Integrated autocorrelation time per parameter (tolerance off; noisy on short chains).

    A walker that has not moved yet makes emcee's estimate 0/0; such a
    parameter's time counts as the chain's length (far from converged).
    """
    with np.errstate(invalid="ignore", divide="ignore"):
        tau = backend.get_autocorr_time(tol=0)
    return np.where(np.isfinite(tau), tau, float(backend.iteration))


def run_sampler(log_prob, layout, settings, h5_path, rng, cores=1, progress=True, resume=False):
    """Run emcee until converged or ``settings.max_steps``.

    Parameters
    ----------
    log_prob : LogProbability
        Callable on one sampler vector (the optimiser's calls) with
        ``log_prob_many`` for batches (the walkers', evaluated together).
    layout : ParameterLayout
    settings : McmcSettings
    h5_path : Path
        The chain file; written every step, continued when ``resume``.
    rng : numpy.random.Generator
    cores : int
        Processes running the optimiser starts and evaluating walkers side by side (:class:`WorkerProcesses`).
    progress : bool
        Report progress: a redrawn tqdm bar on a terminal, else (a log file, a batch job) only the
        logged line of each convergence check.
    resume : bool
        Continue the chain in ``h5_path`` instead of starting anew.

    Returns
    -------
    SamplingResult
    """
    ndim, nwalkers = layout.ndim, settings.walkers
    if nwalkers < 2 * ndim:
        nwalkers = 2 * ndim + (2 * ndim) % 2
        log.warning(
            "walkers raised to %d: emcee needs at least twice the number of free parameters (%d)", nwalkers, ndim
        )
    backend, start = open_chain(h5_path), time.perf_counter()  # the chain's clock counts every segment of the run
    # One log-probability is too small a job for a threaded BLAS: its threads only contend with the
    # walkers' processes and other programs for the cores (6x slower evaluations on a loaded 2-core machine).
    with threadpool_limits(limits=1), WorkerProcesses(log_prob, cores) as workers:
        if resume and backend.iteration > 0:
            initial = backend.get_last_sample()
            log.info("resuming from step %d in %s", backend.iteration, h5_path)
            nwalkers = backend.shape[0]
            modes = load_modes(h5_path)
            proposal, burn_in = load_proposal(h5_path)
            optimiser_seconds = 0.0
        else:
            backend.reset(nwalkers, ndim)
            initial, modes, proposal, burn_in, optimiser_seconds = _start(
                log_prob, layout, settings, rng, workers, nwalkers, h5_path
            )
        sampler = emcee.EnsembleSampler(
            nwalkers, ndim, workers, vectorize=True, backend=backend, moves=walker_moves(len(modes) > 1, proposal)
        )
        try:
            converged, history = _sample(sampler, backend, initial, settings, rng, progress)
        finally:  # also on Ctrl-C: every step taken is saved for --resume
            backend.flush()
    seconds = time.perf_counter() - start  # this segment's, for its phases
    result = _result(backend, settings, nwalkers, converged, history, backend.seconds, modes, layout)
    result.moves, result.burn_in_steps = _moves_of(proposal), burn_in
    result.phase_seconds = {"optimiser": optimiser_seconds, "sampling": seconds - optimiser_seconds}
    log.info("optimiser %.1f s, sampling %.1f s (wall)", optimiser_seconds, seconds - optimiser_seconds)
    return result


def _moves_of(proposal):
    """``sampling.moves`` of a chain: staged if it has a fitted proposal (new, or read back for a resume)."""
    return WalkerMoves.DIFFERENTIAL_EVOLUTION if proposal is None else WalkerMoves.FITTED_PROPOSAL


def _start(log_prob, layout, settings, rng, workers, nwalkers, h5_path):
    """Walkers placed in the optimiser's modes (and burnt in for a staged chain); both saved in the chain file.

    Returns
    -------
    initial, modes, proposal, burn_in_steps, optimiser_seconds
        ``proposal`` is None (and ``burn_in_steps`` 0) for differential
        evolution; ``optimiser_seconds`` is the wall time until the walkers
        are placed (a staged chain's burn-in is sampling).
    """
    start = time.perf_counter()
    modes = _find_modes(log_prob, layout, settings, rng, workers)
    save_modes(h5_path, modes)
    counts = mode_finding.walker_counts(modes, nwalkers)
    if len(modes) > 1:
        log.info("walkers per mode: %s", ", ".join(str(n) for n in counts))
    initial = np.concatenate([initial_walkers(workers, layout, m, n, rng) for m, n in zip(modes, counts) if n > 0])
    optimiser_seconds = time.perf_counter() - start
    if WalkerMoves(settings.moves) is not WalkerMoves.FITTED_PROPOSAL:
        return initial, modes, None, 0, optimiser_seconds
    proposal, initial, burn_in = run_burn_in(
        workers, initial, functools.partial(walker_moves, len(modes) > 1), modes, settings, _random_state(rng)
    )
    save_proposal(h5_path, proposal, burn_in)
    return initial, modes, proposal, burn_in, optimiser_seconds


def _random_state(rng):
    """A ``numpy.random.RandomState`` state for emcee, seeded from ``rng``."""
    return np.random.RandomState(int(rng.integers(2**31))).get_state()


def _find_modes(log_prob, layout, settings, rng, evaluate):
    """The distinct modes among the optimiser's end points (:func:`planetfit.fitting.sampling.modes.distinct_modes`)."""
    centre, scale, _, _ = layout.geometry()
    ends = find_map(
        log_prob, layout, rng, settings.optimiser_starts, evaluate, seeds=periodogram_starts(log_prob, layout, centre)
    )
    log.info("maximum a posteriori log-probability %.3f", ends[0][1])
    modes = mode_finding.distinct_modes(evaluate, ends, scale)
    if len(modes) > 1:
        log.info(
            "%d separated modes: log-probability %s, Laplace log-evidence %s",
            len(modes),
            ", ".join(f"{m.log_prob:.2f}" for m in modes),
            ", ".join(f"{m.log_evidence:.2f}" for m in modes),
        )
    return modes


def redrawn_progress(progress):
    """Whether progress may be a redrawn bar: asked for, and stderr is a terminal (not a log file or batch job)."""
    return bool(progress) and sys.stderr.isatty()


def _steps_needed(settings, tau, walkers):
    """Steps the stopping rule needs at autocorrelation time ``tau``: its length, and burn-in plus effective samples."""
    return max(settings.autocorr_factor * tau, 2 * tau + settings.min_effective_samples * tau / walkers)


def _min_bulk_ess(backend, tau_max):
    """The smallest bulk effective sample size over parameters, burn-in (as :func:`_result` drops it) discarded."""
    discard = int(min(2 * tau_max, backend.iteration // 2))
    return float(np.min(bulk_ess(backend.get_chain(discard=discard))))


def _sample(sampler, backend, initial, settings, rng, progress):
    """Advance the chain until converged or max_steps; return (converged, history)."""
    sampler.random_state = _random_state(rng)
    history, converged, old_tau = [], False, np.inf
    bar = None
    if redrawn_progress(progress):
        from tqdm import tqdm

        bar = tqdm(
            total=settings.max_steps, initial=backend.iteration, unit="step", desc="sampling", dynamic_ncols=True
        )
    done, walkers = backend.iteration, backend.shape[0]
    for it, _ in enumerate(
        sampler.sample(initial, iterations=max(settings.max_steps - done, 0), progress=False, store=True),
        start=done + 1,
    ):
        if bar is not None:
            bar.update(1)
        # An estimate costs ~0.1 s per 1,000 steps of a 27-parameter chain: skip those that could not
        # meet the rule even if the last estimate were 20% too high.
        if it % settings.check_every or (history and it < 0.8 * _steps_needed(settings, old_tau, walkers)):
            continue
        tau = autocorr_estimate(backend)
        tmax = float(np.max(tau))
        history.append((it, tmax))
        acc = float(np.mean(backend.accepted / backend.iteration))
        # The rule acts on the slowest parameter: its time sets how long the chain must be,
        # and its estimate must have settled (per-parameter estimates scatter by ~1% between checks).
        converged = bool(
            tmax * settings.autocorr_factor < it and abs(old_tau - tmax) / tmax < settings.autocorr_tolerance
        )
        ess = _min_bulk_ess(backend, tmax) if converged else None  # a second or so: only when the rest holds
        converged = converged and ess >= settings.min_effective_samples
        log.info(
            "step %d: autocorrelation %.1f steps (need < %.0f), acceptance %.3f%s",
            it,
            tmax,
            it / settings.autocorr_factor,
            acc,
            "" if ess is None else f", bulk ESS {ess:.0f} (need {settings.min_effective_samples})",
        )
        if bar is not None:
            bar.set_postfix_str(f"tau {tmax:.0f} (limit {it / settings.autocorr_factor:.0f}), accept {acc:.2f}")
        if converged:
            break
        old_tau = tmax
    if bar is not None:
        bar.close()
    return converged, history


def _result(backend, settings, nwalkers, converged, history, seconds, modes, layout):
    """Burn-in discarded, thinned samples and the facts of the run, its modes and warnings."""
    tau = autocorr_estimate(backend)
    steps = backend.iteration
    discard = int(min(2 * np.max(tau), steps // 2))
    thin = int(max(1, 0.5 * np.min(tau)))
    samples = backend.get_chain(discard=discard, thin=thin, flat=True)
    lp = backend.get_log_prob(discard=discard, thin=thin, flat=True)
    tmax = float(np.max(tau))
    n_indep = int((steps - discard) * nwalkers / tmax) if tmax > 0 else 0
    ess = _min_bulk_ess(backend, tmax)
    warnings = [] if converged else [_not_converged(steps, tmax, ess, settings)]
    for warning in warnings:
        log.warning("%s", warning)
    groups = mode_finding.describe(
        backend.get_chain(discard=discard), backend.get_log_prob(discard=discard), thin, modes, layout
    )
    for group in groups:
        warnings.append(group.warning())
        log.warning("WARNING: %s", warnings[-1])
    return SamplingResult(
        samples=samples,
        log_prob=lp,
        walkers=nwalkers,
        steps=steps,
        autocorr_steps=tmax,
        independent_samples=n_indep,
        acceptance_fraction=float(np.mean(backend.accepted / max(steps, 1))),
        converged=converged and all(g.mixed for g in groups),
        seconds=seconds,
        discard=discard,
        thin=thin,
        autocorr_history=history,
        warnings=warnings,
        modes=[entry for g in groups for entry in g.entries()],
        min_bulk_ess=ess,
    )


def _not_converged(steps, tau, ess, settings):
    """The warning of a chain that stopped at ``max_steps``, naming each part of the rule it missed."""
    missed = []
    if steps < settings.autocorr_factor * tau:
        missed.append(f"{steps / tau:.1f} autocorrelation times (target {settings.autocorr_factor:.0f})")
    if ess < settings.min_effective_samples:
        missed.append(
            f"a smallest bulk effective sample size of {ess:.0f} (target sampling.min_effective_samples = "
            f"{settings.min_effective_samples})"
        )
    reached = " and ".join(missed) or "an autocorrelation estimate that had not yet settled"
    return (
        f"NOT CONVERGED: {steps} steps reach {reached}; treat the uncertainties with caution and raise "
        "sampling.max_steps."
    )
