"""Two habits of a run's output: progress in a log file is lines, not bar redraws; files get the user's permissions.

# common practice, no published source: a redrawn bar is for terminals (carriage returns), and new files take
# mode 0666 less the umask (POSIX open(2)); these tests check no physics.
"""

import os
import stat
import subprocess
import sys

from synthetic import write_tiny_system


def test_run_with_stderr_to_a_file_logs_lines_and_files_follow_the_umask(tmp_path):
    config = write_tiny_system(tmp_path, max_steps=200)
    log_path = tmp_path / "stderr.log"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(p for p in (os.getcwd(), os.environ.get("PYTHONPATH")) if p))
    with open(log_path, "w") as stderr:
        proc = subprocess.run(
            [sys.executable, "-m", "planetfit.cli", "run", str(config), "--no-figures"],
            cwd=tmp_path,
            stdout=subprocess.DEVNULL,
            stderr=stderr,
            env=env,
            timeout=300,
            preexec_fn=lambda: os.umask(0o022),
        )
    text = log_path.read_text()
    assert proc.returncode == 0, text
    assert "\r" not in text and "%|" not in text  # neither carriage returns nor a bar's redraws
    assert "step 100: autocorrelation" in text  # one line per convergence check instead
    run_dir = tmp_path / "run"
    for name in ("report.html", "summary.json", "summary.md", "table.tex", "posterior.csv", "run.log"):
        assert stat.S_IMODE((run_dir / name).stat().st_mode) == 0o644, name
