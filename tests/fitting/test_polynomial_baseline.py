"""The polynomial photometric baseline: a fit with its coefficients marginalised recovers an injected quadratic
trend under the tiny system's transits."""

import numpy as np
from synthetic import tiny_light_curve, write_photometry, write_tiny_transits

from planetfit.fitting.log_probability import LogProbability
from planetfit.fitting.sampling.laplace import laplace_covariance
from planetfit.fitting.sampling.optimiser import find_map
from planetfit.pipeline import check

#: The injected baseline F0 + a1 dt + a2 dt^2 (dt days from the middle of the 10-day light curve).
TRUTH = {"cam.flux_level": 1.0, "cam.time_power_1": 6e-4, "cam.time_power_2": -1.5e-4}
NOISE_PPM = 300.0


def _trended_star(folder, seed=5):
    """Ten days of the tiny system's transits on a quadratic baseline, white noise; the config path."""
    rng = np.random.default_rng(seed)
    t = np.linspace(2460000.0, 2460010.0, 600)
    dt = t - 0.5 * (t[0] + t[-1])
    level, a1, a2 = TRUTH.values()
    flux = (level + a1 * dt + a2 * dt**2) * tiny_light_curve(t) + rng.normal(0, NOISE_PPM * 1e-6, t.size)
    entry = write_photometry(
        folder, t, flux, NOISE_PPM * 1e-6, 2.0, supersample=1, normalise=False, baseline="polynomial", degree=2
    )
    # Limb darkening held at the injected u = (0.4, 0.2) as Kipping's q1 = (u1 + u2)^2, q2 = u1 / (2 (u1 + u2)).
    entry.update(limb_darkening_q1=0.36, limb_darkening_q2=1 / 3)
    return write_tiny_transits(folder, "Trended-1", entry)


def test_a_fit_recovers_an_injected_quadratic_trend(tmp_path):
    checked = check(_trended_star(tmp_path))
    log_prob = LogProbability(checked.config, checked.photometry, checked.velocities)
    assert not set(TRUTH) & set(log_prob.layout.free), "the coefficients are marginalised by default"
    rng = np.random.default_rng(2)
    theta, _ = find_map(log_prob, log_prob.layout, rng, starts=2)[0]
    cov = laplace_covariance(log_prob.log_prob_many, theta, log_prob.layout.geometry()[1])
    draws = rng.multivariate_normal(theta, cov, 400)
    draws = draws[np.isfinite(log_prob.log_prob_many(draws))]
    # The coefficients' posterior: each draw of the other parameters completed by a draw of the coefficients from
    # their conditional posterior (the Laplace approximation of the rest).
    full, warnings = log_prob.complete(draws, seed=3)
    assert not warnings
    for name, truth in TRUTH.items():
        j = log_prob.model.layout.free.index(name)
        values = log_prob.model.layout.priors[name].from_sampler(full[:, j])
        mean, sd = values.mean(), values.std()
        # common practice, no published source: the injected value lies within 3 posterior standard deviations,
        # and 600 points of 300 ppm over 10 days measure each coefficient to better than 5 %.
        assert abs(mean - truth) < 3 * sd, (name, mean, sd, truth)
        assert sd < 0.05 * abs(truth), (name, sd)
