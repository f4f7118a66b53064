"""Brightness temperatures and Cowan & Agol (2011) albedo and redistribution."""

from types import SimpleNamespace

import astropy.units as u
import numpy as np
import pytest
from astropy.modeling.models import BlackBody
from scipy.integrate import quad

from planetfit.context.light import (
    bond_albedo_redistribution,
    brightness_temp_k,
    cowan_agol_temperatures,
    light_warnings,
    planck_si,
)
from planetfit.inputs.bands import band_of


def test_planck_matches_astropy_blackbody():
    # source: astropy.modeling.models.BlackBody (Planck's law), per unit wavelength
    expected = BlackBody(5800 * u.K, scale=1 * u.W / (u.m**3 * u.sr))(0.8 * u.um).to_value(u.W / (u.m**3 * u.sr))
    assert planck_si(0.8e-6, 5800.0) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("wavelength_um", [0.8, 4.5])
def test_blackbody_planet_at_1500k_comes_back(wavelength_um):
    # common practice, no published source: the eclipse depth of a 1500 K blackbody planet behind a 5800 K
    # blackbody star, (Rp/R*)^2 B(1500 K) / B(5800 K) with astropy's Planck function, inverted.
    k = 0.1
    bb = [BlackBody(t * u.K)(wavelength_um * u.um).value for t in (1500.0, 5800.0)]
    depth = k**2 * bb[0] / bb[1]
    band = _one_wavelength(wavelength_um)
    assert brightness_temp_k(depth, k, 5800.0, band) == pytest.approx(1500.0, abs=1.0)
    assert brightness_temp_k(2 * depth, k, 5800.0, band) > 1500.0 + 20


def _one_wavelength(wavelength_um):
    return band_of(SimpleNamespace(band_response=None, band_wavelength_um=wavelength_um))


def test_blackbody_planet_comes_back_through_a_response_curve(tmp_path):
    # common practice, no published source: photon-counting band flux, the integral of lambda x throughput x
    # B_lambda over a 0.6-1.0 um top-hat, by scipy's quad with astropy's Planck function; the response
    # table (201 rows) goes through planetfit's reader and trapezoid rule.
    def band_flux(temp):
        bb = BlackBody(temp * u.K)
        return quad(lambda lam: lam * bb(lam * u.um).value / lam**2, 0.6, 1.0, epsabs=0, epsrel=1e-10)[0]

    k = 0.1
    depth = k**2 * band_flux(1500.0) / band_flux(5800.0)
    lam = np.linspace(0.6, 1.0, 201)
    table = tmp_path / "band.csv"
    np.savetxt(
        table, np.column_stack([lam, np.ones_like(lam)]), delimiter=",", header="wavelength_um,throughput", comments=""
    )
    block = SimpleNamespace(band_response="band.csv", band_response_path=table, section="photometry[0]")
    band = band_of(block)
    assert band.effective_wavelength_um == pytest.approx(0.8, abs=0.02)
    assert brightness_temp_k(depth, k, 5800.0, band) == pytest.approx(1500.0, abs=1.0)
    # one wavelength at the band's centre gives a different answer: the band matters
    assert abs(brightness_temp_k(depth, k, 5800.0, _one_wavelength(0.8)) - 1500.0) > 3.0


def test_cowan_agol_worked_case():
    # source: Cowan & Agol (2011, ApJ 729, 54), eqs. 4 and 5 (value from memory of the equations):
    # T_d = T0 (1 - A_B)^(1/4) (2/3 - 5 eps / 12)^(1/4), T_n = T0 (1 - A_B)^(1/4) (eps / 4)^(1/4),
    # T0 = Teff sqrt(R*/a). Worked case: Teff 6000 K, a/R* 9, A_B 0.3, eps 0.4.
    t0 = 6000.0 / np.sqrt(9.0)
    base = t0 * 0.7**0.25
    t_day, t_night = base * (2 / 3 - 5 * 0.4 / 12) ** 0.25, base * (0.4 / 4) ** 0.25
    assert cowan_agol_temperatures(t0, 0.3, 0.4) == pytest.approx((t_day, t_night), rel=1e-12)
    assert bond_albedo_redistribution(t_day, t_night, t0) == pytest.approx((0.3, 0.4), abs=1e-12)
    # limits: full redistribution (eps = 1) makes both sides equal; no redistribution leaves a cold night
    day, night = cowan_agol_temperatures(t0, 0.0, 1.0)
    assert day == pytest.approx(night) == pytest.approx(t0 / np.sqrt(2))
    assert bond_albedo_redistribution(t0 * (2 / 3) ** 0.25, 1e-3, t0)[0] == pytest.approx(0.0, abs=1e-9)


def test_bond_albedo_outside_its_range_is_warned():
    # common practice, no published source: a Bond albedo below 0 means the reading's assumptions fail
    blocks = {"b": {"bond_albedo": {"median": -0.4}, "heat_redistribution": {"median": 0.3}}, "c": {}}
    (warning,) = light_warnings(blocks)
    assert "planet b: bond_albedo -0.4" in warning
    assert light_warnings({"b": {"bond_albedo": {"median": 0.2}, "heat_redistribution": None}}) == []


def test_climate_uses_a_measured_bond_albedo_and_says_so():
    # common practice, no published source: a measured Bond albedo replaces the assumed one
    from planetfit.context.blocks import _measured_albedo
    from planetfit.inputs.schema import Climate

    settings = Climate(albedo=0.3)
    assert _measured_albedo(settings, {}) is settings
    assert _measured_albedo(settings, {"bond_albedo": {"median": 0.12}}).albedo == pytest.approx(0.12)
    assert _measured_albedo(settings, {"bond_albedo": {"median": -0.5}}).albedo == 0.0
