"""Noise models: the log-likelihood of a dataset's residuals.

Each noise model has ``log_likelihood(residual, values)`` and
``predict(residual, values)`` (the correlated part of the residuals it
expects: zero for white noise), and is chosen per dataset when the
posterior is built. Gaussian processes live in :mod:`planetfit.models.gp`.
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
    jitter_name : str
        Parameter holding the jitter, in the units of ``error / scale``.
    scale : float
        Jitter unit in data units (1e-6 for a jitter in ppm of relative flux).
    fixed_jitter : float or None
        When the jitter is fixed, the inverse variances and the log
        determinant are computed once here instead of at every call.
    """

    def __init__(self, error, jitter_name, scale=1.0, fixed_jitter=None):
        self.error2 = np.asarray(error, dtype=float) ** 2
        self.jitter_name = jitter_name
        self.scale = scale
        self.fixed = fixed_jitter is not None
        if self.fixed:
            var = self.error2 + (fixed_jitter * scale) ** 2
            self.inverse_variance = 1.0 / var
            self.constant = -0.5 * float(np.sum(np.log(var)) + var.size * _LOG_2PI)

    def log_likelihood(self, residual, values):
        """Sum of Gaussian log-densities of ``residual``."""
        if self.fixed:
            return self.constant - 0.5 * float(np.dot(residual * residual, self.inverse_variance))
        jit = values[self.jitter_name] * self.scale
        var = self.error2 + jit * jit
        return -0.5 * float(np.sum(residual * residual / var + np.log(var)) + residual.size * _LOG_2PI)

    def predict(self, residual, values, times=None):
        """White noise predicts nothing: zeros at the data times (or at ``times``)."""
        return np.zeros(residual.size if times is None else np.size(times))
