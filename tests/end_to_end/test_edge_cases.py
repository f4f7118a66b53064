"""Numerical edge cases: Kepler's equation to e = 0.95, grazing and tiny transits,
very short and long periods, RV-only and transit-only fits."""

import json
import math

import batman
import numpy as np
import pytest
from radvel import kepler
from scipy import optimize
from synthetic import write_tiny_system as write_system

from planetfit import pipeline
from planetfit.cli import main
from planetfit.core.geometry import planet_mass_kg, solve_orbit
from planetfit.core.units import M_EARTH_KG, M_SUN_KG
from planetfit.fitting.components.transit import TransitLightCurve


@pytest.mark.parametrize("e", [0.0, 0.3, 0.7, 0.9, 0.95])
def test_kepler_solver_matches_root_finding(e):
    # source: definition of Kepler's equation, M = E - e sin E (root found independently with brentq)
    mean_anomaly = np.linspace(0.0, 2 * np.pi, 73)[:-1]
    solved = kepler.kepler(mean_anomaly, np.full(mean_anomaly.size, e))
    expected = [
        optimize.brentq(lambda E, m=m: E - e * math.sin(E) - m, 0.0, 2 * np.pi, xtol=1e-14) for m in mean_anomaly
    ]
    np.testing.assert_allclose(solved, expected, atol=1e-9)


def test_kepler_solver_meeus_example():
    # source: Meeus, Astronomical Algorithms (2nd ed.), Example 30.a: e = 0.1, M = 5 deg -> E = 5.554589 deg
    E = float(np.atleast_1d(kepler.kepler(np.radians([5.0]), np.array([0.1])))[0])
    assert math.degrees(E) == pytest.approx(5.554589, abs=1e-6)


def _circle_overlap_fraction(separation, k):
    """Fraction of a unit disk covered by a disk of radius k at ``separation`` (lens area / pi)."""
    # source: area of intersection of two circles; Mandel & Agol (2002), eq. 1 (uniform source)
    d = separation
    k0 = math.acos((k * k + d * d - 1) / (2 * k * d))
    k1 = math.acos((1 - k * k + d * d) / (2 * d))
    return (k * k * k0 + k1 - 0.5 * math.sqrt(4 * d * d - (1 + d * d - k * k) ** 2)) / math.pi


def _mid_transit_flux(period_days, a_over_rstar, impact, k, u=(0.0, 0.0), supersample=1):
    inc = math.acos(impact / a_over_rstar)
    lc = TransitLightCurve(np.array([0.0]), 2.0 / 1440, supersample)
    return lc.flux(np.array([0]), period_days, 0.0, a_over_rstar, inc, 0.0, math.pi / 2, k, *u)[0]


@pytest.mark.parametrize("impact", [1.0, 1.05, 1.09])
def test_grazing_transit_is_finite_and_matches_overlap_area(impact):
    k = 0.1
    flux = _mid_transit_flux(5.0, 15.0, impact, k)
    assert np.isfinite(flux) and 1 - k * k < flux < 1
    # At mid-transit the sky separation is the impact parameter (circular orbit).
    assert 1 - flux == pytest.approx(_circle_overlap_fraction(impact, k), rel=1e-4)
    limb_darkened = _mid_transit_flux(5.0, 15.0, impact, k, u=(0.5, 0.2))
    assert np.isfinite(limb_darkened) and 1 - k * k < limb_darkened < 1


def test_tiny_planet_depth_is_radius_ratio_squared():
    # source: Mandel & Agol (2002), uniform source with the planet fully inside the disk: depth = k^2
    k = 0.005
    assert 1 - _mid_transit_flux(5.0, 15.0, 0.0, k) == pytest.approx(k * k, rel=1e-6)


@pytest.mark.parametrize("period_days", [0.3, 300.0])
def test_windowed_light_curve_matches_batman_for_extreme_periods(period_days):
    a_r, cos_i, _ = solve_orbit(period_days, 5.0, 0.4, 0.0, math.pi / 2, 1.0, 1.0)
    assert a_r * (1 - 0.0) > 1.05  # the orbit clears the star
    k, u, t0 = 0.05, (0.4, 0.25), 2460000.0
    times = np.sort(
        np.concatenate(
            [
                t0 + np.linspace(-0.5, 0.5, 2001) * min(period_days, 2.0),
                t0 + period_days * 2 + np.linspace(-0.2, 0.2, 300),
            ]
        )
    )
    lc = TransitLightCurve(times, 2.0 / 1440, 1)
    half = lc.half_window_days(period_days, a_r, k, math.sqrt(1 - cos_i**2), 0.0, math.pi / 2)
    idx = lc.window(period_days, t0, half)
    ours = np.ones(times.size)
    ours[idx] = lc.flux(idx, period_days, t0, a_r, math.acos(cos_i), 0.0, math.pi / 2, k, *u)
    p = batman.TransitParams()
    p.t0, p.per, p.rp, p.a, p.inc, p.ecc, p.w = t0, period_days, k, a_r, math.degrees(math.acos(cos_i)), 0.0, 90.0
    p.u, p.limb_dark = list(u), "quadratic"
    reference = batman.TransitModel(p, times).light_curve(p)
    assert reference.min() < 1 - 0.5 * k * k  # the transit is in the data
    np.testing.assert_allclose(ours, reference, atol=1e-7)


