"""Forward models against published values and against batman/radvel used directly."""

import math

import batman
import numpy as np
import pytest
from radvel import kepler

from planetfit.core.geometry import solve_orbit, transit_duration_days
from planetfit.fitting.components.transit import TransitLightCurve, quadratic_coefficients
from planetfit.fitting.keplerian import periastron_bjd, radial_velocity_ms


def test_kepler_equation_meeus_example_30a():
    # source: Meeus, Astronomical Algorithms (2nd ed.), Example 30.a: e = 0.100, M = 5 deg -> E = 5.554589 deg
    e_anomaly = np.atleast_1d(kepler.kepler(np.array([math.radians(5.0)]), np.array([0.100])))
    assert math.degrees(e_anomaly[0]) == pytest.approx(5.554589, abs=1e-6)


def _batman_flux(t, t0, per, a_r, inc_deg, e, w_deg, k, u, exposure_days=0.0, ss=1):
    """batman's flux averaged over ``ss`` sub-exposures at the centres of equal slices of each exposure."""
    p = batman.TransitParams()
    p.t0, p.per, p.rp, p.a, p.inc, p.ecc, p.w, p.u, p.limb_dark = (
        t0,
        per,
        k,
        a_r,
        inc_deg,
        e,
        w_deg,
        list(u),
        "quadratic",
    )
    # source: composite midpoint rule; batman's own supersampling (its TransitModel.__init__) puts the
    # sub-exposures at np.linspace(-exp_time/2, exp_time/2, n), the ends included, so it is not used here.
    offsets = exposure_days * ((np.arange(ss) + 0.5) / ss - 0.5)
    m = batman.TransitModel(p, (t[:, None] + offsets).ravel())
    return m.light_curve(p).reshape(-1, ss).mean(axis=1)


@pytest.mark.parametrize(
    "e, w_deg, exposure_min, ss", [(0.0, 90.0, 2.0, 1), (0.3, 40.0, 30.0, 15), (0.6, 250.0, 10.0, 5)]
)
def test_windowed_light_curve_equals_batman_everywhere(e, w_deg, exposure_min, ss):
    # source: batman (Kreidberg 2015) TransitModel evaluated on every point is the reference
    t = np.arange(2460000.0, 2460030.0, exposure_min / 1440.0)
    t0, per, a_r, inc, k, u = 2460001.37, 4.71, 12.5, 88.1, 0.05, (0.42, 0.23)
    ref = _batman_flux(t, t0, per, a_r, inc, e, w_deg, k, u, exposure_min / 1440.0, ss)
    lc = TransitLightCurve(t, exposure_min / 1440.0, ss)
    w = math.radians(w_deg)
    idx = lc.window(per, t0, lc.half_window_days(per, a_r, k, math.sin(math.radians(inc)), e, w))
    flux = np.ones_like(t)
    flux[idx] = lc.flux(idx, per, t0, a_r, math.radians(inc), e, w, k, *u)
    assert np.max(np.abs(flux - ref)) < 1e-12
    assert idx.size < 0.2 * t.size  # the window really is a window


def test_depth_without_limb_darkening_is_radius_ratio_squared():
    # source: Mandel & Agol (2002), uniform source: the flux deficit is the occulted area fraction k^2
    k = 0.08
    lc = TransitLightCurve(np.array([0.0]), 0.0, 1)
    f = lc.flux(np.array([0]), 10.0, 0.0, 20.0, math.pi / 2, 0.0, math.pi / 2, k, 0.0, 0.0)
    assert 1 - f[0] == pytest.approx(k**2, rel=1e-9)


def test_small_planet_depth_with_quadratic_limb_darkening():
    # source: Mandel & Agol (2002), small-planet limit: depth = k^2 I(mu) / <I>,
    # <I> = 1 - u1/3 - u2/6 for the quadratic law
    k, u1, u2 = 0.01, 0.45, 0.22
    lc = TransitLightCurve(np.array([0.0]), 0.0, 1)
    for b in (0.0, 0.5, 0.8):
        a_r = 20.0
        inc = math.acos(b / a_r)
        depth = 1 - lc.flux(np.array([0]), 10.0, 0.0, a_r, inc, 0.0, math.pi / 2, k, u1, u2)[0]
        mu = math.sqrt(1 - b * b)
        expected = k**2 * (1 - u1 * (1 - mu) - u2 * (1 - mu) ** 2) / (1 - u1 / 3 - u2 / 6)
        assert depth == pytest.approx(expected, rel=0.01)


def test_kipping_q_mapping_covers_the_physical_triangle():
    # source: Kipping (2013, MNRAS 435, 2152), eqs. 15-17: u1 + u2 <= 1, u1 >= 0, u1 + 2 u2 >= 0
    q1, q2 = np.meshgrid(np.linspace(0, 1, 21), np.linspace(0, 1, 21))
    u1, u2 = quadratic_coefficients(q1, q2)
    assert np.all(u1 + u2 <= 1 + 1e-12) and np.all(u1 >= 0) and np.all(u1 + 2 * u2 >= -1e-12)
    assert quadratic_coefficients(0.36, 0.5) == pytest.approx((0.6, 0.0))


def test_rv_at_transit_and_sign_convention():
    # source: Winn (2010, "Transits and Occultations"), eqs. 1-2 and 14: v = K [cos(f + w) + e cos w],
    # transit at f = pi/2 - w, so v(transit) = K e cos w, and for a circular orbit v falls through zero
    k, per, tc = 10.0, 5.0, 2460000.0
    e, w = 0.3, math.radians(40.0)
    tp = periastron_bjd(tc, per, e, w)
    assert radial_velocity_ms(np.array([tc]), per, tp, e, w, k)[0] == pytest.approx(k * e * math.cos(w), abs=1e-6)
    tp = periastron_bjd(tc, per, 0.0, math.pi / 2)
    v = radial_velocity_ms(np.array([tc - 0.01, tc, tc + 0.01]), per, tp, 0.0, math.pi / 2, k)
    assert v[0] > 0 > v[2] and abs(v[1]) < 1e-9


@pytest.mark.parametrize("b, e, w_deg", [(0.2, 0.0, 90.0), (0.6, 0.25, 120.0)])
def test_total_duration_matches_batman_contacts(b, e, w_deg):
    # source: Winn (2010), eq. 14 with the eccentric factor of eq. 16, checked against batman's light curve
    per, k = 6.0, 0.05
    w = math.radians(w_deg)
    a_r, cos_i, _ = solve_orbit(per, 3.0, b, e, w, 0.8, 0.75)
    t14 = transit_duration_days(per, a_r, k, b, cos_i, e, w)
    t = np.linspace(-0.3, 0.3, 600001)
    f = _batman_flux(t, 0.0, per, a_r, math.degrees(math.acos(cos_i)), e, w_deg, k, (0.0, 0.0))
    in_transit = t[f < 1]
    assert in_transit[-1] - in_transit[0] == pytest.approx(t14, rel=0.01)
