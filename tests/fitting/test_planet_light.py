"""The planet's light (phase curve, eclipse) with the transit, against a brute-force integration of the disks."""

import math
from types import SimpleNamespace

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy.optimize import brentq

from planetfit.core.eclipse import eclipse_bjd
from planetfit.fitting.components.light import PlanetLight, PlanetLightTerm, star_terms_ppm
from planetfit.fitting.components.orbits import SolvedOrbit
from planetfit.fitting.components.transit import TransitLightCurve
from planetfit.fitting.keplerian import periastron_bjd
from planetfit.inputs.schema import PlanetLightBlock

N_RADIAL = 20000  # grid points across the chord of each disk


def _arc_inside(r, d, radius):
    """Angle (rad) of the circle of radius r about one centre lying inside a disk of ``radius`` at distance d."""
    with np.errstate(divide="ignore", invalid="ignore"):
        c = (r * r + d * d - radius * radius) / (2 * r * d)
    return 2 * np.arccos(np.clip(np.nan_to_num(c, nan=-1.0), -1, 1))


def _grid(lo, hi):
    """Midpoints of N_RADIAL equal cells between lo and hi (rows: one range per time)."""
    x = (np.arange(N_RADIAL) + 0.5) / N_RADIAL
    return lo[:, None] + (hi - lo)[:, None] * x, (hi - lo) / N_RADIAL


def star_seen(d, k, u1, u2):
    """Fraction of the limb-darkened star's light not blocked by a planet disk at separation d (stellar radii)."""
    r, dr = _grid(np.maximum(0, d - k), np.minimum(1, d + k))
    mu = np.sqrt(np.clip(1 - r * r, 0, None))
    intensity = 1 - u1 * (1 - mu) - u2 * (1 - mu) ** 2
    blocked = np.sum(intensity * r * _arc_inside(r, d[:, None], k), axis=1) * dr
    return 1 - blocked / (math.pi * (1 - u1 / 3 - u2 / 6))


def planet_seen(d, k):
    """Fraction of a uniform planet disk (radius k) at separation d lying outside the star (radius 1)."""
    rho, drho = _grid(np.zeros_like(d), np.full_like(d, k))
    behind = np.sum(rho * _arc_inside(rho, d[:, None], 1.0), axis=1) * drho
    return 1 - behind / (math.pi * k * k)


def sky_position(t, t0, per, e, w, a_r, inc):
    """Planet's sky separation (stellar radii), whether it is in front, and theta = f + w (Winn 2010, eqs 2-4)."""
    tp = periastron_bjd(t0, per, e, w)
    mean = 2 * math.pi * np.mod((t - tp) / per, 1)
    ecc = np.array([brentq(lambda x, m=m: x - e * math.sin(x) - m, 0, 2 * math.pi) for m in mean])
    f = 2 * np.arctan2(math.sqrt(1 + e) * np.sin(ecc / 2), math.sqrt(1 - e) * np.cos(ecc / 2))
    r = a_r * (1 - e * e) / (1 + e * np.cos(f))
    x, y = -r * np.cos(w + f), -r * np.sin(w + f) * math.cos(inc)
    return np.hypot(x, y), np.sin(w + f) > 0, f + w


def reference_flux(t, s):
    """Star (transit) plus planet (phase curve, occulted behind the star) by brute force, relative to the star."""
    orbit = (s["t0"], s["per"], s["e"], s["w"], s["a_r"], s["inc"])
    d, front, theta = sky_position(t, *orbit)
    star = np.where(front, star_seen(d, s["k"], *s["u"]), 1.0)
    # light travel time across the orbit: the distances at the two conjunctions, r = a (1 - e^2)/(1 + e cos f)
    r = [
        s["a_r"] * (1 - s["e"] ** 2) / (1 + s["e"] * math.cos(f))
        for f in (math.pi / 2 - s["w"], 1.5 * math.pi - s["w"])
    ]
    delay = ((sum(r) * math.sin(s["inc"]) * s["rstar"] * u.R_sun) / const.c).to_value(u.day)
    d_late, front_late, _ = sky_position(t - delay, *orbit)
    seen = np.where(front_late, 1.0, planet_seen(d_late, s["k"]))
    # the definition of the parameters: E at superior conjunction (theta = 3 pi/2), N at inferior, first harmonic
    psi = theta - 1.5 * math.pi
    light = 0.5 * (s["E"] + s["N"]) + 0.5 * (s["E"] - s["N"]) * np.cos(psi + s["delta"]) / math.cos(s["delta"])
    return star + 1e-6 * light * seen


