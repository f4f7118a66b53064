"""The demo's figures for ``benchmarks/speed.py``: its samplers side by side, and the whole demo.

Both samplers run on the demo posterior (``planetfit/demo/demo.yaml``) in
this one process, one after the other, from the same seed (so the same
optimiser end points), with the config's convergence rule (chain longer
than ``autocorr_factor`` autocorrelation times, estimate stable to
``autocorr_tolerance``). CPU seconds are this process's user + system time
(they do not count time the process waits for a core on a loaded machine);
the optimiser's CPU seconds are measured apart and left out of
``independent_samples_per_cpu_second``.

Figures
-------
seconds_in_all
    Wall seconds of a full ``pipeline.run`` of the demo with the given
    ``sampling.moves`` (figures, tables and report included).
independent_samples_per_cpu_second
    Per sampler: independent samples (kept steps x walkers over the
    largest autocorrelation time) over the sampling's CPU seconds (burn-in
    included, optimiser not).
gain_vs_de_only
    The fitted-proposal sampler's figure over differential evolution's.
"""

import resource
import tempfile
import time
from pathlib import Path

import numpy as np
import yaml

from planetfit import pipeline
from planetfit.demo import DEMO_CONFIG
from planetfit.fitting import mcmc

SAMPLERS = ("differential_evolution", "fitted_proposal")


def cpu_seconds():
    """User + system CPU seconds of this process and its finished children."""
    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


class CountingPosterior:
    """A posterior that counts its evaluations (one process: ``cores=1``)."""

    def __init__(self, post):
        self.post, self.evaluations = post, 0

    def __call__(self, theta):
        self.evaluations += 1
        return self.post(theta)

    def log_prob_many(self, thetas):
        self.evaluations += len(thetas)
        return self.post.log_prob_many(thetas)

    def __getattr__(self, name):
        return getattr(self.post, name)


class TimedStart:
    """Wraps the sampler's optimiser stage, recording its CPU seconds and evaluations."""

    def __init__(self, find_modes, counter):
        self.find_modes, self.counter, self.cpu, self.evaluations = find_modes, counter, 0.0, 0

    def __call__(self, *args, **kwargs):
        cpu, evaluations = cpu_seconds(), self.counter.evaluations
        out = self.find_modes(*args, **kwargs)
        self.cpu, self.evaluations = cpu_seconds() - cpu, self.counter.evaluations - evaluations
        return out


def sample_once(checked, moves, folder):
    """One ``run_sampler`` of the demo posterior with ``sampling.moves = moves``; its facts and costs."""
    post = CountingPosterior(checked.posterior)
    settings = checked.config.sampling.model_copy(update={"moves": moves})
    start, original = TimedStart(mcmc._find_modes, post), mcmc._find_modes
    mcmc._find_modes = start
    try:
        cpu, wall = cpu_seconds(), time.perf_counter()
        rng = np.random.default_rng(checked.config.seed)
        result = mcmc.run_sampler(post, post.layout, settings, folder / f"{moves}.h5", rng, progress=False)
        cpu, wall = cpu_seconds() - cpu, time.perf_counter() - wall
    finally:
        mcmc._find_modes = original
    sampling_cpu = cpu - start.cpu
    return {
        "converged": result.converged,
        "burn_in_steps": result.burn_in_steps,
        "steps": result.steps,
        "walkers": result.walkers,
        "autocorr_steps": round(result.autocorr_steps, 1),
        "acceptance_fraction": round(result.acceptance_fraction, 3),
        "independent_samples": result.independent_samples,
        "optimiser_cpu_seconds": round(start.cpu, 1),
        "optimiser_evaluations": start.evaluations,
        "sampling_cpu_seconds": round(sampling_cpu, 1),
        "sampling_evaluations": post.evaluations - start.evaluations,
        "wall_seconds_with_optimiser": round(wall, 1),
        "independent_samples_per_cpu_second": round(result.independent_samples / sampling_cpu, 3),
        "independent_samples_per_1000_evaluations": round(
            1000 * result.independent_samples / (post.evaluations - start.evaluations), 3
        ),
        "independent_samples_per_cpu_second_with_optimiser": round(result.independent_samples / cpu, 3),
    }


def demo_config(folder, moves):
    """demo.yaml with ``sampling.moves`` set, its data files made absolute, written into ``folder``."""
    config = yaml.safe_load(DEMO_CONFIG.read_text())
    for block in config["photometry"] + config["velocities"]:
        block["file"] = str((DEMO_CONFIG.parent / block["file"]).resolve())
    config["sampling"] = dict(config.get("sampling") or {}, moves=moves)
    config["output"] = str(folder / "run")
    path = folder / "demo.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path


def demo_figures(cores, moves="fitted_proposal"):
    """The samplers side by side on the demo posterior, then the whole demo with ``moves``."""
    with tempfile.TemporaryDirectory(prefix="planetfit-demo-speed-") as tmp:
        folder = Path(tmp)
        checked = pipeline.check(DEMO_CONFIG)
        samplers = {name: sample_once(checked, name, folder) for name in SAMPLERS}
        wall, cpu = time.perf_counter(), cpu_seconds()
        run_dir = pipeline.run(demo_config(folder, moves), quiet=True, cores=cores)
        wall, cpu = time.perf_counter() - wall, cpu_seconds() - cpu
        converged = yaml.safe_load((run_dir / "summary.json").read_text())["sampling"]["converged"]
    new, old = (samplers[name]["independent_samples_per_cpu_second"] for name in reversed(SAMPLERS))
    return {
        "moves": moves,
        "cores": cores,
        "seconds_in_all": round(wall, 1),
        "cpu_seconds_in_all": round(cpu, 1),
        "converged_in_all": converged,
        "independent_samples_per_cpu_second": {
            name: s["independent_samples_per_cpu_second"] for name, s in samplers.items()
        },
        "gain_vs_de_only": round(new / old, 2),
        "samplers": samplers,
    }
