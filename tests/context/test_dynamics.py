"""Orbital stability: Gladman's Hill criterion, orbit crossing, MEGNO from rebound, the dynamics block."""

import math
import sys

import numpy as np
import pytest
import yaml
from scipy.optimize import brentq

from planetfit.context.derived import derive
from planetfit.context.dynamics import dynamics_block, pair_checks
from planetfit.context.nbody import megno
from planetfit.core.errors import InputError
from planetfit.core.stability import hill_margin, orbits_cross
from planetfit.pipeline import check
from tests.synthetic import planet_truth, write_system


def _barnes_greenberg(mu1, mu2, a1, a2, e1, e2):
    """beta / beta_crit of Barnes & Greenberg (2006, ApJ 647, L163, eqs. 2-3), written out independently.

    alpha^-3 (mu1 + mu2 / delta^2) (mu1 gamma1 + mu2 gamma2 delta)^2 > 1 + 3^(4/3) mu1 mu2 / alpha^(4/3),
    mu_i = m_i / M_star, alpha = mu1 + mu2, gamma_i = sqrt(1 - e_i^2), delta = sqrt(a2 / a1).
    """
    alpha, delta = mu1 + mu2, math.sqrt(a2 / a1)
    g1, g2 = math.sqrt(1 - e1**2), math.sqrt(1 - e2**2)
    beta = (mu1 + mu2 / delta**2) * (mu1 * g1 + mu2 * g2 * delta) ** 2 / alpha**3
    return beta / (1 + 3 ** (4 / 3) * mu1 * mu2 / alpha ** (4 / 3))


@pytest.mark.parametrize(
    "mu1, mu2, a2, e1, e2", [(1e-5, 3e-5, 1.3, 0.0, 0.0), (3e-4, 1e-4, 1.6, 0.1, 0.2), (1e-3, 1e-3, 2.0, 0.3, 0.05)]
)
def test_hill_margin_matches_the_published_criterion(mu1, mu2, a2, e1, e2):
    # source: Gladman (1993, Icarus 106, 247) eq. 21 in the form of Barnes & Greenberg (2006, ApJ 647, L163) eqs. 2-3
    # (value from memory: the formula; the two agree to first order in the planet masses)
    expected = _barnes_greenberg(mu1, mu2, 1.0, a2, e1, e2)
    assert hill_margin(1.0, mu1, mu2, 1.0, a2, e1, e2) == pytest.approx(expected, rel=5 * (mu1 + mu2))


def test_circular_boundary_is_two_sqrt_three_mutual_hill_radii():
    # source: Gladman (1993, Icarus 106, 247): for circular orbits and small masses the Hill-stable separation is
    # a2 - a1 > 2 sqrt(3) R_H, R_H = ((m1 + m2) / (3 M_star))^(1/3) (a1 + a2) / 2
    mu = 1e-6
    a2 = brentq(lambda a: hill_margin(1.0, mu, mu, 1.0, a, 0.0, 0.0) - 1, 1.0 + 1e-6, 1.5)
    r_hill = (2 * mu / 3) ** (1 / 3) * (1 + a2) / 2
    assert (a2 - 1) / r_hill == pytest.approx(2 * math.sqrt(3), rel=0.01)