def test_zero_semi_amplitude_gives_zero_mass_not_nan():
    assert planet_mass_kg(0.0, 3.0, 0.0, 1.0, 2e30) == 0.0
    a_r, cos_i, mass = solve_orbit(3.0, 0.0, 0.3, 0.0, math.pi / 2, 1.0, 1.0)
    assert mass == 0.0 and np.isfinite(a_r) and np.isfinite(cos_i)


@pytest.fixture
def no_figures(monkeypatch):
    """Skip figures and tables (planetfit/report's job); summary.json is still written."""
    monkeypatch.setattr(pipeline.outputs, "write_all", lambda *args, **kwargs: None)


def _within_3_sigma(stat, truth):
    return abs(stat["median"] - truth) < 1.5 * (stat["upper"] - stat["lower"])


def test_rv_only_fit_reports_minimum_mass(tmp_path, no_figures):
    config = write_system(tmp_path, photometry=False, max_steps=300, n_rv=30)
    text = config.read_text().replace("    radius_ratio:\n      uniform:\n      - 0.005\n      - 0.1\n", "")
    text = text.replace("    impact:\n      uniform:\n      - 0.0\n      - 1.0\n", "    transits: false\n")
    config.write_text(text)
    summary = json.loads((pipeline.run(config, quiet=True).path / "summary.json").read_text())
    b = summary["planets"]["b"]
    assert b["mass_is_minimum"] is True and b["transits"] is False
    assert "radius_earth" not in b
    assert _within_3_sigma(b["rv_amplitude_ms"], 8.0)  # the simulated K


def test_rv_only_planet_with_an_inclination_prior_gets_its_true_mass(tmp_path):
    config = write_system(tmp_path, photometry=False, max_steps=300, n_rv=30)
    text = config.read_text().replace("    radius_ratio:\n      uniform:\n      - 0.005\n      - 0.1\n", "")
    text = text.replace(
        "    impact:\n      uniform:\n      - 0.0\n      - 1.0\n",
        "    transits: false\n    inclination_deg: {normal: [60.0, 0.5]}\n",
    )
    config.write_text(text)
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    summary = json.loads((run_dir / "summary.json").read_text())
    b = summary["planets"]["b"]
    assert b["mass_is_minimum"] is False
    assert b["inclination_deg"]["prior_only"] is True
    # source: M sin i from the mass function, so M = (M sin i) / sin i for Mp << M* (Lovis & Fischer 2010, eq. 14)
    k, per = b["rv_amplitude_ms"]["median"], b["period_days"]["median"]
    minimum = planet_mass_kg(k, per, 0.0, 1.0, summary["star"]["mass_msun"]["median"] * M_SUN_KG) / M_EARTH_KG
    assert abs(b["mass_earth"]["median"] / minimum * np.sin(np.radians(60.0)) - 1) < 0.03
    # Nothing in an RV-only fit constrains the star: it is drawn from its prior, not sampled, and says so.
    assert not any(n.startswith("star.") for n in summary["fitted_parameters"])
    assert all(summary["star"][k]["prior_only"] for k in ("mass_msun", "radius_rsun", "density_gcc"))
    assert abs(summary["star"]["mass_msun"]["median"] - 0.9) < 0.01  # the prior's mean (tests/synthetic.py)
    assert "prior only" in (run_dir / "table.tex").read_text()


def test_transit_only_fit_reports_no_mass(tmp_path, capsys):
    # A planet without rv_amplitude_ms and no RVs: the config checks, and no mass is sampled or reported.
    config = write_system(tmp_path, velocities=False, max_steps=300)
    assert "rv_amplitude_ms" not in config.read_text()
    assert main(["check", str(config)]) == 0
    assert "b.rv_amplitude_ms" not in capsys.readouterr().out  # not among the free parameters
    run_dir = pipeline.run(config, quiet=True, figures=False).path
    summary = json.loads((run_dir / "summary.json").read_text())
    b = summary["planets"]["b"]
    assert b["mass_measured"] is False
    assert b["mass_earth"] is None and b["density_gcc"] is None and b["rv_amplitude_ms"] is None
    assert "mass not measured" in b["note"]
    assert _within_3_sigma(b["radius_ratio"], 0.04)  # the simulated radius ratio
    assert b["radius_earth"]["median"] > 0
    assert b["composition"]["verdict"].startswith("needs a mass")
    table = (run_dir / "summary.md").read_text()
    assert "Bulk density" not in table and "needs a mass" in table and "Radius" in table
    assert "| RV semi-amplitude" not in table
    assert "b_density_gcc" not in (run_dir / "posterior.csv").read_text().splitlines()[0]


def test_transit_only_run_draws_its_figures(tmp_path):
    # common practice, no published source: a fit without RVs has no mass to plot, and must still draw the rest
    config = write_system(tmp_path, velocities=False, max_steps=200)
    run_dir = pipeline.run(config, quiet=True).path
    names = {p.stem for p in (run_dir / "figures").glob("*.png")}
    assert {"corner_b", "transit_b_cam", "habitable_zone", "convergence"} <= names
    assert "mass_radius" not in names
