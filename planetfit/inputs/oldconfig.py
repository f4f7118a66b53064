"""YAML config -> validated, typed config objects.

The file is read with a safe YAML loader; every key is checked against the
schema below and every error names the file, the dotted key (with its line)
and what was expected. Paths are resolved relative to the config file.
"""

import dataclasses
import difflib
import math
import reprlib
from pathlib import Path

import yaml

from planetfit.core.errors import InputError, reading
from planetfit.inputs.fits import is_fits
from planetfit.inputs.priors import Fixed, LogUniform, Normal, Uniform, make_prior
from planetfit.inputs.timesystems import NEEDS_COORDINATES, TIME_SYSTEMS

ORBITS = ("circular", "eccentric")
LIMB_DARKENING_LAWS = ("quadratic",)
BASELINES = ("constant", "linear", "gp")
GP_KERNELS = ("sho", "matern32")
RV_TRENDS = ("none", "linear", "quadratic")
#: Quality factor of a stochastically driven damped oscillator whose power spectrum resembles
#: granulation-type variability (Foreman-Mackey et al. 2017, AJ 154, 220, section 4.1).
SHO_QUALITY_DEFAULT = 1 / math.sqrt(2)
#: Most values a config may expand to; nested YAML aliases ("billion laughs") can reach billions.
MAX_YAML_NODES = 100_000
#: Short reprs of user values in messages, whatever their size.
_SHORT = reprlib.Repr()
_SHORT.maxlevel, _SHORT.maxlist, _SHORT.maxdict, _SHORT.maxstring = 2, 4, 4, 40
_show = _SHORT.repr


@dataclasses.dataclass
class StarConfig:
    mass_msun: object
    radius_rsun: object
    teff_k: object
    age_gyr: object = None
    mag_j: float = None
    mag_k: float = None
    ra_deg: float = None             # ICRS position, for HJD_UTC times
    dec_deg: float = None


@dataclasses.dataclass
class PlanetConfig:
    name: str
    period_days: object
    transit_bjd: object
    rv_amplitude_ms: object
    radius_ratio: object = None
    impact: object = None
    orbit: str = "circular"
    transits: bool = True
    sqrt_e_cos_w: object = None
    sqrt_e_sin_w: object = None
    eccentricity_max: float = 0.9
    inclination_deg: object = None  # prior of a non-transiting planet's inclination (true mass)


@dataclasses.dataclass
class PhotometryConfig:
    name: str
    file: Path                      # the first of ``files`` (messages)
    columns: dict
    time_offset_days: float
    exposure_min: float
    supersample: int                # None: chosen from the data (planetfit.fitting.models.exposure)
    limb_darkening: str
    band: str
    q1: object
    q2: object
    flux_level: object
    jitter_ppm: object
    normalise: bool
    files: list = None              # every file of the dataset, concatenated in time order
    quality_column: str = None
    quality_keep_bits: tuple = ()   # bit numbers counted from 1 (bit n has value 2**(n - 1))
    clip_sigma: float = 5.0         # 0: no clipping
    clip_window_days: float = 0.5
    segment_gap_days: float = 0.5
    near_transits_hours: float = None
    baseline: str = "constant"
    slope_per_day: object = None
    dilution: object = Fixed(0.0)
    gp_kernel: str = "sho"
    gp_sigma_ppm: object = None
    gp_rho_days: object = None
    gp_quality: object = None
    gp_shared_with: str = None      # another dataset whose GP hyperparameters this one uses
    header: bool = True             # False: columns given by 1-based number
    select: dict = dataclasses.field(default_factory=dict)  # column -> value of the rows to keep
    time_system: str = "BJD_TDB"
    section: str = "photometry[0]"  # the dataset's config key, for messages

    def __post_init__(self):
        if self.files is None:
            self.files = [self.file]


@dataclasses.dataclass
class VelocityConfig:
    name: str
    file: Path
    columns: dict
    time_offset_days: float
    offset_ms: object
    jitter_ms: object
    decorrelate: dict = dataclasses.field(default_factory=dict)  # indicator column -> prior (m/s per unit)
    activity_amplitude_ms: object = None
    header: bool = True
    select: dict = dataclasses.field(default_factory=dict)
    time_system: str = "BJD_TDB"
    section: str = "velocities[0]"


@dataclasses.dataclass
class RvTrendConfig:
    kind: str                       # linear or quadratic
    slope_ms_per_day: object
    curvature_ms_per_day2: object = None
    reference_bjd: float = None     # None: middle of the RV time span


@dataclasses.dataclass
class RvActivityConfig:
    rotation_period_days: object
    quality: object
    quality_difference: object
    mix: object


