"""Individual transit times end to end: an injected sinusoidal TTV is recovered, and none is invented."""

import json
import math

import batman
import numpy as np
import pytest

from planetfit.core.geometry import solve_orbit
from planetfit.core.units import MINUTES_PER_DAY
from planetfit.pipeline import run
from tests.synthetic import STAR, star_priors, write_config, write_photometry

PERIOD, T0, K, B, U = 3.0, 2460001.5, 0.1, 0.3, (0.4, 0.2)
TRANSITS, CADENCE_MIN, NOISE_PPM, HALF_WINDOW_DAYS = 12, 5.0, 1000.0, 0.09


def ttv_light_curve(amplitude_min, seed):
    """Times, flux and true mid-times of 12 transits, each in a 0.18-d window; O-C = A sin(2 pi n / 5.3)."""
    rng = np.random.default_rng(seed)
    a_r, cos_i, _ = solve_orbit(PERIOD, 0.0, B, 0.0, math.pi / 2, STAR["mass_msun"], STAR["radius_rsun"])
    params = batman.TransitParams()
    params.per, params.rp, params.a, params.inc = PERIOD, K, float(a_r), float(np.degrees(np.arccos(cos_i)))
    params.ecc, params.w, params.u, params.limb_dark = 0.0, 90.0, list(U), "quadratic"
    epochs = np.arange(TRANSITS)
    mid = T0 + epochs * PERIOD + amplitude_min / MINUTES_PER_DAY * np.sin(2 * math.pi * epochs / 5.3)
    times, flux = [], []
    for t_mid in mid:
        t = t_mid + np.arange(-HALF_WINDOW_DAYS, HALF_WINDOW_DAYS, CADENCE_MIN / MINUTES_PER_DAY)
        params.t0 = float(t_mid)
        times.append(t)
        flux.append(batman.TransitModel(params, t).light_curve(params))
    flux = np.concatenate(flux) + rng.normal(0, NOISE_PPM * 1e-6, sum(t.size for t in times))
    return np.concatenate(times), flux, mid


def write_ttv_system(folder, amplitude_min, seed, steps=1500):
    """Photometry of the TTV system and its config (transit-only, free transit times)."""
    times, flux, mid = ttv_light_curve(amplitude_min, seed)
    phot = write_photometry(
        folder,
        times,
        flux,
        NOISE_PPM * 1e-6,
        0.0001,
        supersample=1,
        limb_darkening_q1=(U[0] + U[1]) ** 2,
        limb_darkening_q2=U[0] / (2 * (U[0] + U[1])),
    )
    config = {
        "system": f"Timing-{seed}",
        "seed": seed,
        "output": "run",
        "star": dict(star_priors(STAR, 5400), **STAR),  # star fixed: the test is about times
        "planets": {
            "b": {
                "period_days": {"uniform": [PERIOD - 0.002, PERIOD + 0.002]},
                "transit_bjd": {"uniform": [T0 - 0.01, T0 + 0.01]},
                "radius_ratio": {"uniform": [0.05, 0.15]},
                "impact": {"uniform": [0.0, 0.9]},
                "rv_amplitude_ms": 0.0,
                "transit_times": "free",
                "transit_time_halfwidth_min": 20.0,
                "transit_times_sinusoid": True,
            }
        },
        "photometry": [phot],
        "sampling": {"walkers": 30, "max_steps": steps, "check_every": 250, "optimiser_starts": 1},
    }
    return write_config(folder, config), mid


def _fit(tmp_path, amplitude_min, seed, steps):
    path, truth = write_ttv_system(tmp_path, amplitude_min, seed, steps=steps)
    run_dir = run(path, quiet=True, figures=False).path
    rows = np.genfromtxt(run_dir / "transit_times.csv", delimiter=",", names=True, dtype=None, encoding=None)
    return json.loads((run_dir / "summary.json").read_text())["planets"]["b"], rows, truth


def test_injected_sinusoidal_ttv_is_recovered_and_rejects_the_line(tmp_path):
    # common practice, no published source: an injection-recovery test; the truth is the injected mid-times
    planet, rows, truth = _fit(tmp_path, 10.0, 1, steps=500)
    assert list(rows["epoch"]) == list(range(TRANSITS))
    sigma = (rows["bjd_tdb_upper"] - rows["bjd_tdb_lower"]) / 2
    assert np.all(np.abs(rows["bjd_tdb_median"] - truth) < 3 * sigma)
    assert planet["ttv_p_value"] < 0.001
    assert planet["ttv_rms_minutes"] == pytest.approx(10 / math.sqrt(2), rel=0.25)
    assert planet["ttv_sinusoid"]["amplitude_minutes"] == pytest.approx(10.0, rel=0.15)
    assert planet["ttv_sinusoid"]["period_days"] == pytest.approx(5.3 * PERIOD, rel=0.05)


@pytest.mark.parametrize("seed", [2, 3, 4])
def test_no_injected_ttv_keeps_the_linear_ephemeris(tmp_path, seed):
    # common practice, no published source: without TTVs the chi^2 of the times about a line is chi^2(N - 2)
    planet, rows, truth = _fit(tmp_path, 0.0, seed, steps=300)
    assert planet["ttv_p_value"] > 0.01
    assert planet["ttv_dof"] == TRANSITS - 2
