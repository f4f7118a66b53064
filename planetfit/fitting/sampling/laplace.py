"""The Laplace approximation around an optimum: covariance from a finite-difference Hessian, and the evidence."""

import math

import numpy as np


def _hessian(evaluate, theta, h):
    """Central-difference Hessian of -log_prob with steps ``h``; ``evaluate`` maps (n, ndim) to (n,)."""
    n = theta.size
    steps = np.diag(h)
    points = [theta]
    for i in range(n):
        points += [theta + steps[i], theta - steps[i]]
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n)]
    for i, j in pairs:
        points += [
            theta + steps[i] + steps[j],
            theta + steps[i] - steps[j],
            theta - steps[i] + steps[j],
            theta - steps[i] - steps[j],
        ]
    f = evaluate(np.array(points))
    f0, single, double = f[0], f[1 : 1 + 2 * n].reshape(n, 2), f[1 + 2 * n :].reshape(-1, 4)
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
    curvature = -(f[1 : 1 + n] - 2 * f[0] + f[1 + n :]) / h**2
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


def log_evidence(log_prob, cov):
    """Laplace evidence ln Z = ln p + (d/2) ln 2 pi + (1/2) ln det Sigma of an optimum of height ``log_prob``.

    The integral of a Gaussian of peak ``exp(log_prob)`` and covariance
    ``cov`` (MacKay 2003, Information Theory, Inference and Learning
    Algorithms, ch. 27, "Laplace's method").
    """
    return log_prob + 0.5 * len(cov) * math.log(2 * math.pi) + 0.5 * np.linalg.slogdet(cov)[1]