@dataclasses.dataclass
class SamplingConfig:
    walkers: int = 48
    max_steps: int = 20000
    check_every: int = 200
    autocorr_factor: float = 50.0
    autocorr_tolerance: float = 0.01
    optimiser_starts: int = 4


@dataclasses.dataclass
class Config:
    path: Path
    system: str
    seed: int
    output: Path
    star: StarConfig
    planets: list
    photometry: list
    velocities: list
    sampling: SamplingConfig
    raw: dict
    lines: dict
    rv_trend: RvTrendConfig = None
    rv_activity: RvActivityConfig = None


# ----------------------------------------------------------------- reading


def _count_nodes(node, memo):
    """Number of values ``node`` expands to, each alias counted in full (memoised per node)."""
    if id(node) not in memo:
        memo[id(node)] = 0  # a self-referencing alias counts once
        children = node.value if isinstance(node, yaml.SequenceNode) else (
            [n for pair in node.value for n in pair] if isinstance(node, yaml.MappingNode) else [])
        memo[id(node)] = 1 + sum(_count_nodes(c, memo) for c in children)
    return memo[id(node)]


def _key_lines(node, prefix=""):
    """Map dotted key paths to 1-based line numbers from a composed YAML node.

    Raises ValueError(key, line) for a key given twice in one mapping (YAML
    would silently keep the last).
    """
    lines = {}
    if isinstance(node, yaml.MappingNode):
        seen = set()
        for knode, vnode in node.value:
            key = f"{prefix}.{knode.value}" if prefix else str(knode.value)
            if knode.value in seen:
                raise ValueError(key, knode.start_mark.line + 1)
            seen.add(knode.value)
            lines[key] = knode.start_mark.line + 1
            lines.update(_key_lines(vnode, key))
    elif isinstance(node, yaml.SequenceNode):
        for i, vnode in enumerate(node.value):
            key = f"{prefix}[{i}]"
            lines[key] = vnode.start_mark.line + 1
            lines.update(_key_lines(vnode, key))
    return lines


def read_yaml(path):
    """Read a YAML file safely; return (data, key->line map)."""
    path = Path(path)
    with reading(path, "config file", "check the path; run 'planetfit demo' for a working example.",
                 "give a readable UTF-8 YAML file."):
        text = path.read_text()
    try:
        node = yaml.compose(text, Loader=yaml.SafeLoader)
        if node is not None and _count_nodes(node, {}) > MAX_YAML_NODES:
            raise InputError(f"the file expands to more than {MAX_YAML_NODES} values (nested aliases '*name').",
                             file=path, line=1, fix="write the config without nested anchors and aliases.")
        data = yaml.load(text, Loader=yaml.SafeLoader)
    except yaml.constructor.ConstructorError as exc:
        mark = exc.problem_mark
        raise InputError(f"a YAML tag is not accepted here ({exc.problem}); tags that build Python objects "
                         "are never executed.", file=path,
                         line=mark.line + 1 if mark else None, fix="remove the '!!' tag and write a plain value.") from None
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        problem = getattr(exc, "problem", None) or str(exc)
        raise InputError(f"the file is not valid YAML ({problem}).", file=path,
                         line=mark.line + 1 if mark else None,
                         fix="check indentation and that every 'key: value' pair has a space after the colon.") from None
    except RecursionError:
        raise InputError("the file nests too deeply.", file=path, line=1,
                         fix="write the config as a few levels of 'key: value' blocks.") from None
    if not isinstance(data, dict):
        raise InputError("the config must be a YAML mapping of keys such as 'star', 'planets', 'photometry'.",
                         file=path, line=1, fix="start from the demo config ('planetfit demo' writes one).")
    try:
        lines = _key_lines(node)
    except ValueError as exc:
        key, line = exc.args
        raise InputError("this key is given twice in the same block; YAML would silently keep only the last.",
                         file=path, key=key, line=line, fix="delete one of the two.") from None
    return data, lines


# ----------------------------------------------------------------- checking


