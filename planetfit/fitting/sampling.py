"""From a log-probability to posterior samples: optimise, then emcee.

1. Maximum a posteriori: bounded and local Powell searches from the
   prior's centre, the most probable of 2,000 draws from the prior and
   random ones of them; the best optimum wins.
2. Walkers start from the Laplace approximation around that optimum
   (covariance from a finite-difference Hessian), so burn-in is short.
3. emcee's ensemble sampler (Foreman-Mackey et al. 2013, PASP 125, 306)
   with differential-evolution moves (ter Braak 2006; Nelson et al. 2014),
   every step written to an HDF5 file that can be resumed. emcee's snooker
   move is not used: in emcee 3.1.6 its step is not a unit-vector
   projection and its acceptance factor is half of ter Braak & Vrugt's
   (2008) (d - 1) ln(|q - z| / |x - z|), so it does not keep the target
   distribution (see :func:`walker_moves`).
4. Stop when the chain is longer than ``autocorr_factor`` times the
   largest integrated autocorrelation time (over parameters) and that
   estimate changed by less than ``autocorr_tolerance`` since the last
   check, or at ``max_steps``. Checks come every ``check_every`` steps,
   skipping those that the last estimate says are too early to pass
   (Goodman & Weare 2010; emcee's documented practice). Burn-in of two
   autocorrelation times is discarded and the chain thinned by half the
   shortest one.
"""

import dataclasses
import logging
import math
import multiprocessing
import time
import traceback

import emcee
import numpy as np
from scipy import optimize
from threadpoolctl import threadpool_limits

log = logging.getLogger("planetfit")

BAD_LOG_PROB = 1e25  # what the minimiser sees instead of -inf
#: Prior draws scored to choose the optimiser's starts. A transit-time prior wider than the transit makes the
#: posterior multimodal in T0; of 1,000 draws the best three lay on the right transit 87% of the time
#: (calibration system 1009), where the prior's centre led Powell to an optimum 150 below the maximum.
PRIOR_SEARCH_DRAWS = 2000


def walker_moves():
    """The emcee moves of every planetfit chain: differential evolution only.

    Notes
    -----
    With 20% of emcee's ``DESnookerMove`` mixed in, posterior widths came out
    up to 23% too narrow (impact parameter of a synthetic system, against
    importance sampling), and walkers drawn from a known distribution
    drifted to 9-16% lower variances within 100 steps
    (``tests/test_sampling.py``).
    """
    return [emcee.moves.DEMove()]


@dataclasses.dataclass
class SamplingResult:
    """Flat posterior samples and an honest account of how they were obtained."""

    samples: np.ndarray        # (n, ndim), burn-in discarded and thinned
    log_prob: np.ndarray       # (n,)
    walkers: int
    steps: int
    autocorr_steps: float      # largest integrated autocorrelation time
    independent_samples: int
    acceptance_fraction: float
    converged: bool
    seconds: float
    discard: int
    thin: int
    autocorr_history: list     # [(step, max tau)]

    def summary(self):
        """The ``sampling`` block of summary.json."""
        return {"walkers": int(self.walkers), "steps": int(self.steps),
                "autocorr_steps": round(float(self.autocorr_steps), 2),
                "independent_samples": int(self.independent_samples),
                "acceptance_fraction": round(self.acceptance_fraction, 4),
                "converged": bool(self.converged), "seconds": round(self.seconds, 1)}


def prior_centre(prior):
    """A central value of a prior (physical units)."""
    lo, hi = prior.bounds
    if math.isfinite(lo) and math.isfinite(hi):
        return float(prior.from_sampler(0.5 * (prior.to_sampler(lo) + prior.to_sampler(hi))))
    return prior.mean


