"""Where the chain starts: the log-probability's maxima, and walkers drawn from the Laplace approximation of each.

1. Maxima: bounded and local Powell searches from the prior's centre, the
   most probable of 2,000 draws from the prior, random ones of them and,
   for planets fitted from RVs with a wide period prior, the highest
   periodogram peaks (:mod:`planetfit.fitting.sampling.periodogram`). Every search's
   end point is kept; :mod:`planetfit.fitting.sampling.modes` tells which are
   distinct modes.
2. Walkers start from the Laplace approximation around each mode
   (:mod:`planetfit.fitting.sampling.laplace`), so burn-in is short.
"""

import logging
import math

import numpy as np
from scipy import optimize

log = logging.getLogger("planetfit")

BAD_LOG_PROB = 1e25  # what the minimiser sees instead of -inf
#: Prior draws scored to choose the optimiser's starts. A transit-time prior wider than the transit makes the
#: posterior multimodal in T0; of 1,000 draws the best three lay on the right transit 87% of the time
#: (calibration system 1009), where the prior's centre led Powell to an optimum 150 below the maximum.
PRIOR_SEARCH_DRAWS = 2000
#: Powell's tolerances in prior-width units (line searches) and relative log-probability (per sweep). The walkers
#: start from a Laplace approximation and burn in, so a maximum to ~0.2 in log-probability is enough: on the demo
#: these end 0.26 below the maximum with 5,830 evaluations for the four searches, against 29,068 at (1e-7, 1e-8);
#: calibration system 1009's local search still reaches its transit (benchmark of the optimiser, issue 26).
XTOL, FTOL = 1e-3, 1e-5


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
    options = {"xtol": XTOL, "ftol": FTOL, "maxfev": 500 * len(x0)}
    if bounds is None:
        options["direc"] = 0.01 * np.eye(len(x0))
    res = optimize.minimize(objective, z0, method="Powell", bounds=bounds, options=options)
    start = objective(z0)
    if not res.fun < start:
        return x0, -float(start), int(res.nfev)
    return centre + res.x * scale, -float(res.fun), int(res.nfev)


def find_map(log_prob, layout, rng, starts, processes=None, seeds=()):
    """Maxima of the log-probability by Powell's method from several starts.

    The starts are the prior's centre and ``starts - 1`` of
    :data:`PRIOR_SEARCH_DRAWS` draws from the prior: half of them (rounded
    up) the most probable draws, the rest random ones; then every one of
    ``seeds`` (sampler vectors) with a finite probability. Ranking alone can
    mislead where the data have gaps: a transit hidden in a gap costs less
    than a visible one with a wrong depth. From each start both a bounded
    and a local Powell search run (:func:`_optimise`); neither alone found
    the maximum of both the demo and the calibration systems. The search
    runs in coordinates scaled by each prior's width, so one tolerance
    suits periods known to 1e-5 d and offsets known to 1 m/s. With
    ``processes`` (:class:`WorkerProcesses`) the searches run side by side.

    Returns
    -------
    list of (theta, log_prob_value)
        Every search's end point, the most probable first.
    """
    centre, scale, lo, hi = layout.geometry()
    bounds = [
        tuple(None if not math.isfinite(b) else (b - c) / s for b in (l, h))
        for l, h, c, s in zip(lo, hi, centre, scale)
    ]
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
    seeded = [x for x in seeds if math.isfinite(log_prob(x))]
    tasks = [(x0, centre, scale, b) for x0 in candidates + seeded for b in (bounds, None)]
    results = processes.map(_optimise, tasks) if processes else [_optimise(log_prob, *t) for t in tasks]
    for n, ((_, val, nfev), task) in enumerate(zip(results, tasks), 1):
        log.info(
            "optimiser search %d of %d (%s%s): log-probability %.3f after %d evaluations",
            n,
            len(results),
            "bounded" if task[3] else "local",
            ", periodogram seed" if n > 2 * len(candidates) else "",
            val,
            nfev,
        )
    return [(theta, val) for theta, val, _ in sorted(results, key=lambda r: -r[1])]


def initial_walkers(evaluate, layout, mode, nwalkers, rng):
    """Walker positions drawn from a mode's Laplace approximation, each with finite probability.

    ``mode`` is a :class:`planetfit.fitting.sampling.modes.Mode`; ``evaluate`` maps an (n, ndim) batch to its
    log-probabilities.
    """
    _, _, lo, hi = layout.geometry()
    theta, cov = mode.theta, mode.cov
    out = []
    for scale in (1.0, 0.1, 0.01):
        draws = rng.multivariate_normal(theta, cov * scale, size=20 * nwalkers)
        # Fold draws that leave a bound back inside it (an optimum on a bound is common for jitters).
        draws = np.where(draws < lo, 2 * lo - draws, draws)
        draws = np.where(draws > hi, 2 * hi - draws, draws)
        for first in range(0, draws.shape[0], nwalkers):  # in batches: most land at the first
            batch = draws[first : first + nwalkers]
            out += list(batch[np.isfinite(evaluate(batch))])
            if len(out) >= nwalkers:
                return np.array(out[:nwalkers])
    raise RuntimeError("could not place walkers with finite probability around the optimum")
