"""A finished run, read back for planning: its model, its posterior samples as physical values, its summary.

Nothing is fitted: the model is rebuilt from ``config.resolved.yaml`` (the
data are read again), the samples come from ``samples.h5`` and the
quantities no data constrain (a star mass without transits, Teff) are drawn
from their priors exactly as the run's own outputs were.
"""

import dataclasses
import json
from pathlib import Path

import numpy as np

from planetfit import pipeline
from planetfit.context import derived
from planetfit.core.errors import InputError
from planetfit.fitting import chainfile

_FINISHED_FIX = (
    "give the folder of a finished 'planetfit run' (it holds summary.json, samples.h5 and config.resolved.yaml); "
    "an interrupted run is finished with 'planetfit run CONFIG --resume --out DIR'."
)


@dataclasses.dataclass
class FinishedRun:
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
    summary : dict
        summary.json.
    """

    run_dir: Path
    checked: object
    values: dict
    planets: dict
    summary: dict

    @property
    def model(self):
        return self.checked.posterior.model

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
        raise InputError(f"{what} is missing: the run has not finished.", file=path, fix=_FINISHED_FIX) from None


def load_run(run_dir, seed=0):
    """Read a finished run directory.

    Raises
    ------
    InputError
        If the folder does not exist, or lacks summary.json, samples.h5 or
        config.resolved.yaml, or its chain file is unreadable.
    """
    run_dir = Path(run_dir).resolve()
    if not run_dir.is_dir():
        raise InputError(
            "the run directory does not exist (or is not a folder).", file=run_dir, fix=_FINISHED_FIX
        ) from None
    for name in ("summary.json", "samples.h5", "config.resolved.yaml"):
        _require(run_dir / name, name)
    try:
        summary = json.loads((run_dir / "summary.json").read_text())
    except (OSError, ValueError) as exc:
        raise InputError(
            f"summary.json is unreadable ({exc}).", file=run_dir / "summary.json", fix=_FINISHED_FIX
        ) from None
    _, samples = chainfile.read_posterior(run_dir / "samples.h5")
    checked = pipeline.check(run_dir / "config.resolved.yaml", output=run_dir)
    if samples.shape[1] != checked.posterior.layout.ndim:
        raise InputError(
            f"samples.h5 holds {samples.shape[1]} parameters but the run's config has "
            f"{checked.posterior.layout.ndim}: the folder mixes two runs.",
            file=run_dir,
            fix="rerun the fit with --force.",
        )
    return from_samples(checked, samples, summary, run_dir, seed)


def from_samples(checked, samples, summary=None, run_dir=None, seed=0):
    """A :class:`FinishedRun` from a checked config and posterior samples in sampler coordinates."""
    samples = pipeline.complete(checked, samples)[0] if samples.shape[1] == checked.posterior.layout.ndim else samples
    quantities = derived.derive(checked.config, checked.posterior.model, samples, np.random.default_rng([seed, 2]))
    return FinishedRun(run_dir, checked, quantities["parameters"], quantities["planets"], summary or {})