class _Section:
    """Checks one mapping of the config and reports errors with file, key and line."""

    def __init__(self, ctx, data, key):
        self.ctx, self.key = ctx, key
        if not isinstance(data, dict):
            self.ctx.fail(key, f"expected a mapping of keys, got {type(data).__name__} {_show(data)}.",
                          "indent the keys of this block under it.")
        self.data = data
        self.used = set()

    def _k(self, name):
        return f"{self.key}.{name}" if self.key else name

    def has(self, name):
        return name in self.data and self.data[name] is not None

    def take(self, name, required=False, default=None):
        self.used.add(name)
        if name not in self.data or self.data[name] is None:
            if required:
                close = difflib.get_close_matches(name, [str(k) for k in self.data if k != name], n=1)
                if close:
                    self.ctx.fail(self._k(close[0]), f"unknown key, and the required key '{name}' is missing.",
                                  f"did you mean '{name}'?")
                self.ctx.fail(self.key or name, f"the required key '{name}' is missing.",
                              f"add '{name}:' to this block (see README, config reference).")
            return default
        return self.data[name]

    def number(self, name, required=False, default=None, positive=False, integer=False):
        value = self.take(name, required, default)
        if value is None:
            return None
        ok = isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value)
        if integer:
            ok = ok and float(value).is_integer()
        if ok and positive and not value > 0:
            self.ctx.fail(self._k(name), f"must be positive, got {value}.", "give a value above zero.")
        if not ok:
            kind = "an integer" if integer else "a finite number"
            self.ctx.fail(self._k(name), f"expected {kind}, got {_show(value)}.", f"write '{name}: <number>'.")
        return int(value) if integer else float(value)

    def text(self, name, required=False, default=None, choices=None):
        value = self.take(name, required, default)
        if value is None:
            return None
        if not isinstance(value, str):
            self.ctx.fail(self._k(name), f"expected text, got {_show(value)}.", f"write '{name}: <text>'.")
        if choices and value not in choices:
            self.ctx.fail(self._k(name), f"'{value}' is not one of {', '.join(choices)}.",
                          f"use one of: {', '.join(choices)}.")
        return value

    def flag(self, name, default):
        value = self.take(name, default=default)
        if not isinstance(value, bool):
            self.ctx.fail(self._k(name), f"expected true or false, got {_show(value)}.", f"write '{name}: true' or 'false'.")
        return value

    def prior(self, name, required=False, default=None):
        value = self.take(name, required)
        if value is None:
            return default
        try:
            return make_prior(value)
        except ValueError as exc:
            self.ctx.fail(self._k(name), f"invalid prior: {exc}.",
                          "write e.g. '{uniform: [lo, hi]}', '{normal: [mean, sd]}' or a number to fix it.")

    def path(self, name):
        value = self.text(name, required=True)
        return (self.ctx.path.parent / value).resolve()

    def paths(self, name):
        """One path or a non-empty list of paths (e.g. one file per sector)."""
        value = self.take(name, required=True)
        if isinstance(value, str):
            value = [value]
        if not isinstance(value, list) or not value or not all(isinstance(v, str) for v in value):
            self.ctx.fail(self._k(name), f"expected a file name or a list of file names, got {_show(value)}.",
                          f"write '{name}: data.fits' or '{name}: [sector-1.fits, sector-2.fits]'.")
        return [(self.ctx.path.parent / v).resolve() for v in value]

    def integers(self, name, lo, hi):
        """A list of integers in [lo, hi] (default: empty)."""
        value = self.take(name, default=[])
        ok = isinstance(value, list) and all(isinstance(v, int) and not isinstance(v, bool) and lo <= v <= hi
                                             for v in value)
        if not ok:
            self.ctx.fail(self._k(name), f"expected a list of integers from {lo} to {hi}, got {_show(value)}.",
                          f"write e.g. '{name}: [{lo}, {lo + 2}]'.")
        return tuple(value)

    def finish(self, allowed=None):
        """Reject keys that were not read, with a 'did you mean' hint."""
        known = set(allowed or ()) | self.used
        for extra in self.data:
            if extra not in known:
                close = difflib.get_close_matches(str(extra), sorted(known), n=1)
                hint = f"did you mean '{close[0]}'?" if close else f"allowed keys here: {', '.join(sorted(known))}."
                self.ctx.fail(self._k(str(extra)), "unknown key.", hint)


class _Context:
    def __init__(self, path, lines):
        self.path, self.lines = path, lines

    def fail(self, key, problem, fix):
        """Raise an InputError at ``key``'s line (or its nearest enclosing block's, if the key is absent)."""
        parent = key
        while parent and parent not in self.lines:
            parent = parent.rpartition(".")[0]
        raise InputError(problem, file=self.path, key=key, line=self.lines.get(parent), fix=fix)


