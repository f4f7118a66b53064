"""Noise models against dense linear algebra: the celerite2 GP likelihood and its per-instrument amplitudes."""

import math
import tracemalloc

import numpy as np
import pytest
from scipy import stats

from planetfit.core.quantities import DATASET
from planetfit.core.units import PPM
from planetfit.fitting.components import gp as gp_module
from planetfit.fitting.components.gp import GaussianProcessNoise, Matern32Kernel, OscillatorKernel, RotationKernel
from planetfit.fitting.components.noise import WhiteNoise
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema
from planetfit.inputs.priors import Uniform


def _jitters(*owners):
    """Jitter parameters of the given owners (their priors play no part in these likelihoods)."""
    return [Parameter(o, "jitter_ms", Uniform(0, 1), DATASET["jitter_ms"]) for o in owners]


def _kernel(kind):
    """A photometric GP kernel of dataset 'd' as its config block builds it (``kind`` "sho" or "matern32")."""
    block = schema.OscillatorGP if kind == "sho" else schema.Matern32GP
    return (OscillatorKernel if kind == "sho" else Matern32Kernel)(
        block(name="d", file="d.csv", exposure_min=2.0, baseline="gp", gp_kernel=kind)
    )


def _sho_values(sigma, rho, q, jitter):
    """Parameter values of dataset 'd''s oscillator kernel (sigma in data units, stored in ppm) and jitter."""
    return {"d.gp_sigma_ppm": sigma / PPM, "d.gp_rho_days": rho, "d.gp_quality": q, "d.jitter_ms": jitter}


def sho_covariance(tau, sigma, rho, q):
    """SHO autocovariance for Q > 1/2. source: Foreman-Mackey et al. 2017, AJ 154, 220, eq. 21-23
    (written with S0 w0 Q = sigma^2 and w0 = 2 pi / rho)."""
    w0 = 2 * np.pi / rho
    eta = math.sqrt(1 - 1 / (4 * q * q))
    tau = np.abs(tau)
    return sigma**2 * np.exp(-w0 * tau / (2 * q)) * (np.cos(eta * w0 * tau) + np.sin(eta * w0 * tau) / (2 * eta * q))


def matern32_covariance(tau, sigma, rho):
    """source: Rasmussen & Williams 2006, Gaussian Processes for Machine Learning, eq. 4.17 (nu = 3/2)."""
    r = math.sqrt(3) * np.abs(tau) / rho
    return sigma**2 * (1 + r) * np.exp(-r)


@pytest.fixture
def data():
    rng = np.random.default_rng(3)
    t = np.sort(rng.uniform(0, 20, 150))
    return t, rng.normal(0, 2.0, t.size), rng.uniform(0.5, 1.5, t.size)


def test_sho_likelihood_equals_dense_gaussian(data):
    t, y, err = data
    values = _sho_values(1.7, 3.0, 2.0, 0.3)
    noise = GaussianProcessNoise(t, err, _kernel("sho"), _jitters("d"))
    cov = sho_covariance(t[:, None] - t[None, :], 1.7, 3.0, 2.0) + np.diag(err**2 + 0.3**2)
    # source: multivariate normal log-density (scipy.stats.multivariate_normal)
    assert noise.log_likelihood(y, values) == pytest.approx(stats.multivariate_normal(cov=cov).logpdf(y), abs=1e-6)


def test_matern_likelihood_is_close_to_the_exact_kernel(data):
    t, y, err = data
    values = {"d.gp_sigma_ppm": 1.2 / PPM, "d.gp_rho_days": 2.0, "d.jitter_ms": 0.0}
    noise = GaussianProcessNoise(t, err, _kernel("matern32"), _jitters("d"))
    cov = matern32_covariance(t[:, None] - t[None, :], 1.2, 2.0) + np.diag(err**2)
    # celerite2 approximates Matern-3/2 with eps = 0.01 (Foreman-Mackey et al. 2017, section 4.2)
    assert noise.log_likelihood(y, values) == pytest.approx(stats.multivariate_normal(cov=cov).logpdf(y), abs=0.05)


