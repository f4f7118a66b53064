"""White noise: the log-likelihood of residuals with independent Gaussian errors and a jitter.

A noise model has ``log_likelihood_many(residuals, values_list)`` (the
log-likelihoods of a batch of walkers' residuals),
``gram_many(stacks, values_list)`` (what marginalising linear parameters
needs, :mod:`planetfit.fitting.linear`) and
``predict(residual, values)`` (the correlated part of the residuals it
expects: zero for white noise). Gaussian processes, the other noise
models, live in :mod:`planetfit.fitting.components.gp`. A light curve
with fixed white noise is scored from precomputed sums
(:class:`SumsOfSquares`), in time proportional to its in-transit points.
"""

import math

import numpy as np

_LOG_2PI = math.log(2 * math.pi)


class WhiteNoise:
    """Independent Gaussian errors with a jitter added in quadrature.

    Parameters
    ----------
    error : ndarray
        Reported 1-sigma uncertainties.
    jitters : list of Parameter
        One jitter per group of points, in units of ``scale``. When every
        one is fixed, the inverse variances and the log determinant are
        computed once here instead of at every call.
    scale : float
        Jitter unit in data units (1e-6 for a jitter in ppm of relative flux).
    groups : ndarray of int, optional
        Group of every point (default: one group).
    """

    #: White noise predicts no correlated signal.
    correlated = False

    def __init__(self, error, jitters, scale=1.0, groups=None):
        self.error2 = np.asarray(error, dtype=float) ** 2
        self.parameters = list(jitters)
        self.jitter_names = [j.name for j in jitters]
        self.scale = scale
        self.groups = np.zeros(self.error2.size, dtype=int) if groups is None else np.asarray(groups)
        self.fixed = all(j.prior.fixed for j in jitters)
        if self.fixed:
            jit = np.array([j.prior.value for j in jitters])[self.groups] * scale
            var = self.error2 + jit * jit
            self.inverse_variance = 1.0 / var
            self.constant = -0.5 * float(np.sum(np.log(var)) + var.size * _LOG_2PI)

    def log_likelihood_many(self, residuals, values_list):
        """Sum of Gaussian log-densities of each row of ``residuals`` (n, N) with its values, shape (n,)."""
        if self.fixed:
            return self.constant - 0.5 * (residuals * residuals) @ self.inverse_variance
        jit = np.array([[v[n] for n in self.jitter_names] for v in values_list])[:, self.groups] * self.scale
        var = self.error2 + jit * jit
        return -0.5 * (np.sum(residuals * residuals / var + np.log(var), axis=1) + self.error2.size * _LOG_2PI)

    def gram_many(self, stacks, values_list):
        """X^T C^-1 X of each stack X (n, N, m) and -(ln det C + N ln 2 pi) / 2, shapes (n, m, m) and (n,)."""
        if self.fixed:
            weighted = stacks * self.inverse_variance[None, :, None]
            log_norm = np.full(len(stacks), self.constant)
        else:
            jit = np.array([[v[n] for n in self.jitter_names] for v in values_list])[:, self.groups] * self.scale
            var = self.error2 + jit * jit
            weighted = stacks / var[..., None]
            log_norm = -0.5 * (np.sum(np.log(var), axis=1) + self.error2.size * _LOG_2PI)
        return np.swapaxes(weighted, 1, 2) @ stacks, log_norm

    def predict(self, residual, values, times=None):
        """White noise predicts nothing: zeros at the data times (or at ``times``)."""
        return np.zeros(residual.size if times is None else np.size(times))


