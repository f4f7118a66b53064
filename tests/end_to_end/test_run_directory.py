"""The run directory's manifest and lock: concurrent runs, resume after a change, --force, redraw, export, plan."""

# common practice, no published source: the run directory's contract is planetfit's own (DESIGN.md,
# "Run directory (this round)"); no physics is checked.

import contextlib
import json
import os
import resource
import shutil
import signal
import socket
import subprocess
import sys
import time

import pytest
import yaml
from synthetic import write_tiny_system as write_system

from planetfit import pipeline
from planetfit.cli import main
from planetfit.core.errors import InputError
from planetfit.fitting.sampling.chainfile import saved_steps
from planetfit.rundir import RunDirectory, require_writable

WAIT_S = 90


@pytest.fixture
def no_figures(monkeypatch):
    """Skip figures and tables (planetfit/report's job); summary.json, posterior.csv and the manifest are written."""
    monkeypatch.setattr(pipeline.outputs, "write_all", lambda *args, **kwargs: None)


@pytest.fixture(scope="module")
def finished(tmp_path_factory):
    """A finished tiny run (no figures); tests copy it before changing anything."""
    folder = tmp_path_factory.mktemp("finished")
    config = write_system(folder, max_steps=100, n_phot=150)
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(pipeline.outputs, "write_all", lambda *args, **kwargs: None)
        assert main(["run", str(config), "--quiet"]) == 0
    return config


def _copy(finished, tmp_path):
    """A copy of the finished run whose resolved config reads the copy's data files."""
    shutil.copytree(finished.parent, tmp_path / "sys")
    resolved = tmp_path / "sys" / "run" / "config.resolved.yaml"
    resolved.write_text(resolved.read_text().replace(str(finished.parent), str(tmp_path / "sys")))
    return tmp_path / "sys" / "config.yaml"


