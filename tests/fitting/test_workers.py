"""Parallel walkers: one small system fitted with 1 and with 2 processes."""

import json
import os

import emcee
import numpy as np
import pytest
from synthetic import write_tiny_system as write_system

from planetfit import pipeline
from planetfit.fitting import workers as sampling

QUANTITIES = ("period_days", "transit_bjd", "radius_ratio", "impact", "rv_amplitude_ms", "mass_earth", "radius_earth")


_PID_FOLDER = []  # [folder, original function], set by the fixture and inherited by forked workers
_SEEN = []  # pids that have left their file


def _recording_evaluate_share(log_prob, thetas):
    """The walkers' evaluation, leaving a file named by the pid of each process that runs it."""
    folder, original = _PID_FOLDER
    if os.getpid() not in _SEEN:  # once per process
        (folder / str(os.getpid())).touch()
        _SEEN.append(os.getpid())
    return original(log_prob, thetas)


@pytest.fixture
def worker_pids(tmp_path, monkeypatch):
    """Folder where each process evaluating walkers leaves a file named by its pid."""
    folder = tmp_path / "pids"
    folder.mkdir()
    _PID_FOLDER[:] = [folder, sampling._evaluate_share]
    monkeypatch.setattr(sampling, "_evaluate_share", _recording_evaluate_share)
    yield folder
    _PID_FOLDER.clear()
    _SEEN.clear()


def test_two_cores_give_the_one_core_posterior(tmp_path, worker_pids):
    config = write_system(tmp_path / "system", n_phot=150, max_steps=200)
    runs = {}
    for cores in (1, 2):
        run_dir = pipeline.run(config, output=tmp_path / f"cores-{cores}", cores=cores, quiet=True, figures=False).path
        runs[cores] = json.loads((run_dir / "summary.json").read_text())["planets"]["b"]
    pids = {int(p.name) for p in worker_pids.iterdir()}
    assert len(pids) == 2 and os.getpid() in pids, "the 2-core run must evaluate walkers in this process and one worker"
    # common practice, no published source: fits of the same data agree within their 1-sigma widths
    for key in QUANTITIES:
        one, two = runs[1][key], runs[2][key]
        sigma = 0.5 * (one["upper"] - one["lower"])
        assert abs(two["median"] - one["median"]) < sigma, (key, one, two)
    # Same seed, same proposals: evaluating walkers elsewhere must not change the chain at all.
    chains = [
        emcee.backends.HDFBackend(str(tmp_path / f"cores-{c}" / "samples.h5"), name="chain", read_only=True).get_chain()
        for c in (1, 2)
    ]
    assert np.array_equal(chains[0], chains[1])
