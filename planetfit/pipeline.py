"""The stages of a run, in order: check -> fit -> derive -> context -> report.

Each function here calls one stage after another; the stages themselves
live in their modules. ``finish`` turns saved samples into every output, so
``planetfit redraw`` and ``planetfit run`` share it.
"""

import contextlib
import dataclasses
import json
import logging
import shutil
from pathlib import Path

import emcee
import h5py
import numpy as np
import yaml

from planetfit.context import climate, blocks as context, diagnostics, derived as physics
from planetfit.inputs.oldconfig import load_config
from planetfit.inputs.datasets import load_all
from planetfit.core.errors import InputError
from planetfit.fitting.posterior import JointPosterior, build_layout
from planetfit.report import outputs
from planetfit.report import summary as summary_out
from planetfit.report.files import write_text_atomic
from planetfit.fitting.sampling import run_sampler
from planetfit.core.units import PPM

log = logging.getLogger("planetfit")

RUN_FILES = ("summary.json", "summary.md", "table.tex", "samples.h5", "posterior.csv", "run.log",
             "config.resolved.yaml")


@dataclasses.dataclass
class Checked:
    """A validated config with its data read and checked."""

    config: object
    photometry: list
    velocities: list
    climate: object

    @property
    def warnings(self):
        """Every warning of reading the data, in dataset order."""
        return [w for d in self.photometry + self.velocities for w in d.reading.warnings]


def check(config_path, output=None):
    """Validate the config, read and check every dataset, fit nothing."""
    config = load_config(config_path, output=output)
    phot, rvs = load_all(config)
    raw = config.raw.get("climate")
    if raw is not None and not isinstance(raw, dict):
        raise InputError("the climate block must be a mapping of settings.", file=config.path, key="climate",
                         line=config.lines.get("climate"), fix="write e.g. 'climate: {albedo: 0.3, tau: 0.94}'.")
    try:
        settings = climate.ClimateSettings.from_mapping(raw)
    except (ValueError, TypeError) as exc:
        key = str(exc).split(":")[0]
        raise InputError(f"invalid climate setting: {exc}.", file=config.path,
                         key=f"climate.{key}", line=config.lines.get(f"climate.{key}") or config.lines.get("climate"),
                         fix="see README, climate block, for the accepted keys and values.") from None
    planets = {p.name for p in config.planets}
    sections = [(f"photometry[{i}]", d) for i, d in enumerate(config.photometry)]
    sections += [(f"velocities[{i}]", d) for i, d in enumerate(config.velocities)]
    for section, d in sections:
        if d.name in planets:
            raise InputError(f"'{d.name}' names both a planet and a dataset.", file=config.path,
                             key=f"{section}.name", line=config.lines.get(f"{section}.name"),
                             fix="rename the dataset (e.g. 'camera-1').")
    return Checked(config, phot, rvs, settings)


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
    return ", ".join(parts)


def overview(checked):
    """Rows of the data overview printed by ``planetfit check``."""
    rows = []
    for d in checked.photometry:
        cadence = np.median(np.diff(d.time)) * 1440 if d.time.size > 1 else float("nan")
        counts = d.counts()
        rows.append((d.name, "photometry", d.time.size, d.dropped_nan, d.time[0], d.time[-1],
                     f"{cadence:.1f} min cadence, {np.median(d.error) * 1e6:.0f} ppm median error, "
                     f"{d.supersample} sub-exposure(s) per exposure (integration error <= "
                     f"{d.integration_error_ppm:.1f} ppm), {counts['segments']} segment(s), "
                     f"{counts['dropped_quality']} quality-flagged rows dropped, {counts['clipped']} outliers clipped"
                     + (f", {counts['dropped_far_from_transits']} points far from transits left out"
                        if counts["dropped_far_from_transits"] else "") + f"; {_reading_text(d)}"))
    for d in checked.velocities:
        rows.append((d.name, "velocities", d.time.size, d.dropped_nan, d.time[0], d.time[-1],
                     f"{np.median(d.error):.2f} m/s median error, rms {np.std(d.rv):.2f} m/s; {_reading_text(d)}"))
    return rows


