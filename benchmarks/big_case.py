"""The big case: ten 2-min sectors with a GP, 200 RVs from two spectrographs, two planets; one full run.

Run ``python benchmarks/big_case.py --cores 2`` (about as long as the demo
times the points near transits: run it on an idle machine). The data are the
demo generator's system (:mod:`planetfit.demo.generate`: the spotted K dwarf,
transiting b, RV-only c, spot activity in light and RVs) over ten
consecutive 27-day sectors at 2-min cadence (about 190,000 points) and 100
RVs per spectrograph, written from the generator's seed; the config is the
demo's (GP photometry within 3.5 h of transits, rotation GP on the RVs)
without its 30-min camera. Prints one JSON document: ``seconds_in_all``
(wall), ``cpu_seconds_in_all``, ``phase_seconds`` and the run's convergence
facts, with the machine's load average.
"""

import argparse
import json
import os
import tempfile
from pathlib import Path

import yaml
from clock import timed_run  # beside this script

from planetfit.demo import DEMO_CONFIG, generate

SECTORS = [("camera-2min", 3000.0 + 27.4 * i, 27.0, 2.0, 420.0) for i in range(10)]
SPECTROGRAPHS = [("spectrograph-a", 100, 1.2, 1.0, -12.3, 1.0), ("spectrograph-b", 100, 1.8, 1.6, 31.0, 0.7)]


def write_case(folder):
    """The big case's tables (the demo generator with more sectors and RVs) and config; returns the config path."""
    saved = generate.SECTORS, generate.SPECTROGRAPHS
    generate.SECTORS, generate.SPECTROGRAPHS = SECTORS, SPECTROGRAPHS
    try:
        generate.write(folder)
    finally:
        generate.SECTORS, generate.SPECTROGRAPHS = saved
    config = yaml.safe_load(DEMO_CONFIG.read_text())
    config["system"] = "Keldra-4, ten sectors"
    config["photometry"] = [block for block in config["photometry"] if block["name"] == "camera-2min"]
    for block in config["photometry"] + config["velocities"]:
        block["file"] = str(folder / Path(block["file"]).name)
    config["output"] = str(folder / "run")
    path = folder / "big-case.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--cores", type=int, default=2)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="planetfit-big-case-") as tmp:
        path = write_case(Path(tmp))
        summary, wall, cpu = timed_run(path, cores=args.cores)
    s = summary["sampling"]
    keys = ("converged", "walkers", "steps", "autocorr_steps", "min_bulk_ess", "rhat_max", "phase_seconds")
    report = {
        "cores": args.cores,
        "seconds_in_all": round(wall, 1),
        "cpu_seconds_in_all": round(cpu, 1),
        **{k: s.get(k) for k in keys},
        "points": {name: counts.get("points") for name, counts in summary["data"].items()},
        "warnings": s.get("warnings"),
        "load_average_at_end": [round(x, 2) for x in os.getloadavg()],
    }
    print(json.dumps(report, indent=2))


if __name__ == "__main__":
    main()
