"""Separated posterior modes: found among the optimiser's end points and periodogram seeds, sampled, reported.

The pipeline tests fit an RV-only circular planet observed in two seasons
200 d apart: the cycle count across the gap is ambiguous, so the period
posterior has aliases 0.11 d apart, two of them of nearly equal weight.
"""

import json
import math

import emcee
import numpy as np
import pytest
import yaml
from astropy.timeseries import LombScargle
from scipy.special import logsumexp
from synthetic import planet_truth, radial_velocity, write_tiny_system
from two_seasons import GAP_DAYS, K_MS, PERIOD, PERIOD_PRIOR, TC, TC_HALF_WIDTH, alias_weights, write_two_season_system

from planetfit import pipeline
from planetfit.core.quantities import DATASET, PLANET
from planetfit.fitting.log_probability import LogProbability
from planetfit.fitting.parameters import Parameter, ParameterLayout
from planetfit.fitting.sampling import density_modes, modes
from planetfit.fitting.sampling import mcmc as sampling
from planetfit.fitting.sampling.periodogram import periodogram_starts, sinusoid
from planetfit.inputs.priors import Uniform


def _sampling(run_dir):
    return json.loads((run_dir / "summary.json").read_text())["sampling"]


def _mode_warnings(sampling_block):
    return [w for w in sampling_block["warnings"] if "separated modes" in w]


@pytest.fixture
def no_figures(monkeypatch):
    """Skip figures and tables (the report's job); summary.json is still written."""
    monkeypatch.setattr(pipeline.outputs, "write_all", lambda *args, **kwargs: None)


@pytest.mark.parametrize("moves", ["differential_evolution", "fitted_proposal"])
def test_two_period_aliases_are_both_sampled_with_their_weights(tmp_path, moves):
    config = write_two_season_system(tmp_path, moves=moves)
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    s = _sampling(run_dir)
    grid = alias_weights(tmp_path)
    found = _mode_warnings(s)
    assert len(found) == 1 and found[0].startswith("b.period_days has "), s["warnings"]
    if "reported as not converged" in found[0]:
        assert not s["converged"]
        return
    # source: brute-force integration of the same posterior on a grid (alias_weights). With at least 100
    # walker moves between modes a fraction near 0.5 scatters by <= 0.05 (two-state Markov chain), so 0.1.
    runs = {round(m["location"], 2): m["fraction"] for m in s["modes"] if m["parameter"] == "b.period_days"}
    for period, weight in grid:
        match = [f for p, f in runs.items() if abs(p - period) < 0.01]
        if weight > 0.2:
            assert match, (grid, s["modes"])
        if match:
            assert abs(match[0] - weight) < 0.1, (grid, s["modes"])
    assert sum(w for _, w in grid if w > 0.2) > 0.9  # the data have two aliases of comparable weight


def test_walkers_that_never_jump_make_the_run_not_converged(tmp_path, monkeypatch):
    # Metropolis steps about a quarter of each alias's width (period, conjunction time, K; the offset is
    # marginalised) mix the walkers within the alias they start in and never reach another 0.11 d away.
    steps = np.array([1e-3, 1e-2, 0.2]) ** 2
    monkeypatch.setattr(
        sampling, "walker_moves", lambda several_modes=False, proposal=None: [emcee.moves.GaussianMove(steps)]
    )
    config = write_two_season_system(tmp_path, max_steps=1000)
    s = _sampling(pipeline.run(config, quiet=True, figures=False).path)
    found = _mode_warnings(s)
    assert not s["converged"]
    assert len(found) == 1 and found[0].startswith("b.period_days has ")
    assert found[0].endswith(
        "walkers never moved between them, so their relative weight is not measured: "
        "the run is reported as not converged"
    )


@pytest.mark.parametrize("moves", ["differential_evolution", "fitted_proposal"])
def test_redraw_and_resume_keep_the_modes(tmp_path, no_figures, moves):
    config = write_two_season_system(tmp_path, max_steps=1500, moves=moves)
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    first = _sampling(run_dir)
    assert _mode_warnings(first)
    pipeline.redraw(run_dir)
    assert _sampling(run_dir)["warnings"] == first["warnings"]
    raw = yaml.safe_load(config.read_text())
    raw["sampling"]["max_steps"] = 3000
    config.write_text(yaml.safe_dump(raw, sort_keys=False))
    resumed = _sampling(pipeline.run(config, resume=True, quiet=True, figures=False).path)
    assert resumed["steps"] > first["steps"]
    # The modes come from samples.h5: the resumed chain is assigned to the optimiser's same modes.
    assert [round(m["location"], 4) for m in resumed["modes"]] == [round(m["location"], 4) for m in first["modes"]]
    assert len(_mode_warnings(resumed)) == 1
    # A staged chain continues with the proposal and burn-in of samples.h5.
    assert (resumed["moves"], resumed["burn_in_steps"]) == (first["moves"], first["burn_in_steps"])
    assert (resumed["burn_in_steps"] > 0) == (moves == "fitted_proposal")


