"""summary.json as typed data: :class:`Summary` and its blocks, every STAT a :class:`Stat`.

The one module that parses summary.json (:func:`read_summary`); every other
reader gets a :class:`Summary` (from ``pipeline.run``, ``FinishedRun.summary``
or ``RunDirectory.read_summary``). ``Summary.from_json(x).to_json() == x``
for every summary.json planetfit writes, key order included: the file's keys
and values are a contract (users' scripts parse them), so a block keeps the
keys it was read or built with, in their order. The top level, the star, each
planet's facts and stats and the sampling facts are typed; blocks without a
typed field (composition, climate, data counts, ...) are kept as plain
mappings in ``extra`` or their field, with every STAT in them a :class:`Stat`.
"""

import dataclasses
import json
from pathlib import Path
from typing import ClassVar

from planetfit.core.errors import InputError

STAR_KEYS = ("mass_msun", "radius_rsun", "density_gcc", "teff_k", "age_gyr")
PLANET_KEYS = (
    "period_days",
    "transit_bjd",
    "radius_ratio",
    "impact",
    "inclination_deg",
    "a_over_rstar",
    "semi_major_axis_au",
    "eccentricity",
    "omega_deg",
    "rv_amplitude_ms",
    "mass_earth",
    "mass_jup",
    "radius_earth",
    "radius_jup",
    "density_gcc",
    "surface_gravity_ms2",
    "transit_duration_hr",
    "equilibrium_temp_k",
    "insolation_earth",
)
_STAT_KEYS = ("median", "lower", "upper")


@dataclasses.dataclass
class Stat:
    """A quantity's posterior as summary.json stores it: median and the 15.87th / 84.13th percentile values.

    ``prior_only`` is True for a quantity no data constrain, None when the
    file does not say (it is written only when True).
    """

    median: float | None
    lower: float | None
    upper: float | None
    prior_only: bool | None = None

    @property
    def plus(self):
        """Upper percentile minus the median."""
        return self.upper - self.median

    @property
    def minus(self):
        """Median minus the lower percentile."""
        return self.median - self.lower

    @staticmethod
    def is_stat(value):
        """Whether a JSON value is a STAT (its three keys first, then at most ``prior_only``)."""
        if not isinstance(value, dict):
            return False
        keys = tuple(value)
        return keys[:3] == _STAT_KEYS and keys[3:] in ((), ("prior_only",))

    @classmethod
    def from_json(cls, value):
        return cls(**value)

    def to_json(self):
        out = {"median": self.median, "lower": self.lower, "upper": self.upper}
        if self.prior_only is not None:
            out["prior_only"] = self.prior_only
        return out