def test_per_instrument_amplitudes_equal_dense_scaled_covariance(data):
    t, y, err = data
    groups = (np.arange(t.size) % 3 == 0).astype(int)
    values = {
        "rv_activity.rotation_period_days": 6.0,
        "rv_activity.quality": 3.0,
        "rv_activity.quality_difference": 1.0,
        "rv_activity.mix": 0.4,
        "a.jitter_ms": 0.2,
        "b.jitter_ms": 0.7,
        "a.activity_amplitude_ms": 2.5,
        "b.activity_amplitude_ms": 0.8,
    }
    kernel = RotationKernel(schema.RvActivity(rotation_period_days=6.0))
    amplitudes = [Parameter(o, "activity_amplitude_ms", Uniform(0, 9), DATASET["activity_amplitude_ms"]) for o in "ab"]
    noise = GaussianProcessNoise(t, err, kernel, _jitters("a", "b"), 1.0, groups=groups, amplitudes=amplitudes)
    # Unit-amplitude rotation kernel: two SHO terms at P and P/2. source: celerite2 documentation, RotationTerm
    q1, q2 = 0.5 + 3.0 + 1.0, 0.5 + 3.0
    w1 = 4 * np.pi * q1 / (6.0 * math.sqrt(4 * q1**2 - 1))
    w2 = 8 * np.pi * q2 / (6.0 * math.sqrt(4 * q2**2 - 1))
    tau = t[:, None] - t[None, :]
    k = sho_covariance(tau, math.sqrt(1 / 1.4), 2 * np.pi / w1, q1) + sho_covariance(
        tau, math.sqrt(0.4 / 1.4), 2 * np.pi / w2, q2
    )
    amp = np.where(groups == 1, 0.8, 2.5)
    jit = np.where(groups == 1, 0.7, 0.2)
    cov = amp[:, None] * amp[None, :] * k + np.diag(err**2 + jit**2)
    assert noise.log_likelihood(y, values) == pytest.approx(stats.multivariate_normal(cov=cov).logpdf(y), abs=1e-6)


def test_gp_prediction_follows_a_slow_signal(data):
    t, _, _ = data
    signal = 3 * np.sin(2 * np.pi * t / 9.0)
    y = signal + np.random.default_rng(4).normal(0, 0.3, t.size)
    noise = GaussianProcessNoise(t, np.full(t.size, 0.3), _kernel("sho"), _jitters("d"))
    pred = noise.predict(y, _sho_values(3.0, 9.0, 5.0, 0.0))
    # common practice, no published source: the conditional mean follows a well-sampled signal to within the noise
    assert np.std(pred - signal) < 0.3
    assert np.all(WhiteNoise(np.ones(3), _jitters("d")).predict(np.ones(3), {"d.jitter_ms": 0.0}) == 0)


def test_prediction_sd_in_blocks_equals_the_dense_conditional(data, monkeypatch):
    t, y, err = data
    values = _sho_values(1.7, 3.0, 2.0, 0.3)
    noise = GaussianProcessNoise(t, err, _kernel("sho"), _jitters("d"))
    grid = np.linspace(-1, 21, 40)
    monkeypatch.setattr(gp_module, "PREDICT_BLOCK_ELEMENTS", 1000)  # 150 x 40 in 6 blocks
    mean, sd = noise.predict(y, values, times=grid, return_sd=True)
    # source: Rasmussen & Williams 2006, eq. 2.25-2.26 (the GP's conditional mean and covariance)
    k = sho_covariance(t[:, None] - t[None, :], 1.7, 3.0, 2.0) + np.diag(err**2 + 0.3**2)
    ks = sho_covariance(t[:, None] - grid[None, :], 1.7, 3.0, 2.0)
    assert mean == pytest.approx(ks.T @ np.linalg.solve(k, y), abs=1e-8)
    dense_var = 1.7**2 - np.sum(ks * np.linalg.solve(k, ks), axis=0)
    assert sd == pytest.approx(np.sqrt(dense_var), abs=1e-8)


def test_prediction_at_many_points_without_sd_builds_no_dense_matrix():
    t = np.arange(40_000) * 2.0 / 1440  # a 2-min sector: a dense 40,000 x 40,000 matrix would take 12.8 GB
    y = np.sin(2 * np.pi * t / 3.0)
    noise = GaussianProcessNoise(t, np.full(t.size, 0.1), _kernel("sho"), _jitters("d"))
    tracemalloc.start()
    pred = noise.predict(y, _sho_values(1.0, 3.0, 2.0, 0.0))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    assert pred.shape == t.shape
    assert peak < 50 * t.size * 8  # tens of vectors, never a matrix
