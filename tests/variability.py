"""Spotted and active stars for injection tests: variability made independently of planetfit's GP kernels.

The quasi-periodic signal is the demo's (:func:`planetfit.demo.generate.quasi_periodic`):
the rotation frequency and its first harmonic with smoothly wandering
amplitudes and phases. Transits come from batman, RVs from radvel
(``synthetic.py``).
"""

from pathlib import Path

import numpy as np
from synthetic import STAR, light_curve, planet_truth, radial_velocity, star_priors, write_config, write_velocities

from planetfit.demo.generate import quasi_periodic

# ----------------------------------------------------------------- a spotted star with a transiting planet

SPOTTED = {"rotation_days": 2.7, "amplitude": 0.008, "noise": 5e-4, "days": 7.0, "cadence_min": 5.0}
TRANSITING = planet_truth(2.31, 2460000.80, 0.0, radius_ratio=0.045, impact=0.3)


def write_spotted_star(folder, seed, baseline, walkers=28, max_steps=400):
    """Light curve of a spotted star (variability ~ 4 x the transit depth) with one transiting planet.

    Photometry only; the transit comes from batman's ``TransitModel``.
    Returns the config path.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    s = SPOTTED
    t = np.arange(TRANSITING["transit_bjd"] - 0.6, TRANSITING["transit_bjd"] - 0.6 + s["days"], s["cadence_min"] / 1440)
    spots = quasi_periodic(t, s["rotation_days"], s["amplitude"], rng, 2 * s["rotation_days"])
    flux = light_curve(t, {"b": TRANSITING}, s["cadence_min"]) + spots + rng.normal(0, s["noise"], t.size)
    np.savetxt(
        folder / "phot.csv",
        np.column_stack([t, flux, np.full(t.size, s["noise"])]),
        delimiter=",",
        header="bjd,flux,flux_err",
        comments="",
        fmt="%.8f",
    )
    p = TRANSITING
    config = {
        "system": f"Spotted-{seed}",
        "seed": seed,
        "output": "run",
        "star": star_priors(STAR, 5400),
        "planets": {
            "b": {
                "period_days": {"uniform": [p["period_days"] - 0.01, p["period_days"] + 0.01]},
                "transit_bjd": {"uniform": [p["transit_bjd"] - 0.04, p["transit_bjd"] + 0.04]},
                "radius_ratio": {"uniform": [0.01, 0.1]},
                "impact": {"uniform": [0.0, 1.0]},
                "rv_amplitude_ms": 0.0,
            }
        },
        "photometry": [
            {
                "name": "cam",
                "file": "phot.csv",
                "columns": {"time": "bjd", "flux": "flux", "error": "flux_err"},
                "exposure_min": s["cadence_min"],
                "baseline": baseline,
                "limb_darkening_q1": {"truncnormal": [0.42, 0.1, 0.0, 1.0]},
                "limb_darkening_q2": {"truncnormal": [0.34, 0.1, 0.0, 1.0]},
                "clip_sigma": 0,
            }
        ],
        "sampling": {"walkers": walkers, "max_steps": max_steps, "check_every": 100, "optimiser_starts": 2},
    }
    if baseline == "constant":
        # The fairest white-noise fit: a free jitter can absorb part of the variability.
        config["photometry"][0]["jitter_ppm"] = {"loguniform": [1, 30000]}
    return write_config(folder, config)


# ----------------------------------------------------------------- an active star seen by two spectrographs

ACTIVE = {
    "rotation_days": 13.0,
    "amplitude_ms": 9.0,
    "error_ms": 1.0,
    "span_days": 150.0,
    "spectrographs": (("spec-a", 70, 1.0, 4.0), ("spec-b", 45, 0.6, -7.0)),
}  # name, points, activity scale, offset
RV_PLANET = planet_truth(3.37, 2460002.10, 3.0)


def _rv_config(seed, velocities, walkers, max_steps, **top):
    p = RV_PLANET
    config = {
        "system": f"Active-{seed}",
        "seed": seed,
        "output": "run",
        "star": star_priors(STAR, 5400),
        "planets": {
            "b": {
                "transits": False,
                "period_days": {"uniform": [p["period_days"] - 0.02, p["period_days"] + 0.02]},
                "transit_bjd": {"uniform": [p["transit_bjd"] - 0.4, p["transit_bjd"] + 0.4]},
                "rv_amplitude_ms": {"uniform": [0.0, 15.0]},
            }
        },
        "velocities": velocities,
        "sampling": {"walkers": walkers, "max_steps": max_steps, "check_every": 100, "optimiser_starts": 2},
    }
    config.update(top)
    return config


def write_active_star(folder, seed, activity_gp, walkers=32, max_steps=600):
    """RVs of a planet (K = 3 m/s) on a star whose spot activity (~9 m/s) follows its 13-d rotation.

    Both spectrographs see the same activity signal, scaled differently.
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    a = ACTIVE
    start = RV_PLANET["transit_bjd"] - 10.0
    entries, times = [], []
    for _, n, _, _ in a["spectrographs"]:
        times.append(np.sort(rng.uniform(start, start + a["span_days"], n)))
    activity = quasi_periodic(
        np.concatenate(times), a["rotation_days"], a["amplitude_ms"], rng, evolution_days=3 * a["rotation_days"]
    )
    activity = np.split(activity, [times[0].size])
    for (name, n, scale, offset), t, act in zip(a["spectrographs"], times, activity):
        rv = radial_velocity(t, {"b": RV_PLANET}) + scale * act + offset + rng.normal(0, a["error_ms"], n)
        entries.append(
            write_velocities(
                folder,
                name,
                f"{name}.txt",
                t,
                rv,
                a["error_ms"],
                offset_ms={"uniform": [-30, 30]},
                jitter_ms={"loguniform": [0.01, 20]},
            )
        )
    top = {"rv_activity": {"rotation_period_days": {"uniform": [8.0, 20.0]}}} if activity_gp else {}
    return write_config(folder, _rv_config(seed, entries, walkers, max_steps, **top))


