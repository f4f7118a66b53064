"""Speed of a GP fit on two sectors of 2-min photometry (~37,000 points, no transit windows).

A transiting planet (radius ratio 0.03, P = 5.3 d) on a spotted star
(rotation 11 d, variability ~3000 ppm, white noise 600 ppm per point); the
fit uses ``baseline: gp`` (SHO kernel) over every point and runs to
convergence or ``--max-steps``. Prints wall time, CPU time of the parent
and its workers, load average, convergence and the recovered radius ratio.

Usage: python benchmarks/gp_two_sectors.py [--cores 2] [--max-steps 6000]
"""

import argparse
import json
import os
import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import yaml

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from synthetic import STAR, light_curve, planet_truth  # noqa: E402

from planetfit import pipeline
from planetfit.core.units import PPM  # noqa: E402
from planetfit.demo.generate import quasi_periodic, sector_times  # noqa: E402

PLANET = planet_truth(5.3, 2460001.7, 0.0, radius_ratio=0.03, impact=0.2)
NOISE_PPM = 600.0


def two_sector_config(system, seed, planet, photometry, sampling):
    """The config of a two-sector GP fit: the synthetic star, ``planet`` (truth; its K fixed at 0 when 0), one
    photometry block and the sampling settings (two optimiser starts unless given)."""
    p = planet
    return {
        "system": system,
        "seed": seed,
        "output": "run",
        "star": {
            "mass_msun": {"normal": [STAR["mass_msun"], 0.03]},
            "radius_rsun": {"normal": [STAR["radius_rsun"], 0.02]},
            "teff_k": {"normal": [5400, 80]},
        },
        "planets": {
            "b": {
                "period_days": {"uniform": [p["period_days"] - 0.005, p["period_days"] + 0.005]},
                "transit_bjd": {"uniform": [p["transit_bjd"] - 0.03, p["transit_bjd"] + 0.03]},
                "radius_ratio": {"uniform": [0.005, 0.1]},
                "impact": {"uniform": [0.0, 1.0]},
                "rv_amplitude_ms": {"uniform": [0.0, 20.0]} if p["rv_amplitude_ms"] else 0.0,
            }
        },
        "photometry": [photometry],
        "sampling": {"optimiser_starts": 2, **sampling},
    }


def write(folder, seed=7, max_steps=6000):
    rng = np.random.default_rng(seed)
    t = np.concatenate([sector_times(2460000.0, 27.0, 2.0), sector_times(2460027.9, 27.0, 2.0)])
    flux = (
        light_curve(t, {"b": PLANET}, 2.0)
        + quasi_periodic(t, 11.0, 3000 * PPM, rng, 22.0)
        + rng.normal(0, NOISE_PPM * PPM, t.size)
    )
    np.savetxt(
        folder / "phot.csv",
        np.column_stack([t, flux, np.full(t.size, NOISE_PPM * PPM)]),
        delimiter=",",
        header="bjd,flux,flux_err",
        comments="",
        fmt="%.8f",
    )
    photometry = {
        "name": "cam",
        "file": "phot.csv",
        "columns": {"time": "bjd", "flux": "flux", "error": "flux_err"},
        "exposure_min": 2.0,
        "baseline": "gp",
        "limb_darkening_q1": {"truncnormal": [0.42, 0.1, 0.0, 1.0]},
        "limb_darkening_q2": {"truncnormal": [0.34, 0.1, 0.0, 1.0]},
    }
    config = two_sector_config(
        "Two-sector", seed, PLANET, photometry, {"walkers": 32, "max_steps": max_steps, "check_every": 200}
    )
    (folder / "config.yaml").write_text(yaml.safe_dump(config, sort_keys=False))
    return folder / "config.yaml", t.size


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cores", type=int, default=2)
    parser.add_argument("--max-steps", type=int, default=6000)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        config, points = write(Path(tmp), max_steps=args.max_steps)
        load_start = os.getloadavg()[0]
        start = time.perf_counter()
        run_dir = pipeline.run(config, quiet=True, figures=False, cores=args.cores).path
        wall = time.perf_counter() - start
        summary = json.loads((run_dir / "summary.json").read_text())
    usage = [resource.getrusage(w) for w in (resource.RUSAGE_SELF, resource.RUSAGE_CHILDREN)]
    print(
        json.dumps(
            {
                "points": points,
                "cores": args.cores,
                "wall_s": round(wall, 1),
                "cpu_s_parent_and_workers": round(sum(u.ru_utime + u.ru_stime for u in usage), 1),
                "load_average_1min": [load_start, os.getloadavg()[0]],
                "sampling": summary["sampling"],
                "radius_ratio": summary["planets"]["b"]["radius_ratio"],
                "truth": PLANET["radius_ratio"],
            },
            indent=1,
        )
    )


if __name__ == "__main__":
    main()
