"""Parameters that enter a dataset's mean linearly, marginalised analytically.

A dataset's residual is r0 - A beta: r0 the data minus the model with the
linear parameters beta at zero, A (N, k) their design columns (declared by
the components that own them). With Gaussian noise of covariance C and a
prior that is normal (precision Lambda, mean mu) or flat (density 1/width)
in each beta_j, the integral over beta is Gaussian:

ln Z = ln N(r0 | 0, C) - (r0^T C^-1 r0 + mu^T Lambda mu - b^T P^-1 b) / 2 + ...

with P = A^T C^-1 A + Lambda and b = A^T C^-1 r0 + Lambda mu
(generalised least squares; e.g. Gregory 2005, Bayesian Logical Data
Analysis, section 10.5). Everything the noise model must give is the Gram
matrix X^T C^-1 X of the stack X = [r0, A] and ln det C. A uniform prior is
taken as flat over all values with its 1/width kept, so ln Z stays right
while the posterior lies well inside the range; :func:`edge_warnings` says
when it does not. Given the other parameters, beta is normal with mean
P^-1 b and covariance P^-1 (truncated to the uniform priors' box, drawn
exactly by rejection).
"""

import math

import numpy as np
from scipy import special

from planetfit.inputs.priors import Normal, Uniform

_LOG_2PI = math.log(2 * math.pi)
#: Mean share of a linear parameter's conditional posterior beyond its uniform prior's range that is warned about
#: (the flat prior then no longer holds; common practice, no published source).
EDGE_MASS = 1e-3
#: Rounds of rejection sampling of a draw truncated to the uniform priors' box before it is clipped to the box.
REJECTION_ROUNDS = 200


def marginalisable(parameter):
    """Whether a parameter can be marginalised: linear, with a (free) normal or uniform prior."""
    return parameter.linear and isinstance(parameter.prior, (Normal, Uniform))


def _cholesky(matrices):
    """Lower Cholesky factors of a stack of matrices, and which were positive definite (others get identity)."""
    try:
        return np.linalg.cholesky(matrices), np.ones(len(matrices), bool)
    except np.linalg.LinAlgError:
        eye = np.eye(matrices.shape[-1])
        out, ok = np.empty_like(matrices), np.ones(len(matrices), bool)
        for i, m in enumerate(matrices):
            try:
                out[i] = np.linalg.cholesky(m)
            except np.linalg.LinAlgError:
                out[i], ok[i] = eye, False
        return out, ok


