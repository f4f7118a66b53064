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
from planetfit.inputs import cleaning, plausibility
from planetfit.inputs.fits import is_fits, read_fits_table
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

    def counts(self):
        """The reading facts of the ``data`` block of summary.json."""
        return {
            "time_system": self.time_system,
            "sorted_by_time": self.sorted_by_time,
            "repeated_times": self.repeated_times,
            "rows_read": self.rows_read,
            "rows_selected": self.rows_selected,
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


def _clean(path, table, cfg):
    """Drop NaN rows, reject inf and non-positive errors, sort by time; return (table, dropped, facts)."""
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
        raise InputError(
            f"{bad.size} rows have zero or negative uncertainties (first at time {t['time'][bad[0]]:.6f}).",
            file=path,
            key=f"{cfg.section}.columns.error",
            fix="give positive 1-sigma uncertainties, or remove those rows.",
        )
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
    flags = quality.astype(np.int64)
    return (flags & ~keep) != 0


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
    table = read_table(path, columns, header=cfg.header, select=cfg.select, key_prefix=f"{cfg.section}.")
    out = dict(table.columns)
    out["time"] = out["time"] + cfg.time_offset_days
    return out, (table.rows_read, table.rows_kept), label_warning(cfg, path, table.label_columns, what)


def _to_bjd(cfg, time, star):
    """Times of a dataset's ``time_system`` in BJD_TDB."""
    if cfg.time_system == "BJD_TDB":
        return time
    return to_bjd_tdb(time, cfg.time_system, getattr(star, "ra_deg", None), getattr(star, "dec_deg", None))


def _read_light_curve(cfg, path):
    """One file's table (full JD times), its quality-flagged rows dropped, (rows read, kept) and a warning."""
    columns = cfg.columns.model_dump()
    if cfg.quality_column is not None:
        columns["quality"] = cfg.quality_column
    rows, warning = None, None
    if is_fits(path):
        if cfg.time_offset_days != 0.0:
            raise InputError(
                "FITS light curves carry their own time reference (BJDREFI + BJDREFF); "
                "'time_offset_days' would shift them twice.",
                file=path,
                key=f"{cfg.section}.time_offset_days",
                fix="remove 'time_offset_days' from this dataset.",
            )
        table = read_fits_table(path, columns)
        rows = (table["time"].size,) * 2
    else:
        table, rows, warning = _text_table(cfg, path, columns, "one flux level and one jitter")
    flagged = 0
    if "quality" in table:
        quality = np.nan_to_num(table.pop("quality"), nan=0.0)
        bad = quality_mask(quality, cfg.quality_keep_bits)
        flagged = int(bad.sum())
        table = {k: v[~bad] for k, v in table.items()}
    return table, flagged, rows, warning


def read_photometry(cfg, star=None):
    """Read one photometry dataset: rows flagged or NaN dropped, times in BJD_TDB, fluxes as in the file.

    Parameters
    ----------
    cfg : PhotometryConfig
        Several ``files`` are concatenated in time order.
    star : StarConfig
        Its sky position converts HJD_UTC times.
    """
    parts, flagged, rows, warnings = [], 0, np.zeros(2, dtype=int), []
    for path in cfg.files:
        table, n, counted, warning = _read_light_curve(cfg, path)
        parts.append(table)
        flagged += n
        rows += counted
        warnings += [warning] if warning else []
    table = {k: np.concatenate([t[k] for t in parts]) for k in parts[0]}
    if flagged:
        log.info("%s: dropped %d rows with quality flags set", cfg.name, flagged)
    table, dropped, facts = _clean(cfg.path, table, cfg)
    reading = Reading(
        time_system=cfg.time_system, rows_read=int(rows[0]), rows_selected=int(rows[1]), warnings=warnings, **facts
    )
    time = _to_bjd(cfg, table["time"], star)
    return Photometry(
        name=cfg.name,
        time=time,
        flux=table["flux"],
        error=table["error"],
        exposure_days=cfg.exposure_min / MINUTES_PER_DAY,
        band=cfg.band_name,
        dropped_nan=dropped,
        segment=cleaning.segment_labels(time, cfg.segment_gap_days),
        dropped_quality=flagged,
        reading=reading,
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
    return dataclasses.replace(d, time=d.time[keep], flux=d.flux[keep], error=d.error[keep], segment=d.segment[keep])


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
