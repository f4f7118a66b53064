"""Sampling (e cos w, e sin w) where the eclipse is fitted keeps the config's prior on e and w."""

import emcee
import numpy as np
import pytest
from scipy import stats

from planetfit import pipeline
from planetfit.core.geometry import eccentricity_omega
from planetfit.core.quantities import PLANET
from planetfit.demo import DEMO_CONFIG
from planetfit.demo.hot_giant import CONFIG as HOT_GIANT
from planetfit.fitting.components.orbits import EccentricityVector
from planetfit.fitting.mcmc import walker_moves
from planetfit.fitting.parameters import Parameter, ParameterLayout
from planetfit.inputs.priors import Uniform

NAMES = ("b.sqrt_e_cos_w", "b.sqrt_e_sin_w")


def _layout(half_width, pair):
    params = [Parameter("b", n.split(".")[1], Uniform(-half_width, half_width), PLANET[n.split(".")[1]]) for n in NAMES]
    return ParameterLayout(params, [pair] if pair else [])


class _NoJacobian(EccentricityVector):
    """The same coordinates with the Jacobian left out: what a wrong prior correction looks like."""

    @staticmethod
    def log_jacobian(h, k):
        return np.zeros(np.shape(h))


def test_jacobian_is_the_determinant_of_the_coordinate_change():
    # source: the determinant of d(x, y)/d(h, k) by central differences, against the closed form 1 / (2 e).
    rng = np.random.default_rng(1)
    pair, step = EccentricityVector(NAMES), 1e-7
    for h, k in rng.uniform(-0.6, 0.6, size=(20, 2)):
        columns = [
            (np.array(pair.from_sampler(h + step, k)) - pair.from_sampler(h - step, k)) / (2 * step),
            (np.array(pair.from_sampler(h, k + step)) - pair.from_sampler(h, k - step)) / (2 * step),
        ]
        det = abs(np.linalg.det(np.column_stack(columns)))
        assert np.log(det) == pytest.approx(pair.log_jacobian(h, k), abs=1e-6)
        assert np.allclose(pair.to_sampler(*pair.from_sampler(h, k)), (h, k), atol=1e-12)


def test_ranges_of_h_and_k_over_the_prior_box():
    # source: h = x sqrt(x^2 + y^2) evaluated on a fine grid of the box, against the closed form of its ends.
    pair = EccentricityVector(NAMES)
    for box_x, box_y in (((-0.45, 0.45), (-0.45, 0.45)), ((0.1, 0.5), (-0.2, 0.3)), ((-0.3, -0.1), (0.2, 0.6))):
        x, y = np.meshgrid(np.linspace(*box_x, 401), np.linspace(*box_y, 401))
        h, k = pair.to_sampler(x, y)
        (h_lo, h_hi), (k_lo, k_hi) = pair.ranges(box_x, box_y)
        assert (h_lo, h_hi, k_lo, k_hi) == pytest.approx((h.min(), h.max(), k.min(), k.max()), abs=1e-12)


def _walkers_after_sampling_the_prior(layout, rng, walkers=2000, steps=60):
    """Walkers drawn from the config's prior, moved by planetfit's moves on the layout's prior density."""
    sampler = emcee.EnsembleSampler(
        walkers, 2, lambda t: np.array([layout.log_prior(row) for row in t]), vectorize=True, moves=walker_moves()
    )
    sampler.random_state = np.random.RandomState(3).get_state()
    sampler.run_mcmc(layout.sample_prior(rng, walkers), steps, progress=False)
    values = layout.values(sampler.get_last_sample().coords)
    return eccentricity_omega(values[NAMES[0]], values[NAMES[1]])


@pytest.mark.parametrize("half_width", [0.45, 1.0])
def test_the_prior_on_e_and_w_is_the_configs_through_the_new_coordinates(half_width):
    rng = np.random.default_rng(2)
    layout = _layout(half_width, EccentricityVector(NAMES))
    assert layout.sampled_labels == ["b.e_cos_w", "b.e_sin_w"]
    # The config's prior, drawn directly: sqrt(e) cos w and sqrt(e) sin w uniform on the square.
    direct = eccentricity_omega(*rng.uniform(-half_width, half_width, size=(2, 20000)))
    sampled = _walkers_after_sampling_the_prior(layout, rng)
    # source: two-sample Kolmogorov-Smirnov test (scipy.stats.ks_2samp); 2,000 walkers after 60 steps are
    # about independent draws (autocorrelation of a few steps on a 2-d target).
    for a, b in zip(sampled, direct):
        assert stats.ks_2samp(a, b).pvalue > 0.01
    if half_width == 1.0:  # source: Eastman, Gaudi & Agol 2013 (PASP 125, 83), sect. 3.3.1: e uniform inside e < 1
        assert stats.kstest(sampled[0][sampled[0] < 1], "uniform").pvalue > 0.01
    # Without the Jacobian the sampled e would follow p(e) ~ e (uniform in the (h, k) plane): far off.
    wrong = _walkers_after_sampling_the_prior(_layout(half_width, _NoJacobian(NAMES)), rng)
    assert stats.ks_2samp(wrong[0], direct[0]).pvalue < 1e-6


def test_the_eclipse_fit_samples_e_cos_w_and_the_rv_only_orbit_does_not():
    hot = pipeline.check(HOT_GIANT).posterior.layout
    assert {"b.e_cos_w", "b.e_sin_w"} <= set(hot.sampled_labels)
    x = hot.sample_prior(np.random.default_rng(4), 50)
    assert np.allclose(hot.to_sampler(np.column_stack([hot.values(x)[n] for n in hot.free])), x)
    demo = pipeline.check(DEMO_CONFIG).posterior.layout  # planet c: eccentric, RVs only
    assert "c.sqrt_e_cos_w" in demo.sampled_labels and not demo.pairs