def sampler_geometry(layout):
    """Centre, natural scale and bounds of each free parameter in sampler coordinates.

    The scale is the prior's width if bounded, else four standard deviations.

    Returns
    -------
    centre, scale, lower, upper : ndarray
    """
    priors = [layout.priors[n] for n in layout.free]
    centre = np.array([p.to_sampler(prior_centre(p)) for p in priors], dtype=float)
    lo = np.array([p.to_sampler(p.bounds[0]) if math.isfinite(p.bounds[0]) else -math.inf for p in priors])
    hi = np.array([p.to_sampler(p.bounds[1]) if math.isfinite(p.bounds[1]) else math.inf for p in priors])
    scale = np.where(np.isfinite(hi - lo), hi - lo, [4 * getattr(p, "sd", 1.0) for p in priors])
    return centre, scale, lo, hi


def _optimise(log_prob, x0, centre, scale, bounds):
    """Powell's method from ``x0`` in prior-scaled coordinates; returns (theta, log_prob, evaluations).

    With ``bounds`` (a (low, high) pair per coordinate) this is scipy's
    bounded Powell, whose line searches scan the whole allowed interval:
    they can jump between optima, which finds the best one of the demo's
    Gaussian-process hyperparameters, and can also move uphill (from the
    true parameters of calibration system 1009 to a transit-time optimum
    147 lower in log-probability). With ``bounds=None`` the first line
    searches step 1% of each prior's width and grow from there, so the
    search climbs the optimum it starts in; outside the prior support the
    objective is a wall (:data:`BAD_LOG_PROB`). Either way the start is
    returned whenever the result is no better.
    """
    def objective(z):
        v = log_prob(centre + z * scale)
        return -v if math.isfinite(v) else BAD_LOG_PROB

    z0 = (x0 - centre) / scale
    options = {"xtol": 1e-7, "ftol": 1e-8, "maxfev": 500 * len(x0)}
    if bounds is None:
        options["direc"] = 0.01 * np.eye(len(x0))
    res = optimize.minimize(objective, z0, method="Powell", bounds=bounds, options=options)
    start = objective(z0)
    if not res.fun < start:
        return x0, -float(start), int(res.nfev)
    return centre + res.x * scale, -float(res.fun), int(res.nfev)


