"""The demo's figures for ``benchmarks/speed.py``: the whole demo with today's and the new defaults, and its samplers.

The whole demo runs twice in this one process, one after the other, from the
same seed: first as before issue 26 (``sampling.linear_parameters: sampled``
where the config schema knows that key, ``autocorr_factor: 100`` and
differential evolution alone), then as shipped (``planetfit/demo/demo.yaml``:
the default stopping rule and marginalisation, the staged sampler). With
``--demo-samplers`` both samplers also run on the demo's log-probability, one after
the other from the same seed (so the same optimiser end points), with the
config's convergence rule. CPU seconds are this process's user + system time
and its finished children's (they do not count time the process waits for a
core on a loaded machine); the optimiser's CPU seconds are measured apart and
left out of ``independent_samples_per_cpu_second``.

Figures
-------
seconds_in_all
    Wall seconds of a full ``pipeline.run`` of the demo with the defaults
    (figures, tables, report.html and posterior.nc included).
phase_seconds
    Its wall seconds per phase (``optimiser``, ``sampling``, ``derived``,
    ``figures_and_report``), from its summary.json.
min_bulk_ess
    Its smallest bulk effective sample size over the sampled parameters.
speedup_vs_sampled_linear
    ``seconds_in_all`` of the run as before issue 26 over the defaults' (and
    ``cpu_speedup_vs_sampled_linear``, the same ratio of CPU seconds).
independent_samples_per_cpu_second
    Per sampler (``--demo-samplers``): independent samples (kept steps x
    walkers over the largest autocorrelation time) over the sampling's CPU
    seconds (burn-in included, optimiser not); ``gain_vs_de_only``, the
    fitted-proposal sampler's figure over differential evolution's.
"""

import tempfile
import time
from pathlib import Path

import numpy as np
import yaml
from clock import cpu_seconds, timed_run  # beside this script

from planetfit import pipeline
from planetfit.demo import DEMO_CONFIG
from planetfit.fitting.sampling import mcmc
from planetfit.inputs.schema.settings import Sampling

SAMPLERS = ("differential_evolution", "fitted_proposal")


class CountingLogProbability:
    """A log-probability that counts its evaluations (one process: ``cores=1``)."""

    def __init__(self, log_prob):
        self.log_prob, self.evaluations = log_prob, 0

    def __call__(self, theta):
        self.evaluations += 1
        return self.log_prob(theta)

    def log_prob_many(self, thetas):
        self.evaluations += len(thetas)
        return self.log_prob.log_prob_many(thetas)

    def __getattr__(self, name):
        return getattr(self.log_prob, name)


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
    """One ``run_sampler`` of the demo's log-probability with ``sampling.moves = moves``; its facts and costs."""
    log_prob = CountingLogProbability(checked.log_probability)
    settings = checked.config.sampling.model_copy(update={"moves": moves})
    start, original = TimedStart(mcmc._find_modes, log_prob), mcmc._find_modes
    mcmc._find_modes = start
    try:
        cpu, wall = cpu_seconds(), time.perf_counter()
        rng = np.random.default_rng(checked.config.seed)
        result = mcmc.run_sampler(log_prob, log_prob.layout, settings, folder / f"{moves}.h5", rng, progress=False)
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
        "sampling_evaluations": log_prob.evaluations - start.evaluations,
        "wall_seconds_with_optimiser": round(wall, 1),
        "independent_samples_per_cpu_second": round(result.independent_samples / sampling_cpu, 3),
        "independent_samples_per_1000_evaluations": round(
            1000 * result.independent_samples / (log_prob.evaluations - start.evaluations), 3
        ),
        "independent_samples_per_cpu_second_with_optimiser": round(result.independent_samples / cpu, 3),
    }


def demo_config(folder, sampling):
    """demo.yaml with ``sampling`` entries set, its data files made absolute, written into ``folder``."""
    config = yaml.safe_load(DEMO_CONFIG.read_text())
    for block in config["photometry"] + config["velocities"]:
        block["file"] = str((DEMO_CONFIG.parent / block["file"]).resolve())
    config["sampling"] = dict(config.get("sampling") or {}, **sampling)
    config["output"] = str(folder / "run")
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / "demo.yaml"
    path.write_text(yaml.safe_dump(config, sort_keys=False))
    return path


def before_issue_26():
    """The sampling entries of the demo as it ran before issue 26 (the linear-parameter key where it is known).

    Before issue 26 the demo sampled with differential evolution alone; it now asks for the staged sampler.
    """
    old = {"autocorr_factor": 100, "moves": "differential_evolution"}
    if "linear_parameters" in Sampling.model_fields:
        old["linear_parameters"] = "sampled"
    return old


def whole_demo(folder, cores, sampling):
    """One full ``pipeline.run`` of the demo with ``sampling`` entries set; its wall and CPU seconds and facts."""
    summary, wall, cpu = timed_run(demo_config(folder, sampling), cores=cores)
    s = summary["sampling"]
    keys = ("converged", "steps", "autocorr_steps", "independent_samples", "min_bulk_ess", "rhat_max", "phase_seconds")
    return {"sampling": sampling, "seconds_in_all": round(wall, 1), "cpu_seconds_in_all": round(cpu, 1)} | {
        k: s.get(k) for k in keys
    }


def demo_figures(cores, samplers=False):
    """The whole demo as before issue 26 and with the defaults (and, with ``samplers``, its samplers side by side)."""
    with tempfile.TemporaryDirectory(prefix="planetfit-demo-speed-") as tmp:
        folder = Path(tmp)
        old = whole_demo(folder / "before", cores, before_issue_26())
        new = whole_demo(folder / "defaults", cores, {})
        out = {
            "cores": cores,
            "seconds_in_all": new["seconds_in_all"],
            "cpu_seconds_in_all": new["cpu_seconds_in_all"],
            "phase_seconds": new["phase_seconds"],
            "min_bulk_ess": new["min_bulk_ess"],
            "converged_in_all": new["converged"],
            "speedup_vs_sampled_linear": round(old["seconds_in_all"] / new["seconds_in_all"], 2),
            "cpu_speedup_vs_sampled_linear": round(old["cpu_seconds_in_all"] / new["cpu_seconds_in_all"], 2),
            "linear_parameters_known": "linear_parameters" in old["sampling"],
            "runs": {"before_issue_26": old, "defaults": new},
        }
        if samplers:
            checked = pipeline.check(DEMO_CONFIG)
            runs = {name: sample_once(checked, name, folder) for name in SAMPLERS}
            rates = {name: s["independent_samples_per_cpu_second"] for name, s in runs.items()}
            out.update(
                independent_samples_per_cpu_second=rates,
                gain_vs_de_only=round(rates["fitted_proposal"] / rates["differential_evolution"], 2),
                samplers=runs,
            )
    return out
