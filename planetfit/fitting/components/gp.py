"""Gaussian-process noise with celerite2: correlated stellar variability and activity.

celerite2 (Foreman-Mackey et al. 2017, AJ 154, 220; Foreman-Mackey 2018,
RNAAS 2, 31) evaluates the likelihood of a one-dimensional GP whose kernel
is a sum of complex exponentials in O(N) operations, so a GP over tens of
thousands of photometric points can sit inside every likelihood call.
Kernels are small classes that declare their parameters and have one
method, ``term(values)``, returning the celerite2 term for one set of
parameter values.
"""

import math

import numpy as np
from celerite2 import GaussianProcess, driver, terms

from planetfit.core.quantities import DATASET
from planetfit.core.units import PPM
from planetfit.fitting.components.base import KERNELS
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema

_LOG_2PI = math.log(2 * math.pi)
#: Elements of one block of the dense (data points x times) covariance behind a predicted variance (32 MB).
PREDICT_BLOCK_ELEMENTS = 4_000_000


@KERNELS.register(schema.OscillatorGP)
class OscillatorKernel:
    """Stochastically driven damped simple harmonic oscillator (Foreman-Mackey et al. 2017, eq. 20).

    Its parameters (owned by the dataset ``block`` names): the standard
    deviation sigma (ppm), the undamped period rho (days), the quality factor Q.
    """

    def __init__(self, block):
        declare = _declarer(block.name)
        self.sigma, self.rho = declare("gp_sigma_ppm", block.gp_sigma_ppm), declare("gp_rho_days", block.gp_rho_days)
        self.quality = declare("gp_quality", block.gp_quality)
        self.parameters = [self.sigma, self.rho, self.quality]

    def term(self, values):
        return terms.SHOTerm(
            sigma=values[self.sigma.name] * PPM, rho=values[self.rho.name], Q=values[self.quality.name]
        )


@KERNELS.register(schema.Matern32GP)
class Matern32Kernel:
    """Matern-3/2 kernel in celerite2's approximation (Foreman-Mackey et al. 2017, section 4.2)."""

    def __init__(self, block):
        declare = _declarer(block.name)
        self.sigma, self.rho = declare("gp_sigma_ppm", block.gp_sigma_ppm), declare("gp_rho_days", block.gp_rho_days)
        self.parameters = [self.sigma, self.rho]

    def term(self, values):
        return terms.Matern32Term(sigma=values[self.sigma.name] * PPM, rho=values[self.rho.name])


@KERNELS.register(schema.RotationGP)
class PhotometricRotationKernel:
    """Quasi-periodic spot modulation of a light curve: celerite2's RotationTerm with its own amplitude.

    Two damped oscillators at the rotation period and half of it, of total
    standard deviation sigma (ppm), quality factors Q0 + dQ and Q0, the
    second carrying the fraction f of the first's power (Foreman-Mackey
    et al. 2017, AJ 154, 220, section 4.1; as for RVs in :class:`RotationKernel`).
    """

    def __init__(self, block):
        declare = _declarer(block.name)
        self.sigma, self.period = (
            declare("gp_sigma_ppm", block.gp_sigma_ppm),
            declare("gp_period_days", block.gp_period_days),
        )
        self.quality = declare("gp_quality", block.gp_quality)
        self.quality_difference = declare("gp_quality_difference", block.gp_quality_difference)
        self.mix = declare("gp_mix", block.gp_mix)
        self.parameters = [self.sigma, self.period, self.quality, self.quality_difference, self.mix]

    def term(self, values):
        sigma, period, q0, dq, mix = (values[p.name] for p in self.parameters)
        return terms.RotationTerm(sigma=sigma * PPM, period=period, Q0=q0, dQ=dq, f=mix)


class RotationKernel:
    """Two damped oscillators at the rotation period and half of it (celerite2's RotationTerm).

    Unit standard deviation: amplitudes are applied per instrument by
    :class:`GaussianProcessNoise`. The quasi-periodic signal of spots on a
    rotating star has its power near the rotation period and its first
    harmonic (e.g. Angus et al. 2018, MNRAS 474, 2094).
    """

    def __init__(self, block):
        declare = _declarer("rv_activity")
        self.period = declare("rotation_period_days", block.rotation_period_days)
        self.quality = declare("quality", block.quality)
        self.quality_difference = declare("quality_difference", block.quality_difference)
        self.mix = declare("mix", block.mix)
        self.parameters = [self.period, self.quality, self.quality_difference, self.mix]

    def term(self, values):
        period, q0, dq, mix = (values[p.name] for p in self.parameters)
        return terms.RotationTerm(sigma=1.0, period=period, Q0=q0, dQ=dq, f=mix)


def _declarer(owner):
    def declare(key, prior):
        return Parameter(owner, key, prior, DATASET[key])

    return declare


