"""Peak resident memory of a whole run, figures and report included, of two 2-min sectors fitted with a GP.

The system: two sectors of 2-min photometry (34,344 points in two FITS light
curves in the mission layout) of a spotted star with one transiting planet
(radius ratio 0.03, P = 5.3 d), fitted with ``baseline: gp``, and 40 RVs.
Two processes are measured with ``/usr/bin/time -v`` (maximum resident set
size; the kernel's own count):

run
    ``planetfit run`` with a short chain (``--max-steps``): reading,
    optimiser, sampling, derived quantities, figures, report.html.
redraw_large_chain
    The run's samples.h5 lengthened to ``--kept-steps`` steps of its
    walkers (steps drawn from its own chain), every step kept (no burn-in,
    no thinning), then ``planetfit redraw``: the whole output stage facing
    ``kept_steps x walkers`` samples, as after a long run (the run that
    ran out of memory kept 10,800 steps of 40 walkers).

Usage: python benchmarks/memory_gp.py [--max-steps 40] [--kept-steps 10800]
"""

import argparse
import json
import os
import re
import resource
import subprocess
import sys
import tempfile
from pathlib import Path

import h5py
import numpy as np
import yaml
from astropy.io import fits

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from gp_two_sectors import two_sector_config  # noqa: E402 (beside this script)
from synthetic import BTJD, light_curve, planet_truth, radial_velocity  # noqa: E402

from planetfit.core.units import PPM  # noqa: E402
from planetfit.demo.generate import quasi_periodic, sector_times  # noqa: E402

PLANET = planet_truth(5.3, 2460001.7, 4.0, radius_ratio=0.03, impact=0.2)
NOISE_PPM, RV_ERROR_MS, RV_POINTS, WALKERS = 600.0, 1.5, 40, 40
#: Two sectors whose 2-min exposures number 34,344 (the case of issue 29 had 34,350).
SECTORS = ((2460000.0, 24.85), (2460025.6, 24.85))
LIMIT_MB = 2048
#: Address space allowed to each measured process, so a regression ends in a MemoryError, not the machine's OOM.
ADDRESS_SPACE_CAP_BYTES = 8 * 1024**3


def _write_fits(path, t, flux, error):
    """A light curve in the mission layout: time from BJDREFI + BJDREFF (TDB), flux and error in e-/s, quality."""
    level = 20000.0
    columns = [
        fits.Column(name="TIME", format="D", array=t - BTJD),
        fits.Column(name="PDCSAP_FLUX", format="E", array=(flux * level).astype(np.float32)),
        fits.Column(name="PDCSAP_FLUX_ERR", format="E", array=np.full(t.size, error * level, np.float32)),
        fits.Column(name="QUALITY", format="J", array=np.zeros(t.size, np.int32)),
    ]
    table = fits.BinTableHDU.from_columns(columns, name="LIGHTCURVE")
    table.header.update(TIMESYS="TDB", BJDREFI=int(BTJD), BJDREFF=0.0, TIMEUNIT="d")
    fits.HDUList([fits.PrimaryHDU(), table]).writeto(path, overwrite=True)


def write(folder, max_steps, seed=7):
    """Write the light curves, the RVs and config.yaml into ``folder``; return the config path and the points."""
    rng = np.random.default_rng(seed)
    files, points = [], 0
    for k, (start, days) in enumerate(SECTORS):
        t = sector_times(start, days, 2.0)
        flux = (
            light_curve(t, {"b": PLANET}, 2.0)
            + quasi_periodic(t, 11.0, 3000 * PPM, rng, 22.0)
            + rng.normal(0, NOISE_PPM * PPM, t.size)
        )
        files.append(f"sector{k + 1}.fits")
        _write_fits(folder / files[-1], t, flux, NOISE_PPM * PPM)
        points += t.size
    t_rv = np.sort(rng.uniform(2459990.0, 2460120.0, RV_POINTS))
    rv = radial_velocity(t_rv, {"b": PLANET}) + rng.normal(0, RV_ERROR_MS, RV_POINTS)
    np.savetxt(
        folder / "rv.txt",
        np.column_stack([t_rv, rv, np.full(RV_POINTS, RV_ERROR_MS)]),
        header="bjd rv err",
        comments="",
    )
    photometry = {
        "name": "cam",
        "file": files,
        "columns": {"time": "TIME", "flux": "PDCSAP_FLUX", "error": "PDCSAP_FLUX_ERR"},
        "quality_column": "QUALITY",
        "exposure_min": 2.0,
        "baseline": "gp",
    }
    sampling = {"walkers": WALKERS, "max_steps": max_steps, "check_every": 20, "optimiser_starts": 1}
    config = two_sector_config("Two-sector-GP", seed, PLANET, photometry, sampling)
    config["velocities"] = [
        {
            "name": "spec",
            "file": "rv.txt",
            "columns": {"time": "bjd", "rv": "rv", "error": "err"},
            "offset_ms": {"uniform": [-30, 30]},
            "jitter_ms": {"loguniform": [0.01, 10]},
        }
    ]
    (folder / "config.yaml").write_text(yaml.safe_dump(config, sort_keys=False))
    return folder / "config.yaml", points