def test_worked_case_jupiter_mass_pair():
    # source: Gladman (1993, Icarus 106, 247) eq. 21 to first order in the masses, worked by hand for
    # mu1 = mu2 = 1e-3 on circular orbits: beta_crit = 1 + 3^(4/3) 1e-6 / (2e-3)^(4/3) = 1 + 4.3267e-6 / 2.5198e-4
    # = 1.01717; at a2/a1 = 1.2 (delta = 1.09545) beta = (1.83333e-3)(2.09545e-3)^2 / 8e-9 = 1.00623: unstable; at
    # 1.4 (delta = 1.18322) beta = (1.71429e-3)(2.18322e-3)^2 / 8e-9 = 1.02138: stable (the boundary lies near
    # 2 sqrt(3) R_H = 0.33). Masses enter the exact form at order mu: hence rel=2e-3.
    assert hill_margin(1.0, 1e-3, 1e-3, 1.0, 1.2, 0.0, 0.0) == pytest.approx(1.00623 / 1.01717, rel=2e-3)
    assert hill_margin(1.0, 1e-3, 1e-3, 1.0, 1.4, 0.0, 0.0) == pytest.approx(1.02138 / 1.01717, rel=2e-3)
    assert hill_margin(1.0, 1e-3, 1e-3, 1.0, 1.2, 0.0, 0.0) < 1 < hill_margin(1.0, 1e-3, 1e-3, 1.0, 1.4, 0.0, 0.0)


def test_crossing_orbits_are_flagged():
    # common practice, no published source: inner apoastron 1.5 beyond outer periastron 1.4
    assert orbits_cross(1.0, 2.0, 0.5, 0.3)
    assert not orbits_cross(1.0, 2.0, 0.2, 0.3)
    assert hill_margin(1.0, 1e-4, 1e-4, 1.0, 2.0, 0.5, 0.3) < 1


def _pair(mass_msun, outer_period_days):
    return [
        {"mass_msun": mass_msun, "period_days": 10.0, "e": 0.0, "omega_rad": 0.0, "mean_anomaly_rad": 0.0},
        {"mass_msun": mass_msun, "period_days": outer_period_days, "e": 0.0, "omega_rad": 1.0, "mean_anomaly_rad": 2.0},
    ]


def test_megno_regular_for_separated_pair_and_large_for_close_pair():
    # source: Cincotta & Simo (2000, A&AS 147, 205): time-averaged MEGNO -> 2 for quasi-periodic orbits, grows
    # linearly for chaotic ones (rebound's documented MEGNO behaviour); the close pair of Saturn-mass planets at
    # a period ratio 1.3 lies inside the resonance-overlap zone (Wisdom 1980, delta a / a ~ 1.3 mu^(2/7) = 0.13)
    assert megno(1.0, _pair(1e-3, 40.0), 1000) == pytest.approx(2.0, abs=0.1)
    assert megno(1.0, _pair(3e-4, 13.0), 1000) > 4.0


def _two_planet_system(tmp_path, outer_period_days, **dynamics):
    """A transiting b (3 d) and an RV-only c, and prior draws as stand-in posterior samples."""
    planets = {
        "b": planet_truth(3.0, 2460001.5, 5.0, radius_ratio=0.05, impact=0.3),
        "c": planet_truth(outer_period_days, 2460002.0, 5.0),
    }
    path = write_system(tmp_path, planets, seed=5, days=4.0, n_rv=10)
    raw = yaml.safe_load(path.read_text())
    raw["dynamics"] = dynamics
    path.write_text(yaml.safe_dump(raw))
    return check(path)


def _block(checked, n=1000):
    config, model = checked.config, checked.log_probability.model
    samples = model.layout.sample_prior(np.random.default_rng(1), n)
    quantities = derive(config, model, samples, np.random.default_rng(2))
    return dynamics_block(config, model, quantities, np.random.default_rng(3))


def test_far_apart_pair_is_stable_and_minimum_masses_are_named(tmp_path):
    # source: Gladman (1993): a period ratio of 10 (a2/a1 = 4.6) is far beyond 2 sqrt(3) mutual Hill radii
    block, warnings = _block(_two_planet_system(tmp_path, 30.0))
    assert block["p_hill_stable"] == 1.0 and block["p_orbits_cross"] == 0.0 and block["samples"] == 1000
    assert block["minimum_mass_planets"] == ["c"] and "minimum masses" in block["assumptions"]
    assert warnings == []


