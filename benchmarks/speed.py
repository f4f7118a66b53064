"""Speed and memory of planetfit on one fixed synthetic system; prints one JSON document.

Run ``python benchmarks/speed.py`` (``--sections evaluation`` for the
evaluation figures alone, a minute). The dataset is written from a fixed seed
with the demo generator's true system: two 27-day sectors at 2-min cadence,
one at 30-min cadence, 60 RVs from two spectrographs, one transiting planet
and one seen only in RVs, white noise. Everything is measured in one process, the
contenders interleaved round by round (best round kept), with BLAS limited to
one thread as :func:`planetfit.fitting.sampling.mcmc.run_sampler` does.

Figures
-------
ratio_vs_plain
    Log-probability evaluations per second of ``LogProbability`` (walkers in
    batches of 28, as emcee proposes them for 56 walkers) over those of
    a hand-written reference: one ``batman.TransitModel`` over all photometry,
    15 sub-exposures of 30 min everywhere, radvel Keplerians, numpy sums.
overhead_vs_floor
    planetfit's time per evaluation over the time of batman's two compiled
    kernels alone (``_rsky``, ``_quadratic_ld``) on the same in-window,
    supersampled points.
independent_samples_per_second
    Of a full ``pipeline.run`` of the dataset (figures off).
demo
    The whole demo with the defaults and as it ran before issue 26
    (:mod:`demo_speed`: ``seconds_in_all``, ``phase_seconds``, ``min_bulk_ess``,
    ``speedup_vs_sampled_linear``); with ``--demo-samplers`` also its two
    samplers side by side (``gain_vs_de_only``).
memory
    Peak resident memory of a short fit of ten 2-min sectors (~190,000
    points), in a fresh process; and (``whole_run_gp``, :mod:`memory_gp`) of a
    whole run, figures and report included, of two 2-min sectors (34,344
    points, ``baseline: gp``) and 40 RVs, then of its redraw facing 432,000
    kept samples (goal: under 2 GB).
hot_giant
    The hot-giant example's evaluation cost (transit, eclipse, phase curve,
    RVs) over batman's kernels on the same points (``planet_light_speed.py``).
"""

import argparse
import json
import math
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import batman
import memory_gp  # beside this script
import numpy as np
import yaml
from batman import _quadratic_ld, _rsky
from clock import race  # beside this script
from demo_speed import demo_figures
from radvel import kepler, orbit
from threadpoolctl import threadpool_limits

from planetfit import pipeline
from planetfit.core.geometry import CIRCULAR_OMEGA_RAD, eccentricity_omega, solve_orbit
from planetfit.core.units import MINUTES_PER_DAY, PPM, R_EARTH_M, R_SUN_M
from planetfit.demo import generate
from planetfit.fitting.components.transit import quadratic_coefficients
from planetfit.fitting.log_probability import LogProbability

POSITIONS = 28  # parameter vectors per batch: half of 56 walkers, as emcee's moves propose them
NAIVE_SUPERSAMPLE = 15  # sub-exposures of the plain reference, everywhere
NAIVE_EXPOSURE_MIN = 30.0
MEMORY_SECTORS = 10
SEED = 20261201
SECTOR_DAYS = 27.0
# Sectors: (dataset, start BTJD, cadence min, white noise ppm); spectrographs: (name, points, error,
# jitter, offset; m/s). The transit and orbits are the demo generator's TRUTH.
SECTORS = [
    ("camera-30min", 2400.0, 30.0, 110.0),
    ("camera-2min", 3000.0, 2.0, 420.0),
    ("camera-2min", 3027.4, 2.0, 420.0),
]
SPECTROGRAPHS = [("spectrograph-a", 35, 1.2, 1.5, -12.3), ("spectrograph-b", 25, 1.8, 2.4, 31.0)]
_LOG_2PI = math.log(2 * math.pi)


def machine():
    """CPU model, core count and load average."""
    model = "unknown"
    with open("/proc/cpuinfo") as fh:
        for line in fh:
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    return {
        "cpu": model,
        "cores": os.cpu_count(),
        "load_average_1_5_15_min": [round(x, 2) for x in os.getloadavg()],
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "batman": batman.__version__,
    }


