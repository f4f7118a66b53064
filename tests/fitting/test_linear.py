"""Linear parameters marginalised analytically: the marginal likelihood against brute-force integration, the
conditional draws against a sampled run, and the warning when a uniform prior cuts the posterior."""

import json
import math

import numpy as np
import pytest
import yaml
from rv_models import K_MS, PERIOD, TC, circular, rv_data, write_rv_model
from scipy import integrate, special, stats
from synthetic import planet_truth, write_tiny_system
from variability import write_active_star, write_spotted_star, write_trend_star

from planetfit import pipeline
from planetfit.fitting.sampling.mcmc import run_sampler


def log_probs(path, edit=None):
    """(marginalised, sampled) log-probabilities of the config at ``path``, its raw YAML changed by ``edit`` first."""
    raw = yaml.safe_load(path.read_text())
    if edit is not None:
        edit(raw)
    out = []
    for mode in ("marginalised", "sampled"):
        raw["sampling"]["linear_parameters"] = mode
        written = path.with_name(f"{mode}.yaml")
        written.write_text(yaml.safe_dump(raw, sort_keys=False))
        out.append(pipeline.check(written).log_probability)
    return out


def conditional(log_prob, theta):
    """{name: (mean, sd)} of each marginalised parameter given the sampled vector ``theta``."""
    _, _, batch = log_prob._batch(theta[None, :])
    out = {}
    for likelihood in log_prob.model.likelihoods:
        if likelihood.marginal is not None:
            mean, chol = likelihood.marginal.conditional(likelihood.gram(batch)[0])
            cov = np.linalg.inv(chol[0] @ chol[0].T)
            out.update({n: (mean[0, j], math.sqrt(cov[j, j])) for j, n in enumerate(likelihood.marginal.names)})
    return out


def full_vectors(marg, samp, theta, linear):
    """Sampled-mode vectors: ``theta``'s values and, per row of ``linear`` ({name: (n,) values}), the linear ones."""
    n = len(next(iter(linear.values())))
    columns = [
        linear[name] if name in linear else np.full(n, theta[marg.layout.free.index(name)]) for name in samp.layout.free
    ]
    return np.column_stack(columns)


def brute_force_ln_marginal(marg, samp, theta):
    """ln of the integral over the linear parameters of likelihood x their prior, by scipy's quadrature.

    One parameter: adaptive quadrature (``quad``). Two: the trapezoidal rule on a 61 x 61 grid over +-8 conditional
    standard deviations, exponentially accurate for a smooth integrand that has decayed at the grid's edges
    (source: Trefethen & Weideman 2014, SIAM Review 56, 385).
    """
    cond = conditional(marg, theta)
    names = list(cond)
    priors = [samp.layout.priors[n] for n in names]
    peak = float(samp.log_likelihood_many(full_vectors(marg, samp, theta, {n: [m] for n, (m, _) in cond.items()}))[0])

    def log_integrand(grid):
        values = dict(zip(names, grid))
        ll = samp.log_likelihood_many(full_vectors(marg, samp, theta, values))
        return ll - peak + sum(np.array([p.log_density(x) for x in v]) for p, v in zip(priors, grid))

    if len(names) == 1:
        (mean, sd) = cond[names[0]]
        value, _ = integrate.quad(
            lambda x: math.exp(log_integrand([np.array([x])])[0]),
            mean - 10 * sd,
            mean + 10 * sd,
            epsabs=0,
            epsrel=1e-11,
            limit=200,
        )
        return peak + math.log(value)
    axes = [np.linspace(m - 8 * s, m + 8 * s, 61) for m, s in cond.values()]
    mesh = np.meshgrid(*axes, indexing="ij")
    f = np.exp(log_integrand([g.ravel() for g in mesh])).reshape(mesh[0].shape)
    return peak + math.log(integrate.trapezoid(integrate.trapezoid(f, axes[1], axis=1), axes[0]))


def _tiny_photometry(tmp_path):
    return write_tiny_system(tmp_path, velocities=False)


