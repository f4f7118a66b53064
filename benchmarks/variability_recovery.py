"""Injection-recovery on spotted stars over several seeds: GP baseline against constant baseline.

Each seed writes the light curve of ``tests/variability.py`` (a transit of
radius ratio 0.045 under quasi-periodic variability of ~4x the depth),
fits it with ``baseline: gp`` and with ``baseline: constant`` (free
jitter), and prints the radius ratio of each, its distance from the truth
in posterior sigmas, and the best log-probability of each chain.

Usage: python benchmarks/variability_recovery.py [--seeds 101 102 103 104 105] [--cores 1] [--max-steps 8000]
Prints one JSON object.
"""

import argparse
import json
import os
import sys
import tempfile
import time
from pathlib import Path

import emcee

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from variability import TRANSITING, write_spotted_star  # noqa: E402

from planetfit import pipeline


def fit(folder, seed, baseline, cores, max_steps):
    start, cpu = time.perf_counter(), time.process_time()
    run_dir = pipeline.run(
        write_spotted_star(folder / baseline, seed, baseline, max_steps=max_steps),
        quiet=True,
        figures=False,
        cores=cores,
    ).path
    summary = json.loads((run_dir / "summary.json").read_text())
    k = summary["planets"]["b"]["radius_ratio"]
    chain = emcee.backends.HDFBackend(str(run_dir / "samples.h5"), name="chain", read_only=True)
    sigma = 0.5 * (k["upper"] - k["lower"])
    return {
        "radius_ratio": k,
        "sigmas_from_truth": round(abs(k["median"] - TRANSITING["radius_ratio"]) / sigma, 2),
        "best_log_prob": round(float(chain.get_log_prob().max()), 1),
        "converged": summary["sampling"]["converged"],
        "wall_s": round(time.perf_counter() - start, 1),
        "parent_cpu_s": round(time.process_time() - cpu, 1),
    }


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, nargs="+", default=[101, 102, 103, 104, 105])
    parser.add_argument("--cores", type=int, default=1)
    parser.add_argument("--max-steps", type=int, default=8000, help="upper limit; chains stop when converged")
    args = parser.parse_args()
    out = {
        "truth_radius_ratio": TRANSITING["radius_ratio"],
        "max_steps": args.max_steps,
        "load_average_1min_start": os.getloadavg()[0],
        "seeds": {},
    }
    with tempfile.TemporaryDirectory() as tmp:
        for seed in args.seeds:
            folder = Path(tmp) / str(seed)
            out["seeds"][seed] = {b: fit(folder, seed, b, args.cores, args.max_steps) for b in ("gp", "constant")}
    gp = [s["gp"]["sigmas_from_truth"] for s in out["seeds"].values()]
    out["gp_within_2_sigma"] = sum(x < 2 for x in gp)
    out["constant_worse_log_prob_by_min"] = min(
        s["gp"]["best_log_prob"] - s["constant"]["best_log_prob"] for s in out["seeds"].values()
    )
    out["load_average_1min_end"] = os.getloadavg()[0]
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()