def write_dataset(folder, sectors=SECTORS, sampling=None):
    """Light curves, RVs and a config for the benchmark system; returns the config path.

    Transits and Keplerians come from the demo generator's true system
    (batman's ``TransitModel``, radvel); white noise from :data:`SEED`.
    """
    folder.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(SEED)
    columns = {"time": "time", "flux": "flux", "error": "flux_err"}
    tables, photometry = {}, []
    for name, start, cadence_min, noise_ppm in sectors:
        t = generate.sector_times(start, SECTOR_DAYS, cadence_min)
        flux = generate.light_curve(t + generate.BTJD_OFFSET, cadence_min) + rng.normal(0, noise_ppm * PPM, t.size)
        tables.setdefault(name, []).append(np.column_stack([t, flux, np.full(t.size, noise_ppm * PPM)]))
        if len(tables[name]) == 1:
            photometry.append(
                {
                    "name": name,
                    "file": f"{name}.csv",
                    "columns": columns,
                    "time_offset_days": generate.BTJD_OFFSET,
                    "exposure_min": cadence_min,
                    "band": "camera",
                    "jitter_ppm": 0,
                }
            )
    for name, parts in tables.items():
        np.savetxt(
            folder / f"{name}.csv",
            np.concatenate(parts),
            delimiter=",",
            fmt="%.8f",
            header="time,flux,flux_err",
            comments="",
        )
    photometry[0].update(
        limb_darkening_q1={"truncnormal": [0.45, 0.1, 0.0, 1.0]},
        limb_darkening_q2={"truncnormal": [0.37, 0.1, 0.0, 1.0]},
    )
    velocities = []
    for name, n, error_ms, jitter_ms, offset_ms in SPECTROGRAPHS:
        t = np.sort(rng.uniform(*generate.RV_SPAN_BJD, n))
        rv = generate.radial_velocity(t) + offset_ms + rng.normal(0, np.hypot(error_ms, jitter_ms), n)
        np.savetxt(
            folder / f"{name}.txt",
            np.column_stack([t, rv, np.full(n, error_ms)]),
            fmt="%.6f",
            header="time rv error",
            comments="",
        )
        velocities.append(
            {
                "name": name,
                "file": f"{name}.txt",
                "columns": {"time": "time", "rv": "rv", "error": "error"},
                "offset_ms": {"uniform": [offset_ms - 50, offset_ms + 50]},
                "jitter_ms": {"loguniform": [0.01, 20]},
            }
        )
    config = {
        "system": "Speed-1",
        "seed": 7,
        "output": "run",
        "star": {
            "mass_msun": {"normal": [0.78, 0.03]},
            "radius_rsun": {"normal": [0.74, 0.02]},
            "teff_k": {"normal": [4900, 80]},
        },
        "planets": {
            "b": {
                "period_days": {"uniform": [6.134, 6.140]},
                "transit_bjd": {"uniform": [2460003.35, 2460003.48]},
                "radius_ratio": {"uniform": [0.005, 0.06]},
                "impact": {"uniform": [0.0, 1.0]},
                "rv_amplitude_ms": {"uniform": [0.0, 10.0]},
                "orbit": "circular",
            },
            "c": {
                "transits": False,
                "period_days": {"uniform": [41.0, 44.0]},
                "transit_bjd": {"uniform": [2460015.0, 2460028.0]},
                "rv_amplitude_ms": {"uniform": [0.0, 15.0]},
                "orbit": "eccentric",
            },
        },
        "photometry": photometry,
        "velocities": velocities,
        "sampling": sampling or {"walkers": 56, "max_steps": 15000},
    }
    path = folder / "config.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path


def true_values(log_prob):
    """Physical value of every free parameter at the generator's truth (flux levels 1)."""
    t = generate.TRUTH
    u1, u2 = t["limb_darkening_u"]
    e, w = t["c"]["e"], math.radians(t["c"]["omega_deg"])
    values = {
        "star.mass_msun": t["star"]["mass_msun"],
        "star.radius_rsun": t["star"]["radius_rsun"],
        "b.radius_ratio": t["b"]["radius_earth"] * R_EARTH_M / (t["star"]["radius_rsun"] * R_SUN_M),
        "b.impact": t["b"]["impact"],
        "c.sqrt_e_cos_w": math.sqrt(e) * math.cos(w),
        "c.sqrt_e_sin_w": math.sqrt(e) * math.sin(w),
        "camera.limb_darkening_q1": (u1 + u2) ** 2,
        "camera.limb_darkening_q2": u1 / (2 * (u1 + u2)),
    }
    for p in ("b", "c"):
        for key in ("period_days", "transit_bjd", "rv_amplitude_ms"):
            values[f"{p}.{key}"] = t[p][key]
    for name, _, _, jitter, offset in SPECTROGRAPHS:
        values[f"{name}.offset_ms"], values[f"{name}.jitter_ms"] = offset, jitter
    for d in log_prob.photometry:
        values[f"{d.name}.flux_level"] = 1.0
    return np.array([values[n] for n in log_prob.layout.free])


