"""Hostile and broken files met by whole commands: nothing executed, nothing hangs, no traceback.

The bad-input catalogue (``bad_inputs/``) holds the cases one config and its
data show; the cases here need a process (a FIFO, a planted checkpoint, an
interrupted run) or a file too large to keep in the repository.
"""

# common practice, no published source: exit code 2 with a fix for a user's or an attacker's file is planetfit's
# own contract (DESIGN.md); these tests check no physics.

import json
import os
import pickle
import subprocess
import sys
import time

import h5py
import pytest
import yaml
from rv_models import interrupted_nested_run
from synthetic import write_tiny_system

from planetfit import pipeline
from planetfit.cli import main
from planetfit.fitting.sampling import chainfile, mcmc, nested

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
    config, _, _ = interrupted_nested_run(tmp_path, monkeypatch, live_points=60, after_calls=300)
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


def _with_photometry_file(config, name):
    raw = yaml.safe_load(config.read_text())
    raw["photometry"][0]["file"] = name
    config.write_text(yaml.safe_dump(raw, sort_keys=False))
    return config


@pytest.fixture(scope="module")
def finished_run(tmp_path_factory):
    """A short finished run of the tiny system (no figures): (folder, config, run directory)."""
    folder = tmp_path_factory.mktemp("finished")
    config = write_tiny_system(folder, max_steps=60, walkers=24)
    return folder, config, pipeline.run(config, quiet=True, figures=False).path


def test_a_fifo_named_as_data_is_refused_without_waiting(tmp_path):
    config = _with_photometry_file(write_tiny_system(tmp_path), "pipe.csv")
    os.mkfifo(tmp_path / "pipe.csv")  # no writer: opening it for reading would wait forever
    start = time.monotonic()
    code, err = planetfit("check", config, cwd=tmp_path)
    assert code == 2 and "not a regular file" in err and "pipe.csv" in err and "Fix:" in err
    assert time.monotonic() - start < TIME_LIMIT_S


def test_repeated_time_stamps_and_a_byte_order_mark_are_read(tmp_path):
    config = write_tiny_system(tmp_path)
    lines = (tmp_path / "phot.csv").read_text().splitlines()
    twice = [lines[0]] + [row for row in lines[1:] for _ in range(2)]  # every row twice (README: repeats are kept)
    (tmp_path / "phot.csv").write_text("\ufeff" + "\n".join(twice) + "\n", encoding="utf-8")
    code, out = planetfit("check", config, cwd=tmp_path)
    assert code == 0, out
    assert f"{len(lines) - 1} repeated time stamp(s) kept" in out


def test_export_to_a_missing_folder_or_a_folder_is_refused(finished_run):
    folder, _, run_dir = finished_run
    for out in (folder / "missing" / "dir" / "x.csv", folder):
        code, err = planetfit("export", run_dir, "--format", "csv", "--out", out, cwd=folder)
        assert code == 2 and "Traceback" not in err and "--out" in err and "Fix:" in err
    assert not (folder / "missing").exists()


def test_plan_with_a_zero_rv_error_says_it_must_be_positive(finished_run):
    folder, _, run_dir = finished_run
    code, err = planetfit("plan", run_dir, "--rv-error-ms", "0", cwd=folder)
    assert code == 2 and "must be positive" in err and "has no RVs" not in err


def test_resume_from_a_zeroed_last_step_is_a_clear_error(tmp_path):
    config = write_tiny_system(tmp_path, max_steps=40, walkers=24)
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    with h5py.File(run_dir / "samples.h5", "a") as fh:
        last = int(fh["chain"].attrs["iteration"]) - 1
        fh["chain"]["chain"][last] = 0.0
    raw = yaml.safe_load(config.read_text())
    raw["sampling"]["max_steps"] = 80
    config.write_text(yaml.safe_dump(raw, sort_keys=False))
    code, err = planetfit("run", config, "--resume", "--quiet", cwd=tmp_path)
    assert code == 2 and "damaged" in err and "samples.h5" in err and "Traceback" not in err


def test_ctrl_c_in_the_optimiser_does_not_claim_a_saved_chain(tmp_path, monkeypatch, capsys):
    config = write_tiny_system(tmp_path)

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(mcmc, "_start", interrupted)  # Ctrl-C while the optimiser looks for the modes
    assert main(["run", str(config), "--quiet"]) == 130
    err = capsys.readouterr().err
    assert "nothing was sampled yet" in err and "saved in samples.h5" not in err


def test_seconds_of_a_resumed_run_count_every_segment(tmp_path, monkeypatch):
    config = write_tiny_system(tmp_path, max_steps=100, walkers=24)
    steps, original = [0], chainfile.BufferedHDFBackend.save_step

    def slow_then_interrupted(self, state, accepted):
        original(self, state, accepted)
        steps[0] += 1
        if steps[0] == 30:
            time.sleep(3.0)  # a first segment of at least 3 s
            raise KeyboardInterrupt

    monkeypatch.setattr(chainfile.BufferedHDFBackend, "save_step", slow_then_interrupted)
    with pytest.raises(KeyboardInterrupt):
        pipeline.run(config, quiet=True, figures=False)
    assert chainfile.saved_steps(tmp_path / "run" / "samples.h5") == 30
    monkeypatch.setattr(chainfile.BufferedHDFBackend, "save_step", original)
    start = time.monotonic()
    run_dir = pipeline.run(config, resume=True, quiet=True, figures=False).path
    second = time.monotonic() - start
    seconds = json.loads((run_dir / "summary.json").read_text())["sampling"]["seconds"]
    assert seconds > second + 2.5  # the first segment's 3 s are counted
