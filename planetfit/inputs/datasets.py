"""Reading photometry and radial-velocity tables into checked arrays.

Tables are CSV or whitespace-separated text, with or without a header line
(:mod:`planetfit.inputs.tables`), or, for photometry, FITS binary tables
(:mod:`planetfit.inputs.fits`). The config maps our quantities (time, flux,
error / time, rv, error, plus a quality bitmask and activity indicators) to
the file's columns, and may keep only the rows of one instrument
(``select``). Text times become full Julian dates by adding
``time_offset_days`` and BJD_TDB by their ``time_system``
(:mod:`planetfit.inputs.timesystems`); FITS times by their header's reference
date. Rows are sorted by time; repeated time stamps are kept. Rows
flagged in the quality column and rows with NaN are dropped and counted;
light curves are then normalised per contiguous segment and clipped of
outliers outside predicted transits (:mod:`planetfit.inputs.cleaning`). Everything
else that is wrong stops with an :class:`~planetfit.core.errors.InputError`
naming the file, column or line.
"""

import dataclasses
import logging

import numpy as np

from planetfit.core.errors import InputError
from planetfit.core.units import HOURS_PER_DAY, MINUTES_PER_DAY
from planetfit.inputs import cleaning, plausibility, products
from planetfit.inputs.fits import is_fits
from planetfit.inputs.tables import read_table
from planetfit.inputs.timesystems import check_time_references, to_bjd_tdb

log = logging.getLogger("planetfit")


@dataclasses.dataclass
class Reading:
    """How a dataset's rows were read: its time system, sorting, repeats, selection and warnings."""

    time_system: str = "BJD_TDB"
    sorted_by_time: bool = False
    repeated_times: int = 0
    rows_read: int = 0
    rows_selected: int = 0
    warnings: list = dataclasses.field(default_factory=list)
    product: dict = dataclasses.field(default_factory=dict)  # light curves: exposure, its source, the quality rule

    def counts(self):
        """The reading facts of the ``data`` block of summary.json."""
        return {
            "time_system": self.time_system,
            "sorted_by_time": self.sorted_by_time,
            "repeated_times": self.repeated_times,
            "rows_read": self.rows_read,
            "rows_selected": self.rows_selected,
            **self.product,
        }


@dataclasses.dataclass
class Photometry:
    """One photometric dataset: times in BJD_TDB, normalised flux and errors."""

    name: str
    time: np.ndarray
    flux: np.ndarray
    error: np.ndarray
    exposure_days: float
    band: str
    dropped_nan: int = 0
    normalisation: float = 1.0
    segment: np.ndarray = None  # contiguous-segment label of every point
    dropped_quality: int = 0
    clipped: int = 0
    dropped_far_from_transits: int = 0
    reading: Reading = dataclasses.field(default_factory=Reading)
    regressors: dict = dataclasses.field(default_factory=dict)  # file column -> values (baseline regressors)

    def counts(self):
        """Point counts of the cleaning steps and how the rows were read (the ``data`` block of summary.json)."""
        return {
            "points": int(self.time.size),
            "dropped_nan": self.dropped_nan,
            "dropped_quality": self.dropped_quality,
            "clipped": self.clipped,
            "dropped_far_from_transits": self.dropped_far_from_transits,
            "segments": int(np.unique(self.segment).size) if self.segment is not None else 1,
            **self.reading.counts(),
        }


@dataclasses.dataclass
class Velocities:
    """One spectrograph's radial velocities (m/s) at times in BJD_TDB."""

    name: str
    time: np.ndarray
    rv: np.ndarray
    error: np.ndarray
    dropped_nan: int = 0
    indicators: dict = dataclasses.field(default_factory=dict)  # column -> values minus their median
    reading: Reading = dataclasses.field(default_factory=Reading)

    def counts(self):
        """Point counts (the ``data`` block of summary.json)."""
        return {"points": int(self.time.size), "dropped_nan": self.dropped_nan, **self.reading.counts()}