def _logging_to(run_dir, quiet):
    log.setLevel(logging.INFO)
    for h in list(log.handlers):
        log.removeHandler(h)
        h.close()
    fh = logging.FileHandler(run_dir / "run.log")
    fh.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(message)s"))
    log.addHandler(fh)
    sh = logging.StreamHandler()
    sh.setLevel(logging.WARNING if quiet else logging.INFO)
    sh.setFormatter(logging.Formatter("%(message)s"))
    log.addHandler(sh)


def _prepare_run_dir(run_dir, resume, force):
    if run_dir.exists() and not run_dir.is_dir():
        raise InputError("the run directory path exists and is not a folder.", file=run_dir,
                         fix="choose another folder with --out (or the config's 'output'), or move the file away.")
    if run_dir.exists() and any(run_dir.iterdir()):
        if resume:
            if not (run_dir / "samples.h5").exists():
                raise InputError("there is no samples.h5 to resume from.", file=run_dir,
                                 fix="run without --resume to start a new fit.")
            return
        if not force:
            raise InputError("the run directory already holds files.", file=run_dir,
                             fix="use --resume to continue that run, --force to replace it, or --out for a new folder.")
        for name in RUN_FILES:
            with contextlib.suppress(FileNotFoundError):
                (run_dir / name).unlink()
        shutil.rmtree(run_dir / "figures", ignore_errors=True)
    elif resume:
        raise InputError("the run directory does not exist, so there is nothing to resume.", file=run_dir,
                         fix="run without --resume to start a new fit.")
    try:
        run_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(f"cannot create the run directory ({exc.strerror}).", file=run_dir,
                         fix="choose a writable folder with --out (or the config's 'output').") from None


def check_resumable(h5_path, ndim, walkers):
    """Check that ``samples.h5`` holds a chain this config can continue.

    Parameters
    ----------
    h5_path : Path
    ndim : int
        Free parameters of the config.
    walkers : int
        Walkers the config asks for (raised to ``2 ndim`` as the sampler does).

    Raises
    ------
    InputError
        If the file is unreadable or its chain has other walkers or dimension.
    """
    fix = ("move samples.h5 away (it is never overwritten silently) and run again, or use --force "
           "to start a new fit in this folder.")
    try:
        with h5py.File(h5_path, "r") as fh:
            chain = fh["chain"]
            steps = int(chain.attrs["iteration"])
            shape = (int(chain.attrs["nwalkers"]), int(chain.attrs["ndim"]))
    except (OSError, KeyError, ValueError) as exc:
        raise InputError(f"samples.h5 is truncated or not a planetfit chain ({exc}).", file=h5_path, fix=fix) from None
    expected = (max(walkers, 2 * ndim), ndim)
    if steps > 0 and shape != expected:
        raise InputError(f"the saved chain has {shape[0]} walkers x {shape[1]} parameters, but this config "
                         f"needs {expected[0]} x {expected[1]}.", file=h5_path,
                         fix="resume with the config that started the run (sampling.walkers and the free "
                             "parameters must not change), or " + fix)
    return steps


def _resolved_config(config):
    raw = dict(config.raw)
    raw["output"] = str(config.output)
    for section, items in (("photometry", config.photometry), ("velocities", config.velocities)):
        raw[section] = [dict(entry, file=[str(f) for f in c.files] if isinstance(entry.get("file"), list) else str(c.file))
                        for entry, c in zip(raw.get(section) or [], items)]
    return yaml.safe_dump(raw, sort_keys=False)


