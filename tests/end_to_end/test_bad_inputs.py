"""The catalogue of bad inputs in tests/bad_inputs/ through the real command line.

Each case folder holds a config (and data files where needed) and an
``expect.yaml``: the command line arguments (``CONFIG`` stands for the
case's config.yaml) and the strings the message must contain (the file and
the key or line). Every case must exit with code 2, print a message with a
fix, print no traceback and finish within the time limit.
"""

# common practice, no published source: exit code 2 and a message naming file, key or line and a fix
# are planetfit's own contract (DESIGN.md); these tests check no physics.

import shutil
import signal
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from planetfit.cli import main

CASES_DIR = Path(__file__).parent / "bad_inputs"
CASES = sorted(d.name for d in CASES_DIR.iterdir() if d.is_dir() and not d.name.startswith("_"))
TIME_LIMIT_S = 60


@pytest.fixture(scope="module")
def cases_copy(tmp_path_factory):
    """A copy of the catalogue, so no case can write into the repository."""
    dest = tmp_path_factory.mktemp("bad_inputs")
    shutil.copytree(CASES_DIR, dest, dirs_exist_ok=True)
    return dest


def _expect(folder):
    expect = yaml.safe_load((folder / "expect.yaml").read_text())
    args = [a if a != "CONFIG" else "config.yaml" for a in expect["command"]]
    return args, expect["mentions"]


def _on_alarm(signum, frame):
    raise TimeoutError(f"a bad input took more than {TIME_LIMIT_S} s (a hang)")


def test_catalogue_is_large_enough():
    assert len(CASES) >= 40


@pytest.mark.parametrize("name", CASES)
def test_bad_input_exits_2_with_file_key_and_fix(name, cases_copy, capsys, monkeypatch):
    folder = cases_copy / name
    args, mentions = _expect(folder)
    monkeypatch.chdir(folder)
    old = signal.signal(signal.SIGALRM, _on_alarm)
    signal.alarm(TIME_LIMIT_S)
    try:
        code = main(args)
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)
    out, err = capsys.readouterr()
    assert code == 2, err
    assert "Traceback" not in out + err
    assert "Fix:" in err
    for text in mentions:
        assert text in err, f"{text!r} missing from: {err}"


@pytest.mark.parametrize("name", ["python_object_tag", "mixed_time_systems"])
def test_bad_input_through_a_real_process(name, cases_copy):
    folder = cases_copy / name
    args, mentions = _expect(folder)
    proc = subprocess.run(
        [sys.executable, "-m", "planetfit.cli", *args], cwd=folder, capture_output=True, text=True, timeout=TIME_LIMIT_S
    )
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stdout + proc.stderr
    assert "Fix:" in proc.stderr
    assert all(text in proc.stderr for text in mentions)


def test_python_tag_is_never_executed(cases_copy, capsys, monkeypatch):
    folder = cases_copy / "python_object_tag"
    monkeypatch.chdir(folder)
    assert main(["check", "config.yaml"]) == 2
    assert "python/object" in capsys.readouterr().err
    assert not (folder / "pwned.txt").exists()
