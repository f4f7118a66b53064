"""Synthetic transiting systems with known truth, for injection-recovery tests.

Light curves come from batman's public ``TransitModel`` (not planetfit's
windowed kernels) and RVs from radvel's ``rv_drive``; each system is written
as tables plus a config, and fitted through the real pipeline.
"""

from pathlib import Path

import batman
import numpy as np
import yaml
from radvel import kepler, orbit

from planetfit.models.geometry import solve_orbit
from planetfit.units import M_EARTH_KG, R_EARTH_M, R_SUN_M

STAR = {"mass_msun": 0.92, "radius_rsun": 0.88}
BTJD = 2457000.0


def planet_truth(period_days, transit_bjd, rv_amplitude_ms, radius_ratio=None, impact=None, e=0.0, omega_deg=90.0):
    """One planet's true parameters (radius ratio and impact only for transiting planets)."""
    return {"period_days": period_days, "transit_bjd": transit_bjd, "rv_amplitude_ms": rv_amplitude_ms,
            "radius_ratio": radius_ratio, "impact": impact, "e": e, "omega_deg": omega_deg}


def true_mass_radius(p, star=STAR):
    """True planet mass and radius (Earth units) implied by the truth."""
    a_r, cos_i, m = solve_orbit(p["period_days"], p["rv_amplitude_ms"], p["impact"], p["e"],
                                np.radians(p["omega_deg"]), star["mass_msun"], star["radius_rsun"])
    return m / M_EARTH_KG, p["radius_ratio"] * star["radius_rsun"] * R_SUN_M / R_EARTH_M


def light_curve(times, planets, exposure_min, star=STAR, u=(0.45, 0.2)):
    """Relative flux of all transiting planets (batman, exposure-integrated)."""
    flux = np.ones_like(times)
    for p in planets.values():
        if p["radius_ratio"] is None:
            continue
        w = np.radians(p["omega_deg"])
        a_r, cos_i, _ = solve_orbit(p["period_days"], p["rv_amplitude_ms"], p["impact"], p["e"], w,
                                    star["mass_msun"], star["radius_rsun"])
        tp = batman.TransitParams()
        tp.t0, tp.per, tp.rp, tp.a = p["transit_bjd"], p["period_days"], p["radius_ratio"], float(a_r)
        tp.inc, tp.ecc, tp.w = float(np.degrees(np.arccos(cos_i))), p["e"], p["omega_deg"]
        tp.u, tp.limb_dark = list(u), "quadratic"
        ss = max(1, int(np.ceil(exposure_min / 2.0)))
        model = batman.TransitModel(tp, times, supersample_factor=ss, exp_time=exposure_min / 1440.0)
        flux += model.light_curve(tp) - 1.0
    return flux


def radial_velocity(times, planets):
    """Stellar RV (m/s) from all planets (radvel)."""
    total = np.zeros_like(times)
    for p in planets.values():
        w = np.radians(p["omega_deg"])
        tp = orbit.timetrans_to_timeperi(p["transit_bjd"], p["period_days"], p["e"], w)
        total += kepler.rv_drive(times, np.array([p["period_days"], tp, p["e"], w, p["rv_amplitude_ms"]]))
    return total


def write_system(folder, planets, seed, days=20.0, cadence_min=10.0, noise_ppm=300.0, n_rv=40, rv_error_ms=1.5,
                 rv_offset_ms=5.0, walkers=40, max_steps=2000):
    """Write photometry, RVs and ``config.yaml`` for ``planets`` into ``folder``; return the config path."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    t0 = min(p["transit_bjd"] for p in planets.values()) - 1.0
    t_phot = np.arange(t0, t0 + days, cadence_min / 1440.0)
    flux = light_curve(t_phot, planets, cadence_min) + rng.normal(0, noise_ppm * 1e-6, t_phot.size)
    np.savetxt(folder / "phot.csv", np.column_stack([t_phot - BTJD, flux, np.full(t_phot.size, noise_ppm * 1e-6)]),
               delimiter=",", header="time,flux,flux_err", comments="", fmt="%.8f")
    t_rv = np.sort(rng.uniform(t0, t0 + 4 * max(p["period_days"] for p in planets.values()), n_rv))
    rv = radial_velocity(t_rv, planets) + rv_offset_ms + rng.normal(0, rv_error_ms, n_rv)
    np.savetxt(folder / "rv.txt", np.column_stack([t_rv, rv, np.full(n_rv, rv_error_ms)]),
               header="bjd rv err", comments="", fmt="%.6f")
    config_planets = {}
    for name, p in planets.items():
        entry = {"period_days": {"uniform": [p["period_days"] * 0.998, p["period_days"] * 1.002]},
                 "transit_bjd": {"uniform": [p["transit_bjd"] - 0.08, p["transit_bjd"] + 0.08]},
                 "rv_amplitude_ms": {"uniform": [0.0, 4 * p["rv_amplitude_ms"]]},
                 "orbit": "eccentric" if p["e"] > 0 else "circular"}
        if p["radius_ratio"] is None:
            entry["transits"] = False
            entry["transit_bjd"] = {"uniform": [p["transit_bjd"] - 2.0, p["transit_bjd"] + 2.0]}
        else:
            entry.update(radius_ratio={"uniform": [0.005, 0.2]}, impact={"uniform": [0.0, 1.0]})
        config_planets[name] = entry
    config = {
        "system": f"Synthetic-{seed}", "seed": seed, "output": "run",
        "star": {"mass_msun": {"normal": [STAR["mass_msun"], 0.03]},
                 "radius_rsun": {"normal": [STAR["radius_rsun"], 0.02]}, "teff_k": {"normal": [5400, 80]}},
        "planets": config_planets,
        "photometry": [{"name": "cam", "file": "phot.csv",
                        "columns": {"time": "time", "flux": "flux", "error": "flux_err"},
                        "time_offset_days": BTJD, "exposure_min": cadence_min}],
        "velocities": [{"name": "spec", "file": "rv.txt", "columns": {"time": "bjd", "rv": "rv", "error": "err"},
                        "offset_ms": {"uniform": [-30, 30]}, "jitter_ms": {"loguniform": [0.01, 10]}}],
        "sampling": {"walkers": walkers, "max_steps": max_steps, "check_every": 200, "optimiser_starts": 3},
    }
    path = folder / "config.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path