def _snapshot(folder):
    return {p.relative_to(folder): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def _steps(h5):
    """Saved steps in ``h5`` (0 while it is missing or being written)."""
    try:
        return saved_steps(h5)
    except (InputError, OSError):
        return 0


def _start(config, *extra):
    return subprocess.Popen(
        [sys.executable, "-m", "planetfit.cli", "run", str(config), "--quiet", "--no-figures", *extra],
        cwd=config.parent,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )


def _wait(condition, what):
    deadline = time.monotonic() + WAIT_S
    while not condition():
        assert time.monotonic() < deadline, f"timed out waiting for {what}"
        time.sleep(0.1)


@pytest.mark.slow
def test_two_runs_on_one_directory_then_a_stale_lock_taken_over(tmp_path, capsys, no_figures):
    config = write_system(tmp_path, max_steps=20000, n_phot=150)
    first, second = _start(config), _start(config)
    _wait(lambda: first.poll() is not None or second.poll() is not None, "one run to refuse")
    refused, running = (first, second) if first.poll() is not None else (second, first)
    err = refused.communicate()[1]
    assert refused.returncode == 2, err
    assert f"pid {running.pid}" in err and "Fix:" in err and "Traceback" not in err
    assert running.poll() is None  # the other one is still sampling
    lock = tmp_path / "run" / "run.lock"
    assert json.loads(lock.read_text())["pid"] == running.pid
    for extra in (["--force"], ["--resume"]):  # neither may touch a live run's chain
        assert main(["run", str(config), "--quiet", *extra]) == 2
        assert f"pid {running.pid}" in capsys.readouterr().err
    _wait(lambda: _steps(tmp_path / "run" / "samples.h5") >= 20, "steps in the chain")
    assert running.poll() is None
    running.send_signal(signal.SIGKILL)
    running.wait(timeout=WAIT_S)
    assert lock.exists()  # SIGKILL leaves the lock behind
    text = config.read_text().replace("max_steps: 20000", "max_steps: 100")  # a stopping rule may change
    config.write_text(text)
    assert main(["run", str(config), "--resume", "--quiet"]) == 0
    err = capsys.readouterr().err
    assert f"took over the lock of process {running.pid}" in err
    assert not lock.exists()


def test_resume_after_a_change_is_refused_with_the_differences(finished, tmp_path, capsys):
    config = _copy(finished, tmp_path)
    run = RunDirectory(config.parent / "run")
    before = _snapshot(run.path)
    with open(config.parent / "rv.txt", "a") as fh:
        fh.write("2460030.0 1.0 1.5\n")
    raw = yaml.safe_load(config.read_text())
    raw["planets"]["b"]["period_days"] = {"uniform": [2.995, 3.0]}
    config.write_text(yaml.safe_dump(raw))
    assert main(["run", str(config), "--resume", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "2 difference(s)" in err and "rv.txt: changed since the run started" in err
    assert "config.planets.b.period_days.uniform: [2.99, 3.01] -> [2.995, 3.0]" in err and "Fix:" in err
    assert _snapshot(run.path) == before


def test_resume_with_another_sampler_is_refused(finished, tmp_path, capsys):
    config = _copy(finished, tmp_path)
    before = _snapshot(config.parent / "run")
    raw = yaml.safe_load(config.read_text())
    raw["sampling"]["method"] = "nested"
    config.write_text(yaml.safe_dump(raw))
    assert main(["run", str(config), "--resume", "--quiet"]) == 2
    assert 'sampling.method: "mcmc" -> "nested"' in capsys.readouterr().err
    assert _snapshot(config.parent / "run") == before  # the MCMC chain is not replaced


def test_force_refuses_a_folder_that_is_not_a_run_and_deletes_nothing(finished, tmp_path, capsys):
    paper = tmp_path / "paper"
    (paper / "figures").mkdir(parents=True)
    for name in ("table.tex", "summary.md", "posterior.csv", "figures/fig1_final.pdf"):
        (paper / name).write_text(f"the user's own {name}\n")
    before = _snapshot(paper)
    assert main(["run", str(finished), "--out", str(paper), "--force", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "nothing was deleted" in err and "manifest.json" in err
    assert _snapshot(paper) == before
    assert main(["run", str(finished), "--out", str(paper), "--quiet"]) == 2
    fix = capsys.readouterr().err.split("Fix:")[1]
    assert "--force" not in fix  # a folder that is not a run is never offered to --force


def test_force_deletes_only_what_planetfit_wrote(finished, tmp_path, no_figures):
    config = _copy(finished, tmp_path)
    run = config.parent / "run"
    (run / "figures").mkdir()
    (run / "figures" / "my_sketch.pdf").write_text("the user's\n")
    (run / "notes.txt").write_text("the user's\n")
    assert main(["run", str(config), "--force", "--quiet"]) == 0
    assert (run / "figures" / "my_sketch.pdf").read_text() == "the user's\n"
    assert (run / "notes.txt").read_text() == "the user's\n"
    assert json.loads((run / "summary.json").read_text())["sampling"]["steps"] == 100


def test_export_never_writes_over_the_runs_own_files(finished, tmp_path, capsys):
    config = _copy(finished, tmp_path)
    run = RunDirectory(config.parent / "run")
    before = _snapshot(run.path)
    for out in (run.samples, run.summary, run.manifest, run.path, tmp_path / "missing" / "x.csv"):
        assert main(["export", str(run), "--format", "nc", "--out", str(out)]) == 2
        err = capsys.readouterr().err
        assert "--out" in err and "Fix:" in err and "Traceback" not in err
    assert _snapshot(run.path) == before


def test_redraw_export_and_plan_refuse_a_run_whose_data_changed(finished, tmp_path, capsys):
    config = _copy(finished, tmp_path)
    run = RunDirectory(config.parent / "run")
    rv = config.parent / "rv.txt"
    rv.write_text("".join(rv.read_text().splitlines(keepends=True)[:5]))  # 4 RVs where the fit had 20
    before = _snapshot(run.path)
    for args in (["redraw", str(run)], ["export", str(run), "--format", "csv"], ["plan", str(run)]):
        assert main(args) == 2
        err = capsys.readouterr().err
        assert "rv.txt: changed since the run started" in err and "Fix:" in err
    assert _snapshot(run.path) == before


def test_redraw_and_export_refuse_samples_of_another_model(finished, tmp_path, capsys, no_figures):
    config = _copy(finished, tmp_path)
    other = write_system(tmp_path / "other", max_steps=100, n_phot=150, velocities=False)
    assert main(["run", str(other), "--quiet"]) == 0
    run = RunDirectory(config.parent / "run")
    run.samples.write_bytes(RunDirectory(other.parent / "run").samples.read_bytes())
    before = _snapshot(run.path)
    for args in (["redraw", str(run)], ["export", str(run), "--format", "csv"]):
        assert main(args) == 2
        err = capsys.readouterr().err
        assert "the folder mixes two runs" in err and "parameters" in err
    assert _snapshot(run.path) == before


def test_redraw_and_export_refuse_a_run_being_written(finished, tmp_path, capsys):
    config = _copy(finished, tmp_path)
    run = RunDirectory(config.parent / "run")
    sleeper = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    try:
        (run.path / "run.lock").write_text(json.dumps({"pid": sleeper.pid, "host": socket.gethostname()}))
        for args in (["redraw", str(run)], ["export", str(run), "--format", "csv"], ["plan", str(run)]):
            assert main(args) == 2
            assert f"pid {sleeper.pid}" in capsys.readouterr().err
    finally:
        sleeper.kill()
        sleeper.wait()


def test_a_folder_that_cannot_be_written_is_an_input_error():
    with pytest.raises(InputError) as info:
        require_writable("/proc/self")  # no file can be created there, not even by root
    assert "cannot write into this folder" in str(info.value)


@contextlib.contextmanager
def _read_only(folder, tmp_path):
    """``folder`` seen read-only: by its mode for a user, through a read-only bind mount for root."""
    if os.geteuid() != 0:
        folder.chmod(0o555)
        try:
            yield folder
        finally:
            folder.chmod(0o755)
        return
    view = tmp_path / "read_only_view"
    view.mkdir()
    mounted = subprocess.run(["mount", "--bind", str(folder), str(view)], capture_output=True).returncode == 0
    if not mounted:
        pytest.skip("root without the right to mount: no read-only folder can be made")
    try:
        if subprocess.run(["mount", "-o", "remount,ro,bind", str(view)], capture_output=True).returncode:
            pytest.skip("the bind mount cannot be made read-only here")
        yield view
    finally:
        subprocess.run(["umount", str(view)], capture_output=True)


def test_read_only_run_directory_exits_2(finished, tmp_path, capsys):
    config = _copy(finished, tmp_path)
    with _read_only(config.parent / "run", tmp_path) as run:
        for args in (["redraw", str(run)], ["export", str(run), "--format", "csv"], ["plan", str(run)]):
            assert main(args) == 2
            err = capsys.readouterr().err
            assert "cannot write into this folder" in err and "Traceback" not in err
        raw = yaml.safe_load(config.read_text())
        raw["output"] = str(run)
        config.write_text(yaml.safe_dump(raw))
        assert main(["run", str(config), "--resume", "--quiet"]) == 2
        assert "Fix:" in capsys.readouterr().err
        out = tmp_path / "posterior.csv"  # a read-only run can still be exported elsewhere
        assert main(["export", str(run), "--format", "csv", "--out", str(out)]) == 0 and out.stat().st_size > 0


def test_full_disk_exits_1_with_the_chain_intact_and_resumable(tmp_path, capsys, no_figures):
    config = write_system(tmp_path, max_steps=2000, n_phot=150)
    limit = 2_500_000  # bytes: samples.h5 reaches it after a few hundred steps

    def small_files():
        resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))

    proc = subprocess.run(
        [sys.executable, "-m", "planetfit.cli", "run", str(config), "--quiet", "--no-figures"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        timeout=600,
        preexec_fn=small_files,
    )
    assert proc.returncode == 1, proc.stderr
    assert "no room to write" in proc.stderr and "--resume" in proc.stderr and "Traceback" not in proc.stderr
    saved = _steps(tmp_path / "run" / "samples.h5")
    assert saved > 0  # the chain file is readable and holds the steps saved before the limit
    config.write_text(config.read_text().replace("max_steps: 2000", f"max_steps: {saved + 50}"))
    assert main(["run", str(config), "--resume", "--quiet"]) == 0
    assert json.loads((tmp_path / "run" / "summary.json").read_text())["sampling"]["steps"] == saved + 50
