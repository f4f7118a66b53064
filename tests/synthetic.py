"""Synthetic systems with known truth, for the tests and benchmarks.

Light curves come from batman's public ``TransitModel`` (not planetfit's
windowed kernels), integrated over each exposure by a dense midpoint rule,
and RVs from radvel's ``rv_drive``; each system is written as tables plus a
config, and fitted through the real pipeline. Two kinds: any set of planets
(:func:`write_system`, for injection-recovery) and a tiny one-planet system
that fits in seconds (:func:`write_tiny_system`).
"""

import math
from pathlib import Path

import batman
import numpy as np
import yaml
from radvel import kepler, orbit

from planetfit.core.geometry import solve_orbit
from planetfit.core.units import M_EARTH_KG, MINUTES_PER_DAY, R_EARTH_M, R_SUN_M, SECONDS_PER_DAY

STAR = {"mass_msun": 0.92, "radius_rsun": 0.88}
BTJD = 2457000.0


def planet_truth(period_days, transit_bjd, rv_amplitude_ms, radius_ratio=None, impact=None, e=0.0, omega_deg=90.0):
    """One planet's true parameters (radius ratio and impact only for transiting planets)."""
    return {
        "period_days": period_days,
        "transit_bjd": transit_bjd,
        "rv_amplitude_ms": rv_amplitude_ms,
        "radius_ratio": radius_ratio,
        "impact": impact,
        "e": e,
        "omega_deg": omega_deg,
    }


def true_mass_radius(p, star=STAR):
    """True planet mass and radius (Earth units) implied by the truth."""
    a_r, cos_i, m = solve_orbit(
        p["period_days"],
        p["rv_amplitude_ms"],
        p["impact"],
        p["e"],
        np.radians(p["omega_deg"]),
        star["mass_msun"],
        star["radius_rsun"],
    )
    return m / M_EARTH_KG, p["radius_ratio"] * star["radius_rsun"] * R_SUN_M / R_EARTH_M


def light_curve(times, planets, exposure_min, star=STAR, u=(0.45, 0.2)):
    """Relative flux of all transiting planets (batman); ``exposure_min = 0`` samples instants."""
    flux = np.ones_like(times)
    for p in planets.values():
        if p["radius_ratio"] is None:
            continue
        w = np.radians(p["omega_deg"])
        a_r, cos_i, _ = solve_orbit(
            p["period_days"], p["rv_amplitude_ms"], p["impact"], p["e"], w, star["mass_msun"], star["radius_rsun"]
        )
        tp = batman.TransitParams()
        tp.t0, tp.per, tp.rp, tp.a = p["transit_bjd"], p["period_days"], p["radius_ratio"], float(a_r)
        tp.inc, tp.ecc, tp.w = float(np.degrees(np.arccos(cos_i))), p["e"], p["omega_deg"]
        tp.u, tp.limb_dark = list(u), "quadratic"
        flux += exposure_average(tp, times, exposure_min / MINUTES_PER_DAY) - 1.0
    return flux


#: Sub-exposure length of the synthetic data's exposure integration, seconds.
SYNTHETIC_SLICE_S = 10.0


def exposure_average(params, times, exposure_days):
    """batman's flux averaged over each exposure by a dense composite midpoint rule (slices of <= 10 s).

    batman's own ``supersample_factor`` averages sub-exposures at ``np.linspace(-exp_time/2,
    exp_time/2, n)``, the exposure's ends included with full weight, whose error falls only as 1/n.
    The midpoint rule's falls as 1/n^2: 10-s slices keep it below 0.1 ppm for a close-in giant
    (k = 0.1, a/R* = 8) at 10 and 30-min exposures (tests/test_exposure.py), far below any noise
    the tests inject.
    """
    n = max(1, math.ceil(exposure_days * SECONDS_PER_DAY / SYNTHETIC_SLICE_S))
    offsets = exposure_days * ((np.arange(n) + 0.5) / n - 0.5)
    model = batman.TransitModel(params, (times[:, None] + offsets).ravel())
    return model.light_curve(params).reshape(-1, n).mean(axis=1)


def radial_velocity(times, planets):
    """Stellar RV (m/s) from all planets (radvel)."""
    total = np.zeros_like(times)
    for p in planets.values():
        w = np.radians(p["omega_deg"])
        tp = orbit.timetrans_to_timeperi(p["transit_bjd"], p["period_days"], p["e"], w)
        total += kepler.rv_drive(times, np.array([p["period_days"], tp, p["e"], w, p["rv_amplitude_ms"]]))
    return total


# ----------------------------------------------------------------- tables and config


