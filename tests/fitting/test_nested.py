"""Nested sampling: the evidence against a closed form, model choice on synthetic RVs, agreement with MCMC, modes.

Every system is RV-only with fixed errors (no jitter unless stated), so a
fit takes seconds.
"""

import json
import math
import pickle
import sys

import numpy as np
import pytest
from rv_models import (
    K_MS,
    PERIOD,
    SIGMA_MS,
    TC,
    circular,
    eccentric,
    interrupted_nested_run,
    rv_data,
    second_planet,
    write_rv_model,
)
from scipy import stats
from synthetic import planet_truth
from two_seasons import alias_weights, write_two_season_system

from planetfit import pipeline
from planetfit.fitting.sampling import checkpoint, nested
from planetfit.fitting.sampling.mcmc import run_sampler
from planetfit.fitting.sampling.nested import run_nested


def nested_fit(config, seed=1):
    """(NestedResult, log-probability) of a config, without the later stages."""
    checked = pipeline.check(config)
    log_prob = checked.log_probability
    checkpoint = config.parent / "checkpoint.pkl"
    return run_nested(
        log_prob, checked.config.sampling, checkpoint, np.random.default_rng(seed), progress=False
    ), log_prob


def _least_squares(t, rv):
    """Design matrix, Fisher matrix, best fit and ln L_max of RV = -K sin(2 pi (t - Tc) / P) + c."""
    design = np.column_stack([-np.sin(2 * np.pi * (t - TC) / PERIOD), np.ones_like(t)])
    w = np.full(t.size, SIGMA_MS**-2)
    fisher = design.T @ (design * w[:, None])
    best = np.linalg.solve(fisher, design.T @ (w * rv))
    return fisher, best, -0.5 * np.sum(w * (rv - design @ best) ** 2) - 0.5 * np.sum(np.log(2 * np.pi / w))


def closed_form_ln_evidence(t, rv, k_range, offset_range):
    """ln Z of RV = -K sin(2 pi (t - Tc) / P) + c with Gaussian errors, uniform priors on K and c.

    The likelihood is Gaussian in (K, c) (a linear model): Z = L_max (2 pi) det(F)^(-1/2) P_box / (prior area),
    F the Fisher matrix and P_box the Gaussian's probability inside the prior box (scipy's normal CDF).
    """
    fisher, best, ln_l_max = _least_squares(t, rv)
    gauss = stats.multivariate_normal(best, np.linalg.inv(fisher))
    (k0, k1), (c0, c1) = k_range, offset_range
    p_box = gauss.cdf([k1, c1]) - gauss.cdf([k0, c1]) - gauss.cdf([k1, c0]) + gauss.cdf([k0, c0])
    area = (k1 - k0) * (c1 - c0)
    return ln_l_max + math.log(2 * math.pi) - 0.5 * math.log(np.linalg.det(fisher)) + math.log(p_box / area)


@pytest.fixture
def no_figures(monkeypatch):
    monkeypatch.setattr(pipeline.outputs, "write_all", lambda *args, **kwargs: None)


@pytest.mark.parametrize("linear", ["marginalised", "sampled"])
def test_evidence_of_a_linear_gaussian_model_matches_the_closed_form(tmp_path, no_figures, linear):
    # Marginalised, the offset is integrated analytically (flat prior with its 1/width) and dynesty sees K alone.
    t, rv = rv_data(4, {"b": planet_truth(PERIOD, TC, K_MS)})
    config = write_rv_model(tmp_path, t, rv, {"b": circular()}, live_points=250, linear_parameters=linear)
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    s = json.loads((run_dir / "summary.json").read_text())["sampling"]
    expected = closed_form_ln_evidence(t, rv, (0, 40), (-50, 50))
    z = s["ln_evidence"]
    # source: closed-form integral of a Gaussian likelihood over a uniform prior box (closed_form_ln_evidence).
    assert z["error"] < 0.3
    assert abs(z["value"] - expected) < 3 * z["error"], (z, expected)
    assert s["method"] == "nested" and s["converged"] and s["dlogz"] <= 0.1
    assert s["effective_samples"] >= 100 and "Skilling" in z["note"]
    # The largest likelihood is that of every parameter (the offset at its best fit when marginalised): the least
    # squares fit's, approached by the highest of a few thousand points (common practice, no published source).
    assert -0.5 < s["max_log_likelihood"] - _least_squares(t, rv)[2] <= 1e-3  # rounded to 3 decimals
    # The equal-weight samples feed the later stages: the redraw reads them back from samples.h5.
    assert pipeline.redraw(run_dir).sampling.ln_evidence.to_json() == z


@pytest.mark.parametrize(
    ("truth_e", "models", "check"),
    [
        (0.4, (circular(), eccentric()), lambda d: d > 5),  # an eccentric orbit is seen
        (0.0, (circular(), eccentric()), lambda d: d < 2),  # Occam's razor: no support for e > 0
    ],
    ids=["eccentric-data", "circular-data"],
)
def test_evidence_chooses_the_orbit(tmp_path, truth_e, models, check):
    t, rv = rv_data(7, {"b": planet_truth(PERIOD, TC, K_MS, e=truth_e, omega_deg=60.0)})
    ln_z = [nested_fit(write_rv_model(tmp_path / str(i), t, rv, {"b": m}))[0].ln_evidence for i, m in enumerate(models)]
    # common practice, no published source: Delta ln Z > 5 is "very strong" on Kass & Raftery's scale.
    assert check(ln_z[1] - ln_z[0]), ln_z


