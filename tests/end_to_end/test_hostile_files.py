"""Hostile and broken files met by whole commands: nothing executed, nothing hangs, no traceback.

The bad-input catalogue (``bad_inputs/``) holds the cases one config and its
data show; the cases here need a process (a FIFO, a planted checkpoint, an
interrupted run) or a file too large to keep in the repository.
"""

# common practice, no published source: exit code 2 with a fix for a user's or an attacker's file is planetfit's
# own contract (DESIGN.md); these tests check no physics.

import os
import pickle
import subprocess
import sys

import pytest
from rv_models import K_MS, PERIOD, TC, circular, rv_data, write_rv_model
from synthetic import planet_truth

from planetfit import pipeline
from planetfit.fitting import nested
from planetfit.fitting.posterior import JointPosterior

TIME_LIMIT_S = 60


def planetfit(*args, cwd, timeout=TIME_LIMIT_S):
    """``planetfit ARGS`` in a fresh process: (exit code, stderr)."""
    proc = subprocess.run(
        [sys.executable, "-m", "planetfit.cli", *map(str, args)],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=timeout,
    )
    return proc.returncode, proc.stdout + proc.stderr


class _WritesAFile:
    """Unpickling this calls os.system, which writes a file: the attack of issue 29's case 6."""

    def __init__(self, target):
        self.target = target

    def __reduce__(self):
        return os.system, (f"echo pwned > {self.target}",)


def test_a_planted_checkpoint_pickle_is_never_unpickled(tmp_path, monkeypatch):
    t, rv = rv_data(4, {"b": planet_truth(PERIOD, TC, K_MS)})
    config = write_rv_model(tmp_path, t, rv, {"b": circular()}, live_points=60)
    monkeypatch.setattr(nested, "CHECKPOINT_SECONDS", 0.0)
    calls, original = [0], JointPosterior.log_likelihood_many

    def interrupted(self, thetas):
        calls[0] += 1
        if calls[0] > 300:
            raise KeyboardInterrupt
        return original(self, thetas)

    monkeypatch.setattr(JointPosterior, "log_likelihood_many", interrupted)
    with pytest.raises(KeyboardInterrupt):
        pipeline.run(config, quiet=True, figures=False)
    checkpoint = tmp_path / "run" / nested.CHECKPOINT
    assert checkpoint.read_bytes().startswith(b"planetfit-hmac-sha256 ")  # the real one is signed
    target = tmp_path / "pwned.txt"
    for planted in (
        pickle.dumps(_WritesAFile(target)),  # a bare pickle
        b"planetfit-hmac-sha256 " + b"0" * 64 + b"\n" + pickle.dumps(_WritesAFile(target)),  # a forged signature
    ):
        checkpoint.write_bytes(planted)
        code, err = planetfit("run", config, "--resume", "--quiet", cwd=tmp_path)
        assert code == 2, err
        assert "Traceback" not in err and "Fix:" in err and nested.CHECKPOINT in err
        assert not target.exists()