def find_map(log_prob, layout, rng, starts, processes=None):
    """Maximum a posteriori by Powell's method from several starts.

    The starts are the prior's centre and ``starts - 1`` of
    :data:`PRIOR_SEARCH_DRAWS` draws from the prior: half of them (rounded
    up) the most probable draws, the rest random ones. Ranking alone can
    mislead where the data have gaps: a transit hidden in a gap costs less
    than a visible one with a wrong depth. From each start both a bounded
    and a local Powell search run (:func:`_optimise`); neither alone found
    the maximum of both the demo and the calibration systems. The search
    runs in coordinates scaled by each prior's width, so one tolerance
    suits periods known to 1e-5 d and offsets known to 1 m/s. With
    ``processes`` (:class:`WorkerProcesses`) the searches run side by side.

    Returns
    -------
    (theta, log_prob_value)
    """
    centre, scale, lo, hi = sampler_geometry(layout)
    bounds = [tuple(None if not math.isfinite(b) else (b - c) / s for b in (l, h))
              for l, h, c, s in zip(lo, hi, centre, scale)]
    draws = layout.sample_prior(rng, PRIOR_SEARCH_DRAWS)
    evaluate = processes if processes else log_prob.log_prob_many
    # In batches of 100: one batch of all draws held every draw's transit models in memory at once.
    lp = np.concatenate([evaluate(batch) for batch in np.array_split(draws, PRIOR_SEARCH_DRAWS // 100)])
    finite = np.flatnonzero(np.isfinite(lp))
    most_probable = finite[np.argsort(-lp[finite])][: starts // 2]
    others = np.setdiff1d(finite, most_probable)[: starts - 1 - most_probable.size]  # draws are in random order
    chosen = np.concatenate([most_probable, others])
    candidates = ([centre] if math.isfinite(log_prob(centre)) else []) + list(draws[chosen])
    if not candidates:
        raise RuntimeError("no start drawn from the prior has a finite probability")
    tasks = [(x0, centre, scale, b) for x0 in candidates for b in (bounds, None)]
    results = processes.map(_optimise, tasks) if processes else [_optimise(log_prob, *t) for t in tasks]
    for n, ((_, val, nfev), task) in enumerate(zip(results, tasks), 1):
        log.info("optimiser search %d of %d (%s): log-probability %.3f after %d evaluations", n, len(results),
                 "bounded" if task[3] else "local", val, nfev)
    best, best_val, _ = max(results, key=lambda r: r[1])
    return best, best_val


def _hessian(evaluate, theta, h):
    """Central-difference Hessian of -log_prob with steps ``h``; ``evaluate`` maps (n, ndim) to (n,)."""
    n = theta.size
    steps = np.diag(h)
    points = [theta]
    for i in range(n):
        points += [theta + steps[i], theta - steps[i]]
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n)]
    for i, j in pairs:
        points += [theta + steps[i] + steps[j], theta + steps[i] - steps[j],
                   theta - steps[i] + steps[j], theta - steps[i] - steps[j]]
    f = evaluate(np.array(points))
    f0, single, double = f[0], f[1:1 + 2 * n].reshape(n, 2), f[1 + 2 * n:].reshape(-1, 4)
    hess = np.diag(-(single[:, 0] - 2 * f0 + single[:, 1]) / h**2)
    for (i, j), (pp, pm, mp, mm) in zip(pairs, double):
        hess[i, j] = hess[j, i] = -(pp - pm - mp + mm) / (4 * h[i] * h[j])
    return hess


def laplace_covariance(evaluate, theta, widths):
    """Covariance of the Laplace approximation around the optimum ``theta``.

    Inverse of a central-difference Hessian of -log_prob, with each step
    a tenth of that parameter's curvature scale (from a first pass at 1e-4
    of the prior width). Parameters whose stencil leaves the prior support
    (an optimum on a bound) or whose curvature is not positive get no
    correlations and a standard deviation of 1e-3 of the prior width;
    negative eigenvalues are raised so the result is positive definite.
    ``evaluate`` maps an (n, ndim) batch to its log-probabilities.
    """
    h = 1e-4 * widths
    n = theta.size
    stencil = np.concatenate([theta[None], theta + np.diag(h), theta - np.diag(h)])
    f = evaluate(stencil)
    curvature = -(f[1:1 + n] - 2 * f[0] + f[1 + n:]) / h**2
    ok = np.isfinite(curvature) & (curvature > 0)
    h = np.where(ok, 0.1 / np.sqrt(np.where(ok, curvature, 1.0)), h)
    hess = _hessian(evaluate, theta, h)
    floor = (1e-3 * widths) ** -2
    bad = ~np.isfinite(np.diag(hess)) | (np.diag(hess) <= 0)
    hess[~np.isfinite(hess)] = 0.0
    hess[bad, :] = 0.0
    hess[:, bad] = 0.0
    hess[bad, bad] = floor[bad]
    # Work in units of each parameter's own curvature scale: a correlation matrix.
    d = np.sqrt(np.diag(hess))
    corr = hess / np.outer(d, d)
    vals, vecs = np.linalg.eigh(corr)
    vals = np.clip(vals, 1e-3, None)
    return ((vecs / vals) @ vecs.T) / np.outer(d, d)


def initial_walkers(evaluate, layout, theta, nwalkers, rng):
    """Walker positions drawn around ``theta``, each with finite probability (``evaluate``: batch log-prob)."""
    _, scale, lo, hi = sampler_geometry(layout)
    with np.errstate(invalid="ignore", over="ignore"):  # stencils that leave the support are handled
        cov = laplace_covariance(evaluate, theta, scale)
    out = []
    for scale in (1.0, 0.1, 0.01):
        draws = rng.multivariate_normal(theta, cov * scale, size=20 * nwalkers)
        # Fold draws that leave a bound back inside it (an optimum on a bound is common for jitters).
        draws = np.where(draws < lo, 2 * lo - draws, draws)
        draws = np.where(draws > hi, 2 * hi - draws, draws)
        for first in range(0, draws.shape[0], nwalkers):  # in batches: most land at the first
            batch = draws[first:first + nwalkers]
            out += list(batch[np.isfinite(evaluate(batch))])
            if len(out) >= nwalkers:
                return np.array(out[:nwalkers])
    raise RuntimeError("could not place walkers with finite probability around the optimum")


def autocorr_estimate(backend):
    """Integrated autocorrelation time per parameter (tolerance off; noisy on short chains)."""
    return backend.get_autocorr_time(tol=0)


class BufferedHDFBackend(emcee.backends.HDFBackend):
    """emcee's HDF5 chain file, written in batches of steps at most ``flush_seconds`` apart.

    emcee's own backend opens the file for every step (about 10 ms, as long
    as twenty log-probabilities of a two-planet system). Steps wait in
    memory until ``flush_seconds`` have passed, any read of the chain, or
    :meth:`flush`; an interrupted run loses at most that much sampling.
    The walkers' positions are also kept in memory once read, so the
    convergence checks do not reread the whole file (0.3 s for 6,000 steps
    of 56 walkers in 27 dimensions).
    """

    def __init__(self, filename, name, flush_seconds=1.0):
        super().__init__(filename, name=name)
        self.flush_seconds = flush_seconds
        self._pending = []
        self._last_flush = time.monotonic()
        self._positions = None  # (capacity, walkers, ndim) copy of the chain ...
        self._stored = 0        # ... filled up to here (counted here: reading the file's count opens it)

    def reset(self, nwalkers, ndim):
        self._pending = []
        self._positions, self._stored = np.empty((0, nwalkers, ndim)), 0
        super().reset(nwalkers, ndim)

    def grow(self, ngrow, blobs):
        self.flush()
        super().grow(ngrow, blobs)

    def save_step(self, state, accepted):
        coords = np.array(state.coords)
        if self._positions is not None:
            if self._stored == len(self._positions):  # double the capacity
                more = np.empty((max(self._stored, 64),) + self._positions.shape[1:])
                self._positions = np.concatenate([self._positions, more])
            self._positions[self._stored] = coords
            self._stored += 1
        self._pending.append((coords, np.array(state.log_prob), np.array(accepted), state.random_state))
        if time.monotonic() - self._last_flush >= self.flush_seconds:
            self.flush()

    def flush(self):
        """Write the steps held in memory."""
        self._last_flush = time.monotonic()
        if not self._pending:
            return
        coords, log_prob, accepted, _ = zip(*self._pending)
        with self.open("a") as f:
            g = f[self.name]
            first = g.attrs["iteration"]
            g["chain"][first:first + len(coords)] = np.stack(coords)
            g["log_prob"][first:first + len(coords)] = np.stack(log_prob)
            g["accepted"][:] += np.sum(accepted, axis=0)
            for i, v in enumerate(self._pending[-1][3]):
                g.attrs[f"random_state_{i}"] = v
            g.attrs["iteration"] = first + len(coords)
        self._pending = []

    @property
    def iteration(self):
        return super().iteration + len(self._pending)

    @property
    def accepted(self):
        self.flush()
        return super().accepted

    @property
    def random_state(self):
        self.flush()
        return super().random_state

    def get_value(self, name, flat=False, thin=1, discard=0):
        self.flush()
        if name != "chain":
            return super().get_value(name, flat=flat, thin=thin, discard=discard)
        if self._positions is None:  # a chain continued from the file: read it once
            self._positions = super().get_value("chain")
            self._stored = len(self._positions)
        value = self._positions[discard + thin - 1:self._stored:thin]
        return value.reshape(-1, value.shape[-1]) if flat else value


def _evaluate_share(log_prob, thetas):
    """Log-probabilities of one process's share of a batch of walkers."""
    return log_prob.log_prob_many(thetas)


def _serve(conn, log_prob):
    """Worker loop: receive (function, arguments), send back function(log_prob, *arguments) or the error."""
    threadpool_limits(limits=1)  # BLAS was loaded before the fork: environment variables would come too late
    while True:
        try:
            function, args = conn.recv()
        except EOFError:  # the parent has gone
            return
        try:
            conn.send(("ok", function(log_prob, *args)))
        except Exception:
            conn.send(("error", traceback.format_exc()))


class WorkerProcesses:
    """Work on one log-probability shared by ``cores`` processes: this one and ``cores - 1`` forked workers.

    The workers inherit the log-probability at the fork; only the tasks'
    arguments and results travel, through pipes. Called on an (n, ndim)
    batch (emcee's ``vectorize`` call) it splits the walkers into one share
    per process, this process taking the first.

    Parameters
    ----------
    log_prob : JointPosterior
        Anything with ``log_prob_many((n, ndim)) -> (n,)``.
    cores : int
    """

    def __init__(self, log_prob, cores):
        self.log_prob = log_prob
        self.workers = []
        context = multiprocessing.get_context("fork")
        for _ in range(max(cores, 1) - 1):
            mine, theirs = context.Pipe()
            process = context.Process(target=_serve, args=(theirs, log_prob), daemon=True)
            process.start()
            theirs.close()
            self.workers.append((process, mine))

    def map(self, function, tasks):
        """``[function(log_prob, *task) for task in tasks]``, the tasks shared out among the processes."""
        results = []
        size = len(self.workers) + 1
        for first in range(0, len(tasks), size):
            group = tasks[first:first + size]
            for (_, conn), task in zip(self.workers, group[1:]):
                conn.send((function, task))
            results.append(function(self.log_prob, *group[0]))
            for (process, conn), _ in zip(self.workers, group[1:]):
                status, value = conn.recv()
                if status == "error":
                    raise RuntimeError(f"worker process {process.pid} failed:\n{value}")
                results.append(value)
        return results

    def __call__(self, thetas):
        shares = np.array_split(np.asarray(thetas, dtype=float), len(self.workers) + 1)
        return np.concatenate(self.map(_evaluate_share, [(share,) for share in shares]))

    def close(self):
        for process, conn in self.workers:
            conn.close()
            process.terminate()
            process.join()
        self.workers = []

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


def run_sampler(log_prob, layout, settings, h5_path, rng, cores=1, progress=True, resume=False):
    """Run emcee until converged or ``settings.max_steps``.

    Parameters
    ----------
    log_prob : JointPosterior
        Callable on one sampler vector (the optimiser's calls) with
        ``log_prob_many`` for batches (the walkers', evaluated together).
    layout : ParameterLayout
    settings : SamplingConfig
    h5_path : Path
        The chain file; written every step, continued when ``resume``.
    rng : numpy.random.Generator
    cores : int
        Processes running the optimiser starts and evaluating walkers side by side (:class:`WorkerProcesses`).
    progress : bool
        Show a tqdm progress bar.
    resume : bool
        Continue the chain in ``h5_path`` instead of starting anew.

    Returns
    -------
    SamplingResult
    """
    ndim, nwalkers = layout.ndim, settings.walkers
    if nwalkers < 2 * ndim:
        nwalkers = 2 * ndim + (2 * ndim) % 2
        log.warning("walkers raised to %d: emcee needs at least twice the number of free parameters (%d)",
                    nwalkers, ndim)
    backend = BufferedHDFBackend(str(h5_path), name="chain")
    start = time.perf_counter()
    # One log-probability is too small a job for a threaded BLAS: its threads only contend with the
    # walkers' processes and other programs for the cores (6x slower evaluations on a loaded 2-core machine).
    with threadpool_limits(limits=1), WorkerProcesses(log_prob, cores) as workers:
        if resume and backend.iteration > 0:
            initial = backend.get_last_sample()
            log.info("resuming from step %d in %s", backend.iteration, h5_path)
            nwalkers = backend.shape[0]
        else:
            backend.reset(nwalkers, ndim)
            theta, best = find_map(log_prob, layout, rng, settings.optimiser_starts, workers)
            log.info("maximum a posteriori log-probability %.3f", best)
            initial = initial_walkers(workers, layout, theta, nwalkers, rng)
        sampler = emcee.EnsembleSampler(nwalkers, ndim, workers, vectorize=True, backend=backend,
                                        moves=walker_moves())
        try:
            converged, history = _sample(sampler, backend, initial, settings, rng, progress)
        finally:  # also on Ctrl-C: every step taken is saved for --resume
            backend.flush()
    return _result(backend, settings, nwalkers, converged, history, time.perf_counter() - start)


def _sample(sampler, backend, initial, settings, rng, progress):
    """Advance the chain until converged or max_steps; return (converged, history)."""
    sampler.random_state = np.random.RandomState(int(rng.integers(2**31))).get_state()
    history, converged, old_tau = [], False, np.inf
    bar = None
    if progress:
        from tqdm import tqdm
        bar = tqdm(total=settings.max_steps, initial=backend.iteration, unit="step", desc="sampling",
                   dynamic_ncols=True)
    done = backend.iteration
    for it, _ in enumerate(sampler.sample(initial, iterations=max(settings.max_steps - done, 0), progress=False,
                                          store=True), start=done + 1):
        if bar is not None:
            bar.update(1)
        # An estimate costs ~0.1 s per 1,000 steps of a 27-parameter chain: skip those that could not
        # meet the length rule even if the last estimate were 20% too high.
        if it % settings.check_every or (history and it < 0.8 * settings.autocorr_factor * old_tau):
            continue
        tau = autocorr_estimate(backend)
        tmax = float(np.max(tau))
        history.append((it, tmax))
        acc = float(np.mean(backend.accepted / backend.iteration))
        # The rule acts on the slowest parameter: its time sets how long the chain must be,
        # and its estimate must have settled (per-parameter estimates scatter by ~1% between checks).
        converged = bool(tmax * settings.autocorr_factor < it
                         and abs(old_tau - tmax) / tmax < settings.autocorr_tolerance)
        log.info("step %d: autocorrelation %.1f steps (need < %.0f), acceptance %.3f",
                 it, tmax, it / settings.autocorr_factor, acc)
        if bar is not None:
            bar.set_postfix_str(f"tau {tmax:.0f} (limit {it / settings.autocorr_factor:.0f}), accept {acc:.2f}")
        if converged:
            break
        old_tau = tmax
    if bar is not None:
        bar.close()
    return converged, history


def _result(backend, settings, nwalkers, converged, history, seconds):
    """Burn-in discarded, thinned samples and the facts of the run."""
    tau = autocorr_estimate(backend)
    steps = backend.iteration
    discard = int(min(2 * np.max(tau), steps // 2))
    thin = int(max(1, 0.5 * np.min(tau)))
    samples = backend.get_chain(discard=discard, thin=thin, flat=True)
    lp = backend.get_log_prob(discard=discard, thin=thin, flat=True)
    tmax = float(np.max(tau))
    n_indep = int((steps - discard) * nwalkers / tmax) if tmax > 0 else 0
    if not converged:
        log.warning("NOT CONVERGED: %d steps reach %.1f autocorrelation times (target %.0f); "
                    "treat the uncertainties with caution and raise sampling.max_steps.",
                    steps, steps / tmax, settings.autocorr_factor)
    return SamplingResult(samples=samples, log_prob=lp, walkers=nwalkers, steps=steps, autocorr_steps=tmax,
                          independent_samples=n_indep,
                          acceptance_fraction=float(np.mean(backend.accepted / max(steps, 1))),
                          converged=converged, seconds=seconds, discard=discard, thin=thin,
                          autocorr_history=history)
