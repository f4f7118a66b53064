"""Tests of planetfit.context.climate against Solar System values and published limits."""

import json

import numpy as np
import pytest

from planetfit.context.climate import (
    climate_block,
    equilibrium_temp_k,
    hz_distance_au,
    hz_insolation_earth,
    insolation_earth,
    quick_climate,
    surface_temp_k,
)
from planetfit.core.units import S_EARTH_W_M2, T_EFF_SUN_K
from planetfit.inputs.schema import Climate
from planetfit.inputs.schema.settings import EARTH_CALIBRATED_TAU

SUN_RADIUS_RSUN = 1.0  # nominal solar radius, IAU 2015 Resolution B3


def solar_planet_temps(a_au, albedo, tau):
    insolation = insolation_earth(SUN_RADIUS_RSUN, T_EFF_SUN_K, a_au)
    t_eq = equilibrium_temp_k(insolation, albedo)
    return float(t_eq), float(surface_temp_k(t_eq, tau))


# Semi-major axes and Bond albedos: source: NASA planetary fact sheets
# (Earth, Venus, Mars).  Effective optical depths tau: Earth's is planetfit's default, calibrated
# to 288 K at Bond albedo 0.3 (no published source); Venus' and Mars': fact of the trade.
# Mean surface temperatures 288 K, 737 K, 210 K: source: NASA planetary fact sheets.
@pytest.mark.parametrize(
    "a_au, albedo, tau, surface_k",
    [
        (1.000, 0.306, EARTH_CALIBRATED_TAU, 288.0),  # Earth
        (0.723, 0.77, 160.0, 737.0),  # Venus
        (1.524, 0.25, 0.09, 210.0),  # Mars
    ],
)
def test_grey_greenhouse_reproduces_terrestrial_planets(a_au, albedo, tau, surface_k):
    _, t_surface = solar_planet_temps(a_au, albedo, tau)
    assert t_surface == pytest.approx(surface_k, rel=0.05)


# value from memory: NASA planetary fact sheets, "black-body temperature"
# Earth 254.0 K, Venus 226.6 K, Mars 209.8 K (same albedos and distances).
@pytest.mark.parametrize(
    "a_au, albedo, blackbody_k", [(1.000, 0.306, 254.0), (0.723, 0.77, 226.6), (1.524, 0.25, 209.8)]
)
def test_equilibrium_temperature_matches_fact_sheet(a_au, albedo, blackbody_k):
    t_eq, _ = solar_planet_temps(a_au, albedo, 0.0)
    assert t_eq == pytest.approx(blackbody_k, rel=0.01)


def test_venus_is_cooler_than_earth_in_equilibrium():
    # fact of the trade: Venus's high Bond albedo outweighs its smaller orbit
    earth, _ = solar_planet_temps(1.000, 0.306, 0.0)
    venus, _ = solar_planet_temps(0.723, 0.77, 0.0)
    assert venus < earth


def test_solar_constant_from_nominal_sun():
    # source: IAU 2015 Resolution B3, nominal total solar irradiance 1361 W m^-2
    flux = insolation_earth(SUN_RADIUS_RSUN, T_EFF_SUN_K, 1.0) * S_EARTH_W_M2
    assert flux == pytest.approx(1361.0, rel=1e-3)


def test_orbit_averaged_insolation():
    # value from memory: orbit-averaged flux scales as (1 - e^2)^(-1/2),
    # e.g. Williams & Pollard (2002, IJA 1, 61); e = 0.6 gives 1 / 0.8 = 1.25
    circular = insolation_earth(0.8, 5000.0, 0.5)
    eccentric = insolation_earth(0.8, 5000.0, 0.5, eccentricity=0.6)
    assert eccentric / circular == pytest.approx(1.25, rel=1e-12)


def test_solar_habitable_zone_limits():
    # source: Kopparapu et al. (2014, ApJL 787, L29): for the Sun the runaway
    # greenhouse (1 Earth mass) and maximum greenhouse limits are 0.95 and 1.67 au
    limits = hz_insolation_earth(5780.0)
    runaway = hz_distance_au(limits["runaway_greenhouse_1_earth_mass"], 1.0)
    maximum = hz_distance_au(limits["maximum_greenhouse"], 1.0)
    assert runaway == pytest.approx(0.95, abs=0.01)
    assert maximum == pytest.approx(1.67, abs=0.01)


def test_inner_edge_moves_out_for_small_planets():
    # source: Kopparapu et al. (2014) abstract: the runaway-greenhouse limit
    # moves to ~10% lower flux for 0.1 Earth mass and ~7% higher for 5
    limits = hz_insolation_earth(5780.0)
    one = limits["runaway_greenhouse_1_earth_mass"]
    assert limits["runaway_greenhouse_0p1_earth_mass"] / one == pytest.approx(0.90, abs=0.02)
    assert limits["runaway_greenhouse_5_earth_mass"] / one == pytest.approx(1.07, abs=0.02)


