"""Simulation-based calibration, small: 20 systems from ``benchmarks/calibration.py``.

The benchmark fits 200 systems with converged chains; here each chain stops
at 600 steps (12-25 autocorrelation times for most of these systems, enough
for 68% and 95% intervals within the loose bounds below) so the test runs in
about a minute on 2 cores. Chains of 100 steps fail it.
"""

import math
import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "benchmarks"))
import calibration  # noqa: E402

SYSTEMS, MAX_STEPS = 20, 600


@pytest.mark.slow
def test_posterior_intervals_cover_the_truth_at_the_nominal_rate():
    # source: Talts et al. 2018, arXiv:1804.06788 (simulation-based calibration): with the
    # truth drawn from the prior the fit uses, a central interval of probability p covers it in a
    # fraction p of systems.
    report = calibration.calibrate(SYSTEMS, processes=2, steps=MAX_STEPS, first_seed=1000)
    # common practice, no published source: the covered count is binomial, so the fraction
    # scatters by sd = sqrt(p (1 - p) / N); allow 3 sd. N = 20: sd = 0.104 at p = 0.68, so
    # 0.37 <= coverage <= 0.99; sd = 0.049 at p = 0.95, so coverage >= 0.80.
    # A posterior half as wide as it should be covers ~0.38 and ~0.68 and fails the 95% bound.
    for level, p in (("68", 0.68), ("95", 0.95)):
        sd = math.sqrt(p * (1 - p) / SYSTEMS)
        for quantity, fraction in report[f"coverage_{level}"].items():
            assert fraction >= p - 3 * sd, (level, quantity, report)
            if level == "68":
                assert fraction <= p + 3 * sd, (level, quantity, report)


def test_optimiser_finds_the_transit_the_prior_centre_misses(tmp_path):
    from planetfit.fitting.sampling.optimiser import find_map

    # System 1009: the transit time lies 0.1 d (about a transit duration) from the prior's centre.
    _, log_prob, values, _ = calibration.simulate_system(1009, tmp_path, steps=100)
    j = log_prob.layout.free.index("b.transit_bjd")
    t0 = values["b.transit_bjd"]
    centre_only, lp_centre = find_map(log_prob, log_prob.layout, np.random.default_rng(1), starts=1)[0]
    theta, lp = find_map(log_prob, log_prob.layout, np.random.default_rng(1), starts=2)[0]
    # common practice, no published source: two transits at this depth and noise give T0 to ~1e-3 d.
    assert abs(centre_only[j] - t0) > 0.05 and lp - lp_centre > 50  # the centre alone stops on a wrong optimum
    assert abs(theta[j] - t0) < 0.005