def _decode(value):
    """A JSON value with every STAT in it (at any depth) a :class:`Stat`."""
    if Stat.is_stat(value):
        return Stat.from_json(value)
    if isinstance(value, dict):
        return {k: _decode(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_decode(v) for v in value]
    return value


def _encode(value):
    """The JSON form of a typed value (inverse of :func:`_decode` and of the blocks' ``from_json``)."""
    if hasattr(value, "to_json"):
        return value.to_json()
    if isinstance(value, dict):
        return {k: _encode(v) for k, v in value.items()}
    if isinstance(value, list):
        return [_encode(v) for v in value]
    return value


def _mapping_of(block):
    """Decoder of a ``{name: block}`` mapping."""
    return lambda value: {k: block.from_json(v) for k, v in value.items()}


@dataclasses.dataclass(kw_only=True)
class SummaryBlock:
    """A summary.json block: typed fields, other keys in ``extra``, and the order the keys came in.

    A field left None that the block was not read with is not written.
    Blocks with a ``stats`` field hold their STATs (and null quantities of
    :attr:`STAT_NAMES`) there, keyed as in the file.
    """

    extra: dict = dataclasses.field(default_factory=dict)
    order: tuple = dataclasses.field(default=(), repr=False, compare=False)

    #: Decoders of typed fields whose JSON form is not their value (default :func:`_decode`).
    DECODERS: ClassVar[dict] = {}
    #: Keys that go into ``stats`` even when null.
    STAT_NAMES: ClassVar[tuple] = ()

    @classmethod
    def _typed_names(cls):
        """The typed fields, in their declared order (keys a block was not read with are written in it)."""
        return [f.name for f in dataclasses.fields(cls) if f.name not in ("extra", "order", "stats")]

    @classmethod
    def from_json(cls, data):
        names, has_stats = cls._typed_names(), "stats" in {f.name for f in dataclasses.fields(cls)}
        typed, stats, extra = {}, {}, {}
        for key, value in data.items():
            if key in names:
                typed[key] = cls.DECODERS.get(key, _decode)(value)
            elif has_stats and (Stat.is_stat(value) or (value is None and key in cls.STAT_NAMES)):
                stats[key] = None if value is None else Stat.from_json(value)
            else:
                extra[key] = _decode(value)
        if has_stats:
            typed["stats"] = stats
        return cls(**typed, extra=extra, order=tuple(data))

    def items(self):
        """``(key, typed value)`` of every key the block writes, in the file's order."""
        values = {name: getattr(self, name) for name in self._typed_names()}
        merged = {k: v for k, v in values.items() if v is not None or k in self.order}
        merged.update(getattr(self, "stats", {}))
        merged.update(self.extra)
        keys = [k for k in self.order if k in merged] + [k for k in merged if k not in self.order]
        return [(k, merged[k]) for k in keys]

    def to_json(self):
        """The block as JSON values, keys in the order it was read or built with."""
        return {k: _encode(v) for k, v in self.items()}


@dataclasses.dataclass(kw_only=True)
class Evidence(SummaryBlock):
    """``sampling.ln_evidence`` of a nested-sampling run: ln Z, its error, and a note on what it means."""

    value: float
    error: float
    note: str | None = None


@dataclasses.dataclass(kw_only=True)
class SamplingFacts(SummaryBlock):
    """``summary.json["sampling"]``: what the sampler did, for emcee walkers or nested sampling."""

    converged: bool | None = None
    seconds: float | None = None
    method: str | None = None
    walkers: int | None = None
    steps: int | None = None
    autocorr_steps: float | None = None
    independent_samples: int | None = None
    acceptance_fraction: float | None = None
    moves: str | None = None
    burn_in_steps: int | None = None
    min_bulk_ess: int | None = None
    discard: int | None = None
    thin: int | None = None
    cores: int | None = None
    live_points: int | None = None
    iterations: int | None = None
    likelihood_calls: int | None = None
    dlogz: float | None = None
    effective_samples: int | None = None
    ln_evidence: Evidence | None = None
    max_log_likelihood: float | None = None
    rhat_max: float | None = None
    ess_bulk_min: int | None = None
    ess_tail_min: int | None = None
    phase_seconds: dict | None = None
    warnings: list | None = None
    modes: list | None = None
    parameter_diagnostics: dict | None = None

    DECODERS: ClassVar[dict] = {"ln_evidence": Evidence.from_json}

    @property
    def nested(self):
        """Whether the run sampled by nested sampling (it then has an evidence and no walkers)."""
        return self.ln_evidence is not None


@dataclasses.dataclass(kw_only=True)
class StarResults(SummaryBlock):
    """``summary.json["star"]``: the star's STATs (``stats``), where its priors came from, the density check."""

    stats: dict = dataclasses.field(default_factory=dict)
    mass_radius_source: dict | None = None
    density_tension_sigma: float | None = None

    STAT_NAMES: ClassVar[tuple] = STAR_KEYS


@dataclasses.dataclass(kw_only=True)
class PlanetResults(SummaryBlock):
    """One planet of ``summary.json["planets"]``: its STATs (``stats``), facts and context blocks.

    ``stats`` holds every STAT of the planet (the keys of :data:`PLANET_KEYS`,
    ``e_cos_w``, ``eclipse_bjd``, ...) and the null quantities of a planet
    whose mass was not measured.
    """

    stats: dict = dataclasses.field(default_factory=dict)
    transits: bool | None = None
    orbit: str | None = None
    mass_is_minimum: bool | None = None
    mass_measured: bool | None = None
    note: str | None = None
    composition: dict | None = None
    climate: dict | None = None
    atmosphere: dict | None = None
    planet_light: dict | None = None

    STAT_NAMES: ClassVar[tuple] = PLANET_KEYS

    def stat(self, key):
        """The STAT of ``key``, or None (absent, or null)."""
        return self.stats.get(key)


@dataclasses.dataclass(kw_only=True)
class Summary(SummaryBlock):
    """summary.json: the system's name, star, planets, fitted parameters, sampling facts, data and dynamics."""

    system: str
    star: StarResults
    planets: dict
    fitted_parameters: dict
    sampling: SamplingFacts
    data: dict | None = None
    dynamics: dict | None = None

    DECODERS: ClassVar[dict] = {
        "star": StarResults.from_json,
        "planets": _mapping_of(PlanetResults),
        "sampling": SamplingFacts.from_json,
    }

    def to_text(self):
        """summary.json's text."""
        return json.dumps(self.to_json(), indent=2) + "\n"


def read_summary(path, fix):
    """The :class:`Summary` of a summary.json file (the one place planetfit parses one).

    Raises
    ------
    InputError
        If the file is missing, unreadable, or not a summary.json (``fix`` tells the user what to do).
    """
    try:
        return Summary.from_json(json.loads(Path(path).read_text()))
    except FileNotFoundError:
        raise InputError("summary.json is missing: the run has not finished.", file=path, fix=fix) from None
    except (OSError, ValueError, TypeError, KeyError, AttributeError) as exc:
        raise InputError(f"summary.json is unreadable ({exc}).", file=path, fix=fix) from None