def positions(log_prob, n, seed=1):
    """``n`` sampler-coordinate vectors scattered by 1e-4 of the prior widths around the truth."""
    _, scale, _, _ = log_prob.layout.geometry()
    centre = log_prob.layout.to_sampler(true_values(log_prob))
    rng = np.random.default_rng(seed)
    out = centre + 1e-4 * scale * rng.standard_normal((n, centre.size))
    assert all(math.isfinite(log_prob(x)) for x in out), "benchmark positions must have finite probability"
    return out


class PlainLogProbability:
    """The joint log-probability written by hand, as a user would without planetfit.

    Parameters
    ----------
    log_prob : LogProbability
        Supplies the data, the parameter layout and the prior (shared, so
        both compute the same log-probability).
    groups : list of (dataset indices, supersample, exposure_days)
        One ``batman.TransitModel`` per group over the concatenated times.

    Notes
    -----
    Transiting planets on circular orbits, one limb-darkening band, as in
    the benchmark system.
    """

    def __init__(self, log_prob, groups):
        self.layout, self.planets, self.velocities = log_prob.layout, log_prob.planets, log_prob.velocities
        self.params = batman.TransitParams()
        p = self.params  # placeholders until the first call; circular orbits
        p.t0, p.per, p.rp, p.a, p.inc, p.ecc, p.w = 0.0, 1.0, 0.01, 10.0, 90.0, 0.0, 90.0
        p.u, p.limb_dark = [0.4, 0.2], "quadratic"
        self.groups = []
        for idx, supersample, exposure in groups:
            data = [log_prob.photometry[i] for i in idx]
            t = np.concatenate([d.time for d in data])
            model = batman.TransitModel(p, t, supersample_factor=supersample, exp_time=exposure)
            self.groups.append(
                (
                    model,
                    np.concatenate([d.flux for d in data]),
                    np.concatenate([d.error for d in data]) ** 2,
                    data,
                    [d.time.size for d in data],
                )
            )

    def __call__(self, theta):
        lp = self.layout.log_prior(theta)
        if not math.isfinite(lp):
            return -math.inf
        v = self.layout.values(theta)
        p, ll = self.params, 0.0
        for planet in self.planets:
            if planet.transits:
                n = planet.name
                k = v[f"{n}.radius_ratio"]
                a_r, cos_i, _ = solve_orbit(
                    v[f"{n}.period_days"],
                    v[f"{n}.rv_amplitude_ms"],
                    v[f"{n}.impact"],
                    0.0,
                    CIRCULAR_OMEGA_RAD,
                    v["star.mass_msun"],
                    v["star.radius_rsun"],
                )
                if v[f"{n}.impact"] >= 1 + k or a_r <= 1 + k:
                    return -math.inf
                p.t0, p.per, p.rp, p.a = v[f"{n}.transit_bjd"], v[f"{n}.period_days"], k, a_r
                p.inc = math.degrees(math.acos(cos_i))
        band = self.groups[0][3][0].band
        p.u = list(quadratic_coefficients(v[f"{band}.limb_darkening_q1"], v[f"{band}.limb_darkening_q2"]))
        for model, flux, error2, data, sizes in self.groups:
            lc = model.light_curve(p)
            level = np.repeat([v[f"{d.name}.flux_level"] for d in data], sizes)
            jitter = np.repeat([v[f"{d.name}.jitter_ppm"] * PPM for d in data], sizes)
            var = error2 + jitter**2
            r = flux - level * lc
            ll += -0.5 * np.sum(r * r / var + np.log(var) + _LOG_2PI)
        for d in self.velocities:
            rv = np.zeros(d.time.size)
            for planet in self.planets:
                n = planet.name
                if planet.orbit.eccentric:
                    e, w = eccentricity_omega(v[f"{n}.sqrt_e_cos_w"], v[f"{n}.sqrt_e_sin_w"])
                else:
                    e, w = 0.0, CIRCULAR_OMEGA_RAD
                tp = orbit.timetrans_to_timeperi(v[f"{n}.transit_bjd"], v[f"{n}.period_days"], e, w)
                rv += kepler.rv_drive(d.time, np.array([v[f"{n}.period_days"], tp, e, w, v[f"{n}.rv_amplitude_ms"]]))
            var = d.error**2 + v[f"{d.name}.jitter_ms"] ** 2
            r = d.rv - v[f"{d.name}.offset_ms"] - rv
            ll += -0.5 * np.sum(r * r / var + np.log(var) + _LOG_2PI)
        return lp + ll