def _check_star(ctx, data):
    s = _Section(ctx, data, "star")
    star = StarConfig(
        mass_msun=s.prior("mass_msun", required=True),
        radius_rsun=s.prior("radius_rsun", required=True),
        teff_k=s.prior("teff_k", required=True),
        age_gyr=s.prior("age_gyr"),
        mag_j=s.number("mag_j"),
        mag_k=s.number("mag_k"),
        ra_deg=s.number("ra_deg"),
        dec_deg=s.number("dec_deg"),
    )
    if star.ra_deg is not None and not 0 <= star.ra_deg < 360:
        ctx.fail("star.ra_deg", f"right ascension must lie in [0, 360) degrees, got {star.ra_deg}.",
                 "give the ICRS right ascension in degrees (hours x 15).")
    if star.dec_deg is not None and not -90 <= star.dec_deg <= 90:
        ctx.fail("star.dec_deg", f"declination must lie in [-90, 90] degrees, got {star.dec_deg}.",
                 "give the ICRS declination in degrees.")
    for name in ("mass_msun", "radius_rsun", "teff_k"):
        _positive_prior(ctx, f"star.{name}", getattr(star, name), name)
    s.finish()
    return star


def _positive_prior(ctx, key, prior, what):
    lo, _ = prior.bounds
    if not lo > 0 and not (isinstance(prior, Normal) and prior.mean > 5 * prior.sd):
        ctx.fail(key, f"the prior reaches zero or below; {what} must be positive.",
                 "raise the lower bound above zero (or use a normal prior with mean > 5 sd).")


def _check_planet(ctx, name, data):
    key = f"planets.{name}"
    s = _Section(ctx, data, key)
    transits = s.flag("transits", True)
    orbit = s.text("orbit", default="circular", choices=ORBITS)
    planet = PlanetConfig(
        name=str(name),
        period_days=s.prior("period_days", required=True),
        transit_bjd=s.prior("transit_bjd", required=True),
        rv_amplitude_ms=s.prior("rv_amplitude_ms", required=True),
        orbit=orbit, transits=transits)
    _positive_prior(ctx, f"{key}.period_days", planet.period_days, "the period")
    lo, _ = planet.rv_amplitude_ms.bounds
    if lo < 0:
        ctx.fail(f"{key}.rv_amplitude_ms", "the prior allows negative semi-amplitudes.",
                 "use a lower bound of 0 or above.")
    if transits:
        planet.radius_ratio = s.prior("radius_ratio", required=True)
        planet.impact = s.prior("impact", required=True)
        _positive_prior(ctx, f"{key}.radius_ratio", planet.radius_ratio, "the radius ratio")
        k_hi = planet.radius_ratio.bounds[1]
        b_lo, b_hi = planet.impact.bounds
        if b_lo < 0:
            ctx.fail(f"{key}.impact", "the impact parameter cannot be negative.", "use a lower bound of 0.")
        if b_lo >= 1 + min(k_hi, 1.0):
            ctx.fail(f"{key}.impact", f"the whole prior lies beyond 1 + radius ratio ({1 + k_hi:g}): no transit is possible.",
                     "use e.g. '{uniform: [0, 1]}'.")
        if b_hi > 1 + min(k_hi, 1.0):
            ctx.fail(f"{key}.impact", f"the prior reaches {b_hi:g}, beyond 1 + the largest radius ratio ({1 + k_hi:g}), "
                     "where the planet would not transit.",
                     f"cap the upper bound at {1 + min(k_hi, 1.0):g} or below, e.g. '{{uniform: [0, 1]}}'.")
    else:
        for extra in ("radius_ratio", "impact"):
            if s.has(extra):
                ctx.fail(f"{key}.{extra}", "this planet has 'transits: false', so it has no transit parameters.",
                         f"remove '{extra}', or set 'transits: true' if it does transit.")
        planet.inclination_deg = s.prior("inclination_deg")
        if planet.inclination_deg is not None:
            lo, hi = planet.inclination_deg.bounds
            if isinstance(planet.inclination_deg, Normal):
                lo, hi = (planet.inclination_deg.mean + f * planet.inclination_deg.sd for f in (-5, 5))
            if lo <= 0 or hi > 180:
                ctx.fail(f"{key}.inclination_deg", "the inclination must lie in (0, 180] degrees (0 is face-on, "
                         "where no RV signal exists).", "give e.g. '{normal: [88.5, 0.5]}' from the planet's transits.")
    if orbit == "eccentric":
        planet.eccentricity_max = s.number("eccentricity_max", default=0.9)
        if not 0 < planet.eccentricity_max < 1:
            ctx.fail(f"{key}.eccentricity_max", f"must lie in (0, 1), got {planet.eccentricity_max}.",
                     "use e.g. 0.9; bound orbits need e < 1.")
        planet.sqrt_e_cos_w = s.prior("sqrt_e_cos_w", default=Uniform(-1, 1))
        planet.sqrt_e_sin_w = s.prior("sqrt_e_sin_w", default=Uniform(-1, 1))
        for name in ("sqrt_e_cos_w", "sqrt_e_sin_w"):
            lo, hi = getattr(planet, name).bounds
            if lo < -1 or hi > 1:
                ctx.fail(f"{key}.{name}", "the prior reaches beyond [-1, 1], that is e > 1 (an unbound orbit).",
                         "keep it inside [-1, 1], e.g. '{uniform: [-1, 1]}' (eccentricity_max caps e further).")
    else:
        for extra in ("sqrt_e_cos_w", "sqrt_e_sin_w", "eccentricity_max"):
            if s.has(extra):
                ctx.fail(f"{key}.{extra}", "only eccentric orbits take eccentricity parameters.",
                         f"remove '{extra}' or set 'orbit: eccentric'.")
    if transits and s.has("inclination_deg"):
        ctx.fail(f"{key}.inclination_deg", "a transiting planet's inclination follows from its impact parameter.",
                 "remove 'inclination_deg' (it is for planets with 'transits: false').")
    s.finish(allowed=("radius_ratio", "impact", "sqrt_e_cos_w", "sqrt_e_sin_w", "eccentricity_max",
                      "inclination_deg"))
    return planet