TREND = {
    "slope_ms_per_day": 0.085,
    "curvature_ms_per_day2": -0.0012,
    "reference_bjd": 2460040.0,
    "indicator_coefficient": 2.5,
}


def write_trend_star(folder, seed, walkers=24, max_steps=600):
    """RVs of a planet plus a quadratic trend and a part linear in a line-width indicator."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    n, err = 60, 1.0
    t = np.sort(rng.uniform(RV_PLANET["transit_bjd"] - 20, RV_PLANET["transit_bjd"] + 100, n))
    width = 5.0 + np.cumsum(rng.normal(0, 0.4, n))  # km/s, a wandering line width
    dt = t - TREND["reference_bjd"]
    rv = (
        radial_velocity(t, {"b": RV_PLANET})
        + TREND["slope_ms_per_day"] * dt
        + TREND["curvature_ms_per_day2"] * dt**2
        + TREND["indicator_coefficient"] * (width - np.median(width))
        + rng.normal(0, err, n)
    )
    np.savetxt(
        folder / "rv.txt",
        np.column_stack([t, rv, np.full(n, err), width]),
        header="bjd rv err fwhm_kms",
        comments="",
        fmt="%.6f",
    )
    entry = {
        "name": "spec",
        "file": "rv.txt",
        "columns": {"time": "bjd", "rv": "rv", "error": "err"},
        "offset_ms": {"uniform": [-30, 30]},
        "decorrelate": {"fwhm_kms": {"uniform": [-10, 10]}},
    }
    top = {"rv_trend": {"kind": "quadratic", "reference_bjd": TREND["reference_bjd"]}}
    return write_config(folder, _rv_config(seed, [entry], walkers, max_steps, **top))