def planetfit_flux(t, s):
    planet = SimpleNamespace(
        name="b",
        period=SimpleNamespace(name="P"),
        transit_time=SimpleNamespace(name="T0"),
        radius_ratio=SimpleNamespace(name="k"),
    )
    block = PlanetLightBlock(
        eclipse_depth_ppm=s["E"], nightside_ppm=s["N"], hotspot_offset_deg=math.degrees(s["delta"])
    )
    light = PlanetLight(planet, "band", block, None)
    lc = TransitLightCurve(t, 1e-4, 1)
    term = PlanetLightTerm(light, lc, SimpleNamespace(radius=SimpleNamespace(name="R")))
    values = {"P": s["per"], "T0": s["t0"], "k": s["k"], "R": s["rstar"]}
    values.update({p.name: p.prior.value for p in light.parameters})
    periastron = periastron_bjd(s["t0"], s["per"], s["e"], s["w"])
    orbit = SolvedOrbit(s["e"], s["w"], periastron, a_over_rstar=s["a_r"], cos_i=math.cos(s["inc"]))
    index = np.arange(t.size)
    transit = lc.flux(index, s["per"], s["t0"], s["a_r"], s["inc"], s["e"], s["w"], s["k"], *s["u"])
    return transit - term.deficit(values, orbit)[1]


CASES = {
    "circular": {"e": 0.0, "w": math.pi / 2, "a_r": 4.5, "inc": math.radians(85.0), "delta": math.radians(25.0)},
    "e=0.3": {"e": 0.3, "w": math.radians(50.0), "a_r": 7.0, "inc": math.radians(86.0), "delta": math.radians(-15.0)},
}


@pytest.mark.parametrize("case", CASES)
def test_model_matches_brute_force_disks_to_1ppm(case):
    # common practice, no published source: direct numerical integration of the visible disks on a grid
    # (stellar disk with quadratic limb darkening; uniform planet disk), orbits from Kepler's equation.
    s = dict(CASES[case], t0=1000.0, per=1.7, k=0.11, u=(0.4, 0.25), rstar=1.3, E=1200.0, N=150.0)
    a_m = (s["a_r"] * s["rstar"] * u.R_sun).to_value(u.m)
    t_ecl = float(eclipse_bjd(s["t0"], s["per"], s["e"], s["w"], a_m, math.sin(s["inc"])))
    near = np.concatenate([c + np.linspace(-0.09, 0.09, 90) for c in (s["t0"], t_ecl)])
    t = np.sort(np.concatenate([np.linspace(s["t0"] - 0.3, s["t0"] + s["per"], 120), near]))
    ref, model = reference_flux(t, s), planetfit_flux(t, s)
    assert np.max(np.abs(model - ref)) < 1e-6
    # the check has teeth: the eclipse is visible, and leaving out the light-travel delay breaks the match
    assert np.ptp(ref[np.abs(t - t_ecl) < 0.09]) > 1e-3
    no_delay = reference_flux(t, dict(s, rstar=1e-9))
    assert np.max(np.abs(model - no_delay)) > 5e-6


def test_star_terms_predicted_from_the_mass():
    # value from memory: A_ell = alpha_ell (Mp/M*) (R*/a)^3 sin^2 i and A_beam = alpha_beam 4 K / c
    # (as reviewed by Shporer 2017, PASP 129, 072001); constants from astropy.
    mass_ratio = (const.M_jup / const.M_sun).value
    ell, beam = star_terms_ppm(mass_ratio, 5.0, 1.0, 140.0, 1.0, 1.0)
    assert ell == pytest.approx(1e6 * mass_ratio / 125, rel=1e-12)
    assert ell == pytest.approx(7.6, abs=0.05)
    assert beam == pytest.approx(1e6 * 4 * 140 / const.c.value, rel=1e-12)
    # in the model: -A_ell at both conjunctions; a quarter orbit after transit the star approaches us fastest
    # (RV = K cos(f + w) = -K there), so beaming brightens it: A_ell + A_beam
    planet = SimpleNamespace(
        name="b",
        period=SimpleNamespace(name="P"),
        transit_time=SimpleNamespace(name="T0"),
        radius_ratio=SimpleNamespace(name="k"),
        amplitude=SimpleNamespace(name="K"),
    )
    block = PlanetLightBlock(eclipse_depth_ppm=0.0, star_terms_from_mass=True)
    light = PlanetLight(planet, "band", block, None)
    t = np.array([0.0, 0.75, 1.5])  # transit, a quarter orbit later, half an orbit later
    star = SimpleNamespace(radius=SimpleNamespace(name="R"), mass=SimpleNamespace(name="M"))
    term = PlanetLightTerm(light, TransitLightCurve(t, 1e-4, 1), star)
    values = {"P": 3.0, "T0": 0.0, "k": 0.1, "R": 1.0, "M": 1.0, "K": 140.0}
    values.update({p.name: p.prior.value for p in light.parameters})
    orbit = SolvedOrbit(0.0, math.pi / 2, 0.0, a_over_rstar=5.0, cos_i=0.0, mass_kg=const.M_jup.value)
    flux = term.flux_ppm(values, orbit)
    assert flux == pytest.approx([-ell, ell + beam, -ell], abs=1e-9)