def test_outside_teff_range_gives_nan_and_caution():
    # source: Kopparapu et al. (2014): polynomials valid for 2600-7200 K only
    limits = hz_insolation_earth(np.array([2000.0, 8000.0]))
    assert all(np.isnan(v).all() for v in limits.values())
    block = climate_block([0.12] * 50, [2300.0] * 50, [0.02] * 50, None, Climate())
    assert block["hz_limits_au"] is None
    assert block["p_conservative_hz"] is None and block["p_optimistic_hz"] is None
    assert any("2600-7200 K" in text for text in block["cautions"])
    assert block["equilibrium_temp_k"] is not None


def test_habitable_zone_probabilities_for_sunlike_host():
    # source: Kopparapu et al. (2014): solar conservative HZ 0.95-1.67 au,
    # optimistic HZ 0.75-1.77 au
    rng = np.random.default_rng(1)
    n = 2000
    radius = rng.normal(1.0, 0.01, n)
    teff = rng.normal(5780.0, 20.0, n)
    settings = Climate()
    at_1p2 = climate_block(radius, teff, rng.normal(1.2, 0.01, n), None, settings)
    at_0p85 = climate_block(radius, teff, rng.normal(0.85, 0.01, n), None, settings)
    assert at_1p2["p_conservative_hz"] == 1.0 and at_1p2["p_optimistic_hz"] == 1.0
    assert at_0p85["p_conservative_hz"] == 0.0 and at_0p85["p_optimistic_hz"] == 1.0
    assert at_1p2["hz_limits_au"]["maximum_greenhouse"]["median"] == pytest.approx(1.67, abs=0.02)


def test_liquid_water_probability_with_tau_range():
    # common practice, no published source; worked by hand from
    # T_s = T_eq (1 + 3 tau / 4)^(1/4) with T_eq = 254.04 K (Earth, A = 0.306):
    #   T_s >= 273.15 K  <=>  1 + 0.75 tau >= (273.15 / 254.04)^4 = 1.3366  <=> tau >= 0.449
    #   T_s <= 338.15 K  <=>  1 + 0.75 tau <= (338.15 / 254.04)^4 = 3.139   <=> tau <= 2.85
    #   tau uniform in [0, 2]  ->  p = (2 - 0.449) / 2 = 0.776
    n = 20000
    settings = Climate(albedo=0.306, tau=[0.0, 2.0])
    block = climate_block(np.ones(n), np.full(n, T_EFF_SUN_K), np.ones(n), None, settings, rng=np.random.default_rng(3))
    assert block["p_surface_liquid_water"] == pytest.approx(0.776, abs=0.01)
    assert block["settings"]["tau"] == [0.0, 2.0]


def test_host_age_and_survey_flags():
    # ages and Teffs chosen by hand; thresholds 0.6 Gyr and 2000-6500 K
    # (common practice, no published source)
    settings = Climate()
    teff = np.array([3000.0, 4000.0, 5000.0, 7000.0])
    block = climate_block(np.ones(4), teff, np.ones(4), None, settings, star_age_gyr=np.array([0.1, 1.0, 2.0, 3.0]))
    assert block["p_host_older_than_0p6_gyr"] == 0.75
    assert block["p_host_teff_in_survey_range"] == 0.75
    no_age = climate_block(np.ones(4), teff, np.ones(4), None, settings)
    assert no_age["p_host_older_than_0p6_gyr"] is None


def test_quick_climate_plain_numbers():
    result = quick_climate(T_EFF_SUN_K, 1.0, 1.0, albedo=0.306, tau=0.94)
    json.dumps(result)  # plain numbers only
    assert isinstance(result["surface_temp_k"], float)
    # source: NASA Earth fact sheet, mean surface temperature 288 K
    assert result["surface_temp_k"] == pytest.approx(288.0, rel=0.05)
    assert result["p_conservative_hz"] == 1.0


def test_default_greenhouse_gives_earth_288_k_and_says_it_is_calibrated():
    # source: NASA Earth fact sheet, mean surface temperature 288 K; the default tau is calibrated to it
    # (Bond albedo 0.3, the default), so it must return 288 +- 1 K and say so
    result = quick_climate(T_EFF_SUN_K, 1.0, 1.0, albedo=0.3)
    assert result["surface_temp_k"] == pytest.approx(288.0, abs=1.0)
    assert abs(EARTH_CALIBRATED_TAU - 0.85) < 0.01
    assert any("calibrated to Earth's 288 K" in c for c in result["cautions"])
    assert Climate().tau == EARTH_CALIBRATED_TAU


def test_liquid_water_caution_names_the_moist_greenhouse_limit():
    # source: Kasting, Whitmire & Reynolds 1993 (Icarus 101, 108): ~340 K is the moist-greenhouse limit, not a
    # runaway greenhouse; F5V (6500 K) is a mid-F dwarf (Pecaut & Mamajek 2013)
    cautions = " ".join(quick_climate(T_EFF_SUN_K, 1.0, 1.0)["cautions"])
    assert "moist-greenhouse limit" in cautions and "runaway greenhouse is expected" not in cautions
    assert "mid-F" in cautions and "late F" not in cautions