def _column(ctx, key, value, header):
    """A file column as the config names it: a header name, or a 1-based number without a header."""
    if header:
        if isinstance(value, str):
            return value
        ctx.fail(key, f"columns are named by the file's header here, got {_show(value)}.",
                 "write the header's name, or set 'header: false' to give columns by number (1 = first field).")
    if isinstance(value, int) and not isinstance(value, bool) and value >= 1:
        return value
    ctx.fail(key, f"with 'header: false' columns are given by number (1 = the first field of a row), got {_show(value)}.",
             f"write e.g. '{key.rpartition('.')[2]}: 1', or remove 'header: false' if the file has a header line.")


def _check_columns(ctx, key, data, needed, header):
    s = _Section(ctx, data, key)
    cols = {n: _column(ctx, f"{key}.{n}", s.take(n, required=not header, default=n), header) for n in needed}
    s.finish()
    return cols


def _check_select(ctx, key, data, header):
    """``select: {COLUMN: VALUE}``: rows whose COLUMN equals VALUE (text, or a number compared as a number)."""
    if data is None:
        return {}
    s = _Section(ctx, data, key)
    if not s.data:
        ctx.fail(key, "the block names no column.", "write e.g. 'select: {instrument: HARPS}', or remove it.")
    out = {}
    for col, value in s.data.items():
        column = _column(ctx, f"{key}.{col}", col, header)
        if isinstance(value, bool) or not isinstance(value, (str, int, float)):
            ctx.fail(f"{key}.{col}", f"expected one value (text or a number), got {_show(value)}.",
                     f"write e.g. '{col}: HARPS'.")
        out[column] = value
    return out


def _check_reading(ctx, s, key, needed):
    """The keys saying how a dataset's table is read: header, columns, select, time_system."""
    header = s.flag("header", True)
    return {"header": header,
            "columns": _check_columns(ctx, f"{key}.columns", s.take("columns", default={}), needed, header),
            "select": _check_select(ctx, f"{key}.select", s.take("select"), header),
            "time_system": s.text("time_system", default="BJD_TDB", choices=TIME_SYSTEMS)}


def _dataset_name(s, key, seen, ctx):
    name = s.text("name", required=True)
    if name in seen:
        ctx.fail(f"{key}.name", f"the dataset name '{name}' is used twice.", "give every dataset its own name.")
    seen.add(name)
    return name