class GaussianProcessNoise:
    """Gaussian log-likelihood of residuals under a celerite2 GP plus white noise.

    Points may come from several instruments (``groups``), each with its
    own jitter and, optionally, its own amplitude multiplying the shared
    process: the covariance is a_g(i) a_g(j) k(t_i - t_j) + diag(error^2 +
    jitter_g^2). Dividing residuals and white-noise standard deviations
    by the amplitudes turns it into a plain celerite2 GP, with the log
    determinant gaining 2 sum ln a_g(i).

    Parameters
    ----------
    times : ndarray
        Sorted times (days).
    error : ndarray
        Reported 1-sigma uncertainties.
    kernel : OscillatorKernel, Matern32Kernel, PhotometricRotationKernel or RotationKernel
    jitters : list of Parameter
        One jitter per group, in units of ``scale``.
    scale : float
        Jitter unit in data units.
    groups : ndarray of int, optional
        Group of every point (default: one group).
    amplitudes : list of Parameter, optional
        One amplitude per group (data units); None when the kernel carries
        its own amplitude.
    """

    #: A GP predicts correlated variability (its conditional mean).
    correlated = True

    def __init__(self, times, error, kernel, jitters, scale=1.0, groups=None, amplitudes=None):
        self.times = np.ascontiguousarray(times, dtype=float)
        self.error2 = np.asarray(error, dtype=float) ** 2
        self.kernel = kernel
        self.parameters = list(kernel.parameters) + list(jitters) + list(amplitudes or [])
        self.jitter_names = [j.name for j in jitters]
        self.scale = scale
        self.groups = np.zeros(self.times.size, dtype=int) if groups is None else np.asarray(groups)
        self.amplitude_names = None if amplitudes is None else [a.name for a in amplitudes]

    def _scaled(self, residual, values):
        """Residuals and white-noise variances divided by the amplitudes, and the log-determinant correction."""
        jit = np.array([values[n] * self.scale for n in self.jitter_names])[self.groups]
        diag = self.error2 + jit * jit
        if self.amplitude_names is None:
            return residual, diag, 0.0
        amp = np.array([values[n] for n in self.amplitude_names])[self.groups]
        scaled = residual / (amp if np.ndim(residual) == 1 else amp[:, None])
        return scaled, diag / (amp * amp), float(np.sum(np.log(amp)))

    def gram(self, stack, values):
        """X^T C^-1 X of a stack X (N, m) of residual columns and -(ln det C + N ln 2 pi) / 2 (-inf if singular).

        celerite2's Cholesky factorisation and forward substitution are called
        directly (its ``GaussianProcess`` wraps the same two calls in input
        checks that cost as much as the algebra for a few hundred points):
        with K = L D L^T and L Z = X, X^T K^-1 X = Z^T D^-1 Z, ln det K = sum ln D.
        """
        stack, diag, correction = self._scaled(stack, values)
        c, a, u, v = self.kernel.term(values).get_celerite_matrices(self.times, diag)
        try:
            d, w = driver.factor(self.times, c, a, u, v, a, v.copy())
        except driver.LinAlgError:
            return None, -math.inf
        if not np.all(d > 0):
            return None, -math.inf
        x = np.ascontiguousarray(stack, dtype=float)
        z = driver.solve_lower(self.times, c, u, w, x, np.empty_like(x))
        log_norm = -0.5 * (float(np.sum(np.log(d))) + d.size * _LOG_2PI) - correction
        return z.T @ (z / d[:, None]), log_norm

    def log_likelihood(self, residual, values):
        """Log-likelihood of ``residual`` (data minus mean model); -inf if the covariance is singular."""
        gram, log_norm = self.gram(np.asarray(residual, dtype=float)[:, None], values)
        return log_norm if gram is None else log_norm - 0.5 * float(gram[0, 0])

    def log_likelihood_many(self, residuals, values_list):
        """:meth:`log_likelihood` of each row of ``residuals`` with its values (one factorisation each)."""
        return np.array([self.log_likelihood(r, v) for r, v in zip(residuals, values_list)])

    def gram_many(self, stacks, values_list):
        """:meth:`gram` of each stack (n, N, m) with its values: shapes (n, m, m) and (n,) (NaN where singular)."""
        out = np.full((len(stacks), stacks.shape[2], stacks.shape[2]), np.nan)
        log_norm = np.empty(len(stacks))
        for i, (x, v) in enumerate(zip(stacks, values_list)):
            gram, log_norm[i] = self.gram(x, v)
            if gram is not None:
                out[i] = gram
        return out, log_norm

    def predict(self, residual, values, times=None, return_sd=False):
        """Conditional mean of the process (data units) at ``times`` (default: the data times).

        At the data times, each point's group amplitude is applied; at other
        times the unit-amplitude process is returned. With ``return_sd`` the
        conditional standard deviation of the process comes too.
        """
        scaled, diag, _ = self._scaled(residual, values)
        gp = GaussianProcess(self.kernel.term(values))
        gp.compute(self.times, diag=diag, quiet=True, check_sorted=False)
        mean = gp.predict(scaled, t=times)
        if not return_sd:
            return self._amplified(mean, values, times)
        sd = np.sqrt(np.clip(self._variance(gp, scaled, times), 0.0, None))
        return self._amplified(mean, values, times), self._amplified(sd, values, times)

    def _amplified(self, x, values, times):
        """``x`` at the data times times each point's group amplitude (unchanged elsewhere or without them)."""
        if self.amplitude_names is None or times is not None:
            return x
        return x * np.array([values[n] for n in self.amplitude_names])[self.groups]

    def _variance(self, gp, scaled, times):
        """Conditional variance at ``times`` (default: the data times), a block of times at a time.

        celerite2 computes it from the dense (data points x times) covariance,
        8.8 GiB for 34,000 points predicted at their own times; blocks of
        ``PREDICT_BLOCK_ELEMENTS`` elements keep the memory bounded.
        """
        grid = self.times if times is None else np.asarray(times, dtype=float)
        blocks = max(1, math.ceil(self.times.size * grid.size / PREDICT_BLOCK_ELEMENTS))
        return np.concatenate([gp.predict(scaled, t=part, return_var=True)[1] for part in np.array_split(grid, blocks)])
