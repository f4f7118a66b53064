"""The stages of a run, in order: check -> fit -> derive -> context -> report.

Each function here calls one stage after another; the stages themselves
live in their packages. ``finish`` turns saved samples into every output,
so ``planetfit redraw`` and ``planetfit run`` share it.
"""

import dataclasses
import logging
import time
from pathlib import Path

import numpy as np

from planetfit import rundir
from planetfit.context import blocks, derived, diagnostics, dynamics, stellar_density, transit_times
from planetfit.context.light import light_warnings
from planetfit.core.errors import InputError
from planetfit.core.units import PPM
from planetfit.fitting.log_probability import LogProbability
from planetfit.fitting.sampling import chainfile, sampler_for
from planetfit.inputs.config import load_config
from planetfit.inputs.datasets import load_all
from planetfit.report import exports, inference, outputs
from planetfit.report import summary as summary_out
from planetfit.report.files import write_text_atomic
from planetfit.report.summary_types import Summary
from planetfit.report.transit_times import write_transit_times_csv
from planetfit.rundir import manifest

log = logging.getLogger("planetfit")


@dataclasses.dataclass
class Checked:
    """A validated config with its data read and checked, and the log-probability of its model."""

    config: object
    photometry: list
    velocities: list
    log_probability: LogProbability

    @property
    def warnings(self):
        """Every warning of reading the data and building the model, in dataset order."""
        return [
            w for d in self.photometry + self.velocities for w in d.reading.warnings
        ] + self.log_probability.model.warnings

    def data_counts(self):
        """The ``data`` block of summary.json: each dataset's counts, with its sub-exposures for light curves."""
        out = {d.name: d.counts() for d in self.photometry + self.velocities}
        for name, choice in self.log_probability.model.exposures.items():
            out[name].update(supersample=choice.supersample, integration_error_ppm=choice.error_ppm)
        return out

    def manifest(self):
        """The manifest of this config and its data as they are now (:mod:`planetfit.rundir.manifest`)."""
        layout = self.log_probability.layout
        return manifest.build(self.config, rundir.resolved_config(self.config), layout.free, layout.sampled_labels)


@dataclasses.dataclass
class FinishedRun:
    """A finished run: its folder, its config and data (checked), the sampler's facts and samples, its summary.

    ``pipeline.run`` returns one; :func:`open_finished` reads one back, and
    its ``summary`` (a :class:`~planetfit.report.summary_types.Summary`) is
    then read from summary.json when first asked for.
    """

    directory: rundir.RunDirectory
    checked: Checked
    facts: dict
    samples: np.ndarray
    written: dataclasses.InitVar[Summary | None] = None

    def __post_init__(self, written):
        self._summary = written

    @property
    def path(self):
        """The run's folder."""
        return self.directory.path

    @property
    def summary(self):
        """The run's summary.json as typed data."""
        if self._summary is None:
            self._summary = self.directory.read_summary()
        return self._summary


def open_finished(run_dir):
    """Open a finished run for ``redraw``, ``export`` and ``plan``.

    Raises
    ------
    InputError
        If the folder is not a run, another process is writing it, or its
        samples, config or data no longer match the run's manifest.
    """
    directory = rundir.RunDirectory(Path(run_dir).resolve())
    directory.require_finished()
    facts, samples = chainfile.read_posterior(directory.samples)
    checked = check(directory.resolved_config, output=directory.path)
    directory.check_matches(checked.manifest(), chainfile.parameter_names(directory.samples), samples.shape[1])
    return FinishedRun(directory, checked, facts, samples)


def check(config_path, output=None, sampling_method=None):
    """Validate the config, read and check every dataset, build the model; fit nothing."""
    config = load_config(config_path, output=output, sampling_method=sampling_method)
    phot, rvs = load_all(config)
    return Checked(config, phot, rvs, LogProbability(config, phot, rvs))


def _reading_text(d):
    """How a dataset's rows were read, for the overview: selection, time system, sorting, repeats."""
    r = d.reading
    parts = [f"times {r.time_system}" + (" converted to BJD_TDB" if r.time_system != "BJD_TDB" else "")]
    if r.rows_selected != r.rows_read:
        parts.append(f"{r.rows_selected} of {r.rows_read} rows selected")
    if r.sorted_by_time:
        parts.append("rows sorted by time")
    if r.repeated_times:
        parts.append(f"{r.repeated_times} repeated time stamp(s) kept")
    if r.product:
        p = r.product
        parts.append(f"exposure {p['exposure_min']:.4g} min from {p['exposure_from']}, quality: {p['quality_flags']}")
    return ", ".join(parts)


