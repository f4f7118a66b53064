"""A config file -> the validated :class:`Config` every later stage reads.

The YAML is read safely (:mod:`~planetfit.inputs.yamlfile`), validated
against the declared schema (:mod:`~planetfit.inputs.schema`), and every
failure becomes one :class:`~planetfit.errors.InputError` naming the file,
the dotted key, its line and the fix (:mod:`~planetfit.inputs.messages`).
Paths are resolved relative to the config file.
"""

import dataclasses
from pathlib import Path

from pydantic import ValidationError

from .messages import to_input_error
from .schema import ConfigFile, NoTrend
from .yamlfile import read_yaml


@dataclasses.dataclass
class Config:
    """A validated config: the schema's blocks, with the file it came from and its key lines."""

    path: Path
    lines: dict
    raw: dict
    blocks: ConfigFile
    output: Path

    @property
    def system(self):
        return self.blocks.system or self.path.stem

    @property
    def seed(self):
        return self.blocks.seed

    @property
    def star(self):
        return self.blocks.star

    @property
    def planets(self):
        """The planets in config order (each knows its ``name``)."""
        return list(self.blocks.planets.values())

    @property
    def photometry(self):
        return self.blocks.photometry

    @property
    def velocities(self):
        return self.blocks.velocities

    @property
    def rv_trend(self):
        """The RV trend block, or None for ``rv_trend: none``."""
        return None if isinstance(self.blocks.rv_trend, NoTrend) else self.blocks.rv_trend

    @property
    def rv_activity(self):
        return self.blocks.rv_activity

    @property
    def climate(self):
        return self.blocks.climate

    @property
    def sampling(self):
        return self.blocks.sampling

    @property
    def dynamics(self):
        return self.blocks.dynamics

    def line(self, key):
        """The line of a dotted key, or of its nearest enclosing block."""
        while key and key not in self.lines:
            key = key.rpartition(".")[0] if "." in key else key.rpartition("[")[0]
        return self.lines.get(key)


def load_config(path, output=None, sampling_method=None):
    """Read and validate a config file.

    Parameters
    ----------
    path : str or Path
        The YAML file.
    output : str or Path, optional
        Run directory overriding the config's ``output`` key.
    sampling_method : str, optional
        ``sampling.method`` overriding the config's (``planetfit compare`` samples every model by nested sampling).

    Returns
    -------
    Config

    Raises
    ------
    InputError
        Naming the file, key and line, and the fix.
    """
    path = Path(path).resolve()
    data, lines = read_yaml(path)
    if sampling_method is not None and isinstance(data, dict):
        data["sampling"] = dict(data.get("sampling") or {}, method=sampling_method)
    try:
        blocks = ConfigFile.model_validate(data)
    except ValidationError as exc:
        raise to_input_error(exc.errors()[0], path, lines, data, ConfigFile) from None
    for section in ("photometry", "velocities"):
        for i, d in enumerate(getattr(blocks, section)):
            d.resolve(path.parent, f"{section}[{i}]")
    out = (
        Path(output).resolve()
        if output is not None
        else (path.parent / (blocks.output or f"runs/{path.stem}")).resolve()
    )
    return Config(path=path, lines=lines, raw=data, blocks=blocks, output=out)
