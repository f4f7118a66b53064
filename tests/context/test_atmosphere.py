"""Tests of planetfit.context.atmosphere against hand computations and physical laws."""

import numpy as np
import pytest
from scipy.integrate import quad

from planetfit.context.atmosphere import (
    atmosphere_block,
    esm,
    planck_radiance,
    scale_height_km,
    transmission_signal_ppm,
    tsm,
    tsm_threshold,
)
from planetfit.core.units import C_SI, G_SI, H_SI, K_B_SI, M_EARTH_KG, R_EARTH_M, R_SUN_M, SIGMA_SB_SI

EARTH_GRAVITY_MS2 = G_SI * M_EARTH_KG / R_EARTH_M**2  # 9.80 m s^-2


def test_earth_scale_height():
    # value from memory: Earth's scale height ~8.4 km for mu = 28.97, T = 288 K
    height = scale_height_km(288.0, 28.97, EARTH_GRAVITY_MS2)
    assert height == pytest.approx(8.4, rel=0.02)


def test_planck_function_integrates_to_stefan_boltzmann():
    # source: Stefan-Boltzmann law, pi * integral of B_lambda d lambda = sigma T^4
    temp = 3000.0
    peak = H_SI * C_SI / (5.0 * K_B_SI * temp)  # near the Wien peak; only an integration anchor
    total, _ = quad(lambda lam: planck_radiance(lam, temp), peak / 20, peak * 200, limit=200, points=[peak])
    assert np.pi * total == pytest.approx(SIGMA_SB_SI * temp**4, rel=1e-3)


def test_transmission_signal_hand_computation():
    # common practice, no published source: Delta_delta = 2 n H Rp / R*^2
    # H = 100 km, Rp = 2 R_E, R* = 0.5 R_sun, n = 2:
    #   Rp / R* = 2 * 0.0091679 / 0.5 = 0.036672
    #   H / R*  = 1e5 m / (0.5 * 6.957e8 m) = 2.8748e-4
    #   Delta_delta = 2 * 2 * 2.8748e-4 * 0.036672 = 4.2170e-5 = 42.17 ppm
    assert pytest.approx(0.0091679, rel=1e-4) == R_EARTH_M / R_SUN_M
    signal = transmission_signal_ppm(100.0, 2.0, 0.5, n_scale_heights=2)
    assert signal == pytest.approx(42.17, rel=1e-3)


def test_tsm_worked_case():
    # source: Kempton et al. (2018, PASP 130, 114401), eq. (1) and Table 1
    # Rp = 2.0 R_E (bin 1.5-2.75, scale factor 1.26), Mp = 5.0 M_E,
    # T_eq = 500 K, R* = 0.5 R_sun, m_J = 9.0
    #   Rp^3            = 8.0
    #   Rp^3 T_eq       = 4000.0
    #   Mp R*^2         = 5.0 * 0.25 = 1.25
    #   ratio           = 4000 / 1.25 = 3200.0
    #   scaled          = 1.26 * 3200 = 4032.0
    #   10^(-9.0/5)     = 10^-1.8 = 0.0158489
    #   TSM             = 4032 * 0.0158489 = 63.903
    assert tsm(2.0, 5.0, 500.0, 0.5, 9.0) == pytest.approx(63.903, rel=1e-4)
    # same planet at Rp = 1.0 R_E falls in the 0.190 bin:
    #   0.190 * 1 * 500 / 1.25 * 0.0158489 = 1.2045
    assert tsm(1.0, 5.0, 500.0, 0.5, 9.0) == pytest.approx(1.2045, rel=1e-4)
    assert np.isnan(tsm(11.0, 300.0, 500.0, 0.5, 9.0))


def test_esm_worked_case():
    # source: Kempton et al. (2018, PASP 130, 114401), eq. (2)
    # Rp = 1.2 R_E, T_eq = 600 K, R* = 0.2 R_sun, Teff = 3200 K, m_K = 8.0
    #   T_day = 1.10 * 600 = 660 K
    #   hc / (lambda k) at 7.5 um = 0.0143878 m K / 7.5e-6 m = 1918.37 K
    second_radiation = H_SI * C_SI / K_B_SI
    assert second_radiation / 7.5e-6 == pytest.approx(1918.37, rel=1e-5)
    #   x_day  = 1918.37 / 660  = 2.90662 ; exp(x) - 1 = 17.2949
    #   x_star = 1918.37 / 3200 = 0.59949 ; exp(x) - 1 = 0.821190
    #   B(T_day) / B(T_eff) = 0.821190 / 17.2949 = 0.0474818
    #   Rp / R* = 1.2 * 0.0091679 / 0.2 = 0.0550073 ; squared = 0.00302581
    #   10^(-8.0/5) = 10^-1.6 = 0.0251189
    #   ESM = 4.29e6 * 0.0474818 * 0.00302581 * 0.0251189 = 15.482
    value = esm(1.2, 600.0, 0.2, 3200.0, 8.0)
    assert value == pytest.approx(15.482, rel=1e-4)


@pytest.mark.parametrize("radius_earth, threshold", [(1.0, 12.0), (2.0, 92.0), (3.0, 84.0), (6.0, 96.0), (12.0, None)])
def test_tsm_thresholds(radius_earth, threshold):
    # source: Kempton et al. (2018, PASP 130, 114401), Table 1 suggested thresholds
    assert tsm_threshold(radius_earth) == threshold


def test_atmosphere_block_from_samples():
    rng = np.random.default_rng(5)
    n = 1000
    radius = rng.normal(2.0, 0.05, n)
    mass = rng.normal(5.0, 0.5, n)
    gravity = EARTH_GRAVITY_MS2 * mass / radius**2
    t_eq = rng.normal(500.0, 10.0, n)
    common = (radius, mass, gravity, t_eq, np.full(n, 0.5), np.full(n, 3500.0))
    without = atmosphere_block(*common)
    assert without["tsm"] is None and without["esm"] is None
    assert any("J magnitude" in note for note in without["notes"])
    block = atmosphere_block(*common, mag_j=9.0, mag_k=8.2, mean_molecular_weight=18.0)
    assert block["mean_molecular_weight"] == 18.0
    assert block["tsm_threshold"] == 92.0 and block["esm_threshold"] is None
    # common practice, no published source: TSM scales as Rp^3 Teq / Mp, so the
    # posterior median lies near the worked value 63.9 of the median planet
    assert block["tsm"]["median"] == pytest.approx(63.9, rel=0.05)
    assert block["tsm"]["lower"] < block["tsm"]["median"] < block["tsm"]["upper"]
    # hydrogen atmosphere gives a 18 / 2.3 times larger scale height than water
    hydrogen = atmosphere_block(*common, mean_molecular_weight=2.3)
    assert hydrogen["scale_height_km"]["median"] / block["scale_height_km"]["median"] == pytest.approx(
        18.0 / 2.3, rel=1e-6
    )
