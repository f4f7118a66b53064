"""The impact parameter sampled as b^2 keeps the config's uniform prior on b; runs sampled in b are not misread."""

import emcee
import numpy as np
import pytest
from scipy import stats

from planetfit import pipeline
from planetfit.core.quantities import PLANET
from planetfit.demo.hot_giant import CONFIG as HOT_GIANT
from planetfit.fitting.parameters import Parameter, ParameterLayout
from planetfit.fitting.sampling.mcmc import walker_moves
from planetfit.inputs.priors import Normal, SquaredUniform, Uniform, sampled_squared
from planetfit.rundir import manifest


class _NoJacobian(SquaredUniform):
    """The same coordinate with the Jacobian left out: what a wrong prior correction looks like."""

    def log_density_sampler(self, y):
        return self._logp if self.lo**2 <= y <= self.hi**2 else -np.inf


def test_jacobian_is_the_derivative_of_the_coordinate_change():
    # source: change of variables p_y(y) = p_x(x(y)) |dx/dy| with dx/dy by central differences
    prior, step = SquaredUniform(0.0, 1.0), 1e-7
    for y in np.linspace(0.01, 0.99, 15):
        slope = (prior.from_sampler(y + step) - prior.from_sampler(y - step)) / (2 * step)
        jacobian = prior.log_density_sampler(y) - prior.log_density(prior.from_sampler(y))
        assert jacobian == pytest.approx(np.log(slope), abs=1e-6)
        assert prior.to_sampler(prior.from_sampler(y)) == pytest.approx(y, abs=1e-15)
    assert prior.log_density_sampler(1.01) == -np.inf and prior.log_density_sampler(-0.01) == -np.inf


def _walkers_after_sampling_the_prior(prior, walkers=2000, steps=60):
    """Walkers drawn from the config's prior, moved by planetfit's moves on the layout's prior density."""
    layout = ParameterLayout([Parameter("b", "impact", prior, PLANET["impact"], "planet")])
    sampler = emcee.EnsembleSampler(
        walkers, 1, lambda t: np.array([layout.log_prior(row) for row in t]), vectorize=True, moves=walker_moves()
    )
    sampler.random_state = np.random.RandomState(3).get_state()
    sampler.run_mcmc(layout.sample_prior(np.random.default_rng(2), walkers), steps, progress=False)
    return layout.values(sampler.get_last_sample().coords)["b.impact"]


@pytest.mark.parametrize("lo, hi", [(0.0, 1.0), (0.2, 0.9)])
def test_the_prior_on_b_is_the_configs_through_b_squared(lo, hi):
    # source: two-sample-free Kolmogorov-Smirnov test against the config's uniform CDF (scipy.stats.kstest);
    # 2,000 walkers after 60 steps are about independent draws (autocorrelation of a few steps in one dimension).
    sampled = _walkers_after_sampling_the_prior(SquaredUniform(lo, hi))
    assert stats.kstest(sampled, stats.uniform(lo, hi - lo).cdf).pvalue > 0.01
    # Without the Jacobian b^2 would be uniform: b's density grows as b, far from the config's prior.
    wrong = _walkers_after_sampling_the_prior(_NoJacobian(lo, hi))
    assert stats.kstest(wrong, stats.uniform(lo, hi - lo).cdf).pvalue < 1e-6


def test_only_uniform_non_negative_impact_priors_are_sampled_squared():
    # common practice, no published source: planetfit's own choice of coordinate
    assert isinstance(sampled_squared(Uniform(0.0, 1.0)), SquaredUniform)
    assert type(sampled_squared(Normal(0.3, 0.1))) is Normal
    assert type(sampled_squared(Uniform(-0.5, 1.0))) is Uniform
    assert sampled_squared(Uniform(0.0, 1.0)).as_config() == {"uniform": [0.0, 1.0]}  # outputs keep the spelling


def test_the_model_samples_b_squared_and_the_manifest_refuses_samples_in_b():
    checked = pipeline.check(HOT_GIANT)
    layout = checked.log_probability.layout
    assert "b.impact^2" in layout.sampled_labels
    x = layout.sample_prior(np.random.default_rng(4), 50)
    assert np.allclose(layout.to_sampler(np.column_stack([layout.values(x)[n] for n in layout.free])), x)
    now = checked.manifest()
    assert now["coordinates"] == ["b.impact^2"]  # ln(jitter) is what planetfit always sampled: not listed
    before = {**now, "coordinates": []}  # a run directory written when b itself was sampled
    (line,) = manifest.differences(before, now)
    assert "sampler coordinates" in line and "b.impact^2" in line
    assert manifest.differences({k: v for k, v in now.items() if k != "coordinates"}, now) == [line]
