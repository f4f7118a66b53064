"""summary.json's sampling block: each phase's wall seconds and the smallest bulk effective sample size."""

import numpy as np

from planetfit.fitting.sampling.chainfile import read_chain
from planetfit.fitting.sampling.ess import bulk_ess

# common practice, no published source: these tests check planetfit's own bookkeeping (the phases' seconds add up
# to the sampler's clock; summary.json's min_bulk_ess is the estimator of fitting/sampling/ess.py applied to the saved
# chain), no physics; the estimator itself is checked against the closed form in tests/fitting/test_ess.py.
PHASES = ["optimiser", "sampling", "derived", "figures_and_report"]


def test_every_phase_is_timed_in_summary_json_and_run_log(tiny_run):
    s = tiny_run["summary"]["sampling"]
    assert list(s["phase_seconds"]) == PHASES
    assert all(v >= 0 for v in s["phase_seconds"].values())
    # The sampler's own clock covers the optimiser and the chain, nothing else.
    assert abs(s["phase_seconds"]["optimiser"] + s["phase_seconds"]["sampling"] - s["seconds"]) <= 0.2
    log = (tiny_run["dir"] / "run.log").read_text()
    assert "wall seconds per phase: optimiser" in log and "figures_and_report" in log


def test_min_bulk_ess_is_that_of_the_kept_chain(tiny_run):
    s = tiny_run["summary"]["sampling"]
    _, chain = read_chain(tiny_run["dir"] / "samples.h5")
    assert s["min_bulk_ess"] == round(float(np.min(bulk_ess(chain[s["discard"] :]))))
    # 200 steps of 24 walkers stop short of the default rule; the warning says which part was missed.
    assert not s["converged"]
    assert any(w.startswith("NOT CONVERGED: 200 steps reach") for w in s["warnings"])