def run(config_path, output=None, resume=False, force=False, cores=1, quiet=False, figures=True):
    """The whole job for one config; returns the run directory."""
    checked = check(config_path, output=output)
    config = checked.config
    run_dir = config.output
    _prepare_run_dir(run_dir, resume, force)
    if resume:
        check_resumable(run_dir / "samples.h5", build_layout(config).ndim, config.sampling.walkers)
    _logging_to(run_dir, quiet)
    log.info("planetfit run of %s (%s)", config.path, config.system)
    for row in overview(checked):
        log.info("  %-18s %-10s %6d points (%d NaN rows dropped), BJD_TDB %.3f-%.3f, %s", *row)
    for warning in checked.warnings:
        log.warning("WARNING: %s", warning)
    write_text_atomic(run_dir / "config.resolved.yaml", _resolved_config(config))
    post = JointPosterior(config, checked.photometry, checked.velocities)
    rng = np.random.default_rng(config.seed)
    result = run_sampler(post, post.layout, config.sampling, run_dir / "samples.h5", rng, cores=cores,
                         progress=not quiet, resume=resume)
    meta = result.summary()
    meta.update(discard=result.discard, thin=result.thin, cores=cores)
    with h5py.File(run_dir / "samples.h5", "a") as fh:
        g = fh.require_group("planetfit")
        g.attrs["parameter_names"] = post.layout.free
        g.attrs["sampling_json"] = json.dumps(meta)
        if "autocorr_history" in g:
            del g["autocorr_history"]
        g["autocorr_history"] = np.array(result.autocorr_history, dtype=float).reshape(-1, 2)
    finish(run_dir, checked, result.samples, meta, figures=figures, cores=cores)
    return run_dir


def run_warnings(checked, layout, samples):
    """Warnings about the posterior itself: unconstrained parameters, jitters far above the errors."""
    jitters = [(d.name, float(np.median(d.error)) / PPM, f"{d.name}.jitter_ppm", "ppm") for d in checked.photometry]
    jitters += [(d.name, float(np.median(d.error)), f"{d.name}.jitter_ms", "m/s") for d in checked.velocities]
    return (diagnostics.unconstrained_warnings(layout, samples)
            + diagnostics.jitter_warnings(layout, samples, jitters))


def finish(run_dir, checked, samples, sampling_meta, figures=True, cores=1):
    """Derive, add context and write every output from posterior samples (figures drawn by ``cores`` processes)."""
    config = checked.config
    post = JointPosterior(config, checked.photometry, checked.velocities)
    rng = np.random.default_rng([config.seed, 1])
    derived = physics.derive(config, post.layout, samples, rng)
    derived["parameter_names"] = post.layout.free
    blocks = context.add_context(config, derived, checked.climate, rng)
    new = run_warnings(checked, post.layout, samples)
    for warning in new:
        log.warning("WARNING: %s", warning)
    sampling_meta = dict(sampling_meta, warnings=checked.warnings + list(sampling_meta.get("warnings", [])) + new)
    summary = summary_out.build_summary(config, derived, blocks, sampling_meta)
    summary["data"] = {d.name: d.counts() for d in checked.photometry + checked.velocities}
    summary_out.write_summary_json(run_dir / "summary.json", summary)
    summary_out.write_posterior_csv(run_dir / "posterior.csv", derived)
    outputs.write_all(run_dir, checked, post, samples, derived, summary, figures=figures, cores=cores)
    log.info("outputs written to %s", run_dir)
    return summary


def load_run(run_dir):
    """Saved samples and sampling facts of a finished run (for redraw)."""
    run_dir = Path(run_dir)
    h5 = run_dir / "samples.h5"
    if not h5.exists():
        raise InputError("no samples.h5 in this folder.", file=run_dir, fix="give the folder of a finished run.")
    try:
        with h5py.File(h5, "r") as fh:
            meta = json.loads(fh["planetfit"].attrs["sampling_json"])
        backend = emcee.backends.HDFBackend(str(h5), name="chain", read_only=True)
        samples = backend.get_chain(discard=meta["discard"], thin=meta["thin"], flat=True)
    except (OSError, KeyError, ValueError) as exc:
        raise InputError(f"samples.h5 is unreadable or incomplete ({exc}).", file=h5,
                         fix="rerun the fit with --resume (if it was interrupted) or --force.") from None
    return meta, samples


def redraw(run_dir, cores=1):
    """Rebuild every figure and table of a finished run from samples.h5 (figures drawn by ``cores`` processes)."""
    run_dir = Path(run_dir).resolve()
    meta, samples = load_run(run_dir)
    checked = check(run_dir / "config.resolved.yaml", output=run_dir)
    _logging_to(run_dir, quiet=True)
    return finish(run_dir, checked, samples, meta, cores=cores)