def test_one_planet_data_give_no_support_for_a_second(tmp_path):
    t, rv = rv_data(9, {"b": planet_truth(PERIOD, TC, K_MS)})
    one = nested_fit(write_rv_model(tmp_path / "one", t, rv, {"b": circular()}))[0]
    two = nested_fit(write_rv_model(tmp_path / "two", t, rv, {"b": circular(), "c": second_planet()}))[0]
    # common practice, no published source: ln B < 1 is "not worth more than a bare mention" (Kass & Raftery 1995).
    assert two.ln_evidence - one.ln_evidence < 1, (one.ln_evidence, two.ln_evidence)


def test_nested_and_mcmc_posteriors_agree(tmp_path):
    t, rv = rv_data(5, {"b": planet_truth(PERIOD, TC, K_MS)})
    planet = circular(period_days={"uniform": [4.9, 5.1]}, transit_bjd={"uniform": [TC - 0.5, TC + 0.5]})
    config = write_rv_model(
        tmp_path, t, rv, {"b": planet}, live_points=500, jitter_ms={"loguniform": [0.01, 10]}, walkers=32
    )
    nested, log_prob = nested_fit(config)
    checked = pipeline.check(config)
    chain = run_sampler(
        log_prob,
        log_prob.layout,
        checked.config.sampling,
        tmp_path / "chain.h5",
        np.random.default_rng(2),
        progress=False,
    )
    assert chain.converged and nested.converged
    nested_values, chain_values = log_prob.layout.values(nested.samples), log_prob.layout.values(chain.samples)
    for name in log_prob.layout.free:
        a, b = (
            np.percentile(nested_values[name], [15.87, 50, 84.13]),
            np.percentile(chain_values[name], [15.87, 50, 84.13]),
        )
        sigma = 0.5 * (b[2] - b[0])
        # common practice, no published source: two samplers of one posterior agree within their sampling noise
        # (with >= 1,000 effective samples each: medians to 0.05 sigma, 68% widths to 3%, 1 sd).
        assert abs(a[1] - b[1]) < 0.2 * sigma, (name, a, b)
        assert abs((a[2] - a[0]) / (b[2] - b[0]) - 1) < 0.1, (name, a, b)


def test_two_period_aliases_come_back_with_their_weights(tmp_path):
    config = write_two_season_system(tmp_path)
    raw = config.read_text().replace("sampling:\n", "sampling:\n  method: nested\n  live_points: 800\n")
    config.write_text(raw)
    result, _ = nested_fit(config)
    grid = alias_weights(tmp_path)
    periods = {round(m["location"], 3): m["fraction"] for m in result.modes if m["parameter"] == "b.period_days"}
    found = [w for w in result.warnings if w.startswith("b.period_days has ")]
    assert len(found) == 1 and "weighs each mode by its evidence" in found[0], result.warnings
    # source: brute-force integration of the same posterior on a grid (two_seasons.alias_weights).
    for period, weight in grid:
        match = [f for p, f in periods.items() if abs(p - period) < 0.01]
        if weight > 0.05:
            assert match and abs(match[0] - weight) < 0.1, (grid, periods)
    assert sum(w for _, w in grid if w > 0.2) > 0.9  # the data have two aliases of comparable weight


def test_an_interrupted_nested_run_resumes_from_its_checkpoint(tmp_path, monkeypatch, no_figures):
    config, t, rv = interrupted_nested_run(tmp_path, monkeypatch, live_points=100, after_calls=1500)
    assert (tmp_path / "run" / nested.CHECKPOINT).exists() and not (tmp_path / "run" / "summary.json").exists()
    s = json.loads((pipeline.run(config, resume=True, quiet=True, figures=False).path / "summary.json").read_text())[
        "sampling"
    ]
    resumed_calls = s["likelihood_calls"]
    # The resumed run continued the saved one: its calls count those before the interruption, and its ln Z is right.
    assert resumed_calls > 1400 and s["converged"]
    # source: closed-form integral of a Gaussian likelihood over a uniform prior box (closed_form_ln_evidence).
    expected = closed_form_ln_evidence(t, rv, (0, 40), (-50, 50))
    assert abs(s["ln_evidence"]["value"] - expected) < 3 * s["ln_evidence"]["error"]


def test_a_checkpoint_written_before_the_samplers_moved_still_unpickles():
    # common practice, no published source: a checkpoint names the module of nested sampling's shared functions
    # as it was when written (planetfit.fitting.nested until the samplers moved to planetfit.fitting.sampling).
    old = b"cplanetfit.fitting.nested\n_shared\n(Vlog_likelihood\ntR."
    with pytest.raises(ModuleNotFoundError):
        pickle.loads(old)
    with checkpoint.moved_modules():
        shared = pickle.loads(old)
    assert isinstance(shared, nested._Shared) and shared.name == "log_likelihood"
    assert "planetfit.fitting.nested" not in sys.modules