def _check_photometry(ctx, i, data, seen):
    key = f"photometry[{i}]"
    s = _Section(ctx, data, key)
    name = _dataset_name(s, key, seen, ctx)
    exposure = s.number("exposure_min", required=True, positive=True)
    files = s.paths("file")
    reading = _check_reading(ctx, s, key, ("time", "flux", "error"))
    header = reading["header"]
    if any(is_fits(f) for f in files):
        for name_, default in (("time_system", "BJD_TDB"), ("select", {}), ("header", True)):
            if reading[name_] != default:
                ctx.fail(f"{key}.{name_}", f"'{name_}' applies to text tables; FITS light curves carry their "
                         "columns and time system (TIMESYS) in their headers.", f"remove '{name_}'.")
    phot = PhotometryConfig(
        name=name, section=key, file=files[0], files=files,
        **reading,
        time_offset_days=s.number("time_offset_days", default=0.0),
        exposure_min=exposure,
        supersample=s.number("supersample", integer=True, positive=True),  # None: chosen when the data are read
        limb_darkening=s.text("limb_darkening", default="quadratic", choices=LIMB_DARKENING_LAWS),
        band=s.text("band", default=name),
        q1=s.prior("limb_darkening_q1", default=Uniform(0, 1)),
        q2=s.prior("limb_darkening_q2", default=Uniform(0, 1)),
        flux_level=s.prior("flux_level", default=Uniform(0.9, 1.1)),
        jitter_ppm=s.prior("jitter_ppm", default=Fixed(0.0)),
        normalise=s.flag("normalise", True),
        quality_column=(None if not s.has("quality_column") else
                        _column(ctx, f"{key}.quality_column", s.take("quality_column"), header)),
        quality_keep_bits=s.integers("quality_keep_bits", 1, 32),
        clip_sigma=s.number("clip_sigma", default=5.0),
        clip_window_days=s.number("clip_window_days", default=0.5, positive=True),
        segment_gap_days=s.number("segment_gap_days", default=0.5, positive=True),
        near_transits_hours=s.number("near_transits_hours", positive=True),
        baseline=s.text("baseline", default="constant", choices=BASELINES),
        dilution=s.prior("dilution", default=Fixed(0.0)))
    if phot.clip_sigma < 0:
        ctx.fail(f"{key}.clip_sigma", f"must be 0 (no clipping) or positive, got {phot.clip_sigma}.",
                 "use e.g. 5 (clip points more than 5 sigma from the running median).")
    if phot.quality_keep_bits and phot.quality_column is None:
        ctx.fail(f"{key}.quality_keep_bits", "bits to keep need a quality column.",
                 "add 'quality_column: <column name>' or remove 'quality_keep_bits'.")
    lo, hi = phot.dilution.bounds
    if lo < 0 or hi >= 1:
        ctx.fail(f"{key}.dilution", "the contaminating flux fraction must lie in [0, 1).",
                 "give e.g. 0.05, or '{uniform: [0, 0.2]}'.")
    if phot.baseline == "linear":
        phot.slope_per_day = s.prior("slope_per_day", default=Uniform(-0.01, 0.01))
    if phot.baseline == "gp":
        phot.gp_shared_with = s.text("gp_shared_with")
    if phot.gp_shared_with is not None:
        for own in ("gp_kernel", "gp_sigma_ppm", "gp_rho_days", "gp_quality"):
            if s.has(own):
                ctx.fail(f"{key}.{own}", f"this dataset takes its GP from '{phot.gp_shared_with}' (gp_shared_with).",
                         f"remove '{own}' here (set it on '{phot.gp_shared_with}'), or remove 'gp_shared_with'.")
    elif phot.baseline == "gp":
        phot.gp_kernel = s.text("gp_kernel", default="sho", choices=GP_KERNELS)
        phot.gp_sigma_ppm = s.prior("gp_sigma_ppm", default=LogUniform(1.0, 1e5))
        phot.gp_rho_days = s.prior("gp_rho_days", default=LogUniform(0.1, 50.0))
        for name_ in ("gp_sigma_ppm", "gp_rho_days"):
            _positive_prior(ctx, f"{key}.{name_}", getattr(phot, name_), name_)
        if phot.gp_kernel == "sho":
            phot.gp_quality = s.prior("gp_quality", default=Fixed(SHO_QUALITY_DEFAULT))
            _positive_prior(ctx, f"{key}.gp_quality", phot.gp_quality, "the quality factor")
    for q in ("q1", "q2"):
        lo, hi = getattr(phot, q).bounds
        if lo < 0 or hi > 1:
            ctx.fail(f"{key}.limb_darkening_{q}", "Kipping's q1 and q2 live in [0, 1].", "keep the prior inside [0, 1].")
    if phot.jitter_ppm.bounds[0] < 0:
        ctx.fail(f"{key}.jitter_ppm", "a jitter cannot be negative.", "use a lower bound of 0 or above.")
    _only_with(ctx, s, key, ("slope_per_day",), "baseline: linear")
    _only_with(ctx, s, key, ("gp_kernel", "gp_sigma_ppm", "gp_rho_days", "gp_quality", "gp_shared_with"),
               "baseline: gp")
    s.finish()
    return phot


def _check_shared_gps(ctx, photometry):
    """Each ``gp_shared_with`` names another dataset that has its own GP; copy that GP's kernel."""
    by_name = {p.name: p for p in photometry}
    for i, p in enumerate(photometry):
        if p.gp_shared_with is None:
            continue
        owner = by_name.get(p.gp_shared_with)
        if owner is None or owner is p or owner.baseline != "gp" or owner.gp_shared_with is not None:
            own_gps = [q.name for q in photometry if q.baseline == "gp" and q.gp_shared_with is None and q is not p]
            ctx.fail(f"photometry[{i}].gp_shared_with",
                     f"'{p.gp_shared_with}' is not another photometric dataset with its own GP.",
                     f"name one of: {', '.join(own_gps) or '(none: give a dataset baseline: gp and its own priors)'}.")
        p.gp_kernel = owner.gp_kernel