class LinearMarginal:
    """The marginal likelihood over a dataset's linear parameters, and their conditional posterior.

    Parameters
    ----------
    parameters : list of Parameter
        Marginalisable ones (:func:`marginalisable`), in the order of the design columns.
    reference : array-like, optional
        Values subtracted before the Gram matrix is formed (r0 - A reference),
        to keep its sums free of cancellation; default the priors' centres.
    """

    def __init__(self, parameters, reference=None):
        self.parameters = list(parameters)
        self.names = [p.name for p in self.parameters]
        priors = [p.prior for p in self.parameters]
        normal = np.array([isinstance(p, Normal) for p in priors])
        self.precision = np.array([p.sd**-2 if n else 0.0 for p, n in zip(priors, normal)])
        self.mean = np.array([p.mean if n else 0.0 for p, n in zip(priors, normal)])
        self.lo = np.array([-math.inf if n else p.lo for p, n in zip(priors, normal)])
        self.hi = np.array([math.inf if n else p.hi for p, n in zip(priors, normal)])
        self.flat = ~normal
        centres = np.array([p.centre for p in priors], dtype=float)
        self.reference = centres if reference is None else np.asarray(reference, dtype=float)
        # The priors' normalisations and the Gaussian integral's (2 pi)^(k/2).
        norms = [
            -0.5 * math.log(2 * math.pi * p.sd**2) if n else -math.log(p.hi - p.lo) for p, n in zip(priors, normal)
        ]
        self.constant = float(sum(norms)) + 0.5 * len(priors) * _LOG_2PI

    def centre(self, stack):
        """The stack [r0, A] (N, 1 + k) with r0 replaced by r0 - A reference (in place)."""
        stack[:, 0] -= stack[:, 1:] @ self.reference
        return stack

    def _solve(self, gram):
        """Cholesky factors of P, L^-1 b and which rows are solvable, for Gram matrices (n, 1 + k, 1 + k)."""
        shift = self.mean - self.reference
        precision = gram[:, 1:, 1:] + np.diag(self.precision)
        b = gram[:, 1:, 0] + self.precision * shift
        chol, ok = _cholesky(precision)
        u = np.linalg.solve(chol, b[..., None])[..., 0]
        return chol, u, ok & np.all(np.isfinite(gram.reshape(len(gram), -1)), axis=1)

    def log_likelihood(self, gram, log_norm):
        """ln of the likelihood integrated over the linear parameters, shape (n,).

        Parameters
        ----------
        gram : ndarray
            (n, 1 + k, 1 + k) X^T C^-1 X of the centred stacks (:meth:`centre`).
        log_norm : ndarray
            (n,) -(ln det C + N ln 2 pi) / 2; -inf where the noise model failed.
        """
        gram = np.where(np.isfinite(log_norm)[:, None, None], gram, np.eye(gram.shape[-1]))
        chol, u, ok = self._solve(gram)
        shift = self.mean - self.reference
        chi2 = gram[:, 0, 0] + float(np.sum(self.precision * shift * shift)) - np.sum(u * u, axis=1)
        log_det = np.sum(np.log(np.diagonal(chol, axis1=1, axis2=2)), axis=1)
        out = log_norm - 0.5 * chi2 - log_det + self.constant
        return np.where(ok, out, -math.inf)

    def profile(self, gram, log_norm):
        """The likelihood maximised over the linear parameters (no prior), shape (n,): ln L at the least-squares fit."""
        gram = np.where(np.isfinite(log_norm)[:, None, None], gram, np.eye(gram.shape[-1]))
        chol, ok = _cholesky(gram[:, 1:, 1:])
        u = np.linalg.solve(chol, gram[:, 1:, :1])[..., 0]
        return np.where(ok, log_norm - 0.5 * (gram[:, 0, 0] - np.sum(u * u, axis=1)), -math.inf)

    def conditional(self, gram):
        """Mean (n, k) and lower Cholesky factor of the precision (n, k, k) of beta given the other parameters."""
        chol, u, _ = self._solve(gram)
        mean = self.reference + np.linalg.solve(np.swapaxes(chol, 1, 2), u[..., None])[..., 0]
        return mean, chol

    def draw(self, gram, rng):
        """One draw of beta per row from its conditional, truncated to the uniform priors' box.

        Returns
        -------
        beta : ndarray
            (n, k).
        clipped : int
            Rows still outside the box after :data:`REJECTION_ROUNDS` rounds of
            rejection, clipped to it (their draws are not exact).
        """
        mean, chol = self.conditional(gram)
        upper = np.swapaxes(chol, 1, 2)
        beta = np.empty_like(mean)
        todo = np.arange(len(mean))
        for _ in range(REJECTION_ROUNDS):
            eps = rng.standard_normal((todo.size, mean.shape[1]))
            beta[todo] = mean[todo] + np.linalg.solve(upper[todo], eps[..., None])[..., 0]
            todo = todo[np.any((beta[todo] < self.lo) | (beta[todo] > self.hi), axis=1)]
            if todo.size == 0:
                break
        beta[todo] = np.clip(beta[todo], self.lo, self.hi)
        return beta, int(todo.size)

    def edge_mass(self, gram):
        """Per row and parameter, the conditional probability beyond the parameter's uniform range, (n, k)."""
        mean, chol = self.conditional(gram)
        eye = np.broadcast_to(np.eye(mean.shape[1]), chol.shape)
        sd = np.sqrt(np.sum(np.linalg.solve(chol, eye) ** 2, axis=1))  # sqrt of diag(P^-1)
        with np.errstate(invalid="ignore"):
            return special.ndtr((self.lo - mean) / sd) + special.ndtr((mean - self.hi) / sd)


def edge_warnings(names, priors, edge_mass, clipped):
    """Warnings for linear parameters whose posterior reaches their uniform prior's edge.

    Parameters
    ----------
    names : list of str
    priors : list of Prior
    edge_mass : ndarray
        (n samples, k) :meth:`LinearMarginal.edge_mass` of the posterior samples.
    clipped : ndarray
        (k,) draws clipped to the range, per parameter's likelihood.
    """
    out = []
    for name, prior, mass, bad in zip(names, priors, np.mean(edge_mass, axis=0), clipped):
        if mass > EDGE_MASS or bad:
            out.append(
                f"the posterior of {name} reaches the edge of its prior {prior.describe()} ({100 * mass:.2g}% of its "
                "conditional posterior lies beyond it): it was marginalised as if its prior were flat beyond the "
                "range, which then no longer holds. Widen the prior if its edge is not physical, or sample it with "
                "'sampling: {linear_parameters: sampled}'"
            )
    return out
