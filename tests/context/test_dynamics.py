"""Orbital stability: Gladman's Hill criterion, orbit crossing, MEGNO from rebound, the dynamics block."""

import math

import pytest
from scipy.optimize import brentq

from planetfit.context.nbody import megno
from planetfit.core.stability import hill_margin, orbits_cross


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