def _only_with(ctx, s, key, names, setting):
    """Reject keys given without the setting that uses them."""
    for extra in names:
        if extra not in s.used and s.has(extra):
            ctx.fail(f"{key}.{extra}", f"this key is used only with '{setting}'.",
                     f"remove '{extra}', or set '{setting}'.")


def _check_velocities(ctx, i, data, seen, activity):
    key = f"velocities[{i}]"
    s = _Section(ctx, data, key)
    name = _dataset_name(s, key, seen, ctx)
    raw_decorrelate = s.take("decorrelate", default={})
    ds = _Section(ctx, raw_decorrelate, f"{key}.decorrelate")
    reading = _check_reading(ctx, s, key, ("time", "rv", "error"))
    decorrelate = {_column(ctx, f"{key}.decorrelate.{col}", col, reading["header"]): ds.prior(col, required=True)
                   for col in list(ds.data)}
    for col in decorrelate:
        if col in reading["columns"].values():
            ctx.fail(f"{key}.decorrelate.{col}", "this column is already the time, RV or error column.",
                     "name an activity-indicator column of the file (e.g. line width or bisector span).")
    rv = VelocityConfig(
        name=name, section=key, file=s.path("file"),
        time_offset_days=s.number("time_offset_days", default=0.0),
        offset_ms=s.prior("offset_ms", required=True),
        jitter_ms=s.prior("jitter_ms", default=Fixed(0.0)),
        decorrelate=decorrelate, **reading)
    if activity:
        rv.activity_amplitude_ms = s.prior("activity_amplitude_ms", default=LogUniform(0.01, 50.0))
        _positive_prior(ctx, f"{key}.activity_amplitude_ms", rv.activity_amplitude_ms, "the activity amplitude")
    elif s.has("activity_amplitude_ms"):
        ctx.fail(f"{key}.activity_amplitude_ms", "an activity amplitude needs the shared 'rv_activity' block.",
                 "add a top-level 'rv_activity:' block, or remove this key.")
    if rv.jitter_ms.bounds[0] < 0:
        ctx.fail(f"{key}.jitter_ms", "a jitter cannot be negative.", "use a lower bound of 0 or above.")
    s.finish(allowed=("activity_amplitude_ms",))
    return rv


def _check_rv_trend(ctx, value):
    """``rv_trend: linear`` or a block {kind, slope_ms_per_day, curvature_ms_per_day2, reference_bjd}."""
    if value is None or value == "none":
        return None
    if isinstance(value, str):
        value = {"kind": value}
    s = _Section(ctx, value, "rv_trend")
    kind = s.text("kind", required=True, choices=RV_TRENDS)
    trend = RvTrendConfig(kind=kind, slope_ms_per_day=s.prior("slope_ms_per_day", default=Uniform(-1.0, 1.0)),
                          reference_bjd=s.number("reference_bjd"))
    if kind == "quadratic":
        trend.curvature_ms_per_day2 = s.prior("curvature_ms_per_day2", default=Uniform(-0.01, 0.01))
    s.finish(allowed=("curvature_ms_per_day2",))
    if kind == "none":
        return None
    if kind == "linear" and s.has("curvature_ms_per_day2"):
        ctx.fail("rv_trend.curvature_ms_per_day2", "a linear trend has no curvature.",
                 "remove the key or set 'kind: quadratic'.")
    return trend


def _check_rv_activity(ctx, value):
    """The shared rotation GP of the RVs (celerite2 RotationTerm), or None."""
    if value is None:
        return None
    s = _Section(ctx, value, "rv_activity")
    act = RvActivityConfig(rotation_period_days=s.prior("rotation_period_days", required=True),
                           quality=s.prior("quality", default=LogUniform(0.5, 50.0)),
                           quality_difference=s.prior("quality_difference", default=Fixed(1.0)),
                           mix=s.prior("mix", default=Fixed(0.5)))
    for name in ("rotation_period_days", "quality"):
        _positive_prior(ctx, f"rv_activity.{name}", getattr(act, name), name)
    for name in ("quality_difference", "mix"):
        if getattr(act, name).bounds[0] < 0:
            ctx.fail(f"rv_activity.{name}", "must not be negative.", "use a lower bound of 0 or above.")
    if act.mix.bounds[1] > 1:
        ctx.fail("rv_activity.mix", "the fraction of power at half the period lies in [0, 1].",
                 "keep the prior inside [0, 1].")
    s.finish()
    return act


