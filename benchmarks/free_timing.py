"""Twelve transits with free transit times: the samplers side by side on one system (issue 26).

The system is the one of ``tests/end_to_end/test_transit_times.py``: 12
transits of a 3-day planet at 5-min cadence and 1,000 ppm, an injected
sinusoidal TTV of 10 minutes, ``transit_times: free`` (one offset per
transit) and 64 walkers; the star has its normal priors (the test fixes it):
19 sampled parameters. Each sampler runs the same
config from the same seed, one after the other in this process, to
planetfit's stopping rule or ``--steps``.

Usage: python benchmarks/free_timing.py [--moves M [M ...]] [--steps S] [--cores C]
Prints one JSON object: per sampler, the steps, the largest autocorrelation
time (steps) and the three slowest parameters', the smallest bulk effective
sample size, whether it converged, and its wall and CPU seconds.
"""

import argparse
import json
import sys
import tempfile
from pathlib import Path

import yaml
from clock import timed_run  # beside this script

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # the repository root, for tests.*

from tests.end_to_end.test_transit_times import write_ttv_system  # noqa: E402
from tests.synthetic import STAR, star_priors  # noqa: E402

WALKERS, TTV_MINUTES, SEED = 64, 10.0, 1


def run_once(folder, moves, steps, cores):
    """Fit the system with ``sampling.moves: moves``; the sampler's figures from summary.json."""
    folder.mkdir(parents=True)
    path, _ = write_ttv_system(folder, TTV_MINUTES, SEED, steps=steps)
    config = yaml.safe_load(Path(path).read_text())
    config["sampling"].update(walkers=WALKERS, moves=moves)
    config["star"] = star_priors(STAR, 5400)
    Path(path).write_text(yaml.safe_dump(config, sort_keys=False))
    summary, wall, cpu = timed_run(path, figures=False, cores=cores)
    s = summary["sampling"]
    keys = ("converged", "steps", "burn_in_steps", "autocorr_steps", "min_bulk_ess", "acceptance_fraction")
    taus = {name: d["autocorr_steps"] for name, d in s["parameter_diagnostics"].items()}
    slowest = dict(sorted(taus.items(), key=lambda item: -item[1])[:3])
    return {k: s.get(k) for k in keys} | {
        "slowest_autocorr_steps": slowest,
        "seconds": round(wall, 1),
        "cpu_seconds": round(cpu, 1),
    }


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--moves", nargs="+", default=["differential_evolution", "fitted_proposal"])
    parser.add_argument("--steps", type=int, default=20000, help="step cap of each fit")
    parser.add_argument("--cores", type=int, default=1)
    args = parser.parse_args()
    out = {}
    with tempfile.TemporaryDirectory(prefix="planetfit-free-timing-") as tmp:
        for moves in args.moves:
            out[moves] = run_once(Path(tmp) / moves, moves, args.steps, args.cores)
            print(json.dumps({moves: out[moves]}), file=sys.stderr, flush=True)
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
