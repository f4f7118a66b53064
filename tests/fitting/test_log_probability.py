"""The joint log-probability's fast paths against the plain computation they replace."""

import math

import numpy as np
import yaml
from scipy import stats
from synthetic import tiny_log_prob, write_tiny_system

from planetfit.fitting import predictions
from planetfit.fitting.likelihoods import Batch, SummedPhotometryLikelihood
from planetfit.fitting.log_probability import LogProbability
from planetfit.pipeline import check


def prior_draws(log_prob, n, seed=5):
    """Draws from the prior with a finite probability (some per batch would be rejected otherwise)."""
    rng = np.random.default_rng(seed)
    draws = log_prob.layout.sample_prior(rng, 50 * n)
    return draws[np.isfinite(log_prob.log_prob_many(draws))][:n]


def test_batch_equals_one_at_a_time_and_rejects_outside_the_prior(tmp_path):
    log_prob = tiny_log_prob(tmp_path)
    thetas = prior_draws(log_prob, 12)
    lo = np.array([log_prob.layout.priors[n].bounds[0] for n in log_prob.layout.free])
    outside = thetas[0].copy()
    outside[np.argmax(np.isfinite(lo))] = -1e9  # below a finite lower bound
    batch = np.vstack([thetas, outside])
    expected = np.array([log_prob(x) for x in batch])
    assert np.array_equal(log_prob.log_prob_many(batch), expected)
    assert np.all(np.isfinite(expected[:-1])) and expected[-1] == -math.inf


def test_in_window_photometric_likelihood_equals_the_dense_gaussian(tmp_path):
    # A linear baseline, a contaminating flux fraction and a fixed jitter: the case scored from
    # precomputed sums plus the in-transit points only.
    log_prob = tiny_log_prob(
        tmp_path, baseline="linear", slope_per_day={"uniform": [-0.01, 0.01]}, dilution=0.2, jitter_ppm=150.0
    )
    assert isinstance(log_prob.model.photometry[0], SummedPhotometryLikelihood)
    d = log_prob.photometry[0]
    sd = np.sqrt(d.error**2 + (150e-6) ** 2)
    for theta in prior_draws(log_prob, 8):
        values = log_prob.layout.values(theta)
        orbits = log_prob.orbits(values)
        model = predictions.photometry_model(log_prob, values, orbits, 0)
        # source: Gaussian log-density, summed point by point (scipy.stats.norm)
        dense = float(np.sum(stats.norm.logpdf(d.flux, loc=model, scale=sd)))
        fast = log_prob.model.photometry[0].log_likelihood(Batch([values], [orbits]))[0]
        assert abs(fast - dense) < 1e-9 * abs(dense), (fast, dense)


def test_a_shared_gp_uses_the_other_datasets_hyperparameters(tmp_path):
    path = write_tiny_system(tmp_path)
    raw = yaml.safe_load(path.read_text())
    first = dict(raw["photometry"][0], baseline="gp", gp_sigma_ppm={"loguniform": [1, 1000]}, band="camera")
    copy = tmp_path / "phot-copy.csv"  # one file read by two datasets is refused (rows counted twice)
    copy.write_bytes((tmp_path / first["file"]).read_bytes())
    second = dict(first, name="cam-again", gp_shared_with=first["name"], file=copy.name)
    del second["gp_sigma_ppm"]
    raw["photometry"] = [first, second]
    raw["sampling"]["linear_parameters"] = "sampled"  # the flux levels are set by hand below
    path.write_text(yaml.safe_dump(raw))
    checked = check(path)
    log_prob = LogProbability(checked.config, checked.photometry, checked.velocities)
    assert not [n for n in log_prob.layout.all_names if n.startswith("cam-again.gp_")]
    theta = prior_draws(log_prob, 1)[0]
    values = log_prob.layout.values(theta)
    values["cam-again.flux_level"] = values[f"{first['name']}.flux_level"]
    orbits = log_prob.orbits(values)
    one, two = (log_prob.model.photometry[i].log_likelihood(Batch([values], [orbits]))[0] for i in (0, 1))
    assert one == two  # the same data, level and process
    values[f"{first['name']}.gp_sigma_ppm"] *= 3
    assert log_prob.model.photometry[1].log_likelihood(Batch([values], [orbits]))[0] != two