def _check_list(ctx, key, value):
    if value is None:
        return []
    if not isinstance(value, list):
        ctx.fail(key, f"expected a list of datasets (lines starting with '- '), got {type(value).__name__}.",
                 f"write each dataset under '{key}:' as '- name: ...'.")
    return value


def load_config(path, output=None):
    """Read and validate a config file.

    Parameters
    ----------
    path : str or Path
        The YAML file.
    output : str or Path, optional
        Run directory overriding the config's ``output`` key.

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
    ctx = _Context(path, lines)
    top = _Section(ctx, data, "")
    system = str(top.take("system", default=path.stem))
    seed = top.number("seed", default=0, integer=True)
    out = top.text("output", default=f"runs/{path.stem}")
    star = _check_star(ctx, top.take("star", required=True))
    planets_raw = top.take("planets", required=True)
    if not isinstance(planets_raw, dict) or not planets_raw:
        ctx.fail("planets", "expected a mapping of planet names to their parameters.",
                 "write e.g. 'planets:' then 'b:' indented below it.")
    planets = [_check_planet(ctx, name, p) for name, p in planets_raw.items()]
    seen = set()
    photometry = [_check_photometry(ctx, i, d, seen)
                  for i, d in enumerate(_check_list(ctx, "photometry", top.take("photometry")))]
    _check_shared_gps(ctx, photometry)
    rv_activity = _check_rv_activity(ctx, top.take("rv_activity"))
    velocities = [_check_velocities(ctx, i, d, seen, rv_activity is not None)
                  for i, d in enumerate(_check_list(ctx, "velocities", top.take("velocities")))]
    rv_trend = _check_rv_trend(ctx, top.take("rv_trend"))
    for block, value in (("rv_trend", rv_trend), ("rv_activity", rv_activity)):
        if value is not None and not velocities:
            ctx.fail(block, "this block models radial velocities, and none are given.",
                     f"add a 'velocities' dataset or remove '{block}'.")
    for section, items in (("photometry", photometry), ("velocities", velocities)):
        for i, d in enumerate(items):
            if d.time_system in NEEDS_COORDINATES and (star.ra_deg is None or star.dec_deg is None):
                ctx.fail(f"{section}[{i}].time_system", f"{d.time_system} times need the star's sky position to "
                         "become BJD_TDB.", "add 'ra_deg' and 'dec_deg' (ICRS, degrees) to the 'star' block.")
    if not photometry and not velocities:
        ctx.fail("photometry", "the config has no data: neither 'photometry' nor 'velocities' lists a dataset.",
                 "add at least one dataset (see README, config reference).")
    if any(p.transits for p in planets) and not photometry:
        name = next(p.name for p in planets if p.transits)
        ctx.fail(f"planets.{name}.transits", "a transiting planet needs photometry, and none is given.",
                 "add a 'photometry' dataset, or set 'transits: false'.")
    if not velocities:
        for p in planets:
            if not p.rv_amplitude_ms.fixed:
                ctx.fail(f"planets.{p.name}.rv_amplitude_ms", "no radial velocities are given to constrain it.",
                         "fix it to 0 (transit-only fit) or add a 'velocities' dataset.")
    sampling_raw = top.take("sampling", default={})
    ss = _Section(ctx, sampling_raw, "sampling")
    defaults = SamplingConfig()
    sampling = SamplingConfig(
        walkers=ss.number("walkers", default=defaults.walkers, integer=True, positive=True),
        max_steps=ss.number("max_steps", default=defaults.max_steps, integer=True, positive=True),
        check_every=ss.number("check_every", default=defaults.check_every, integer=True, positive=True),
        autocorr_factor=ss.number("autocorr_factor", default=defaults.autocorr_factor, positive=True),
        autocorr_tolerance=ss.number("autocorr_tolerance", default=defaults.autocorr_tolerance, positive=True),
        optimiser_starts=ss.number("optimiser_starts", default=defaults.optimiser_starts, integer=True, positive=True))
    ss.finish()
    top.finish(allowed=("climate",))
    output_dir = Path(output).resolve() if output is not None else (path.parent / out).resolve()
    return Config(path=path, system=system, seed=seed, output=output_dir, star=star, planets=planets,
                  photometry=photometry, velocities=velocities, sampling=sampling, raw=data, lines=lines,
                  rv_trend=rv_trend, rv_activity=rv_activity)