def lengthen_chain(h5_path, steps, seed=1):
    """Make samples.h5 hold ``steps`` steps (each drawn from its second half) and keep every one of them."""
    rng = np.random.default_rng(seed)
    with h5py.File(h5_path, "a") as fh:
        chain = fh["chain"]
        old = int(chain.attrs["iteration"])
        picks = np.sort(rng.integers(old // 2, old, steps))
        for name in ("chain", "log_prob"):
            data = chain[name][:old][picks]
            chain[name].resize(steps, axis=0)
            chain[name][...] = data
        chain.attrs["iteration"] = steps
        facts = json.loads(fh["planetfit"].attrs["sampling_json"])
        facts.update(discard=0, thin=1, steps=steps)
        fh["planetfit"].attrs["sampling_json"] = json.dumps(facts)
        walkers = int(chain.attrs["nwalkers"])
    return steps * walkers


def _capped():
    resource.setrlimit(resource.RLIMIT_AS, (ADDRESS_SPACE_CAP_BYTES, ADDRESS_SPACE_CAP_BYTES))


def measured(args, cwd):
    """Run ``planetfit ARGS`` under /usr/bin/time -v; its exit code, peak RSS (MB), CPU seconds and error tail."""
    proc = subprocess.run(
        ["/usr/bin/time", "-v", sys.executable, "-m", "planetfit.cli", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        env=dict(os.environ, OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1"),
        preexec_fn=_capped,
    )
    err = proc.stderr
    rss_kb = int(re.search(r"Maximum resident set size \(kbytes\): (\d+)", err).group(1))
    user = float(re.search(r"User time \(seconds\): ([\d.]+)", err).group(1))
    system = float(re.search(r"System time \(seconds\): ([\d.]+)", err).group(1))
    wall = re.search(r"Elapsed \(wall clock\) time \(h:mm:ss or m:ss\): (\S+)", err).group(1)
    out = {"exit_code": proc.returncode, "peak_rss_mb": round(rss_kb / 1024, 1), "cpu_seconds": round(user + system, 1)}
    out["wall"] = wall
    if proc.returncode:
        out["error"] = [line for line in err.splitlines() if "\t" not in line][-8:]
    return out


def memory_figures(max_steps=40, kept_steps=10800):
    """Both measurements, in a temporary folder; returns a dict of figures."""
    with tempfile.TemporaryDirectory(prefix="planetfit-memory-") as tmp:
        folder = Path(tmp)
        config, points = write(folder, max_steps)
        report = {"photometry_points": points, "rv_points": RV_POINTS, "walkers": WALKERS}
        report["run"] = measured(["run", str(config), "--quiet"], folder)
        if report["run"]["exit_code"]:
            return report
        report["kept_samples"] = lengthen_chain(folder / "run" / "samples.h5", kept_steps)
        report["redraw_large_chain"] = measured(["redraw", str(folder / "run")], folder)
        report["figures_written"] = len(list((folder / "run" / "figures").glob("*.png")))
        report["report_written"] = (folder / "run" / "report.html").exists()
    peak = max(report["run"]["peak_rss_mb"], report["redraw_large_chain"]["peak_rss_mb"])
    report.update(peak_rss_mb=peak, under_2_gb=peak < LIMIT_MB, load_average=[round(x, 2) for x in os.getloadavg()])
    return report


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--max-steps", type=int, default=40, help="steps of the fitted chain")
    parser.add_argument("--kept-steps", type=int, default=10800, help="steps of the chain the redraw faces")
    args = parser.parse_args()
    print(json.dumps(memory_figures(args.max_steps, args.kept_steps), indent=1))


if __name__ == "__main__":
    main()