def kernel_calls(log_prob, theta):
    """Arguments of every batman kernel call planetfit makes for ``theta`` (in-window, supersampled)."""
    v = log_prob.layout.values(theta)
    orbits = log_prob.orbits(v)
    calls = []
    for d, model in zip(log_prob.photometry, log_prob.model.photometry):
        u1, u2 = quadratic_coefficients(v[f"{d.band}.limb_darkening_q1"], v[f"{d.band}.limb_darkening_q2"])
        for p, lc in ((t.planet, t.light_curve) for t in model.terms):
            o, n = orbits[p.name], p.name
            per, t0, k = v[f"{n}.period_days"], v[f"{n}.transit_bjd"], v[f"{n}.radius_ratio"]
            sin_i = math.sqrt(1 - o.cos_i**2)
            idx = lc.window(per, t0, lc.half_window_days(per, o.a_over_rstar, k, sin_i, o.eccentricity, o.omega_rad))
            t = (lc.times[idx, None] + lc.offsets[None, :]).ravel()
            calls.append((t, t0, per, o.a_over_rstar, math.acos(o.cos_i), o.eccentricity, o.omega_rad, k, u1, u2))
    return calls


def floor_function(log_prob, thetas):
    """A callable running only batman's kernels for every position; and the points per evaluation."""
    calls = [call for th in thetas for call in kernel_calls(log_prob, th)]

    def run():
        for t, t0, per, a_r, inc, e, w, k, u1, u2 in calls:
            _quadratic_ld._quadratic_ld(_rsky._rsky(t, t0, per, a_r, inc, e, w, 1, 1), k, u1, u2, 1)

    return run, sum(c[0].size for c in calls) / len(thetas)


def evaluation_figures(config_path):
    checked = pipeline.check(config_path)
    log_prob = LogProbability(checked.config, checked.photometry, checked.velocities)
    thetas = positions(log_prob, POSITIONS)
    phot = checked.photometry
    naive = PlainLogProbability(
        log_prob, [(list(range(len(phot))), NAIVE_SUPERSAMPLE, NAIVE_EXPOSURE_MIN / MINUTES_PER_DAY)]
    )
    per_dataset = PlainLogProbability(
        log_prob, [([i], log_prob.model.exposures[d.name].supersample, d.exposure_days) for i, d in enumerate(phot)]
    )
    floor, floor_points = floor_function(log_prob, thetas)
    planetfit_lp = log_prob.log_prob_many(thetas)

    def one_at_a_time(fn):
        return lambda: [fn(x) for x in thetas]

    contenders = {
        "planetfit": lambda: log_prob.log_prob_many(thetas),
        "planetfit_one_at_a_time": one_at_a_time(log_prob),
        "plain": one_at_a_time(naive),
        "plain_per_dataset": one_at_a_time(per_dataset),
        "floor": floor,
    }
    default_threads = race({"planetfit": contenders["planetfit"]}, len(thetas))["planetfit"]
    with threadpool_limits(limits=1):
        t = race(contenders, len(thetas))
    return {
        "photometry_points": int(sum(d.time.size for d in phot)),
        "in_window_kernel_points_per_evaluation": round(floor_points),
        "positions_per_batch": len(thetas),
        "planetfit_evaluations_per_second": round(1 / t["planetfit"]),
        "plain_evaluations_per_second": round(1 / t["plain"], 2),
        "ratio_vs_plain": round(t["plain"] / t["planetfit"], 1),
        "ratio_vs_plain_per_dataset_supersampling": round(t["plain_per_dataset"] / t["planetfit"], 1),
        "planetfit_microseconds_per_evaluation": round(t["planetfit"] * 1e6, 1),
        "planetfit_microseconds_per_evaluation_one_at_a_time": round(t["planetfit_one_at_a_time"] * 1e6, 1),
        "floor_microseconds_per_evaluation": round(t["floor"] * 1e6, 1),
        "overhead_vs_floor": round(t["planetfit"] / t["floor"], 2),
        "planetfit_microseconds_per_evaluation_default_blas_threads": round(default_threads * 1e6, 1),
        "max_abs_logprob_difference_vs_plain_per_dataset": float(
            np.max(np.abs(planetfit_lp - [per_dataset(x) for x in thetas]))
        ),
    }


