"""``planetfit compare``: fit several models of the same data by nested sampling and rank them by evidence.

Each config is fitted with ``sampling.method: nested`` whatever its own
method, into ``DIR/<config stem>`` with ``--out DIR``, else into its own
``output`` when it already samples by nested sampling and into
``<output>-nested`` when it does not (an MCMC run there is never replaced).
A finished run directory is reused when its config.resolved.yaml equals
the config as resolved now and its manifest's data files have the content
they have now; an interrupted one is resumed; any other is fitted anew.
"""

import json
import logging
from pathlib import Path

from planetfit import pipeline, rundir
from planetfit.batch import run_directories
from planetfit.inputs.config import load_config
from planetfit.inputs.schema import SamplingMethod
from planetfit.report import comparison
from planetfit.rundir import manifest

log = logging.getLogger("planetfit")

#: The method every model is fitted with: its evidence ranks the models.
NESTED = SamplingMethod.NESTED.value


def _finished(run_dir, config):
    """The summary of the finished nested run of exactly this config and its current data in ``run_dir``, or None."""
    directory = rundir.RunDirectory(run_dir)
    summary_path, resolved = directory.summary, directory.resolved_config
    if not (summary_path.exists() and resolved.exists()):
        return None
    if resolved.read_text() != rundir.resolved_config(config):
        return None
    summary = directory.read_summary()
    if not summary.sampling.nested:
        return None
    saved = directory.read_manifest()
    return summary if saved is not None and not manifest.data_changes(saved, config) else None


def run_directory(config_path, output):
    """The run directory ``planetfit compare`` uses for one config (``output``: from ``--out``, or None)."""
    if output is not None:
        return Path(output)
    own = load_config(config_path)
    if own.sampling.kind.weighted:
        return own.output
    return own.output.with_name(own.output.name + "-nested")


def fit_model(config_path, output=None, cores=1, quiet=False):
    """Fit one model by nested sampling, or reuse its finished run; return (run directory, summary, reused)."""
    run_dir = run_directory(config_path, output)
    config = load_config(config_path, output=run_dir, sampling_method=NESTED)
    finished = _finished(run_dir, config)
    if finished is not None:
        return run_dir, finished, True
    directory = rundir.RunDirectory(run_dir)
    resume = directory.checkpoint.exists() and not directory.summary.exists()
    run = pipeline.run(
        config_path,
        output=run_dir,
        resume=resume,
        force=not resume,
        cores=cores,
        quiet=quiet,
        figures=False,
        sampling_method=NESTED,
    )
    return run_dir, run.summary, False


def _entry(config_path, run_dir, summary):
    """One model's row of the comparison, from its run's summary."""
    s = summary.sampling
    return {
        "model": Path(config_path).stem,
        "system": summary.system,
        "config": str(Path(config_path).resolve()),
        "run_dir": str(run_dir),
        "free_parameters": len(summary.fitted_parameters),
        "ln_evidence": s.ln_evidence.value,
        "ln_evidence_error": s.ln_evidence.error,
        "max_log_likelihood": s.max_log_likelihood,
        "converged": s.converged,
        "data": {name: counts["points"] for name, counts in (summary.data or {}).items()},
    }


def compare(config_paths, out_dir=None, cores=1, quiet=False, on_model=None):
    """Fit (or reuse) each config by nested sampling and write the comparison table.

    Parameters
    ----------
    config_paths : list of str or Path
    out_dir : str or Path, optional
        Run directories in ``out_dir/<config stem>`` and the comparison files in ``out_dir``
        (default: see the module's notes; the files go into the current folder).
    cores : int
    quiet : bool
    on_model : callable, optional
        Called with (config path, run directory, reused) after each model.

    Returns
    -------
    rows, warnings, paths
        :func:`planetfit.report.comparison.comparison_rows`, the warnings and the three files written.
    """
    entries = []
    for path, output in zip(config_paths, run_directories(config_paths, out_dir)):
        run_dir, summary, reused = fit_model(path, output=output, cores=cores, quiet=quiet)
        if on_model is not None:
            on_model(path, run_dir, reused)
        entries.append(_entry(path, run_dir, summary))
    rows = comparison.comparison_rows(entries)
    warnings = comparison.comparison_warnings(rows)
    if len({json.dumps(e["data"], sort_keys=True) for e in entries}) > 1:
        warnings.append(
            "the models were fitted to different data (datasets or point counts differ): their evidences "
            "cannot be compared."
        )
    folder = Path(out_dir) if out_dir is not None else Path.cwd()
    folder.mkdir(parents=True, exist_ok=True)
    return rows, warnings, comparison.write_comparison(folder, rows, warnings)
