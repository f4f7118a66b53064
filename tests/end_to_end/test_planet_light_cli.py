"""'planetfit demo --example hot-giant' runs the bundled hot-giant config."""

from planetfit import pipeline
from planetfit.cli import main
from planetfit.demo import EXAMPLES


def test_demo_example_runs_the_hot_giant_config(monkeypatch, tmp_path):
    # common practice, no published source: the command line's contract (README, Commands)
    seen = {}

    def fake_run(config, output=None, **kwargs):
        seen.update(config=config, output=output)
        raise KeyboardInterrupt

    monkeypatch.setattr(pipeline, "run", fake_run)
    monkeypatch.chdir(tmp_path)
    assert main(["demo", "--example", "hot-giant", "--cores", "1"]) == 130
    assert seen == {"config": EXAMPLES["hot-giant"], "output": "planetfit-hot-giant"}
    assert EXAMPLES["hot-giant"].is_file()
