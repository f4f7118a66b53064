"""A finished run, read back for planning: its model, its posterior samples as physical values, its summary.

Nothing is fitted: the run is opened by :func:`planetfit.pipeline.open_finished`
(the model rebuilt from its resolved config, the data read again and checked
against the run's manifest, the samples from its chain file) and the
quantities no data constrain (a star mass without transits, Teff) are drawn
from their priors exactly as the run's own outputs were.
"""

import dataclasses
from pathlib import Path

import numpy as np

from planetfit import pipeline
from planetfit.context import derived
from planetfit.core.errors import InputError
from planetfit.rundir import FINISHED_FIX, RunDirectory


@dataclasses.dataclass
class PlanningRun:
    """What the planner needs of a finished run.

    Attributes
    ----------
    run_dir : Path
    checked : pipeline.Checked
        The config, the data and the model of the run.
    values : dict
        Every parameter's physical value per posterior sample (fixed ones as
        scalars, prior-only ones drawn from their priors).
    planets : dict
        Per planet the derived quantities per sample (``mass_earth``, ``radius_earth``, ...).
    summary : planetfit.report.summary_types.Summary or None
        summary.json (None for a run not read from a folder).
    """

    run_dir: Path
    checked: object
    values: dict
    planets: dict
    summary: object

    @property
    def model(self):
        return self.checked.log_probability.model

    @property
    def has_velocities(self):
        return self.model.velocity is not None

    @property
    def size(self):
        return len(next(iter(self.planets.values()))["period_days"])

    def last_data_bjd(self):
        """The latest time of any dataset of the run (BJD_TDB)."""
        return max(float(np.max(d.time)) for d in self.checked.photometry + self.checked.velocities)


def _require(path, what):
    if not path.exists():
        raise InputError(f"{what} is missing: the run has not finished.", file=path, fix=FINISHED_FIX) from None


def load_run(run_dir, seed=0):
    """Read a finished run directory.

    Raises
    ------
    InputError
        If the folder does not exist, or lacks summary.json, samples.h5 or
        config.resolved.yaml, or its chain file is unreadable.
    """
    directory = RunDirectory(Path(run_dir).resolve())
    if not directory.path.is_dir():
        raise InputError(
            "the run directory does not exist (or is not a folder).", file=directory, fix=FINISHED_FIX
        ) from None
    for path in (directory.summary, directory.samples, directory.resolved_config):
        _require(path, path.name)
    run = pipeline.open_finished(directory.path)
    return from_samples(run.checked, run.samples, run.summary, directory.path, seed)


def from_samples(checked, samples, summary=None, run_dir=None, seed=0):
    """A :class:`PlanningRun` from a checked config and posterior samples in sampler coordinates."""
    samples = (
        pipeline.complete(checked, samples)[0] if samples.shape[1] == checked.log_probability.layout.ndim else samples
    )
    quantities = derived.derive(
        checked.config, checked.log_probability.model, samples, np.random.default_rng([seed, 2])
    )
    return PlanningRun(run_dir, checked, quantities["parameters"], quantities["planets"], summary)
