"""A tiny synthetic system (one transiting planet, a few hundred photometry points, 20 RVs).

Written to a folder as CSV/text tables plus a config, so a fit takes seconds.
The light curve comes from batman's own ``TransitModel`` and the RVs from
radvel's ``rv_drive``, independent of planetfit's windowed evaluation.
"""

from pathlib import Path

import batman
import numpy as np
import yaml
from radvel import kepler

from planetfit.models.geometry import solve_orbit

TRUTH = {"mass_msun": 0.9, "radius_rsun": 0.85, "period_days": 3.0, "transit_bjd": 2460001.5,
         "radius_ratio": 0.04, "impact": 0.3, "rv_amplitude_ms": 8.0}
CADENCE_MIN = 10.0


def light_curve(times, truth, u=(0.4, 0.2)):
    """Noise-free relative flux of one circular transiting planet (batman)."""
    a_r, cos_i, _ = solve_orbit(truth["period_days"], truth["rv_amplitude_ms"], truth["impact"], 0.0, np.pi / 2,
                                truth["mass_msun"], truth["radius_rsun"])
    p = batman.TransitParams()
    p.t0, p.per, p.rp, p.a = truth["transit_bjd"], truth["period_days"], truth["radius_ratio"], float(a_r)
    p.inc, p.ecc, p.w, p.u, p.limb_dark = float(np.degrees(np.arccos(cos_i))), 0.0, 90.0, list(u), "quadratic"
    return batman.TransitModel(p, times).light_curve(p)


def radial_velocity(times, truth):
    """Circular-orbit stellar RV (m/s); for e = 0 periastron time equals transit time with w = 90 deg."""
    return kepler.rv_drive(times, np.array([truth["period_days"], truth["transit_bjd"], 0.0, np.pi / 2,
                                            truth["rv_amplitude_ms"]]))


def write_system(folder, truth=TRUTH, seed=1, n_phot=400, n_rv=20, noise_ppm=400.0, rv_error_ms=1.5,
                 max_steps=300, walkers=24, photometry=True, velocities=True, **overrides):
    """Write data tables and ``config.yaml`` into ``folder``; return the config path.

    ``overrides`` replace top-level config keys.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    P, t0 = truth["period_days"], truth["transit_bjd"]
    # Photometry in three windows of 0.4 d around consecutive transits.
    per_window = n_phot // 3
    t_phot = np.concatenate([t0 + n * P + np.linspace(-0.2, 0.2, per_window) for n in range(3)])
    flux = light_curve(t_phot, truth) + rng.normal(0, noise_ppm * 1e-6, t_phot.size)
    t_rv = np.sort(rng.uniform(t0 - 20, t0 + 20, n_rv))
    rv = radial_velocity(t_rv, truth) + rng.normal(0, rv_error_ms, n_rv)
    config = {
        "system": "Tiny-1", "seed": 3, "output": "run",
        "star": {"mass_msun": {"normal": [truth["mass_msun"], 0.03]},
                 "radius_rsun": {"normal": [truth["radius_rsun"], 0.02]}, "teff_k": {"normal": [5300, 80]}},
        "planets": {"b": {"period_days": {"uniform": [P - 0.01, P + 0.01]},
                          "transit_bjd": {"uniform": [t0 - 0.05, t0 + 0.05]},
                          "radius_ratio": {"uniform": [0.005, 0.1]}, "impact": {"uniform": [0.0, 1.0]},
                          "rv_amplitude_ms": {"uniform": [0.0, 30.0]} if velocities else 0.0}},
        "sampling": {"walkers": walkers, "max_steps": max_steps, "check_every": 100, "optimiser_starts": 2},
    }
    if photometry:
        np.savetxt(folder / "phot.csv", np.column_stack([t_phot - 2457000.0, flux,
                                                         np.full(t_phot.size, noise_ppm * 1e-6)]),
                   delimiter=",", header="time,flux,flux_err", comments="", fmt="%.7f")
        config["photometry"] = [{"name": "cam", "file": "phot.csv",
                                 "columns": {"time": "time", "flux": "flux", "error": "flux_err"},
                                 "time_offset_days": 2457000.0, "exposure_min": CADENCE_MIN, "supersample": 1}]
    if velocities:
        np.savetxt(folder / "rv.txt", np.column_stack([t_rv, rv, np.full(n_rv, rv_error_ms)]),
                   header="bjd rv err", comments="", fmt="%.6f")
        config["velocities"] = [{"name": "spec", "file": "rv.txt",
                                 "columns": {"time": "bjd", "rv": "rv", "error": "err"},
                                 "offset_ms": {"uniform": [-20, 20]}, "jitter_ms": {"loguniform": [0.01, 10]}}]
    config.update(overrides)
    path = folder / "config.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path
