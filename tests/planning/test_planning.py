"""The planner against known results: the semi-amplitude precision of N RVs, the mass-radius relation,
the mass function, and the schedule's rules."""

import numpy as np
import pytest
from plan_systems import PERIOD_DAYS, TRANSIT_BJD, planet_block, write_rv_system, write_transiting_system

from planetfit import pipeline
from planetfit.context.interior import composition
from planetfit.core.errors import InputError
from planetfit.core.geometry import planet_mass_kg, rv_amplitude_ms
from planetfit.core.units import M_EARTH_KG, M_SUN_KG
from planetfit.planning import forecast, massprior, plan
from planetfit.planning.fisher import PlannedRvNoise
from planetfit.planning.job import resolve_window
from planetfit.planning.run import from_samples
from planetfit.planning.schedule import NIGHT_HOURS, observation_times

SIGMA_MS = 2.0


def _prior_run(config, n=3000, seed=1):
    """A run whose posterior is its prior: parameters drawn from the prior stand in for the samples."""
    checked = pipeline.check(config)
    samples = checked.log_probability.layout.sample_prior(np.random.default_rng(seed), n)
    return from_samples(checked, samples)


def _plan(run, counts, window, draws=300, mass_guess=None):
    settings = plan.PlanSettings(SIGMA_MS, 0.0, counts, window, draws=draws, mass_guess=mass_guess)
    return plan.make_plan(run, settings, PlannedRvNoise(SIGMA_MS, 0.0))[0]["b"]


def test_sigma_k_of_n_rvs_at_random_phases(tmp_path):
    # Known result: a circular orbit of known period and phase, v_i = K sin(phi_i) + noise of sd sigma.
    # The log-likelihood's curvature in K is F = sum_i sin^2(phi_i) / sigma^2; for phases uniform on
    # [0, 2 pi), E[sin^2 phi] = 1/2, so F = N / (2 sigma^2) and sigma_K = F^(-1/2) = sigma sqrt(2 / N).
    # (The new spectrograph's free offset is nearly uncorrelated with K at random phases.)
    # source: the Cramer-Rao bound of a sinusoid's amplitude, var(A) = 2 sigma^2 / N (Kay 1993, Fundamentals of
    # Statistical Signal Processing: Estimation Theory, ch. 3, sinusoidal parameter estimation)
    # The old RVs (3 at 10 km/s) carry no information on K in [0, 100] m/s: the posterior is the prior.
    old = np.array([TRANSIT_BJD + 1.0, TRANSIT_BJD + 2.0, TRANSIT_BJD + 3.0])
    config = write_rv_system(
        tmp_path,
        [("old", old, np.array([1.0, -1.0, 0.0]), 1e4)],
        planet_block(PERIOD_DAYS, TRANSIT_BJD, {"uniform": [0, 100]}),
    )
    run = _prior_run(config)
    rows = _plan(run, [20, 50, 200], (TRANSIT_BJD + 10, TRANSIT_BJD + 410), draws=200)["counts"]
    for row in rows:
        expected = SIGMA_MS * np.sqrt(2 / row["n_rvs"])
        assert row["sigma_k_ms"]["median"] == pytest.approx(expected, rel=0.10), row


def test_transit_only_run_with_a_mass_guess(tmp_path):
    # With a known mass (guess 5 +- 0.001 Earth masses) and no RVs yet, 50 RVs measure K to sigma sqrt(2/50)
    # and the mass to (sigma_K / K) combined with 2/3 of the star's fractional mass error (M ∝ K M*^(2/3)).
    # source: the mass function Mp sin i ∝ K P^(1/3) M*^(2/3) (Lovis & Fischer 2010, eq. 14) and the result above
    run = _prior_run(write_transiting_system(tmp_path))
    b = _plan(run, [50], (TRANSIT_BJD + 10, TRANSIT_BJD + 210), draws=100, mass_guess=(5.0, 1e-3))
    row = b["counts"][0]
    sigma_k = SIGMA_MS * np.sqrt(2 / 50)
    k = rv_amplitude_ms(5.0 * M_EARTH_KG, PERIOD_DAYS, 0.0, 1.0, 0.80 * M_SUN_KG)
    expected = np.hypot(sigma_k / k, 2 / 3 * 0.04 / 0.80)
    assert row["sigma_k_ms"]["median"] == pytest.approx(sigma_k, rel=0.10)
    assert row["mass_precision"]["median"] == pytest.approx(expected, rel=0.10)
    assert 0.0 <= row["p_decisive"] <= 1.0 and b["now"]["mass_precision"] is None