def test_a_one_mode_system_has_no_mode_warning(tmp_path):
    s = _sampling(pipeline.run(write_tiny_system(tmp_path), quiet=True, figures=False).path)
    assert not _mode_warnings(s) and s["modes"] == []


# ----------------------------------------------------------------- units


def _gaussian_mixture(weights, centres, sd):
    """The batch log-density of a mixture of isotropic Gaussians of standard deviation ``sd``, each normalised."""

    def evaluate(x):
        x = np.atleast_2d(x)
        norm = x.shape[1] * math.log(sd * math.sqrt(2 * math.pi))
        terms = [math.log(w) - 0.5 * np.sum(((x - c) / sd) ** 2, axis=1) - norm for w, c in zip(weights, centres)]
        return logsumexp(terms, axis=0)

    return evaluate


def test_end_points_cluster_into_modes_with_their_laplace_evidence():
    sd, centres = 0.1, [np.array([0.0, 0.0]), np.array([3.0, 1.0])]
    evaluate = _gaussian_mixture([0.7, 0.3], centres, sd)
    ends = [centres[0], centres[0] + 1e-4, centres[1], np.array([-3.0, 0.0])]
    ends = sorted([(x, float(evaluate(x)[0])) for x in ends], key=lambda e: -e[1])
    found = modes.distinct_modes(evaluate, ends, widths=np.array([10.0, 10.0]))
    # The copy 1e-4 away is the same mode; (-3, 0) is 450 below the best, no mode.
    assert [tuple(np.round(m.theta, 3)) for m in found] == [(0.0, 0.0), (3.0, 1.0)]
    # source: the integral of a normalised Gaussian component of weight w is w.
    assert [round(math.exp(m.log_evidence), 3) for m in found] == [0.7, 0.3]
    assert np.allclose([m.sd for m in found], sd, rtol=1e-3)
    assert list(modes.walker_counts(found, 40)) == [28, 12]
    assert list(modes.walker_counts([found[0], modes.Mode(centres[1], found[1].log_prob - 8, found[1].cov)], 40)) == [
        36,
        4,
    ]  # at least MIN_WALKERS_PER_MODE
    assert list(modes.separating_parameters(found)) == [0, 1]


def test_end_points_along_a_flat_direction_are_one_mode():
    # Gaussian in x0, flat in x1 (a jitter far below the errors): end points far apart in x1, no valley.
    def evaluate(x):
        x = np.atleast_2d(x)
        return np.where(np.abs(x[:, 1]) < 5, -0.5 * (x[:, 0] / 0.1) ** 2, -np.inf)

    ends = [(np.array([0.0, -4.999]), 0.0), (np.array([0.0, 2.0]), 0.0)]
    assert len(modes.distinct_modes(evaluate, ends, widths=np.array([10.0, 10.0]))) == 1


def test_mixing_rule_needs_the_fraction_measured_to_five_percent():
    def group(fractions, jumps):
        return modes.ModeGroup(
            ["b.period_days"], [4.64, 4.75], [0.004, 0.004], [-48.7, -48.7], fractions, jumps, max(jumps), "optimiser"
        )

    # 2 f (1 - f) / sqrt(J) <= 0.05: J >= 100 at f = 0.5; at f = 0.1, J >= 13 (and never fewer than 10).
    assert group([0.5, 0.5], [100, 100]).mixed and not group([0.5, 0.5], [99, 99]).mixed
    assert group([0.9, 0.1], [13, 13]).mixed and not group([0.9, 0.1], [12, 12]).mixed
    assert not group([0.99, 0.01], [9, 9]).mixed
    text = group([0.55, 0.45], [312, 312]).warning()
    assert text == (
        "b.period_days has 2 separated modes: 4.6400 d (ln p -48.7, 55% of samples) and "
        "4.7500 d (ln p -48.7, 45%); walkers moved between them 312 times"
    )