def _clean(path, table, cfg, rule=None):
    """Drop NaN rows, reject inf and non-positive errors, sort by time; return (table, dropped, facts).

    ``rule`` (a light curve's :class:`~planetfit.inputs.products.QualityRule`) names the quality flags of
    rejected rows in the message.
    """
    name = cfg.name
    nan_rows = np.any([np.isnan(v) for v in table.values()], axis=0)
    good = ~nan_rows
    dropped = int(nan_rows.sum())
    if dropped:
        log.info("%s: dropped %d rows with NaN values", name, dropped)
    t = {k: v[good] for k, v in table.items()}
    if t["time"].size == 0:
        raise InputError(
            "no rows are left after dropping those with NaN values.",
            file=path,
            fix="check the columns chosen in 'columns:'.",
        )
    for k, v in t.items():
        if not np.all(np.isfinite(v)):
            raise InputError(
                f"column for {k} holds infinite values.",
                file=path,
                key=f"{cfg.section}.columns.{k}",
                fix="remove those rows or replace them by NaN to have them dropped.",
            )
    bad = np.flatnonzero(t["error"] <= 0)
    if bad.size:
        products.non_positive_errors(path, t, bad, cfg, rule)
    unsorted = bool(np.any(np.diff(t["time"]) < 0))
    if unsorted:  # published tables are often grouped by instrument or night, not sorted by time
        order = np.argsort(t["time"], kind="stable")
        t = {k: v[order] for k, v in t.items()}
        log.info("%s: rows sorted by time", name)
    # Two exposures with the same recorded mid-time are two measurements: both are kept.
    repeated = int(np.sum(np.diff(t["time"]) == 0))
    return t, dropped, {"sorted_by_time": unsorted, "repeated_times": repeated}


def quality_mask(quality, keep_bits):
    """True for rows whose quality bitmask has a set bit outside ``keep_bits`` (bit n has value 2**(n - 1))."""
    keep = sum(1 << (b - 1) for b in keep_bits)
    return products.QualityRule(drop_mask=products.ALL_BITS & ~keep).flagged(quality)


def label_warning(cfg, path, label_columns, what):
    """The warning for a table whose text column holds several labels (instruments) and no ``select`` picks one."""
    if cfg.select or not label_columns:
        return None
    col, counts = next(iter(label_columns.items()))
    listed = ", ".join(f"{value} ({n} rows)" for value, n in counts.items())
    return (
        f"dataset '{cfg.name}': column '{col}' of {path.name} holds {len(counts)} different labels ({listed}) "
        f"and no 'select' picks one, so all rows are fitted as one instrument ({what}). Fix: give one dataset "
        f"per label, each with 'select: {{{col}: <label>}}' (several datasets may name the same file)."
    )


def _text_table(cfg, path, columns, what):
    """Columns of a text table (times in full JD of the dataset's system) and a label warning or None."""
    keys = {o: "baseline.regressors" for o in columns if o.startswith(products.REGRESSOR)}
    table = read_table(
        path,
        columns,
        header=cfg.header,
        select=cfg.select,
        key_prefix=f"{cfg.section}.",
        keys=keys,
        max_mb=cfg.max_file_mb,
    )
    out = dict(table.columns)
    out["time"] = out["time"] + cfg.time_offset_days
    return out, (table.rows_read, table.rows_kept), label_warning(cfg, path, table.label_columns, what)


def _to_bjd(cfg, time, star):
    """Times of a dataset's ``time_system`` in BJD_TDB."""
    if cfg.time_system == "BJD_TDB":
        return time
    return to_bjd_tdb(time, cfg.time_system, getattr(star, "ra_deg", None), getattr(star, "dec_deg", None))


