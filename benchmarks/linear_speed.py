"""What marginalising the linear parameters costs per evaluation and gains in mixing; prints one JSON document.

Run ``python benchmarks/linear_speed.py`` (evaluation figures, about a minute) or with
``--mixing STEPS`` (adds two short fits of the demo, one per mode, STEPS steps each, a few CPU minutes).

Figures
-------
evaluation
    Per model (``demo``: planetfit/demo/demo.yaml, GP photometry and an activity GP on the RVs;
    ``demo_white``: the same data with white noise, the light curves scored from precomputed sums):
    CPU microseconds per log-probability evaluation with ``linear_parameters: sampled`` and
    ``marginalised`` on batches of 50 walkers (the demo's), the two interleaved round by round in this
    one process (best round kept), BLAS on one thread; ``ratio`` is marginalised over sampled;
    ``conditional_draw_us_per_sample``: drawing the linear parameters of one posterior sample after the fit.
mixing
    Per mode: the largest and the median integrated autocorrelation time (steps) of a fit of the demo
    cut at STEPS steps (differential evolution, the demo's walkers and optimiser starts), its CPU seconds,
    and the autocorrelation time of each flux level and RV offset (for the marginalised fit, those of the
    parameters that trade off with them are what is left). Short chains under-estimate autocorrelation
    times: compare the two modes, not either with the demo's converged run.
"""

import argparse
import json
import tempfile
import time
from pathlib import Path

import emcee
import numpy as np
import yaml
from demo_speed import cpu_seconds
from threadpoolctl import threadpool_limits

from planetfit import pipeline
from planetfit.demo import DEMO_CONFIG
from planetfit.fitting.sampling.mcmc import run_sampler

MODES = ("sampled", "marginalised")
WALKERS = 50
ROUNDS = 7


def _white(raw):
    """The demo with white noise: no GP on the light curves or the RVs (fixed errors: the sums' fast path)."""
    for block in raw["photometry"]:
        for key in ("baseline", "gp_shared_with"):
            block.pop(key, None)
    for block in raw["velocities"]:
        block.pop("activity_amplitude_ms", None)
    raw.pop("rv_activity", None)


def checked_pair(folder, edit=None):
    """The demo (changed by ``edit``) checked in each mode: {mode: Checked}."""
    raw = yaml.safe_load(Path(DEMO_CONFIG).read_text())
    raw["output"] = str(folder / "run")
    for block in raw["photometry"] + raw["velocities"]:
        block["file"] = str(Path(DEMO_CONFIG).parent / block["file"])
    if edit is not None:
        edit(raw)
    out = {}
    for mode in MODES:
        raw.setdefault("sampling", {})["linear_parameters"] = mode
        path = folder / f"{mode}.yaml"
        path.write_text(yaml.safe_dump(raw, sort_keys=False))
        out[mode] = pipeline.check(path)
    return out


def evaluation(checked):
    """CPU microseconds per evaluation in each mode, on the same points (linear ones drawn for the sampled mode)."""
    marg = checked["marginalised"].log_probability
    rng = np.random.default_rng(1)
    centre, scale, _, _ = marg.layout.geometry()
    draws = centre + 0.02 * scale * rng.standard_normal((20 * WALKERS, centre.size))
    points = {"marginalised": draws[np.isfinite(marg.log_prob_many(draws))][:WALKERS]}
    points["sampled"] = marg.complete(points["marginalised"], 1)[0]
    best = dict.fromkeys(MODES, np.inf)
    for _ in range(ROUNDS):
        for mode in MODES:
            log_prob, batch = checked[mode].log_probability, points[mode]
            start = time.process_time()
            for _ in range(3):
                log_prob.log_prob_many(batch)
            best[mode] = min(best[mode], (time.process_time() - start) / (3 * len(batch)))
    out = {f"{mode}_us": round(best[mode] * 1e6, 1) for mode in MODES}
    out["ratio"] = round(best["marginalised"] / best["sampled"], 3)
    many = np.repeat(points["marginalised"], 10, axis=0)
    start = time.process_time()
    marg.complete(many, 2)
    out["conditional_draw_us_per_sample"] = round((time.process_time() - start) / len(many) * 1e6, 1)
    return out


def mixing(checked, steps, folder, modes=MODES):
    """Autocorrelation times of a fit of ``steps`` steps in each of ``modes``, and its CPU seconds."""
    out = {}
    for mode in modes:
        c = checked[mode]
        settings = c.config.sampling.model_copy(update={"max_steps": steps})
        cpu = cpu_seconds()
        result = run_sampler(
            c.log_probability,
            c.log_probability.layout,
            settings,
            folder / f"{mode}.h5",
            np.random.default_rng(7),
            progress=False,
        )
        chain = emcee.backends.HDFBackend(str(folder / f"{mode}.h5"), name="chain", read_only=True).get_chain()
        tau = emcee.autocorr.integrated_time(chain[result.discard :], tol=0, quiet=True)
        names = c.log_probability.layout.free
        out[mode] = {
            "cpu_seconds": round(cpu_seconds() - cpu, 1),
            "steps": int(result.steps),
            "largest_autocorr_steps": round(float(np.max(tau)), 1),
            "median_autocorr_steps": round(float(np.median(tau)), 1),
            "slowest": names[int(np.argmax(tau))],
            "linear": {n: round(float(t), 1) for n, t in zip(names, tau) if "flux_level" in n or "offset" in n},
        }
    return out


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--mixing", type=int, default=0, help="steps of each short demo fit (0: none)")
    parser.add_argument("--mode", choices=MODES, help="only this mode's fit (two processes can run side by side)")
    parser.add_argument("--no-evaluation", action="store_true", help="skip the evaluation figures")
    args = parser.parse_args()
    with threadpool_limits(limits=1), tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        (folder / "gp").mkdir()
        (folder / "white").mkdir()
        demo, report = checked_pair(folder / "gp"), {}
        if not args.no_evaluation:
            white = checked_pair(folder / "white", _white)
            report["evaluation"] = {"demo": evaluation(demo), "demo_white": evaluation(white)}
        if args.mixing:
            report["mixing"] = mixing(demo, args.mixing, folder, [args.mode] if args.mode else MODES)
    print(json.dumps(report, indent=1))


if __name__ == "__main__":
    main()
