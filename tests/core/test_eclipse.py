"""Eclipse times from the transit ephemeris against published approximations and exact orbits."""

import math

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from batman import _rsky
from radvel.orbit import true_anomaly

from planetfit.core.eclipse import conjunction_interval_days, eclipse_bjd, light_travel_delay_days
from planetfit.fitting.keplerian import periastron_bjd


@pytest.mark.parametrize("e, omega_deg", [(0.01, 30.0), (0.02, 160.0), (0.015, 250.0)])
def test_small_eccentricity_matches_winn_2010_eq33(e, omega_deg):
    # source: Winn (2010), "Transits and Occultations", eq. 33: t_occ - t_tra ~ P/2 [1 + (4/pi) e cos w]
    # for i = 90 deg, to first order in e (the neglected terms are of order P e^2).
    period, w = 3.0, math.radians(omega_deg)
    approx = period / 2 * (1 + 4 / math.pi * e * math.cos(w))
    assert abs(conjunction_interval_days(period, e, w) - approx) < period * e**2
    assert abs(conjunction_interval_days(period, e, w) - period / 2) > 0.5 * period * e * abs(math.cos(w))


@pytest.mark.parametrize("omega_deg", [10.0, 100.0, 200.0, 300.0])
def test_large_eccentricity_lands_on_superior_conjunction(omega_deg):
    # source: exact orbit -- radvel's Kepler solver gives the true anomaly at the computed eclipse time,
    # which must be 3 pi/2 - w (superior conjunction; Winn 2010, section 3: transit at f = pi/2 - w).
    period, t0, e, w = 5.0, 100.0, 0.5, math.radians(omega_deg)
    t_ecl = t0 + conjunction_interval_days(period, e, w)
    f = float(np.ravel(true_anomaly(np.array([t_ecl]), periastron_bjd(t0, period, e, w), period, e))[0])
    assert math.cos(f + w - 1.5 * math.pi) == pytest.approx(1.0, abs=1e-12)
    assert math.sin(f + w - 1.5 * math.pi) == pytest.approx(0.0, abs=1e-8)
    # batman's own geometry (secondary-eclipse branch of its sky separation) has its minimum there too.
    t = t_ecl + np.linspace(-1e-3, 1e-3, 2001)
    d = _rsky._rsky(t, t0, period, 6.0, math.pi / 2, e, w, 2, 1)
    assert abs(t[np.argmin(d)] - t_ecl) < 2e-6


def test_light_travel_delay_is_2a_over_c_edge_on_circular():
    # source: Loeb (2005, ApJ 623, L45); Kaplan (2010, ApJ 717, L108): the eclipse is late by 2a/c
    # for a circular edge-on orbit; constants from astropy.
    a = 0.03 * u.au
    expected = (2 * a / const.c).to_value(u.day)
    assert light_travel_delay_days(a.to_value(u.m), 0.0, 0.3, 1.0) == pytest.approx(expected, rel=1e-12)
    assert expected * 86400 == pytest.approx(29.9, abs=0.1)  # "a few tens of seconds" for a hot Jupiter
    # eccentric: the sum of the star-planet distances at the two conjunctions, r = a (1 - e^2) / (1 + e cos f)
    e, w = 0.4, math.radians(60.0)
    r = [a * (1 - e**2) / (1 + e * math.cos(f)) for f in (math.pi / 2 - w, 1.5 * math.pi - w)]
    assert light_travel_delay_days(a.to_value(u.m), e, w, 1.0) == pytest.approx(
        ((r[0] + r[1]) / const.c).to_value(u.day), rel=1e-12
    )
    assert eclipse_bjd(10.0, 2.0, 0.0, math.pi / 2, a.to_value(u.m), 1.0) == pytest.approx(11.0 + expected)