def test_sample_modes_finds_valleys_not_bumps():
    rng = np.random.default_rng(3)
    two = np.concatenate([rng.normal(0, 1, 7000), rng.normal(8, 1, 3000)])
    found = density_modes.sample_modes(two)
    # source: the mixture's weights and centres by construction.
    assert found.splits.size == 1 and 2 < found.splits[0] < 6
    assert np.allclose(found.fractions, [0.7, 0.3], atol=0.01) and np.allclose(found.locations, [0, 8], atol=0.1)
    for one in (
        rng.normal(size=10000),
        rng.exponential(size=10000),
        rng.uniform(size=10000),
        np.concatenate([rng.uniform(-5, 0, 3000), rng.normal(0, 0.3, 7000)]),  # a plateau and a peak
        np.concatenate([rng.normal(0, 1, 5000), rng.normal(3, 1, 5000)]),  # 3 sd apart: one mode
        np.concatenate([rng.normal(0, 1, 9900), rng.normal(50, 1, 100)]),
    ):  # 1% of the samples
        assert density_modes.sample_modes(one).splits.size == 0
    # Weighted samples (as a nested sampler gives): uniform draws weighted by the mixture's density.
    x = rng.uniform(-5, 13, 20000)
    weights = 0.7 * np.exp(-0.5 * x**2) + 0.3 * np.exp(-0.5 * (x - 8) ** 2)
    assert np.allclose(density_modes.sample_modes(x, weights).fractions, [0.7, 0.3], atol=0.02)


def test_a_mode_only_the_samples_show_is_reported():
    # 24 walkers, one optimiser mode; half the walkers sample x0 ~ N(0, 1), half N(10, 1), none moves between.
    rng = np.random.default_rng(4)
    chain = rng.normal(size=(400, 24, 2))
    chain[:, 12:, 0] += 10
    layout = ParameterLayout(
        [
            Parameter("b", "period_days", Uniform(-20, 30), PLANET["period_days"], "planet"),
            Parameter("spec", "offset_ms", Uniform(-5, 5), DATASET["offset_ms"]),
        ]
    )
    one = [modes.Mode(np.zeros(2), 0.0, np.eye(2))]
    groups = modes.describe(chain, -0.5 * np.sum(chain**2, axis=2), 1, one, layout)
    assert len(groups) == 1 and groups[0].found_by is modes.FoundBy.CHAIN and groups[0].names == ["b.period_days"]
    assert groups[0].fractions == [0.5, 0.5] and groups[0].moves == 0 and not groups[0].mixed
    assert "in the posterior samples that the optimiser did not find" in groups[0].warning()


def _noise_free_log_prob(tmp_path):
    config = write_two_season_system(tmp_path, noise=False)
    raw = yaml.safe_load(config.read_text())
    raw["sampling"]["linear_parameters"] = "sampled"  # the offset's seed is checked too
    config.write_text(yaml.safe_dump(raw, sort_keys=False))
    checked = pipeline.check(config)
    return LogProbability(checked.config, checked.photometry, checked.velocities)


def test_periodogram_seed_of_a_noise_free_sinusoid_is_its_orbit(tmp_path):
    log_prob = _noise_free_log_prob(tmp_path)
    layout = log_prob.layout
    centre = layout.geometry()[0]
    starts = periodogram_starts(log_prob, layout, centre)
    assert len(starts) == 3
    best = layout.values(starts[0])
    # source: the RVs are radvel's circular orbit (synthetic.radial_velocity) of this period, conjunction
    # time and semi-amplitude; a noise-free sinusoid peaks at its own frequency.
    assert abs(best["b.period_days"] - PERIOD) < 1e-5
    assert abs(best["b.transit_bjd"] - TC) < 1e-3 and abs(best["b.rv_amplitude_ms"] - K_MS) < 0.01
    assert best["spec.offset_ms"] == pytest.approx(np.median(log_prob.velocities[0].rv))
    # The other two starts are the next aliases (1 / 200 d apart in frequency), inside the priors.
    others = sorted(abs(1 / layout.values(s)["b.period_days"] - 1 / PERIOD) * GAP_DAYS for s in starts[1:])
    assert np.allclose(others, [1, 1], atol=0.05)
    for s in starts:
        assert abs(layout.values(s)["b.transit_bjd"] - TC) <= TC_HALF_WIDTH
    # source: astropy's LombScargle (the reference): its highest peak of these data is the seed's, to half
    # a step of its own frequency grid.
    t, rv = log_prob.velocities[0].time, log_prob.velocities[0].rv
    frequency, power = LombScargle(t, rv, log_prob.velocities[0].error).autopower(
        minimum_frequency=1 / PERIOD_PRIOR[1], maximum_frequency=1 / PERIOD_PRIOR[0], samples_per_peak=50
    )
    assert abs(frequency[np.argmax(power)] - 1 / best["b.period_days"]) <= 0.5 * (frequency[1] - frequency[0])