def _linear_baseline(raw):
    raw["photometry"][0].update(baseline="linear", flux_level={"normal": [1.0, 0.001]})


def _rv_trend(tmp_path):
    t, rv = rv_data(4, {"b": planet_truth(PERIOD, TC, K_MS)})
    return write_rv_model(tmp_path, t, rv, {"b": circular()}, jitter_ms={"loguniform": [0.01, 10]})


CASES = {
    # name: (config writer, YAML edit, number of linear parameters)
    "white-sums-level": (_tiny_photometry, None, 1),
    "white-sums-linear-baseline": (_tiny_photometry, _linear_baseline, 1),
    "white-sums-polynomial": (
        _tiny_photometry,
        lambda raw: raw["photometry"][0].update(baseline="polynomial", degree=1),
        2,
    ),
    "white-offset-and-trend": (_rv_trend, lambda raw: raw.update(rv_trend="linear"), 2),
    "gp-flux-level": (lambda p: write_spotted_star(p, 3, "gp"), None, 1),
    "gp-two-offsets": (lambda p: write_active_star(p, 3, True), None, 2),
}


@pytest.mark.parametrize("case", CASES)
def test_marginal_likelihood_equals_brute_force_integration(tmp_path, case):
    writer, edit, k = CASES[case]
    marg, samp = log_probs(writer(tmp_path), edit)
    assert samp.layout.ndim - marg.layout.ndim == k
    rng = np.random.default_rng(2)
    centre, scale, _, _ = marg.layout.geometry()
    thetas = centre + 1e-3 * scale * rng.standard_normal((40, centre.size))
    thetas = thetas[np.isfinite(marg.log_prob_many(thetas))][:2]
    assert len(thetas) == 2
    for theta in thetas:
        analytic = float(marg.log_likelihood_many(theta[None, :])[0])
        brute = brute_force_ln_marginal(marg, samp, theta)
        # source: the Gaussian integral over the linear parameters (Gregory 2005, Bayesian Logical Data Analysis,
        # section 10.5) must equal the numerical one: Z to 1e-6 relative, i.e. ln Z to 1e-6.
        assert abs(analytic - brute) < 1e-6, (case, analytic, brute)