class SumsOfSquares:
    """Fixed-weight white noise of a baseline cut by a few transits, in time independent of N.

    The model is b (1 - x): b = B c a baseline linear in its coefficients c,
    x a relative deficit non-zero only on a set S of points. With weights
    w = 1/var fixed and r0 = y - b,
    chi^2 = sum w r0^2 + sum_S w m (2 r0 + m), m = b x. The first sum is a
    quadratic form in c whose matrices (B^T W B, B^T W y, y^T W y) are
    computed once, so a transit model only costs its in-window points.
    y is centred on its weighted mean (folded into the first coefficient)
    to keep the quadratic form free of cancellation.

    Parameters
    ----------
    y : ndarray
        The data, length N.
    basis : ndarray
        (N, k) baseline basis B; its first column is all ones.
    noise : WhiteNoise
        With fixed jitter (``noise.fixed``).
    """

    def __init__(self, y, basis, noise):
        w = noise.inverse_variance
        self.mean = float(np.dot(w, y) / w.sum())
        self.y = np.asarray(y, dtype=float) - self.mean
        self.w = w
        self.columns = [np.ascontiguousarray(col) for col in basis.T[1:]]  # after the constant one
        wb = basis * w[:, None]
        self.btwb, self.btwy = wb.T @ basis, wb.T @ self.y
        self.ytwy = float(np.dot(w * self.y, self.y))
        self.constant = noise.constant
        self.full_gram = np.block([[np.array([[self.ytwy]]), self.btwy[None, :]], [self.btwy[:, None], self.btwb]])

    def _windows(self, coefficients, indices):
        """The windows' points of every model: index, owner, and the baseline B c there (centred part not added)."""
        sizes = [ix.size for ix in indices]
        index = np.concatenate(indices) if sum(sizes) else np.empty(0, dtype=np.intp)
        owner = np.repeat(np.arange(len(sizes)), sizes)
        b = coefficients[owner, 0]
        for k, column in enumerate(self.columns, 1):
            b = b + coefficients[owner, k] * column[index]
        return index, owner, b

    def gram(self, units, base, indices, relative_deficits):
        """Gram matrices of [r, g_1..g_L] for n models with L marginalised parameters, in time independent of N.

        g_j = (B u_j)(1 - x) is parameter j's design column (``units`` u_j:
        the baseline coefficients per unit of it), r = y - (B v)(1 - x) the
        data minus the model with the parameters at their reference values
        (``base`` v: the baseline coefficients there). Off the windows both
        are combinations of y - mean and the basis (r: 1 and mean e_1 - v;
        g_j: 0 and u_j), whose Gram matrix is precomputed; the windows' points
        add the difference, written as d (2 x + d) so that nothing cancels.

        Parameters
        ----------
        units : array-like
            (n, L, k) coefficients per unit of each marginalised parameter.
        base : array-like
            (n, k) coefficients at the reference values.
        indices, relative_deficits : list of ndarray
            Per model, the points where its deficit x is non-zero and x there.

        Returns
        -------
        ndarray
            Shape (n, 1 + L, 1 + L).
        """
        u, v = np.array(units, dtype=float), np.array(base, dtype=float)
        n, m, k = u.shape
        combos = np.zeros((n, 1 + k, 1 + m))
        combos[:, 0, 0] = 1.0
        combos[:, 1:, 0] = -v
        combos[:, 1, 0] += self.mean
        combos[:, 1:, 1:] = np.swapaxes(u, 1, 2)
        gram = np.swapaxes(combos, 1, 2) @ self.full_gram @ combos
        index, owner, bv = self._windows(v, indices)
        if index.size:
            x = np.concatenate(relative_deficits)
            bu = [self._windows(u[:, j], indices)[2] for j in range(m)]
            off = np.array([self.y[index] + self.mean - bv, *bu])  # [r, g_j] off the windows' deficits
            diff = np.array([bv * x, *(-b * x for b in bu)])  # what the deficits add to each
            w = self.w[index]
            for i in range(1 + m):
                for j in range(i, 1 + m):
                    value = w * (diff[i] * off[j] + off[i] * diff[j] + diff[i] * diff[j])
                    gram[:, i, j] += np.bincount(owner, value, minlength=n)
                    gram[:, j, i] = gram[:, i, j]
        return gram

    def score(self, coefficients, indices, relative_deficits):
        """Log-likelihoods of n models at once.

        Parameters
        ----------
        coefficients : ndarray
            (n, k) baseline coefficients.
        indices, relative_deficits : list of ndarray
            Per model, the points where its deficit x is non-zero and x there.

        Returns
        -------
        ndarray
            Shape (n,).
        """
        c = np.array(coefficients, dtype=float)
        c[:, 0] -= self.mean
        chi2 = self.ytwy - 2 * c @ self.btwy + np.einsum("ij,jk,ik->i", c, self.btwb, c)
        index, owner, b = self._windows(c, indices)  # b: the centred baseline at the windows' points
        if index.size:
            m = (b + self.mean) * np.concatenate(relative_deficits)
            chi2 += np.bincount(owner, self.w[index] * m * (2 * (self.y[index] - b) + m), minlength=len(c))
        return self.constant - 0.5 * chi2
