"""Interrupted runs: SIGKILL, Ctrl-C and SIGTERM, then --resume; corrupt and mismatched chains."""

# common practice, no published source: resume and interruption follow planetfit's own contract
# (DESIGN.md, exit 130, no lost steps); no physics is checked.

import json
import os
import signal
import subprocess
import sys
import time

import emcee
import h5py
import numpy as np
import pytest
from synthetic import write_tiny_system as write_system

from planetfit import pipeline
from planetfit.cli import main

WAIT_S = 60


@pytest.fixture
def no_figures(monkeypatch):
    """Skip figures and tables (planetfit/report's job, ~20 s); summary.json and posterior.csv are still written."""
    monkeypatch.setattr(pipeline.outputs, "write_all", lambda *args, **kwargs: None)


def _iteration(h5):
    """Saved steps in ``h5`` (0 while the file is missing or being written)."""
    try:
        with h5py.File(h5, "r", locking=False) as fh:
            return int(fh["chain"].attrs["iteration"])
    except (OSError, KeyError):
        return 0


def _start(config, *extra):
    return subprocess.Popen(
        [sys.executable, "-m", "planetfit.cli", "run", str(config), "--quiet", *extra],
        cwd=config.parent,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )


def _wait_for_steps(proc, h5, steps):
    deadline = time.monotonic() + WAIT_S
    while _iteration(h5) < steps:
        assert proc.poll() is None, f"the run ended before {steps} steps: {proc.communicate()}"
        assert time.monotonic() < deadline, "no progress in the chain"
        time.sleep(0.1)


def _chain(h5):
    return emcee.backends.HDFBackend(str(h5), name="chain", read_only=True).get_chain()


def test_killed_run_resumes_without_losing_steps(tmp_path, capsys, no_figures):
    config = write_system(tmp_path, max_steps=500, n_phot=150)
    h5 = tmp_path / "run" / "samples.h5"
    proc = _start(config)
    _wait_for_steps(proc, h5, 60)
    proc.send_signal(signal.SIGKILL)
    proc.wait(timeout=WAIT_S)
    saved = _chain(h5)
    assert saved.shape[0] >= 60
    assert main(["run", str(config), "--quiet"]) == 2  # a full run folder is never overwritten silently
    assert "--resume" in capsys.readouterr().err
    assert main(["run", str(config), "--resume", "--quiet"]) == 0
    resumed = _chain(h5)
    assert resumed.shape[0] >= saved.shape[0]
    np.testing.assert_array_equal(resumed[: saved.shape[0]], saved)
    summary = json.loads((tmp_path / "run" / "summary.json").read_text())
    assert summary["sampling"]["steps"] == resumed.shape[0]
    assert summary["planets"]["b"]["radius_ratio"]["median"] > 0


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
def test_interrupt_exits_130_and_says_how_to_resume(tmp_path, sig):
    config = write_system(tmp_path, max_steps=5000, n_phot=150)
    h5 = tmp_path / "run" / "samples.h5"
    proc = _start(config)
    _wait_for_steps(proc, h5, 20)
    proc.send_signal(sig)
    out, err = proc.communicate(timeout=WAIT_S)
    assert proc.returncode == 130, err
    assert "Traceback" not in out + err
    assert f"planetfit run {config} --resume" in err
    assert _iteration(h5) >= 20  # the steps before the signal are kept


def _foreign_chain(h5, nwalkers, ndim):
    """A valid emcee chain file of another shape, two steps long."""
    h5.parent.mkdir(parents=True, exist_ok=True)
    backend = emcee.backends.HDFBackend(str(h5), name="chain")
    backend.reset(nwalkers, ndim)
    sampler = emcee.EnsembleSampler(nwalkers, ndim, lambda x: -0.5 * float(x @ x), backend=backend)
    sampler.run_mcmc(np.random.default_rng(0).normal(size=(nwalkers, ndim)), 2)


def test_resume_with_other_walkers_or_dimension_is_refused(tmp_path, capsys):
    config = write_system(tmp_path, max_steps=100, n_phot=150)
    h5 = tmp_path / "run" / "samples.h5"
    _foreign_chain(h5, 10, 3)
    before = h5.read_bytes()
    assert main(["run", str(config), "--resume", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "10 walkers x 3 parameters" in err and "Fix:" in err and "samples.h5" in err
    assert h5.read_bytes() == before


def test_truncated_chain_is_refused_and_kept(tmp_path, capsys):
    config = write_system(tmp_path, max_steps=100, n_phot=150)
    h5 = tmp_path / "run" / "samples.h5"
    _foreign_chain(h5, 24, 12)
    h5.write_bytes(h5.read_bytes()[:2000])
    before = h5.read_bytes()
    for args in (
        ["run", str(config), "--resume", "--quiet"],
        ["run", str(config), "--quiet"],
        ["redraw", str(h5.parent)],
    ):
        assert main(args) == 2
        err = capsys.readouterr().err
        assert "Fix:" in err and "Traceback" not in err
        assert h5.read_bytes() == before


def test_run_writes_only_inside_its_run_directory(tmp_path, no_figures):
    config = write_system(tmp_path / "cfg", max_steps=100, n_phot=150)
    before = set(tmp_path.rglob("*"))
    cwd_before = set(os.listdir(os.getcwd()))
    assert main(["run", str(config), "--quiet"]) == 0
    new = set(tmp_path.rglob("*")) - before
    run_dir = tmp_path / "cfg" / "run"
    assert new and all(p == run_dir or run_dir in p.parents for p in new)
    assert set(os.listdir(os.getcwd())) == cwd_before
    assert not list(run_dir.glob(".*.tmp"))  # atomic writes leave no temporary files