def test_close_pair_is_unstable_and_warned_about(tmp_path):
    # source: Gladman (1993): period ratio 1.07 (a2/a1 = 1.044) against 2 sqrt(3) R_H ~ 0.09 a for ~10 Earth masses
    block, warnings = _block(_two_planet_system(tmp_path, 3.2))
    assert block["p_hill_stable"] < 0.5
    assert any("Hill stable" in w for w in warnings)


def test_hill_prior_rejects_exactly_the_unstable_samples(tmp_path):
    # source: Gladman (1993), as above: with the prior, a draw keeps a finite probability iff it is Hill stable
    free = _two_planet_system(tmp_path / "free", 3.2)
    tied = _two_planet_system(tmp_path / "tied", 3.2, stability_prior="hill").log_probability
    model = free.log_probability.model
    draws = model.layout.sample_prior(np.random.default_rng(4), 300)
    quantities = derive(free.config, model, draws, np.random.default_rng(2))
    ((_, _, margin, _),) = pair_checks(model, quantities)
    finite_free = np.isfinite(free.log_probability.log_prob_many(draws))
    finite_tied = np.isfinite(tied.log_prob_many(draws))
    assert 0 < finite_tied.sum() < finite_free.sum()
    np.testing.assert_array_equal(finite_tied, finite_free & (margin > 1))


def test_nbody_block_of_a_far_apart_pair(tmp_path):
    # source: Cincotta & Simo (2000): regular orbits have MEGNO near 2
    checked = _two_planet_system(tmp_path, 30.0, stability="nbody", nbody_samples=4, nbody_orbits=200)
    block, warnings = _block(checked, 100)
    assert block["nbody_samples"] == 4 and block["p_megno_stable"] == 1.0
    assert block["megno"]["median"] == pytest.approx(2.0, abs=0.2)
    assert warnings == []


def test_nbody_without_rebound_names_the_extra(tmp_path, monkeypatch):
    checked = _two_planet_system(tmp_path, 30.0, stability="nbody", nbody_samples=2, nbody_orbits=10)
    monkeypatch.setitem(sys.modules, "rebound", None)  # import rebound now raises ImportError
    with pytest.raises(InputError, match=r"planetfit\[dynamics\]"):
        _block(checked, 10)


def test_without_rvs_only_crossing_is_tested(tmp_path):
    # common practice, no published source: without masses the Hill criterion has nothing to work with
    planets = {
        "b": planet_truth(3.0, 2460001.5, 0.0, radius_ratio=0.05, impact=0.3),
        "c": planet_truth(7.0, 2460002.0, 0.0, radius_ratio=0.04, impact=0.2),
    }
    path = write_system(tmp_path, planets, seed=6, days=8.0)
    raw = yaml.safe_load(path.read_text())
    del raw["velocities"]
    for p in raw["planets"].values():
        p["rv_amplitude_ms"] = 0.0
    path.write_text(yaml.safe_dump(raw))
    block, warnings = _block(check(path), 200)
    assert block["p_hill_stable"] is None and block["p_orbits_cross"] == 0.0
    assert "only orbit crossing" in block["assumptions"] and warnings == []


def test_mutual_hill_radius_uses_the_mean_semi_major_axis():
    # source: Chambers, Wetherill & Boss 1996 (Icarus 119, 261), eq. 2: R_H = ((m1 + m2) / 3 M*)^(1/3) (a1 + a2) / 2;
    # at period ratio 2 (a2 = 1.587 a1) it is 1.29 times the inner-axis version used before
    from planetfit.context.nbody import mutual_hill_radius

    a2 = 2.0 ** (2.0 / 3.0)
    r_hill = mutual_hill_radius(1.0, 3e-6, 3e-6, 1.0, a2)
    assert r_hill == pytest.approx((2e-6) ** (1 / 3) * (1 + a2) / 2, rel=1e-12)
    assert r_hill / (2e-6) ** (1 / 3) == pytest.approx(1.2937, rel=1e-3)