def test_sinusoid_follows_the_conjunction_convention():
    # source: planetfit's convention (DEVELOPERS.md, transit at true anomaly pi/2 - omega), here through
    # radvel's circular RV curve: RV = -K sin(2 pi (t - Tc) / P).
    t = np.linspace(0, 30, 40)
    rv = radial_velocity(t, {"b": planet_truth(7.3, 2.1, 4.0)}) + 10.0
    tc, k = sinusoid(t, rv, np.ones_like(t), 1 / 7.3)
    assert abs(tc - 2.1) < 1e-6 and abs(k - 4.0) < 1e-6


def test_no_seeds_for_transiting_planets_or_narrow_priors(tmp_path):
    log_prob = LogProbability(*_checked_parts(write_tiny_system(tmp_path / "tiny")))
    assert periodogram_starts(log_prob, log_prob.layout, log_prob.layout.geometry()[0]) == []
    config = write_two_season_system(tmp_path / "narrow")
    raw = yaml.safe_load(config.read_text())
    raw["planets"]["b"]["period_days"] = {"uniform": [4.745, 4.755]}  # 0.00044 / d wide, 1 / span = 0.0046 / d
    config.write_text(yaml.safe_dump(raw))
    log_prob = LogProbability(*_checked_parts(config))
    assert periodogram_starts(log_prob, log_prob.layout, log_prob.layout.geometry()[0]) == []


def _checked_parts(config):
    checked = pipeline.check(config)
    return checked.config, checked.photometry, checked.velocities


def test_a_pile_up_at_a_prior_bound_is_not_a_separate_mode():
    # Issue 29's case: an impact parameter's posterior around 0.245, and 2.5 % of the samples (one walker of 40)
    # stuck within 0.0002 of the prior's bound 0: a density valley separates them, but they are no second mode.
    rng = np.random.default_rng(1)
    spike = rng.uniform(0, 0.0002, 10_000)
    x = np.concatenate([np.abs(rng.normal(0.245, 0.08, 390_000)), spike])
    assert density_modes.sample_modes(x).splits.size == 1  # without the prior's bounds: a "mode" at 0.0001
    found = density_modes.sample_modes(x, bounds=(0.0, 1.0))
    assert found.splits.size == 0 and found.locations[0] == pytest.approx(0.24, abs=0.01)
    ((bound, fraction, median),) = found.piles
    # source: the fraction and place of the spike by construction
    assert bound == 0.0 and fraction == pytest.approx(0.025, abs=0.003) and median < 0.0002
    # A mode near the bound but as wide as the posterior is a mode (12 bandwidths from the bound).
    two = np.concatenate([rng.normal(0.15, 0.01, 5000), rng.normal(0.7, 0.01, 5000)])
    found = density_modes.sample_modes(two, bounds=(0.0, 1.0))
    assert found.splits.size == 1 and not found.piles
    # Both bounds at once: spikes at 0 and at 1 around one broad mode; the pile at the upper bound is reported too.
    three = np.concatenate([rng.normal(0.5, 0.05, 50_000), np.full(2000, 1e-5), np.full(2000, 1 - 1e-5)])
    found = density_modes.sample_modes(three, bounds=(0.0, 1.0))
    assert found.splits.size == 0 and [p[0] for p in found.piles] == [0.0, 1.0]


def test_a_pile_up_is_reported_in_words_and_keeps_the_run_converged():
    rng = np.random.default_rng(2)
    chain = np.abs(rng.normal(0.245, 0.08, size=(10_000, 40, 1)))  # as many samples as issue 29's run
    chain[:, 7, 0] = rng.uniform(0, 0.0002, 10_000)  # one walker stuck against the bound
    layout = ParameterLayout([Parameter("b", "impact", Uniform(0, 1), PLANET["impact"], "planet")])
    one = [modes.Mode(np.array([0.245]), 0.0, np.eye(1))]
    (pile,) = modes.describe(chain, np.zeros(chain.shape[:2]), 1, one, layout)
    assert pile.mixed and pile.entries() == []
    # source: the stuck walker's share by construction (1 of 40, plus the few samples beside it below the valley)
    assert pile.fraction == pytest.approx(0.025, abs=0.003)
    assert pile.warning().startswith(
        f"b.impact: {100 * pile.fraction:.1f}% of the samples pile up against its prior bound 0 (median 0.00011); "
        "they are counted with the posterior beside them, not as a separate mode."
    )
    assert "separated modes" not in pile.warning()
