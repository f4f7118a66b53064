"""Where the chain starts: the maximum a posteriori and walkers drawn from the Laplace approximation around it.

1. Maximum a posteriori: bounded and local Powell searches from the
   prior's centre, the most probable of 2,000 draws from the prior and
   random ones of them; the best optimum wins.
2. Walkers start from the Laplace approximation around that optimum
   (covariance from a finite-difference Hessian), so burn-in is short.
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
    centre, scale, lo, hi = layout.geometry()
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
    _, scale, lo, hi = layout.geometry()
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