def _read_light_curve(cfg, path):
    """One file's table (full JD times) with its quality rule, (rows read, kept), cadence and a warning."""
    if is_fits(path):
        if cfg.time_offset_days != 0.0:
            raise InputError(
                "FITS light curves carry their own time reference (BJDREFI + BJDREFF); "
                "'time_offset_days' would shift them twice.",
                file=path,
                key=f"{cfg.section}.time_offset_days",
                fix="remove 'time_offset_days' from this dataset.",
            )
        table, rule, cadence = products.read_fits_photometry(cfg, path)
        return table, rule, (table["time"].size,) * 2, cadence, None
    rule = products.quality_rule(cfg, None, path)
    columns = cfg.columns.model_dump() | ({"quality": rule.column} if rule.column is not None else {})
    columns |= {f"{products.REGRESSOR}{c}": c for c in cfg.regressor_columns}
    table, rows, warning = _text_table(cfg, path, columns, "one flux level and one jitter")
    if "quality" in table:
        table["quality"] = np.nan_to_num(table["quality"], nan=0.0)
    return table, rule, rows, (None, None), warning


def _drop_flagged(table, rule):
    """The rows of ``table`` without a flag of ``rule``, and how many were dropped."""
    if "quality" not in table:
        return table, 0
    bad = rule.flagged(table["quality"])
    return {k: v[~bad] for k, v in table.items()}, int(bad.sum())


def read_photometry(cfg, star=None):
    """Read one photometry dataset: rows flagged or NaN dropped, times in BJD_TDB, fluxes as in the file.

    Parameters
    ----------
    cfg : PhotometryConfig
        Several ``files`` are concatenated in time order.
    star : StarConfig
        Its sky position converts HJD_UTC times.
    """
    parts, flagged, rows, warnings, cadences = [], 0, np.zeros(2, dtype=int), [], []
    for path in cfg.files:
        table, rule, counted, cadence, warning = _read_light_curve(cfg, path)
        table, n = _drop_flagged(table, rule)
        parts.append(table)
        flagged += n
        rows += counted
        cadences.append(cadence)
        warnings += [warning] if warning else []
    exposure, exposure_from = products.exposure_min(cfg, cadences)
    table = {k: np.concatenate([t[k] for t in parts]) for k in parts[0]}
    if flagged:
        log.info("%s: dropped %d rows with quality flags set (%s)", cfg.name, flagged, rule.source)
    table, dropped, facts = _clean(cfg.path, table, cfg, rule)
    table.pop("quality", None)
    regressors = {c: table.pop(f"{products.REGRESSOR}{c}") for c in cfg.regressor_columns}
    reading = Reading(
        time_system=cfg.time_system, rows_read=int(rows[0]), rows_selected=int(rows[1]), warnings=warnings, **facts
    )
    reading.product = {"exposure_min": exposure, "exposure_from": exposure_from, "quality_flags": rule.source}
    time = _to_bjd(cfg, table["time"], star)
    return Photometry(
        name=cfg.name,
        time=time,
        flux=table["flux"],
        error=table["error"],
        exposure_days=exposure / MINUTES_PER_DAY,
        band=cfg.band_name,
        dropped_nan=dropped,
        segment=cleaning.segment_labels(time, cfg.segment_gap_days),
        dropped_quality=flagged,
        reading=reading,
        regressors=regressors,
    )


def _normalise(d, cfg):
    """Divide each segment's flux and errors by its median flux (in place); return the first segment's median."""
    levels = [float(np.median(d.flux[seg])) for seg in cleaning.segment_slices(d.segment)]
    if not min(levels) > 0:
        raise InputError(
            "the median flux is not positive, so it cannot be normalised.",
            file=cfg.path,
            key=f"{cfg.section}.columns.flux",
            fix="give fluxes (not magnitudes or differences), or set 'normalise: false'.",
        )
    for seg, level in zip(cleaning.segment_slices(d.segment), levels):
        d.flux[seg], d.error[seg] = d.flux[seg] / level, d.error[seg] / level
    return levels[0]  # reported; every segment is normalised to its own


