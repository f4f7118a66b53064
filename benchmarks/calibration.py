"""Simulation-based calibration of the joint fit (Talts et al. 2018, arXiv:1804.06788).

Each synthetic system is drawn from the same prior the fit uses: one
transiting planet on a circular orbit, six days of 10-min photometry (two
or three transits) and 20 RVs. Data are simulated with planetfit's own
forward model plus Gaussian noise and fitted with emcee until the chain
meets planetfit's convergence rule (50 autocorrelation times, checked every
100 steps) or reaches ``--steps``. The fraction of systems whose true value
falls inside the 68% and 95% central posterior intervals is reported for
planet mass, radius, K, radius ratio and the RV offset (marginalised while
sampling, drawn from its conditional afterwards), over all fits and over the
converged ones. A calibrated posterior covers the truth at the nominal
rate, within the binomial scatter sqrt(p (1 - p) / N), and puts the truth
at a uniformly distributed rank among its samples; the Kolmogorov-Smirnov
p-value of each quantity's ranks against the uniform distribution is
reported too.

Usage: python benchmarks/calibration.py [--systems N] [--processes P] [--steps S] [--moves M] [--first-seed K]
Prints one JSON object; each system's result goes to stderr as one JSON line.
"""

import argparse
import json
import logging
import math
import multiprocessing
import os
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import yaml
from scipy import stats

PRIOR = {
    "star": {
        "mass_msun": {"normal": [0.9, 0.05]},
        "radius_rsun": {"normal": [0.85, 0.03]},
        "teff_k": {"normal": [5300, 80]},
    },
    "planet": {
        "period_days": {"uniform": [2.9, 3.1]},
        "transit_bjd": {"uniform": [2460001.0, 2460001.2]},
        "radius_ratio": {"uniform": [0.02, 0.08]},
        "impact": {"uniform": [0.0, 0.8]},
        "rv_amplitude_ms": {"uniform": [1.0, 20.0]},
    },
    "offset_ms": {"uniform": [-20.0, 20.0]},
}
PHOT_START_BJD, PHOT_DAYS, CADENCE_MIN, NOISE_PPM = 2460000.9, 6.0, 10.0, 500.0
N_RV, RV_ERROR_MS = 20, 2.0
CHECK_EVERY = 100
QUANTITIES = ("mass_earth", "radius_earth", "rv_amplitude_ms", "radius_ratio", "offset_ms")


def _config(phot_file, rv_file, steps, seed, moves):
    """A config dict whose priors are PRIOR (limb darkening, flux level and jitters fixed)."""
    return {
        "system": "Calibration",
        "seed": seed,
        "output": "run",
        "star": PRIOR["star"],
        "planets": {"b": dict(PRIOR["planet"], orbit="circular")},
        "photometry": [
            {
                "name": "cam",
                "file": str(phot_file),
                "columns": {"time": "t", "flux": "f", "error": "e"},
                "exposure_min": CADENCE_MIN,
                "supersample": 1,
                "limb_darkening_q1": 0.36,
                "limb_darkening_q2": 0.3,
                "flux_level": 1.0,
                "normalise": False,
            }
        ],
        "velocities": [
            {
                "name": "spec",
                "file": str(rv_file),
                "columns": {"time": "t", "rv": "v", "error": "e"},
                "offset_ms": PRIOR["offset_ms"],
            }
        ],
        "sampling": {"walkers": 24, "max_steps": steps, "check_every": CHECK_EVERY, "optimiser_starts": 2}
        | ({"moves": moves} if moves else {}),
    }


def _write_table(path, columns, header):
    np.savetxt(path, np.column_stack(columns), delimiter=",", header=header, comments="", fmt="%.9f")


def simulate_system(seed, folder, steps, moves=None):
    """Draw system ``seed`` from the prior and write its data and config into ``folder``.

    Returns
    -------
    (config, log_prob, values, orbits)
        The loaded config, the log-probability of the simulated data, and the
        true parameter values and orbits.
    """
    from planetfit.fitting import predictions
    from planetfit.fitting.log_probability import LogProbability
    from planetfit.inputs.config import load_config
    from planetfit.inputs.datasets import load_all

    rng = np.random.default_rng(seed)
    folder = Path(folder)
    t_phot = PHOT_START_BJD + np.arange(0, PHOT_DAYS, CADENCE_MIN / (24 * 60))
    t_rv = np.sort(rng.uniform(PHOT_START_BJD - 15, PHOT_START_BJD + 15, N_RV))
    # Placeholder tables give the log-probability the observation times; the model then makes the data.
    _write_table(folder / "phot.csv", [t_phot, np.ones_like(t_phot), np.full(t_phot.size, NOISE_PPM * 1e-6)], "t,f,e")
    _write_table(folder / "rv.csv", [t_rv, np.zeros(N_RV), np.full(N_RV, RV_ERROR_MS)], "t,v,e")
    (folder / "config.yaml").write_text(
        yaml.safe_dump(_config(folder / "phot.csv", folder / "rv.csv", steps, seed, moves))
    )
    config = load_config(folder / "config.yaml")
    log_prob = LogProbability(config, *load_all(config))
    while True:  # a draw from the prior with a transit and a finite probability
        values = log_prob.model.layout.values(
            log_prob.model.layout.sample_prior(rng, 1)[0]
        )  # every parameter, linear too
        orbits = log_prob.orbits(values)
        if orbits is not None and np.any(predictions.photometry_model(log_prob, values, orbits, 0) < 1):
            break
    flux = predictions.photometry_model(log_prob, values, orbits, 0) + rng.normal(0, NOISE_PPM * 1e-6, t_phot.size)
    rv = (
        values["spec.offset_ms"]
        + predictions.velocity_model(log_prob, values, orbits, 0)
        + rng.normal(0, RV_ERROR_MS, N_RV)
    )
    _write_table(folder / "phot.csv", [t_phot, flux, np.full(t_phot.size, NOISE_PPM * 1e-6)], "t,f,e")
    _write_table(folder / "rv.csv", [t_rv, rv, np.full(N_RV, RV_ERROR_MS)], "t,v,e")
    return config, LogProbability(config, *load_all(config)), values, orbits