def test_conditional_draws_match_a_sampled_run(tmp_path):
    t, rv = rv_data(6, {"b": planet_truth(PERIOD, TC, K_MS)})
    path = write_rv_model(tmp_path, t, rv, {"b": circular()}, method="mcmc", walkers=16, max_steps=20000)
    marg, samp = log_probs(path)
    offsets, results = [], []
    for log_prob, seed in ((marg, 1), (samp, 2)):
        result = run_sampler(
            log_prob,
            log_prob.layout,
            log_prob.config.sampling,
            tmp_path / f"{seed}.h5",
            np.random.default_rng(seed),
            progress=False,
        )
        assert result.converged
        results.append(result)
        samples, warnings = log_prob.complete(result.samples, seed)
        assert not warnings
        step = max(1, len(samples) // result.independent_samples)  # about one sample per autocorrelation time
        offsets.append(log_prob.model.layout.values(samples[::step])["spec.offset_ms"])
    # common practice, no published source: two samplers of one posterior give one distribution (two-sample KS).
    assert stats.ks_2samp(*offsets).pvalue > 0.01, [np.percentile(o, [16, 50, 84]) for o in offsets]
    # The draws are reproducible: the same samples and seed give the same draws.
    kept = results[0].samples[:600]
    assert np.array_equal(marg.complete(kept, 5)[0], marg.complete(kept, 5)[0])
    assert not np.array_equal(marg.complete(kept, 5)[0], marg.complete(kept, 6)[0])


def test_a_uniform_prior_cutting_the_posterior_is_warned_about(tmp_path):
    t, rv = rv_data(6, {"b": planet_truth(PERIOD, TC, K_MS)})
    path = write_rv_model(tmp_path, t, rv, {"b": circular()}, method="mcmc", walkers=16, max_steps=3000)
    raw = yaml.safe_load(path.read_text())
    raw["velocities"][0]["offset_ms"] = {"uniform": [-50, 4.0]}  # the data say 4 +- 0.4 m/s
    path.write_text(yaml.safe_dump(raw, sort_keys=False))
    run_dir = pipeline.run(path, quiet=True, figures=False).path
    summary = json.loads((run_dir / "summary.json").read_text())
    warned = [w for w in summary["sampling"]["warnings"] if "spec.offset_ms reaches the edge" in w]
    assert warned and "linear_parameters: sampled" in warned[0]
    # Every output keeps the marginalised parameter, and its draws stay inside the prior.
    offset = summary["fitted_parameters"]["spec.offset_ms"]
    assert offset["upper"] <= 4.0 and offset["median"] > 3.0
    assert summary["sampling"]["parameter_diagnostics"]["spec.offset_ms"]["ess_bulk"] > 100


def test_the_edge_mass_is_the_normal_tail(tmp_path):
    t, rv = rv_data(6, {"b": planet_truth(PERIOD, TC, K_MS)})
    edit = lambda raw: raw["velocities"][0].update(offset_ms={"uniform": [-50, 4.2]})  # noqa: E731
    marg, _ = log_probs(write_rv_model(tmp_path, t, rv, {"b": circular()}), edit)
    theta = marg.layout.geometry()[0]
    theta[marg.layout.free.index("b.rv_amplitude_ms")] = K_MS
    mean, sd = conditional(marg, theta)["spec.offset_ms"]
    _, _, batch = marg._batch(theta[None, :])
    likelihood = marg.model.velocity
    mass = likelihood.marginal.edge_mass(likelihood.gram(batch)[0])[0, 0]
    # source: the normal distribution's tails beyond the prior's range [-50, 4.2] (scipy.special.ndtr).
    assert mass == pytest.approx(special.ndtr((-50 - mean) / sd) + special.ndtr((mean - 4.2) / sd), rel=1e-9)
    assert 0.01 < mass < 0.99


def test_four_linear_parameters_give_the_exact_gaussian_integral(tmp_path):
    # An offset, a quadratic trend and an activity-indicator coefficient: the integrand is exactly Gaussian in
    # them, so its integral is f(peak) (2 pi)^(k/2) det(H)^(-1/2) with H the Hessian of -ln f, here by central
    # differences (exact for a quadratic up to rounding).
    marg, samp = log_probs(write_trend_star(tmp_path, 2))
    theta = marg.layout.geometry()[0]
    cond = conditional(marg, theta)
    assert len(cond) == 4
    names, peak = list(cond), np.array([m for m, _ in cond.values()])
    step = np.array([s for _, s in cond.values()])
    k = len(names)

    def ln_f(points):
        values = {n: points[:, j] for j, n in enumerate(names)}
        log_prior = sum(samp.layout.priors[n].log_density(peak[j]) for j, n in enumerate(names))  # flat
        return samp.log_likelihood_many(full_vectors(marg, samp, theta, values)) + log_prior

    offsets = [np.zeros(k)] + [
        s * step[i] * np.eye(k)[i] + t * step[j] * np.eye(k)[j]
        for i in range(k)
        for j in range(k)
        for s in (1, -1)
        for t in (1, -1)
    ]
    f = ln_f(peak + np.array(offsets))
    hessian = np.empty((k, k))
    for i in range(k):
        for j in range(k):
            pp, pm, mp, mm = f[1 + 4 * (i * k + j) : 5 + 4 * (i * k + j)]
            hessian[i, j] = -(pp - pm - mp + mm) / (4 * step[i] * step[j])
    gradient_free = ln_f(peak[None, :] + np.diag(step)) - ln_f(peak[None, :] - np.diag(step))
    # source: the Gaussian integral (e.g. Gregory 2005, section 10.5); the conditional mean is its peak.
    assert np.all(np.abs(gradient_free) < 1e-6)
    expected = f[0] + 0.5 * k * math.log(2 * math.pi) - 0.5 * np.linalg.slogdet(hessian)[1]
    assert abs(float(marg.log_likelihood_many(theta[None, :])[0]) - expected) < 1e-6
