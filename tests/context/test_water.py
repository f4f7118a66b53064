"""The water layer: its equation of state piece by piece, water worlds against Zeng et al. (2019), and warm
water layers from the irradiated-ocean-planet relation of Aguichine et al. (2021)."""

import numpy as np
import pytest

from planetfit.context.interior import quick_verdict, reference_radius_earth, solve_structure
from planetfit.context.interior.eos import ICE_VII, ICE_X_DFT, LIQUID_WATER, WATER
from planetfit.context.interior.warm import (
    RUNAWAY_GREENHOUSE_TEQ_K,
    warm_water_world_radius_earth,
    water_layer_states,
    water_world_bounds,
)
from planetfit.core.units import KG_M3_TO_G_CM3

# source: Zeng et al. 2019, PNAS 116, 9723: the authors' table of a 50 % water world over an Earth-like
# core at 300 K, radius at 1 mbar (massradius_50percentH2O_300K_1mbar.txt, read from a public copy of it):
# (mass, radius) in Earth units around the masses checked here.
ZENG_2019_WATER_50 = np.array(
    [
        (0.841, 1.182),
        (1.0, 1.241),
        (1.189, 1.302),
        (3.364, 1.725),
        (4.0, 1.805),
        (4.757, 1.888),
        (9.514, 2.244),
        (11.314, 2.339),
        (19.027, 2.635),
        (22.627, 2.736),
        (32.0, 2.938),
    ]
)


def zeng_2019_water_world_radius(mass_earth):
    """Log-log interpolation in the Zeng et al. (2019) table above."""
    log_m, log_r = np.log(ZENG_2019_WATER_50).T
    return float(np.exp(np.interp(np.log(mass_earth), log_m, log_r)))


@pytest.mark.parametrize("mass", [1.0, 4.0, 10.0, 20.0, 30.0])
def test_water_world_matches_zeng_2019_within_3_percent(mass):
    # source: Zeng et al. 2019 (table above). Before the ice VII/X and TFD pieces the grid was 2 %, 4 %, 6 %,
    # 9 % and 11 % too small at these masses.
    zeng = zeng_2019_water_world_radius(mass)
    solved = solve_structure(mass, 0.325, 0.5).radius_earth
    shipped = float(reference_radius_earth("water_world", mass))
    print(f"M = {mass:4.1f}: Zeng 2019 {zeng:.3f}, solver {solved:.3f} ({solved / zeng - 1:+.1%}), grid {shipped:.3f}")
    assert solved == pytest.approx(zeng, rel=0.03)
    assert shipped == pytest.approx(zeng, rel=0.03)


@pytest.mark.parametrize(
    "pressure_gpa, iapws_kg_m3",
    # source: IAPWS-95 (Wagner & Pruss 2002, J. Phys. Chem. Ref. Data 31, 387) at 300 K, evaluated with the
    # iapws package (IAPWS95(T=300, P=...)) when the fit was made
    [(0.1, 1037.19), (0.3, 1100.16), (0.5, 1148.48), (0.7, 1188.20), (0.95, 1229.97)],
)
def test_liquid_water_follows_iapws95_at_300_k(pressure_gpa, iapws_kg_m3):
    assert LIQUID_WATER.density_kg_m3(pressure_gpa) == pytest.approx(iapws_kg_m3, rel=2e-3)


def test_water_pieces_join_upwards_and_stay_where_they_were_measured():
    # source: Frank, Fei & Hu 2004 measured ice VII to 60 GPa; the DFT points of French et al. 2009 start at
    # 37.3 GPa; the join must lie inside the measured range and not lower the density (no inversion)
    join = WATER.transitions_gpa[2]
    assert 2.2 < join < 60.0
    assert ICE_VII.density_kg_m3(join) == pytest.approx(ICE_X_DFT.density_kg_m3(join), rel=2e-3)
    p = np.geomspace(1e-3, 1e5, 5000)
    assert np.all(np.diff(WATER.density_kg_m3(p)) >= 0)
    # source: French et al. 2009 DFT points as used here (7.0 g/cm^3 at 1.44 TPa); ice VII's Vinet fit
    # extrapolated there gives 11.1 g/cm^3, denser than MgSiO3 post-perovskite (10.6)
    assert 6.5 < WATER.density_kg_m3(1500.0) * KG_M3_TO_G_CM3 < 7.5


def test_no_water_layer_of_the_grid_reaches_the_thomas_fermi_dirac_piece():
    # common practice, no published source: the piece above the DFT table (8.9 TPa) is for completeness only
    heaviest = solve_structure(30.0, 0.0, 0.5)
    assert heaviest.boundary_pressures_gpa["mantle"] < ICE_X_DFT.pressure_range_gpa[1]