def overview(checked):
    """Rows of the data overview printed by ``planetfit check`` and logged by ``run``."""
    rows, counts = [], checked.data_counts()
    for d in checked.photometry:
        cadence = np.median(np.diff(d.time)) * 1440 if d.time.size > 1 else float("nan")
        c = counts[d.name]
        rows.append(
            (
                d.name,
                "photometry",
                d.time.size,
                d.dropped_nan,
                d.time[0],
                d.time[-1],
                f"{cadence:.1f} min cadence, {np.median(d.error) / PPM:.0f} ppm median error, "
                f"{c['supersample']} sub-exposure(s) per exposure (integration error <= "
                f"{c['integration_error_ppm']:.1f} ppm), {c['segments']} segment(s), "
                f"{c['dropped_quality']} quality-flagged rows dropped, {c['clipped']} outliers clipped"
                + (
                    f", {c['dropped_far_from_transits']} points far from transits left out"
                    if c["dropped_far_from_transits"]
                    else ""
                )
                + f"; {_reading_text(d)}",
            )
        )
    for d in checked.velocities:
        rows.append(
            (
                d.name,
                "velocities",
                d.time.size,
                d.dropped_nan,
                d.time[0],
                d.time[-1],
                f"{np.median(d.error):.2f} m/s median error, rms {np.std(d.rv):.2f} m/s; {_reading_text(d)}",
            )
        )
    return rows


def run(config_path, output=None, resume=False, force=False, cores=1, quiet=False, figures=True, sampling_method=None):
    """The whole job for one config (``sampling_method`` overrides its ``sampling.method``): a :class:`FinishedRun`."""
    checked = check(config_path, output=output, sampling_method=sampling_method)
    config = checked.config
    directory = rundir.RunDirectory(config.output)
    note = directory.prepare(resume, force)
    try:
        _claim(checked, directory, resume)
        rundir.start_logging(directory.path, quiet)
        try:
            _log_start(checked, note)
            write_text_atomic(directory.resolved_config, rundir.resolved_config(config))
            samples, facts = _sample(checked, directory, np.random.default_rng(config.seed), cores, quiet, resume)
            summary = finish(directory.path, checked, samples, facts, figures=figures, cores=cores)
        finally:
            rundir.stop_logging()
    finally:
        directory.release()
    return FinishedRun(directory, checked, facts, samples, summary)


def saved_progress(config_path, output=None):
    """What an interrupted run of ``config_path`` left to resume (text), or None if nothing was sampled yet."""
    try:
        directory = rundir.RunDirectory(load_config(config_path, output=output).output)
    except (InputError, OSError):
        return None
    if directory.checkpoint.exists():
        return f"the nested-sampling checkpoint {directory.checkpoint.name}"
    steps = chainfile.saved_steps(directory.samples)
    return f"{steps} steps in samples.h5" if steps else None


def _claim(checked, directory, resume):
    """Write a new run's manifest; for a resume, check the run's manifest (with its differences), then the chain."""
    current = checked.manifest()
    if resume:
        directory.require_writable()
        if directory.manifest.is_file():
            directory.claim(current, resume)
        sampler_for(checked.config.sampling).check_resumable(directory, checked.log_probability.layout.ndim)
    directory.claim(current, resume)


def _log_start(checked, note):
    """Log the run's start: config, data overview, the warnings of reading the data (and a lock taken over)."""
    log.info("planetfit run of %s (%s)", checked.config.path, checked.config.system)
    if note:
        log.warning("NOTE: %s", note)
    for row in overview(checked):
        log.info("  %-18s %-10s %6d points (%d NaN rows dropped), BJD_TDB %.3f-%.3f, %s", *row)
    for warning in checked.warnings:
        log.warning("WARNING: %s", warning)


def _sample(checked, directory, rng, cores, quiet, resume):
    """Sample the posterior with the config's method into the run's samples.h5; return (samples, facts)."""
    sampler = sampler_for(checked.config.sampling)
    draws = sampler.sample(checked.log_probability, directory, rng, cores=cores, progress=not quiet, resume=resume)
    return draws.samples, draws.facts


def run_warnings(checked, samples):
    """Warnings about the posterior itself: unconstrained parameters, jitters far above the errors."""
    layout = checked.log_probability.model.layout
    jitters = [(d.name, float(np.median(d.error)) / PPM, f"{d.name}.jitter_ppm", "ppm") for d in checked.photometry]
    jitters += [(d.name, float(np.median(d.error)), f"{d.name}.jitter_ms", "m/s") for d in checked.velocities]
    return diagnostics.unconstrained_warnings(layout, samples) + diagnostics.jitter_warnings(layout, samples, jitters)


def _derive(checked, samples):
    """Derived quantities of the samples with their context (the same draws for the same seed), and the blocks."""
    config, log_prob = checked.config, checked.log_probability
    rng = np.random.default_rng([config.seed, 1])
    quantities = derived.derive(config, log_prob.model, samples, rng)
    quantities["parameter_names"] = log_prob.model.layout.free
    quantities["sampled_names"] = log_prob.layout.free
    context = blocks.add_context(config, log_prob.model, quantities, rng)
    quantities["transit_times"] = transit_times.transit_times(log_prob.model, config, quantities["parameters"])
    for name, timing in quantities["transit_times"].items():
        context[name].update(timing.block())
    return quantities, context


