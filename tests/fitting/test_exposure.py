"""Exposure integration against the exact exposure average of the same batman model."""

import math

import batman
import numpy as np
import pytest
import yaml
from astropy import constants, units
from scipy.integrate import quad_vec
from synthetic import exposure_average, write_tiny_system

from planetfit.cli import main
from planetfit.core.units import MINUTES_PER_DAY
from planetfit.fitting.components.exposure import (
    ERROR_FRACTION,
    MAX_SUPERSAMPLE,
    SharpTransit,
    choose_sampling,
    sharpest_transits,
)
from planetfit.fitting.components.transit import TransitLightCurve
from planetfit.pipeline import check, overview

# A close-in giant: k = 0.1, P = 3 d around a 1.0 Msun, 1.1 Rsun star (a/R* = 7.98), central transit.
PERIOD_D, RADIUS_RATIO, U = 3.0, 0.1, (0.4, 0.25)
# source: Kepler's third law, a = (G M P^2 / 4 pi^2)^(1/3), with astropy's constants
A_OVER_RSTAR = float(
    (
        (constants.G * units.M_sun * (PERIOD_D * units.day) ** 2 / (4 * math.pi**2)) ** (1 / 3) / (1.1 * units.R_sun)
    ).decompose()
)
GIANT = SharpTransit(PERIOD_D, A_OVER_RSTAR, RADIUS_RATIO, *U)
# Median flux error of 2-min exposures of a bright star (a test input); longer exposures' errors scale
# as 1/sqrt(exposure), as photon noise does.
ERROR_2MIN = 1000e-6


def _median_error(exposure_min):
    return ERROR_2MIN * math.sqrt(2.0 / exposure_min)


def _mid_times(exposure_days):
    """Mid-exposure times over the whole transit: before first contact to after fourth, mid-transit included."""
    half = PERIOD_D / (2 * math.pi) * math.asin((1 + RADIUS_RATIO) / A_OVER_RSTAR) + exposure_days
    return np.linspace(-half, half, 801)


def _batman(times, supersample=1, exposure_days=0.0):
    p = batman.TransitParams()
    p.t0, p.per, p.rp, p.a, p.inc, p.ecc, p.w = 0.0, PERIOD_D, RADIUS_RATIO, A_OVER_RSTAR, 90.0, 0.0, 90.0
    p.u, p.limb_dark = list(U), "quadratic"
    return batman.TransitModel(p, times, supersample_factor=supersample, exp_time=exposure_days), p


def _exact_average(times, exposure_days):
    """(1/E) * integral over the exposure of batman's instantaneous flux, by adaptive Gauss-Kronrod quadrature."""
    # source: scipy.integrate.quad_vec; the flux at t + s is batman's at t with mid-transit moved to -s
    model, p = _batman(times)

    def flux(s):
        p.t0 = -s
        return model.light_curve(p)

    integral, abserr = quad_vec(
        flux, -exposure_days / 2, exposure_days / 2, epsabs=1e-9 * exposure_days, epsrel=0.0, norm="max", limit=20000
    )
    assert abserr / exposure_days < 1e-8  # the reference is exact to 0.01 ppm
    return integral / exposure_days


def _model(times, exposure_days, supersample):
    lc = TransitLightCurve(times, exposure_days, supersample)
    return lc.flux(np.arange(times.size), PERIOD_D, 0.0, A_OVER_RSTAR, math.pi / 2, 0.0, math.pi / 2, RADIUS_RATIO, *U)


@pytest.fixture(scope="module")
def exact():
    """Exact exposure averages for 2, 10 and 30-min exposures: {minutes: (times, flux)}."""
    out = {}
    for minutes in (2.0, 10.0, 30.0):
        times = _mid_times(minutes / MINUTES_PER_DAY)
        out[minutes] = times, _exact_average(times, minutes / MINUTES_PER_DAY)
    return out


@pytest.mark.parametrize("minutes", [2.0, 10.0, 30.0])
def test_chosen_supersample_keeps_error_below_a_tenth_of_the_flux_error(exact, minutes):
    times, reference = exact[minutes]
    exposure_days = minutes / MINUTES_PER_DAY
    bound_ppm = ERROR_FRACTION * _median_error(minutes) * 1e6
    chosen = choose_sampling("cam", exposure_days, _median_error(minutes), [GIANT])
    error_ppm = np.max(np.abs(_model(times, exposure_days, chosen.supersample) - reference)) * 1e6
    print(
        f"{minutes:g} min: n = {chosen.supersample}, error {error_ppm:.2f} ppm (estimated "
        f"{chosen.error_ppm:.2f}), bound {bound_ppm:.1f} ppm"
    )
    assert error_ppm < bound_ppm
    assert chosen.warning is None
    # The reported error is the measured one (the estimate probes more times near the contacts).
    assert chosen.error_ppm == pytest.approx(error_ppm, rel=0.1)
    # The smallest such n: one fewer sub-exposure breaks the bound.
    if chosen.supersample > 1:
        assert np.max(np.abs(_model(times, exposure_days, chosen.supersample - 1) - reference)) * 1e6 > bound_ppm
    if minutes <= 2.0:
        assert chosen.supersample == 1