@pytest.mark.parametrize(
    "mass, radius",
    # source: Aguichine et al. 2021, ApJ 914, 84, released model grid (core fraction 0.3, 50 % water,
    # T_irr 700 K, converged runs): total mass and radius (interior plus steam atmosphere)
    [(1.0943, 2.3512), (2.2604, 2.2089), (4.6742, 2.3468), (9.6715, 2.6114), (15.7026, 2.8420), (19.9986, 2.9676)],
)
def test_warm_relation_reproduces_the_published_grid(mass, radius):
    # the published fits deviate from the grid by at most ~0.1 % at 700 K
    assert warm_water_world_radius_earth(mass, 700.0, iron_fraction=0.3) == pytest.approx(radius, rel=0.01)


def test_warm_relation_is_not_used_outside_its_validity():
    # source: Aguichine et al. 2021: fits for 400-1300 K and, at 50 % water and 700 K, masses of 1.09-20 Earth
    # masses (their released validity ranges)
    r = warm_water_world_radius_earth([10.0, 10.0, 10.0, 0.5, 25.0], [350.0, 1400.0, np.nan, 700.0, 700.0])
    assert np.all(np.isnan(r))
    # hotter water worlds are larger (common practice, no published source: thermal expansion)
    assert np.all(np.diff(warm_water_world_radius_earth(10.0, np.arange(400.0, 1301.0, 100.0))) > 0)


def test_runaway_greenhouse_limit_and_water_states():
    # source: Kopparapu et al. 2014, ApJL 787, L29: runaway greenhouse at S_eff = 1.107 for 1 Earth mass around
    # the Sun; zero-albedo, full-redistribution T_eq = 278.6 K x 1.107^(1/4) = 285.5 K
    assert abs(RUNAWAY_GREENHOUSE_TEQ_K - 285.5) < 0.5
    states = water_layer_states([250.0, 300.0, 700.0, 1500.0])
    assert list(states) == ["condensed", "below_relation", "warm", "above_relation"]
    lower, upper = water_world_bounds(np.full(4, 10.0), np.full(4, 2.26), np.array([250.0, 350.0, 700.0, 1500.0]))
    assert lower[0] == upper[0] == 2.26 and lower[1] == 2.26 and upper[1] > 2.26
    assert lower[2] == upper[2] > 2.5 and np.isinf(upper[3])


def test_cold_ten_earth_mass_planet_of_2p2_radii_needs_no_envelope():
    # source: Zeng et al. 2019: a cold 50 % water world of 10 Earth masses is 2.27 Earth radii
    result = quick_verdict(10.0, 1.0, 2.2, 0.05)
    print(result["verdict"])
    assert not result["gas_envelope_required"]
    assert result["p_water_rich_consistent"] > 0.6
    assert "consistent with a water-rich interior" in result["verdict"]


def test_warm_verdict_says_what_the_published_relation_allows():
    # source: Aguichine et al. 2021 fits: a 50 % water world of 10 Earth masses at 700 K is ~2.62 Earth radii
    warm = quick_verdict(10.0, 1.0, 2.2, 0.05, teq_k=700.0)
    print(warm["verdict"])
    assert warm["water_layer"] == "warm" and warm["water_world_radius_earth"]["lower"] == pytest.approx(2.62, abs=0.03)
    assert warm["p_water_rich_consistent"] > 0.99 and not warm["gas_envelope_required"]
    assert "Aguichine et al. (2021)" in warm["verdict"] and "700 K" in warm["verdict"]
    # a planet too large even as a 700 K water world needs a light envelope
    puffy = quick_verdict(10.0, 1.0, 3.2, 0.05, teq_k=700.0)
    assert puffy["gas_envelope_required"] and "envelope is required even as a water world" in puffy["verdict"]


def test_verdict_declines_where_no_relation_reaches():
    # source: Aguichine et al. 2021 relations stop at 1300 K; a cold 50 % water world (Zeng et al. 2019) is the
    # smallest a water world can be, so between it and the unknown warm radius nothing can be judged
    hot = quick_verdict(10.0, 1.0, 3.2, 0.05, teq_k=1800.0)
    print(hot["verdict"])
    assert hot["p_water_or_gas_undetermined"] > 0.9 and not hot["gas_envelope_required"]
    assert "cannot be judged" in hot["verdict"]
    assert hot["water_world_radius_earth"]["upper"] is None