def star_priors(star, teff_k):
    """The config's star: normal priors around ``star`` and ``teff_k`` (0.03 Msun, 0.02 Rsun, 80 K wide)."""
    return {
        "mass_msun": {"normal": [star["mass_msun"], 0.03]},
        "radius_rsun": {"normal": [star["radius_rsun"], 0.02]},
        "teff_k": {"normal": [teff_k, 80]},
    }


def write_photometry(folder, times_bjd, flux, error, exposure_min, fmt="%.8f", **entry):
    """Write ``phot.csv`` (times as BJD - ``BTJD``) and return its config entry, with ``entry``'s keys added."""
    np.savetxt(
        folder / "phot.csv",
        np.column_stack([times_bjd - BTJD, flux, np.full(times_bjd.size, error)]),
        delimiter=",",
        header="time,flux,flux_err",
        comments="",
        fmt=fmt,
    )
    return {
        "name": "cam",
        "file": "phot.csv",
        "columns": {"time": "time", "flux": "flux", "error": "flux_err"},
        "time_offset_days": BTJD,
        "exposure_min": exposure_min,
        **entry,
    }


def write_velocities(folder, name, file, times_bjd, rv_ms, error_ms, **priors):
    """Write an RV table ``file`` and return its config entry ``name``, with ``priors``' keys added."""
    np.savetxt(
        folder / file,
        np.column_stack([times_bjd, rv_ms, np.full(times_bjd.size, error_ms)]),
        header="bjd rv err",
        comments="",
        fmt="%.6f",
    )
    return {"name": name, "file": file, "columns": {"time": "bjd", "rv": "rv", "error": "err"}, **priors}


def write_config(folder, config):
    """Write ``config.yaml`` into ``folder`` (keys in the given order); return its path."""
    path = folder / "config.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path


# ----------------------------------------------------------------- any set of planets


def write_system(
    folder,
    planets,
    seed,
    days=20.0,
    cadence_min=10.0,
    noise_ppm=300.0,
    n_rv=40,
    rv_error_ms=1.5,
    rv_offset_ms=5.0,
    walkers=40,
    max_steps=2000,
):
    """Write photometry, RVs and ``config.yaml`` for ``planets`` into ``folder``; return the config path."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    t0 = min(p["transit_bjd"] for p in planets.values()) - 1.0
    t_phot = np.arange(t0, t0 + days, cadence_min / 1440.0)
    flux = light_curve(t_phot, planets, cadence_min) + rng.normal(0, noise_ppm * 1e-6, t_phot.size)
    photometry = write_photometry(folder, t_phot, flux, noise_ppm * 1e-6, cadence_min)
    t_rv = np.sort(rng.uniform(t0, t0 + 4 * max(p["period_days"] for p in planets.values()), n_rv))
    rv = radial_velocity(t_rv, planets) + rv_offset_ms + rng.normal(0, rv_error_ms, n_rv)
    velocities = write_velocities(
        folder,
        "spec",
        "rv.txt",
        t_rv,
        rv,
        rv_error_ms,
        offset_ms={"uniform": [-30, 30]},
        jitter_ms={"loguniform": [0.01, 10]},
    )
    config_planets = {}
    for name, p in planets.items():
        entry = {
            "period_days": {"uniform": [p["period_days"] * 0.998, p["period_days"] * 1.002]},
            "transit_bjd": {"uniform": [p["transit_bjd"] - 0.08, p["transit_bjd"] + 0.08]},
            "rv_amplitude_ms": {"uniform": [0.0, 4 * p["rv_amplitude_ms"]]},
            "orbit": "eccentric" if p["e"] > 0 else "circular",
        }
        if p["radius_ratio"] is None:
            entry["transits"] = False
            entry["transit_bjd"] = {"uniform": [p["transit_bjd"] - 2.0, p["transit_bjd"] + 2.0]}
        else:
            entry.update(radius_ratio={"uniform": [0.005, 0.2]}, impact={"uniform": [0.0, 1.0]})
        config_planets[name] = entry
    return write_config(
        folder,
        {
            "system": f"Synthetic-{seed}",
            "seed": seed,
            "output": "run",
            "star": star_priors(STAR, 5400),
            "planets": config_planets,
            "photometry": [photometry],
            "velocities": [velocities],
            "sampling": {"walkers": walkers, "max_steps": max_steps, "check_every": 200, "optimiser_starts": 3},
        },
    )


# ----------------------------------------------------------------- a tiny system that fits in seconds

TINY_TRUTH = {
    "mass_msun": 0.9,
    "radius_rsun": 0.85,
    "period_days": 3.0,
    "transit_bjd": 2460001.5,
    "radius_ratio": 0.04,
    "impact": 0.3,
    "rv_amplitude_ms": 8.0,
}
TINY_EXPOSURE_MIN = 10.0


def _tiny_planets(truth):
    """The tiny system's one circular planet, as :func:`planet_truth` gives it."""
    return {
        "b": planet_truth(
            truth["period_days"],
            truth["transit_bjd"],
            truth["rv_amplitude_ms"],
            radius_ratio=truth["radius_ratio"],
            impact=truth["impact"],
        )
    }