def clean_photometry(d, cfg, planets=(), star=None, lit=()):
    """Normalise a dataset of :func:`read_photometry` per segment and clip it; return the cleaned dataset.

    Parameters
    ----------
    d : Photometry
    cfg : PhotometryConfig
    planets : list of PlanetConfig
        Their predicted transits are spared by the clipping and, with
        ``near_transits_hours``, alone kept.
    star : StarConfig
        Sets the longest transit the priors allow.
    lit : collection of str
        Planets whose light is fitted in the dataset's band: their predicted eclipses are spared too.
    """
    if cfg.normalise:
        d.normalisation = _normalise(d, cfg)
    keep = np.ones(d.time.size, dtype=bool)
    if planets:
        in_transit = cleaning.near_transits(d.time, planets, star)
        in_transit |= cleaning.near_eclipses(d.time, [p for p in planets if p.name in lit], star)
        out = cleaning.sigma_clip(d.time, d.flux, d.segment, in_transit, cfg.clip_sigma, cfg.clip_window_days)
        d.clipped = int(out.sum())
        keep &= ~out
        if cfg.near_transits_hours is not None:
            near = cleaning.near_transits(d.time, planets, star, cfg.near_transits_hours / HOURS_PER_DAY)
            d.dropped_far_from_transits = int((keep & ~near).sum())
            keep &= near
        if d.clipped or d.dropped_far_from_transits:
            log.info(
                "%s: clipped %d outliers (%.1f sigma), dropped %d points far from predicted transits",
                cfg.name,
                d.clipped,
                cfg.clip_sigma,
                d.dropped_far_from_transits,
            )
        if not keep.any():
            raise InputError(
                "no points are left near the predicted transits.",
                file=cfg.path,
                key=f"{cfg.section}.near_transits_hours",
                fix="check the ephemeris priors, or widen the window.",
            )
    return dataclasses.replace(
        d,
        time=d.time[keep],
        flux=d.flux[keep],
        error=d.error[keep],
        segment=d.segment[keep],
        regressors={c: v[keep] for c, v in d.regressors.items()},
    )


def load_photometry(cfg, planets=(), star=None):
    """:func:`read_photometry` then :func:`clean_photometry`."""
    return clean_photometry(read_photometry(cfg, star), cfg, planets, star)


def load_velocities(cfg, star=None):
    """Read one RV dataset from its :class:`~planetfit.inputs.config.VelocityConfig`.

    Activity indicators named in ``decorrelate`` are read as extra columns
    and centred on their medians. ``star`` gives the sky position that
    HJD_UTC times need.
    """
    columns = dict(cfg.columns.model_dump(), **{f"indicator:{c}": c for c in cfg.decorrelate})
    table, rows, warning = _text_table(cfg, cfg.path, columns, "one offset and one jitter")
    table, dropped, facts = _clean(cfg.path, table, cfg)
    indicators = {c: table[f"indicator:{c}"] - np.median(table[f"indicator:{c}"]) for c in cfg.decorrelate}
    reading = Reading(
        time_system=cfg.time_system,
        rows_read=rows[0],
        rows_selected=rows[1],
        warnings=[warning] if warning else [],
        **facts,
    )
    return Velocities(
        name=cfg.name,
        time=_to_bjd(cfg, table["time"], star),
        rv=table["rv"],
        error=table["error"],
        dropped_nan=dropped,
        indicators=indicators,
        reading=reading,
    )


def load_all(config):
    """Read and check every dataset of a config.

    Returns
    -------
    (list of Photometry, list of Velocities)
    """
    plausibility.check_rows_used_once(config)
    phot = [read_photometry(c, config.star) for c in config.photometry]
    rvs = [load_velocities(c, config.star) for c in config.velocities]
    plausibility.check_read(config, phot, rvs)
    # Times are checked before the cleaning, which keeps only points near transits predicted in BJD_TDB.
    check_time_references(
        config,
        [(c, d, f"photometry[{i}]") for i, (c, d) in enumerate(zip(config.photometry, phot))]
        + [(c, d, f"velocities[{i}]") for i, (c, d) in enumerate(zip(config.velocities, rvs))],
    )
    lit = {(c.band_name, name) for c in config.photometry for name in c.planet_light}
    phot = [
        clean_photometry(d, c, config.planets, config.star, {n for b, n in lit if b == c.band_name})
        for d, c in zip(phot, config.photometry)
    ]
    plausibility.check_transits_in_data(config, phot)
    return phot, rvs