def test_reweighted_and_gaussian_verdicts_agree(tmp_path):
    # common practice, no published source: two computations of one quantity. The old posterior is Gaussian
    # (its prior: K ~ N(2.2, 0.4) m/s; 3 old RVs at 10 km/s carry no information), so the Gaussian verdict is
    # near exact, and weighting the old samples by the simulated RVs' likelihood must give the same p_rocky.
    # Radius ratio 0.02 gives 1.70 Earth radii, near the silicate curve at about 5 Earth masses: p_rocky ~ 0.5.
    old = ("old", TRANSIT_BJD + np.array([1.0, 2.0, 3.0]), np.array([1.0, -1.0, 0.0]), 1e4)
    config = write_transiting_system(tmp_path, {"normal": [2.2, 0.4]}, radius_ratio=0.02, velocities=[old])
    run = _prior_run(config, n=4000)
    names = forecast.planner_parameters(run.model, run.values)
    coords = forecast.coordinates(run.values, names)
    rng = np.random.default_rng(6)
    forecaster = forecast.Forecaster(
        run.model, run.values, coords, PlannedRvNoise(SIGMA_MS, 0.0), (TRANSIT_BJD + 10, TRANSIT_BJD + 100), 1,
        plan._reweighting(run, run.values, coords, rng),
    )  # fmt: skip
    normals = rng.standard_normal((4000, 2))
    pairs = []
    for row in rng.choice(run.size, 40, replace=False):
        r = forecaster.draw(row, [10], rng)
        gaussian = forecast.p_rocky(composition, r.mean_mr["b"][0], r.cov_mr["b"][0], normals)
        pairs.append((r.p_rocky_reweighted["b"][0], gaussian))
    pairs = np.array(pairs)
    assert np.isfinite(pairs[:, 0]).all() and 0.2 < np.mean(pairs[:, 1]) < 0.8
    assert np.mean(np.abs(pairs[:, 0] - pairs[:, 1])) < 0.04, pairs


def test_earth_sun_semi_amplitude():
    # value from memory: the Earth moves the Sun by about 8.9 cm/s
    k = rv_amplitude_ms(M_EARTH_KG, 365.25, 0.0, 1.0, M_SUN_KG)
    assert k == pytest.approx(0.0895, rel=0.01)
    assert planet_mass_kg(k, 365.25, 0.0, 1.0, M_SUN_KG) == pytest.approx(M_EARTH_KG, rel=1e-9)


def test_chen_kipping_relation():
    # source: Chen & Kipping (2017), ApJ 834, 17: R = 1.008 M^0.279 for Terran worlds (Earth units),
    # continuous at the 2.0 Earth-mass transition, R ∝ M^0.589 above it.
    mean, sd = massprior.chen_kipping_log_radius(np.log10([1.0, 2.04, 10.0]))
    assert 10 ** mean[0] == pytest.approx(1.008, rel=1e-3) and sd[0] == pytest.approx(0.0403)
    assert mean[2] - mean[1] == pytest.approx(0.589 * (1 - np.log10(2.04)), rel=1e-6)
    # Inverting it: an Earth-sized planet is forecast at about (1 / 1.008)^(1 / 0.279) = 0.97 Earth masses.
    masses = massprior.masses_from_radii(np.full(5000, 1.0), np.random.default_rng(3))
    assert np.median(masses) == pytest.approx((1 / 1.008) ** (1 / 0.279), rel=0.05)


def test_schedule_keeps_to_the_window_and_the_nights():
    # common practice, no published source: the schedule's own rules (DESIGN of planetfit.planning.schedule)
    rng = np.random.default_rng(4)
    window = (2460100.0, 2460130.0)
    t = observation_times(rng, 75, window, per_night=3)
    night = np.floor(t - window[0])
    assert t.min() >= window[0] and t.max() <= window[1]
    assert np.bincount(night.astype(int)).max() <= 3
    assert np.all(t - window[0] - night <= NIGHT_HOURS / 24)
    with pytest.raises(InputError, match="do not fit"):
        observation_times(rng, 91, window, per_night=3)


def test_decisive_with_the_mass_known_is_set_by_the_radius():
    # common practice, no published source: with the radius exact, knowing the mass settles the verdict
    # (p_rocky 0 or 1 away from the silicate curve); with a radius uncertain by 20%, it cannot.
    rng = np.random.default_rng(9)
    mass = rng.uniform(2.0, 8.0, 6000)
    rows = rng.choice(mass.size, 200, replace=False)
    exact = plan.decisive_with_exact_mass(mass, np.full(mass.size, 1.5), rows)
    vague = plan.decisive_with_exact_mass(mass, rng.normal(1.6, 0.32, mass.size), rows)
    assert exact > 0.85 and vague < 0.3, (exact, vague)


def test_window_in_bjd_or_in_days_after_the_last_data_point():
    # common practice, no published source: the --window-days convention of planetfit plan
    last = 2460050.3
    assert resolve_window(None, last) == pytest.approx((last + 1, last + 181))
    assert resolve_window((10, 70), last) == pytest.approx((last + 10, last + 70))
    assert resolve_window((2460100.0, 2460200.0), last) == (2460100.0, 2460200.0)