def test_endpoint_rule_at_old_default_breaks_the_bound_at_10_min(exact):
    # The previous rule: batman's supersample_factor (sub-exposures at linspace(-E/2, E/2, n), ends included)
    # with n = ceil(exposure / 2 min) = 5.
    times, reference = exact[10.0]
    model, p = _batman(times, supersample=5, exposure_days=10.0 / MINUTES_PER_DAY)
    error_ppm = np.max(np.abs(model.light_curve(p) - reference)) * 1e6
    print(f"endpoint rule, n = 5 at 10 min: {error_ppm:.1f} ppm")
    assert error_ppm > ERROR_FRACTION * _median_error(10.0) * 1e6


@pytest.mark.parametrize("minutes", [10.0, 30.0])
def test_synthetic_data_are_integrated_exactly(exact, minutes):
    times, reference = exact[minutes]
    _, p = _batman(times)
    assert np.max(np.abs(exposure_average(p, times, minutes / MINUTES_PER_DAY) - reference)) < 0.1e-6


def test_too_few_sub_exposures_are_warned_about(exact):
    times, reference = exact[30.0]
    exposure_days = 30.0 / MINUTES_PER_DAY
    given = choose_sampling("cam", exposure_days, _median_error(30.0), [GIANT], requested=2)
    needed = choose_sampling("cam", exposure_days, _median_error(30.0), [GIANT]).supersample
    measured = np.max(np.abs(_model(times, exposure_days, 2) - reference)) * 1e6
    assert given.supersample == 2 and given.error_ppm == pytest.approx(measured, rel=0.1)
    assert given.warning.startswith(
        f"cam: 'supersample: 2' leaves an exposure-integration error of up to {given.error_ppm:.3g} ppm"
    )
    assert f"set 'supersample: {needed}', or remove the key to have it chosen." in given.warning
    capped = choose_sampling("cam", exposure_days, 1e-9, [GIANT])
    assert capped.supersample == MAX_SUPERSAMPLE
    assert f"even {MAX_SUPERSAMPLE} sub-exposures per 30-min exposure" in capped.warning


def test_dataset_without_transits_needs_one_sub_exposure():
    s = choose_sampling("cam", 30.0 / MINUTES_PER_DAY, 1e-6, [])
    assert (s.supersample, s.error_ppm, s.warning) == (1, 0.0, None)


def test_config_sets_the_sharpest_transit_and_reports_the_choice(tmp_path, capsys):
    path = write_tiny_system(tmp_path)
    raw = yaml.safe_load(path.read_text())
    del raw["photometry"][0]["supersample"]
    path.write_text(yaml.safe_dump(raw))
    checked = check(path)
    c = checked.config
    (transit,) = sharpest_transits(
        c.planets, c.star, c.photometry[0].limb_darkening_q1, c.photometry[0].limb_darkening_q2
    )
    # Prior centres: P in U(2.99, 3.01), M* ~ N(0.9, 0.03), R* ~ N(0.85, 0.02); largest k of U(0.005, 0.1);
    # q1, q2 in U(0, 1) at 0.5: u1 = 2 sqrt(q1) q2, u2 = sqrt(q1) (1 - 2 q2)
    # source: Kipping (2013, MNRAS 435, 2152), eqs. 15-16; Kepler's third law with astropy's constants
    a_r = (
        (constants.G * 0.9 * units.M_sun * (3.0 * units.day) ** 2 / (4 * math.pi**2)) ** (1 / 3) / (0.85 * units.R_sun)
    ).decompose()
    assert transit.a_over_rstar == pytest.approx(float(a_r), rel=1e-9)
    assert (transit.period_days, transit.radius_ratio) == pytest.approx((3.0, 0.1))
    assert (transit.u1, transit.u2) == pytest.approx((math.sqrt(0.5), 0.0))
    d = checked.photometry[0]
    expected = choose_sampling("cam", 10.0 / MINUTES_PER_DAY, float(np.median(d.error)), [transit])
    counts = checked.data_counts()["cam"]
    assert counts["supersample"] == expected.supersample > 1 and checked.warnings == []
    assert counts["integration_error_ppm"] == pytest.approx(expected.error_ppm)
    assert f"{expected.supersample} sub-exposure(s) per exposure" in overview(checked)[0][-1]
    # The tiny system's config asks for one sub-exposure at 10 min: too few, and said so.
    given = write_tiny_system(tmp_path / "given")
    (warning,) = check(given).warnings
    assert warning.startswith("cam: 'supersample: 1' leaves an exposure-integration error")
    assert main(["check", str(given)]) == 0
    assert f"  WARNING: {warning}\n" in capsys.readouterr().out