def complete(checked, samples, cores=1):
    """The sampler's samples with the marginalised linear parameters drawn in (seeded by the config), and warnings."""
    return checked.log_probability.complete(samples, checked.config.seed, cores)


def finish(run_dir, checked, samples, sampling_facts, figures=True, cores=1):
    """Derive, add context and write every output from posterior samples; return the typed summary.

    Figures are drawn by ``cores`` processes; summary.json is written once, after every other output.

    The wall seconds of its two phases, ``derived`` (quantities, context,
    dynamics) and ``figures_and_report`` (posterior.nc, summary, tables,
    figures, report.html), join the sampler's in
    ``summary.json["sampling"]["phase_seconds"]`` and run.log.
    """
    config, log_prob = checked.config, checked.log_probability
    directory, since = rundir.RunDirectory(run_dir), time.time()
    phases, start = dict(sampling_facts.get("phase_seconds") or {}), time.perf_counter()
    samples, linear_warnings = complete(checked, samples, cores)
    quantities, context = _derive(checked, samples)
    stability, stability_warnings = dynamics.dynamics_block(
        config, log_prob.model, quantities, np.random.default_rng([config.seed, 2])
    )
    phases["derived"] = time.perf_counter() - start
    if config.sampling.kind.has_walkers:  # posterior.nc, R-hat and ESS read emcee's walkers
        stats, stats_warnings = inference.write_posterior(directory, checked, quantities, sampling_facts)
    else:  # nested runs have ln Z instead
        stats, stats_warnings = {}, []
    density, density_warnings = stellar_density.density_check(
        config, log_prob.model, quantities, np.random.default_rng([config.seed, 3])
    )
    new = (
        linear_warnings
        + run_warnings(checked, samples)
        + density_warnings
        + light_warnings(context)
        + stability_warnings
    )
    new += stats_warnings
    for warning in new:
        log.warning("WARNING: %s", warning)
    warnings = checked.warnings + list(sampling_facts.get("warnings", [])) + new
    content = summary_out.build_summary(
        config, log_prob.model, quantities, context, dict(sampling_facts, **stats, warnings=warnings)
    )
    content["star"].update(density)
    content["data"] = checked.data_counts()
    if stability is not None:
        content["dynamics"] = stability
    summary = summary_out.typed(content)
    summary_out.write_posterior_csv(directory.posterior_csv, quantities)
    if quantities["transit_times"]:
        write_transit_times_csv(directory.transit_times, quantities["transit_times"])
    outputs.write_all(directory, checked, log_prob, samples, quantities, summary, figures=figures, cores=cores)
    phases["figures_and_report"] = time.perf_counter() - start - phases["derived"]
    summary.sampling.phase_seconds = {k: round(v, 1) for k, v in phases.items()}
    write_text_atomic(directory.summary, summary.to_text())  # last, once: a summary.json marks a finished run
    directory.record_outputs(since)
    log.info("wall seconds per phase: %s", ", ".join(f"{k} {v:.1f}" for k, v in phases.items()))
    log.info("outputs written to %s", directory)
    return summary


def redraw(run_dir, cores=1):
    """Rebuild every figure and table of a finished run from samples.h5 (figures drawn by ``cores`` processes)."""
    run = open_finished(run_dir)
    run.directory.require_writable()
    note = run.directory.take_lock()
    try:
        rundir.start_logging(run.directory.path, quiet=True)
        try:
            if note:
                log.warning("NOTE: %s", note)
            return finish(run.directory.path, run.checked, run.samples, run.facts, cores=cores)
        finally:
            rundir.stop_logging()
    finally:
        run.directory.release()


def export(run_dir, fmt, out=None):
    """Write the posterior of a finished run as ``fmt`` (csv, json or nc) to ``out`` or the run directory."""
    run = open_finished(run_dir)
    directory, checked, facts = run.directory, run.checked, run.facts
    if not checked.config.sampling.kind.has_walkers:
        raise InputError(
            f"{directory} holds a nested-sampling run; 'planetfit export' writes emcee walkers and their statistics.",
            fix="use the run's posterior.csv (its equal-weight samples), or fit with 'sampling: {method: mcmc}'.",
        )
    path = directory.export_target(out, fmt)
    rundir.require_writable(path.parent)
    quantities, _ = _derive(checked, complete(checked, run.samples)[0])
    stats = chainfile.read_sample_stats(directory.samples, facts["discard"], facts["thin"])
    groups = inference.posterior_groups(checked, quantities, stats)
    return exports.write_export(groups, fmt, path, inference.run_attrs(checked))