def fit_figures(config_path, cores):
    start = time.perf_counter()
    run_dir = pipeline.run(config_path, quiet=True, figures=False, cores=cores).path
    wall = time.perf_counter() - start
    s = json.loads((run_dir / "summary.json").read_text())["sampling"]
    start = time.perf_counter()
    pipeline.redraw(run_dir)
    redraw = time.perf_counter() - start
    return {
        "cores": cores,
        "walkers": s["walkers"],
        "steps": s["steps"],
        "converged": s["converged"],
        "autocorr_steps": s["autocorr_steps"],
        "independent_samples": s["independent_samples"],
        "sampling_seconds": s["seconds"],
        "fit_wall_seconds_no_figures": round(wall, 1),
        "independent_samples_per_second": round(s["independent_samples"] / s["seconds"], 2),
        "independent_samples_per_wall_second": round(s["independent_samples"] / wall, 2),
        "redraw_seconds_figures_and_tables": round(redraw, 1),
        "demo_wall_seconds": round(wall + redraw, 1),
    }


def write_memory_system(folder, max_steps):
    """Ten 2-min sectors and the benchmark RVs, a short chain; returns the config path and the photometry points."""
    sectors = [("ten-sectors", 3000.0 + 27.4 * i, 2.0, 420.0) for i in range(MEMORY_SECTORS)]
    path = write_dataset(
        folder, sectors, {"walkers": 40, "max_steps": max_steps, "check_every": 100, "optimiser_starts": 1}
    )
    return path, sum(generate.sector_times(start, SECTOR_DAYS, cadence).size for _, start, cadence, _ in sectors)


def memory_child(config_path):
    """Fit in this (fresh) process and print its peak resident memory."""
    start = time.perf_counter()
    run_dir = pipeline.run(config_path, quiet=True, figures=False).path
    s = json.loads((Path(run_dir) / "summary.json").read_text())["sampling"]
    print(
        json.dumps(
            {
                "peak_rss_mb": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1),
                "steps": s["steps"],
                "walkers": s["walkers"],
                "wall_seconds": round(time.perf_counter() - start, 1),
            }
        )
    )


def memory_figures(folder, max_steps):
    config_path, points = write_memory_system(folder, max_steps)
    out = subprocess.run([sys.executable, __file__, "--memory-child", str(config_path)], capture_output=True, text=True)
    if out.returncode:
        return {"error": out.stderr.strip().splitlines()[-10:]}
    result = json.loads(out.stdout.strip().splitlines()[-1])
    result.update(photometry_points=points, under_2_gb=result["peak_rss_mb"] < 2048)
    return result


SECTIONS = ("evaluation", "fit", "demo", "memory", "hot-giant")


def _plain(value):
    """numpy scalars (counts and flags from the sampler's result) as JSON numbers."""
    return value.item() if isinstance(value, np.generic) else str(value)


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--sections", nargs="+", choices=SECTIONS, default=list(SECTIONS))
    parser.add_argument("--cores", type=int, default=1, help="processes for the full fit")
    parser.add_argument("--memory-steps", type=int, default=200)
    parser.add_argument("--demo-samplers", action="store_true", help="also the demo's two samplers side by side")
    parser.add_argument("--memory-child", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.memory_child:
        memory_child(args.memory_child)
        return
    report = {"machine": machine()}
    folder = Path(tempfile.mkdtemp(prefix="planetfit-speed-"))
    try:
        config_path = write_dataset(folder)
        if "evaluation" in args.sections:
            report["evaluation"] = evaluation_figures(config_path)
        if "fit" in args.sections:
            report["fit"] = fit_figures(config_path, args.cores)
        if "demo" in args.sections:
            report["demo"] = demo_figures(args.cores, samplers=args.demo_samplers)
        if "memory" in args.sections:
            report["memory"] = memory_figures(folder / "memory", args.memory_steps)
            report["memory"]["whole_run_gp"] = memory_gp.memory_figures()
        if "hot-giant" in args.sections:
            from planet_light_speed import hot_giant_figures  # beside this script

            report["hot_giant"] = hot_giant_figures()
    finally:
        shutil.rmtree(folder, ignore_errors=True)
    report["load_average_at_end"] = [round(x, 2) for x in os.getloadavg()]
    print(json.dumps(report, indent=2, default=_plain))


if __name__ == "__main__":
    main()