def fit_one(args):
    """Draw one system from the prior, simulate data, fit it; return truth and posterior intervals."""
    seed, steps, moves = args
    from planetfit.context import derived as physics
    from planetfit.core.units import M_EARTH_KG, R_EARTH_M, R_SUN_M
    from planetfit.fitting.sampling.mcmc import run_sampler

    with tempfile.TemporaryDirectory() as tmp:
        config, log_prob, values, orbits = simulate_system(seed, tmp, steps, moves)
        rng = np.random.default_rng(seed + 1_000_000)  # the fit's own stream, apart from the simulation's
        result = run_sampler(log_prob, log_prob.layout, config.sampling, Path(tmp) / "samples.h5", rng, progress=False)
        samples = log_prob.complete(result.samples, seed)[0]  # the marginalised linear parameters drawn back in
        quantities = physics.derive(config, log_prob.model, samples, rng)
        # The RV offset is marginalised while sampling and drawn from its conditional afterwards.
        derived = dict(quantities["planets"]["b"], offset_ms=quantities["parameters"]["spec.offset_ms"])
    true_values = {
        "mass_earth": orbits["b"].mass_kg / M_EARTH_KG,
        "radius_earth": values["b.radius_ratio"] * values["star.radius_rsun"] * R_SUN_M / R_EARTH_M,
        "rv_amplitude_ms": values["b.rv_amplitude_ms"],
        "radius_ratio": values["b.radius_ratio"],
        "offset_ms": values["spec.offset_ms"],
    }
    out = {
        "seed": seed,
        "steps": int(result.steps),
        "converged": bool(result.converged),
        "autocorr_steps": round(result.autocorr_steps, 1),
    }
    for q in QUANTITIES:
        p = np.percentile(derived[q], [2.5, 15.865, 84.135, 97.5])
        x = true_values[q]
        out[q] = {
            "in_68": bool(p[1] <= x <= p[2]),
            "in_95": bool(p[0] <= x <= p[3]),
            "rank": round(float(np.mean(derived[q] < x)), 4),
        }
    return out


def _quiet_worker():
    logging.getLogger("planetfit").setLevel(logging.ERROR)  # NOT CONVERGED is counted in the report
    for var in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ[var] = "1"


def calibrate(systems, processes, steps, moves=None, first_seed=1000):
    """Fit ``systems`` synthetic systems of at most ``steps`` steps each; return ``coverage`` of them.

    ``moves`` is ``sampling.moves`` (planetfit's default if None).
    """
    start = time.perf_counter()
    jobs = [(first_seed + i, steps, moves) for i in range(systems)]
    results = []
    with multiprocessing.get_context("fork").Pool(processes, initializer=_quiet_worker) as pool:
        for r in pool.imap_unordered(fit_one, jobs):
            results.append(r)
            print(json.dumps(r), file=sys.stderr, flush=True)  # one line per system, for partial runs
    return dict(moves=moves or "default", **coverage(results, steps, time.perf_counter() - start))


def _fractions(results, level):
    """Fraction of ``results`` whose truth lies in the ``level`` (68 or 95) interval, per quantity."""
    return {
        q: round(sum(r[q][f"in_{level}"] for r in results) / len(results), 3) if results else None for q in QUANTITIES
    }


def coverage(results, steps, seconds):
    """Coverage report from per-system results (the dicts ``fit_one`` returns)."""
    n = len(results)
    converged = [r for r in results if r["converged"]]
    report = {
        "systems": n,
        "max_steps": steps,
        "converged_fraction": round(len(converged) / n, 3),
        "median_steps": float(np.median([r["steps"] for r in results])),
        "median_autocorr_steps": float(np.median([r["autocorr_steps"] for r in results])),
        "binomial_sd_68": round(math.sqrt(0.68 * 0.32 / n), 3),
        "binomial_sd_95": round(math.sqrt(0.95 * 0.05 / n), 3),
    }
    for level in ("68", "95"):
        report[f"coverage_{level}"] = _fractions(results, level)
        report[f"coverage_{level}_converged"] = _fractions(converged, level)
    report["rank_uniformity_ks_p"] = {
        q: round(float(stats.kstest([r[q]["rank"] for r in results], "uniform").pvalue), 3) for q in QUANTITIES
    }
    report["seconds"] = round(seconds, 1)
    return report


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--systems", type=int, default=200)
    parser.add_argument("--processes", type=int, default=2)
    parser.add_argument("--steps", type=int, default=20000, help="max emcee steps per fit")
    parser.add_argument(
        "--moves",
        choices=["differential_evolution", "fitted_proposal"],
        help="sampling.moves (planetfit's default if not given)",
    )
    parser.add_argument(
        "--first-seed", type=int, default=1000, help="seed of the first system (another set of systems)"
    )
    args = parser.parse_args()
    print(json.dumps(calibrate(args.systems, args.processes, args.steps, args.moves, args.first_seed), indent=2))


if __name__ == "__main__":
    main()
