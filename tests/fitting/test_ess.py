"""Bulk effective sample size of an ensemble chain, and the stopping rule that asks for it."""

import types

import emcee
import numpy as np
import pytest

from planetfit.fitting.sampling import mcmc
from planetfit.fitting.sampling.ess import bulk_ess, rank_normalised


def _ar1_chain(rng, phi, steps, walkers, ndim):
    """Independent AR(1) walkers x_t = phi x_(t-1) + sqrt(1 - phi^2) eps, started in their stationary law."""
    x = np.empty((steps, walkers, ndim))
    x[0] = rng.normal(size=(walkers, ndim))
    noise = rng.normal(size=(steps, walkers, ndim)) * np.sqrt(1 - phi**2)
    for t in range(1, steps):
        x[t] = phi * x[t - 1] + noise[t]
    return x


@pytest.mark.parametrize("phi", [0.0, 0.9])
def test_bulk_ess_of_an_ar1_chain_is_draws_over_its_autocorrelation_time(phi):
    # source: Sokal 1997 (Monte Carlo Methods in Statistical Mechanics, eq. 2.18 ff.): an AR(1) process of
    # coefficient phi has integrated autocorrelation time tau = (1 + phi) / (1 - phi), so ESS = N / tau.
    steps, walkers = 4000, 16
    chain = _ar1_chain(np.random.default_rng(3), phi, steps, walkers, 2)
    expected = steps * walkers * (1 - phi) / (1 + phi)
    ess = bulk_ess(chain)
    # common practice, no published source: the estimate scatters by a few per cent at this length.
    assert np.all(np.abs(ess / expected - 1) < 0.1), (ess, expected)


def test_bulk_ess_is_unchanged_by_a_monotone_transform():
    # source: Vehtari et al. 2021 (Bayesian Analysis 16, 667), sect. 3: rank normalisation makes bulk ESS
    # invariant to monotone transforms; a heavy-tailed exp(5 x) would otherwise change the estimate.
    chain = _ar1_chain(np.random.default_rng(4), 0.8, 2000, 8, 1)
    assert bulk_ess(np.exp(5 * chain))[0] == pytest.approx(bulk_ess(chain)[0], rel=1e-9)
    scores = rank_normalised(chain)
    assert abs(np.mean(scores)) < 1e-9 and abs(np.std(scores) - 1) < 0.01


def _settings(min_effective_samples):
    return types.SimpleNamespace(
        max_steps=20000,
        check_every=50,
        autocorr_factor=10.0,
        autocorr_tolerance=0.5,
        min_effective_samples=min_effective_samples,
    )


def _run(min_effective_samples):
    """Eight walkers on a 3-d unit Gaussian with planetfit's moves until the stopping rule holds."""
    backend = emcee.backends.Backend()
    backend.reset(8, 3)
    sampler = emcee.EnsembleSampler(
        8, 3, lambda x: -0.5 * np.sum(x**2, axis=1), vectorize=True, backend=backend, moves=mcmc.walker_moves()
    )
    initial = np.random.default_rng(5).normal(size=(8, 3))
    converged, _ = mcmc._sample(
        sampler, backend, initial, _settings(min_effective_samples), np.random.default_rng(6), False
    )
    return converged, backend


def test_the_chain_runs_until_every_parameter_has_the_effective_samples_asked_for():
    # With 8 walkers, 10 autocorrelation times hold about 80 effective samples: the length rule alone stops
    # far short of 1,000, which the effective-sample rule then asks for.
    short_converged, short = _run(min_effective_samples=1)
    converged, backend = _run(min_effective_samples=1000)
    assert short_converged and converged
    tau = float(np.max(mcmc.autocorr_estimate(backend)))
    discard = int(min(2 * tau, backend.iteration // 2))
    assert np.min(bulk_ess(backend.get_chain(discard=discard))) >= 1000
    assert backend.iteration > 3 * short.iteration
    assert mcmc._min_bulk_ess(short, float(np.max(mcmc.autocorr_estimate(short)))) < 1000


def test_a_walker_that_never_moved_counts_as_the_chains_whole_length():
    # common practice, no published source: emcee's estimate is 0/0 for a walker that has not moved; planetfit
    # takes the chain's length instead (far from converged), where the run once stopped on a NaN.
    rng = np.random.default_rng(5)
    backend = emcee.backends.Backend()
    backend.reset(8, 2)
    backend.grow(30, None)
    for _ in range(30):
        coords = rng.normal(size=(8, 2))
        coords[0] = 50.0  # the stuck walker
        backend.save_step(emcee.State(coords, log_prob=np.zeros(8)), np.ones(8, dtype=bool))
    assert np.allclose(mcmc.autocorr_estimate(backend), 30.0)
