"""Planning benchmark: ``planetfit plan`` on a finished demo run, its time and how the plan moves with the count.

Run with ``python benchmarks/plan_demo.py RUNDIR`` (a folder written by ``planetfit demo``; without one the
demo is fitted first into ./planetfit-demo, a few minutes on 2 cores). Prints figures, asserts nothing:
the wall time of the whole command (reading the run included), whether the median mass precision falls
with every count, and how the probability of a decisive verdict moves.
"""

import argparse
import json
import time
from pathlib import Path

from planetfit.cli import main


def _fit_demo(out):
    if not (out / "summary.json").exists():
        main(["demo", "--out", str(out), "--quiet", "--no-figures"])
    return out


def run(run_dir, counts):
    start = time.perf_counter()
    code = main(["plan", str(run_dir), "--counts", *map(str, counts)])
    seconds = time.perf_counter() - start
    plan = json.loads((Path(run_dir) / "plan" / "plan.json").read_text())
    figures = {"exit_code": code, "wall_seconds": round(seconds, 1), "plan_seconds": plan["seconds"]}
    for name, p in plan["planets"].items():
        precision = [r["mass_precision"]["median"] for r in p["counts"]]
        figures[name] = {
            "mass_precision_median": [round(x, 4) for x in precision],
            "precision_falls_with_count": all(b < a for a, b in zip(precision, precision[1:])),
        }
        if p["transits"]:
            decisive = [r["p_decisive"] for r in p["counts"]]
            figures[name].update(
                p_decisive=decisive,
                p_decisive_never_falls=all(b >= a for a, b in zip(decisive, decisive[1:])),
                p_rocky_now=p["now"]["p_rocky"],
                verdict_reweighted_fraction=[r["verdict_reweighted_fraction"] for r in p["counts"]],
            )
    print(json.dumps(figures, indent=2))


if __name__ == "__main__":
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("rundir", nargs="?", type=Path)
    parser.add_argument("--counts", type=int, nargs="+", default=[10, 20, 40, 80, 160])
    args = parser.parse_args()
    run(args.rundir or _fit_demo(Path("planetfit-demo")), args.counts)
