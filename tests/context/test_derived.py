"""Derived physics against handbook values and the IAU 2015 nominal constants (via astropy)."""

import math

import numpy as np
import pytest
from scipy import optimize

from planetfit.context.derived import bulk_density_gcc
from planetfit.core.geometry import planet_mass_kg, solve_orbit
from planetfit.core.units import (
    G_SI,
    KG_M3_TO_G_CM3,
    M_EARTH_KG,
    M_JUP_KG,
    M_SUN_KG,
    R_EARTH_M,
    R_JUP_M,
    R_SUN_M,
    SECONDS_PER_DAY,
)

# source: IAU 2015 Resolution B3, nominal polar radii (astropy holds the equatorial ones)
R_EARTH_POLAR_M = 6356.8e3
R_JUP_POLAR_M = 66854e3


def test_sun_reflex_velocity_from_jupiter_and_earth():
    # common practice values: the Sun's reflex semi-amplitude is ~12.5 m/s from Jupiter and ~0.09 m/s from Earth;
    # source for the orbits: NASA planetary fact sheets (P = 4332.59 d, e = 0.0489; P = 365.256 d, e = 0.0167)
    jup = planet_mass_kg(12.5, 4332.59, 0.0489, 1.0, M_SUN_KG)
    earth = planet_mass_kg(0.0895, 365.256, 0.0167, 1.0, M_SUN_KG)
    assert jup / M_JUP_KG == pytest.approx(1.0, rel=0.02)
    assert earth / M_EARTH_KG == pytest.approx(1.0, rel=0.02)


def test_hot_jupiter_minimum_mass_is_about_half_a_jupiter():
    # common practice: P = 4.23 d, K = 56 m/s around a 1.1 solar-mass star gives M sin i close to 0.5 M_jup
    m = planet_mass_kg(56.0, 4.23, 0.0, 1.0, 1.1 * M_SUN_KG) / M_JUP_KG
    assert 0.42 < m < 0.55


def test_mass_function_is_solved_exactly_for_a_heavy_companion():
    # source: the mass function Mp^3 sin^3 i / (M* + Mp)^2 = P K^3 (1 - e^2)^1.5 / (2 pi G), solved by scipy brentq
    k, per, e, sin_i, mstar = 3000.0, 30.0, 0.4, 0.9, 0.6 * M_SUN_KG
    f = per * SECONDS_PER_DAY * k**3 * (1 - e * e) ** 1.5 / (2 * math.pi * G_SI)
    ref = optimize.brentq(lambda m: m**3 * sin_i**3 / (mstar + m) ** 2 - f, 1e20, 1e31, xtol=1e10, rtol=1e-14)
    assert planet_mass_kg(k, per, e, sin_i, mstar) == pytest.approx(ref, rel=1e-10)
    assert ref / mstar > 0.05  # heavy enough that the Mp << M* shortcut would be wrong


def test_stellar_density_from_transit_geometry_earth_sun():
    # source: IAU 2015 nominal solar values; rho* = 3 pi (a/R*)^3 / (G P^2) with P = 365.25 d, a/R* = 215.0
    # gives 1.41 g/cm^3, the Sun's mean density
    a_r, _, _ = solve_orbit(365.25, 0.0895, 0.0, 0.0, math.pi / 2, 1.0, 1.0)
    assert a_r == pytest.approx(215.0, rel=2e-3)
    rho_transit = 3 * math.pi * 215.0**3 / (G_SI * (365.25 * SECONDS_PER_DAY) ** 2) * KG_M3_TO_G_CM3
    assert rho_transit == pytest.approx(1.41, abs=0.01)
    assert bulk_density_gcc(M_SUN_KG, R_SUN_M) == pytest.approx(1.41, abs=0.01)


def test_earth_and_jupiter_bulk_density():
    # source: IAU 2015 nominal masses and equatorial/polar radii (volume-equivalent radius (R_eq^2 R_pol)^(1/3));
    # NASA fact sheets list 5.51 and 1.33 g/cm^3
    r_earth = (R_EARTH_M**2 * R_EARTH_POLAR_M) ** (1 / 3)
    r_jup = (R_JUP_M**2 * R_JUP_POLAR_M) ** (1 / 3)
    assert bulk_density_gcc(M_EARTH_KG, r_earth) == pytest.approx(5.51, abs=0.01)
    assert bulk_density_gcc(M_JUP_KG, r_jup) == pytest.approx(1.33, abs=0.01)


def test_orbit_solution_is_self_consistent():
    # common practice, no published source: a from Kepler's third law with M* + Mp, i from b, Mp from K
    per, k_ms, b, e, w, mstar, rstar = 8.3, 25.0, 0.45, 0.2, 1.1, 0.85, 0.8
    a_r, cos_i, mp = solve_orbit(per, k_ms, b, e, w, mstar, rstar)
    a_m = (G_SI * (mstar * M_SUN_KG + mp) * (per * SECONDS_PER_DAY) ** 2 / (4 * math.pi**2)) ** (1 / 3)
    assert a_r == pytest.approx(a_m / (rstar * R_SUN_M), rel=1e-9)
    assert b == pytest.approx(a_r * cos_i * (1 - e * e) / (1 + e * np.sin(w)), rel=1e-9)
    sin_i = math.sqrt(1 - cos_i**2)
    assert mp == pytest.approx(planet_mass_kg(k_ms, per, e, sin_i, mstar * M_SUN_KG), rel=1e-9)