def tiny_light_curve(times, truth=TINY_TRUTH):
    """Noise-free relative flux of the tiny system at the instants ``times`` (no exposure integration)."""
    return light_curve(times, _tiny_planets(truth), 0.0, star=truth, u=(0.4, 0.2))


def write_tiny_transits(folder, system, entry):
    """A config fitting the tiny system's planet b to one light curve (``entry``) alone, with wide priors;
    returns its path."""
    planet = {
        "period_days": {"uniform": [2.99, 3.01]},
        "transit_bjd": {"uniform": [2460001.45, 2460001.55]},
        "radius_ratio": {"uniform": [0.02, 0.06]},
        "impact": {"uniform": [0.0, 0.8]},
    }
    config = {"system": system, "output": "run", "star": star_priors(STAR, 5300), "planets": {"b": planet}}
    return write_config(folder, dict(config, photometry=[entry]))


def write_tiny_system(
    folder,
    truth=TINY_TRUTH,
    seed=1,
    n_phot=400,
    n_rv=20,
    noise_ppm=400.0,
    rv_error_ms=1.5,
    max_steps=300,
    walkers=24,
    photometry=True,
    velocities=True,
    **overrides,
):
    """Write the tiny system (one transiting planet, a few hundred photometry points, 20 RVs) into ``folder``.

    Data tables and ``config.yaml``; ``overrides`` replace top-level config keys. Returns the config path.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    P, t0 = truth["period_days"], truth["transit_bjd"]
    # Photometry in three windows of 0.4 d around consecutive transits.
    per_window = n_phot // 3
    t_phot = np.concatenate([t0 + n * P + np.linspace(-0.2, 0.2, per_window) for n in range(3)])
    flux = tiny_light_curve(t_phot, truth) + rng.normal(0, noise_ppm * 1e-6, t_phot.size)
    t_rv = np.sort(rng.uniform(t0 - 20, t0 + 20, n_rv))
    rv = radial_velocity(t_rv, _tiny_planets(truth)) + rng.normal(0, rv_error_ms, n_rv)
    config = {
        "system": "Tiny-1",
        "seed": 3,
        "output": "run",
        "star": star_priors(truth, 5300),
        "planets": {
            "b": {
                "period_days": {"uniform": [P - 0.01, P + 0.01]},
                "transit_bjd": {"uniform": [t0 - 0.05, t0 + 0.05]},
                "radius_ratio": {"uniform": [0.005, 0.1]},
                "impact": {"uniform": [0.0, 1.0]},
                # A transit-only planet needs no semi-amplitude.
                **({"rv_amplitude_ms": {"uniform": [0.0, 30.0]}} if velocities else {}),
            }
        },
        "sampling": {"walkers": walkers, "max_steps": max_steps, "check_every": 100, "optimiser_starts": 2},
    }
    if photometry:
        config["photometry"] = [
            write_photometry(folder, t_phot, flux, noise_ppm * 1e-6, TINY_EXPOSURE_MIN, fmt="%.7f", supersample=1)
        ]
    if velocities:
        config["velocities"] = [
            write_velocities(
                folder,
                "spec",
                "rv.txt",
                t_rv,
                rv,
                rv_error_ms,
                offset_ms={"uniform": [-20, 20]},
                jitter_ms={"loguniform": [0.01, 10]},
            )
        ]
    config.update(overrides)
    return write_config(folder, config)


def tiny_log_prob(folder, linear_parameters="sampled", **photometry):
    """The log-probability of the tiny system written into ``folder``, its photometry entry updated with ``photometry``.

    Linear parameters are sampled unless ``linear_parameters="marginalised"``: every parameter is in
    ``log_prob.layout``.
    """
    from planetfit.fitting.log_probability import LogProbability
    from planetfit.pipeline import check

    path = write_tiny_system(folder)
    raw = yaml.safe_load(path.read_text())
    raw["photometry"][0].update(photometry)
    raw["sampling"]["linear_parameters"] = linear_parameters
    path.write_text(yaml.safe_dump(raw))
    checked = check(path)
    return LogProbability(checked.config, checked.photometry, checked.velocities)
