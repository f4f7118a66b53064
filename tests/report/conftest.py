"""A tiny finished run shared by the report tests: one transiting planet, 200 steps (not converged)."""

import json

import numpy as np
import pytest
from synthetic import write_tiny_system

from planetfit import pipeline
from planetfit.report import outputs, style
from planetfit.report.captions import Drawn


def _line_figure():
    """A small line plot (its SVG is kept)."""
    fig = style.new_figure()
    ax = fig.add_subplot()
    x = np.linspace(0, 10, 200)
    ax.plot(x, np.sin(x))
    ax.set_xlabel("x")
    return fig


def _scatter_figure():
    """A scatter of many points, whose SVG exceeds style.MAX_SVG_BYTES (so the PNG is embedded)."""
    fig = style.new_figure()
    ax = fig.add_subplot()
    rng = np.random.default_rng(1)
    ax.plot(rng.normal(size=8000), rng.normal(size=8000), ".", ms=1)
    return fig


@pytest.fixture(scope="session")
def tiny_run(tmp_path_factory):
    """The run directory, summary.json and typed summary of a tiny fit; its figures are two quick stand-ins.

    The real figures are drawn (and tested) in test_outputs.py; here the
    report only needs figures of both kinds, SVG and PNG.
    """
    folder = tmp_path_factory.mktemp("tiny-run")
    sampling = {"walkers": 24, "max_steps": 200, "check_every": 100, "optimiser_starts": 1}
    config = write_tiny_system(folder, n_phot=150, sampling=sampling)
    with pytest.MonkeyPatch.context() as mp:
        stand_ins = [(Drawn("line"), _line_figure), (Drawn("scatter"), _scatter_figure)]
        mp.setattr(outputs, "figure_builders", lambda *args: stand_ins)
        run = pipeline.run(config, quiet=True)
    return {"dir": run.path, "summary": json.loads((run.path / "summary.json").read_text()), "typed": run.summary}
