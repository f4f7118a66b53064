"""samples.h5 against emcee's HDF backend contract: what the buffered writer stores, emcee reads back."""

import emcee
import numpy as np
import pytest

from planetfit.core.errors import InputError
from planetfit.fitting.sampling import chainfile


def _log_prob(x):
    return -0.5 * np.sum(x * x, axis=-1)


def test_buffered_chain_reads_back_as_emcees_own(tmp_path):
    # source: emcee's documented backend interface (emcee.backends.HDFBackend): the same chain, log-probabilities,
    # acceptance counts and random state as emcee's own in-memory backend for the same seed
    walkers, ndim, steps = 8, 3, 50
    start = np.random.default_rng(1).normal(size=(walkers, ndim))
    runs = []
    for backend in (chainfile.open_chain(tmp_path / "samples.h5"), emcee.backends.Backend()):
        sampler = emcee.EnsembleSampler(walkers, ndim, _log_prob, vectorize=True, backend=backend)
        sampler.random_state = np.random.RandomState(3).get_state()
        sampler.run_mcmc(start, steps, progress=False)
        runs.append(sampler)
    runs[0].backend.flush()  # steps wait in memory until flushed (the sampler's driver flushes at the end)
    buffered = emcee.backends.HDFBackend(str(tmp_path / "samples.h5"), name=chainfile.CHAIN_GROUP, read_only=True)
    assert np.array_equal(buffered.get_chain(), runs[1].get_chain())
    assert np.array_equal(buffered.get_log_prob(), runs[1].get_log_prob())
    assert np.array_equal(buffered.accepted, runs[1].backend.accepted) and buffered.iteration == steps


def test_facts_and_posterior_round_trip(tmp_path):
    h5 = tmp_path / "samples.h5"
    backend = chainfile.open_chain(h5)
    sampler = emcee.EnsembleSampler(6, 2, _log_prob, vectorize=True, backend=backend)
    sampler.run_mcmc(np.random.default_rng(0).normal(size=(6, 2)), 40, progress=False)
    backend.flush()
    chainfile.write_facts(h5, ["a", "b"], {"discard": 10, "thin": 2, "steps": 40}, [(20, 3.0), (40, 3.5)])
    facts, samples = chainfile.read_posterior(h5)
    assert facts["steps"] == 40 and samples.shape == (15 * 6, 2)
    history, chain = chainfile.read_chain(h5)
    assert history.tolist() == [[20, 3.0], [40, 3.5]] and chain.shape == (40, 6, 2)
    assert chainfile.check_resumable(h5, ndim=2, walkers=6) == 40
    with pytest.raises(InputError, match="6 walkers x 2 parameters"):
        chainfile.check_resumable(h5, ndim=3, walkers=6)


def test_a_missing_or_broken_file_is_an_input_error(tmp_path):
    with pytest.raises(InputError, match="no samples.h5"):
        chainfile.read_posterior(tmp_path / "samples.h5")
    (tmp_path / "samples.h5").write_bytes(b"not hdf5")
    with pytest.raises(InputError, match="truncated or not a planetfit chain"):
        chainfile.check_resumable(tmp_path / "samples.h5", 2, 6)
