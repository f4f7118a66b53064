"""Reading photometry and radial-velocity tables into checked arrays.

Tables are CSV or whitespace-separated text with a header line naming the
columns (lines starting with ``#`` are comments), or, for photometry, FITS
binary tables (:mod:`planetfit.fits_io`). The config maps our quantities
(time, flux, error / time, rv, error, plus a quality bitmask and activity
indicators) to the file's column names. Text times become BJD_TDB by adding
``time_offset_days``; FITS times by their header's reference date. Rows
flagged in the quality column and rows with NaN are dropped and counted;
light curves are then normalised per contiguous segment and clipped of
outliers outside predicted transits (:mod:`planetfit.cleaning`). Everything
else that is wrong stops with an :class:`~planetfit.errors.InputError`
naming the file, column or line.
"""

import dataclasses
import logging

import numpy as np

from . import cleaning
from .errors import DATA_FILE_MISSING_FIX, InputError, reading
from .fits_io import is_fits, read_fits_table
from .models import exposure
from .units import HOURS_PER_DAY, MINUTES_PER_DAY

log = logging.getLogger("planetfit")

#: Plausible BJD_TDB range for modern data: JD 2433282.5 is 1950-01-01, JD 2488069.5 is 2100-01-01.
BJD_PLAUSIBLE = (2433282.5, 2488069.5)
#: Datasets further apart than this (days, ~30 years) are taken to be in different time systems.
MAX_ERA_GAP_DAYS = 11000.0
#: Offsets in common use, tried when suggesting a fix for times outside the plausible range.
COMMON_OFFSETS = {2457000.0: "mission-relative BJD (BJD - 2457000)",
                  2454833.0: "mission-relative BJD (BJD - 2454833)",
                  2400000.5: "Modified Julian Date (JD - 2400000.5)",
                  2450000.0: "truncated BJD (BJD - 2450000)",
                  2400000.0: "reduced JD (JD - 2400000)"}


@dataclasses.dataclass
class Photometry:
    """One photometric dataset: times in BJD_TDB, normalised flux and errors."""

    name: str
    time: np.ndarray
    flux: np.ndarray
    error: np.ndarray
    exposure_days: float
    supersample: int                # sub-exposures per exposure (planetfit.models.exposure)
    band: str
    dropped_nan: int = 0
    normalisation: float = 1.0
    segment: np.ndarray = None      # contiguous-segment label of every point
    dropped_quality: int = 0
    clipped: int = 0
    dropped_far_from_transits: int = 0
    integration_error_ppm: float = 0.0  # largest exposure-integration error of the sharpest transit allowed
    exposure_warning: str = None    # set when that error exceeds a tenth of the median flux error

    def counts(self):
        """Point counts of the cleaning steps and the exposure integration (the ``data`` block of summary.json)."""
        return {"points": int(self.time.size), "dropped_nan": self.dropped_nan,
                "dropped_quality": self.dropped_quality, "clipped": self.clipped,
                "dropped_far_from_transits": self.dropped_far_from_transits,
                "segments": int(np.unique(self.segment).size) if self.segment is not None else 1,
                "supersample": self.supersample, "integration_error_ppm": self.integration_error_ppm}


@dataclasses.dataclass
class Velocities:
    """One spectrograph's radial velocities (m/s) at times in BJD_TDB."""

    name: str
    time: np.ndarray
    rv: np.ndarray
    error: np.ndarray
    dropped_nan: int = 0
    indicators: dict = dataclasses.field(default_factory=dict)  # column -> values minus their median

    def counts(self):
        """Point counts (the ``data`` block of summary.json)."""
        return {"points": int(self.time.size), "dropped_nan": self.dropped_nan}


def _split(line, sep):
    return [c.strip() for c in (line.split(",") if sep == "," else line.split())]


def read_table(path, columns):
    """Read the named columns of a CSV or whitespace text table.

    Parameters
    ----------
    path : Path
        File with a header line of column names.
    columns : dict
        Our name -> the file's column name.

    Returns
    -------
    dict of ndarray
        Our name -> float array (NaN kept; the caller decides).
    """
    with reading(path, "data file", DATA_FILE_MISSING_FIX,
                 "give a readable CSV or whitespace-separated text file with a header line."):
        text = path.read_text()
    rows = [(n + 1, ln) for n, ln in enumerate(text.splitlines()) if ln.strip() and not ln.lstrip().startswith("#")]
    if not rows:
        raise InputError("the file is empty.", file=path, fix="give a table with a header line and data rows.")
    header_line, header = rows[0]
    sep = "," if "," in header else None
    names = _split(header, sep)
    if len(rows) < 2:
        raise InputError("the table has a header but no data rows.", file=path, line=header_line,
                         fix="add data rows below the header.")
    index = {}
    for ours, theirs in columns.items():
        if theirs not in names:
            raise InputError(f"no column named '{theirs}' (for {ours}); the header has: {', '.join(names)}.",
                             file=path, line=header_line, key=f"columns.{ours}",
                             fix=f"set 'columns: {{{ours}: <one of those names>}}' in the config.")
        index[ours] = names.index(theirs)
    out = {ours: np.empty(len(rows) - 1) for ours in columns}
    for r, (lineno, line) in enumerate(rows[1:]):
        cells = _split(line, sep)
        if len(cells) != len(names):
            raise InputError(f"the row has {len(cells)} fields but the header has {len(names)}.",
                             file=path, line=lineno, fix="make every row match the header.")
        for ours, i in index.items():
            try:
                out[ours][r] = float(cells[i])
            except ValueError:
                raise InputError(f"'{cells[i]}' in column '{columns[ours]}' is not a number.", file=path,
                                 line=lineno, fix="remove or correct the row (write NaN for a missing value).") from None
    return out


def _clean(path, table, name):
    """Drop NaN rows, then reject inf, non-positive errors, duplicated or unsorted times."""
    nan_rows = np.any([np.isnan(v) for v in table.values()], axis=0)
    good = ~nan_rows
    dropped = int(nan_rows.sum())
    if dropped:
        log.info("%s: dropped %d rows with NaN values", name, dropped)
    t = {k: v[good] for k, v in table.items()}
    if t["time"].size == 0:
        raise InputError("no rows are left after dropping those with NaN values.", file=path,
                         fix="check the columns chosen in 'columns:'.")
    for k, v in t.items():
        if not np.all(np.isfinite(v)):
            raise InputError(f"column for {k} holds infinite values.", file=path, key=f"columns.{k}",
                             fix="remove those rows or replace them by NaN to have them dropped.")
    bad = np.flatnonzero(t["error"] <= 0)
    if bad.size:
        raise InputError(f"{bad.size} rows have zero or negative uncertainties (first at time {t['time'][bad[0]]:.6f}).",
                         file=path, key="columns.error",
                         fix="give positive 1-sigma uncertainties, or remove those rows.")
    dt = np.diff(t["time"])
    if np.any(dt == 0):
        i = np.flatnonzero(dt == 0)[0]
        raise InputError(f"time {t['time'][i]:.6f} appears more than once.", file=path, key="columns.time",
                         fix="remove duplicated rows, or average them into one.")
    if np.any(dt < 0):
        i = np.flatnonzero(dt < 0)[0]
        raise InputError(f"times are not in increasing order (at {t['time'][i + 1]:.6f} after {t['time'][i]:.6f}).",
                         file=path, key="columns.time", fix="sort the file by time.")
    return t, dropped


def quality_mask(quality, keep_bits):
    """True for rows whose quality bitmask has a set bit outside ``keep_bits`` (bit n has value 2**(n - 1))."""
    keep = sum(1 << (b - 1) for b in keep_bits)
    flags = quality.astype(np.int64)
    return (flags & ~keep) != 0


def _read_light_curve(cfg, path):
    """One file's table (times in BJD_TDB) and its count of quality-flagged rows dropped."""
    columns = dict(cfg.columns)
    if cfg.quality_column is not None:
        columns["quality"] = cfg.quality_column
    if is_fits(path):
        if cfg.time_offset_days != 0.0:
            raise InputError("FITS light curves carry their own time reference (BJDREFI + BJDREFF); "
                             "'time_offset_days' would shift them twice.", file=path, key="time_offset_days",
                             fix="remove 'time_offset_days' from this dataset.")
        table = read_fits_table(path, columns)
    else:
        table = read_table(path, columns)
        table["time"] = table["time"] + cfg.time_offset_days
    flagged = 0
    if "quality" in table:
        quality = np.nan_to_num(table.pop("quality"), nan=0.0)
        bad = quality_mask(quality, cfg.quality_keep_bits)
        flagged = int(bad.sum())
        table = {k: v[~bad] for k, v in table.items()}
    return table, flagged


def _normalise(cfg, flux, error, segment):
    """Divide flux and error of every segment by its median flux, in place; return the first segment's median."""
    levels = [float(np.median(flux[seg])) for seg in cleaning.segment_slices(segment)]
    if not min(levels) > 0:
        raise InputError("the median flux is not positive, so it cannot be normalised.", file=cfg.file,
                         key="columns.flux",
                         fix="give fluxes (not magnitudes or differences), or set 'normalise: false'.")
    for seg, level in zip(cleaning.segment_slices(segment), levels):
        flux[seg], error[seg] = flux[seg] / level, error[seg] / level
    return levels[0]  # reported; every segment is normalised to its own median


def load_photometry(cfg, planets=(), star=None, limb_darkening=None):
    """Read, clean and normalise one photometry dataset; choose its sub-exposures.

    Parameters
    ----------
    cfg : PhotometryConfig
        Several ``files`` are concatenated in time order.
    planets : list of PlanetConfig
        Their predicted transits are spared by the clipping and, with
        ``near_transits_hours``, alone kept.
    star : StarConfig
        Sets the longest transit the priors allow.
    limb_darkening : (Prior, Prior), optional
        The band's q1, q2 priors (those of its first dataset); ``cfg``'s by default.
    """
    parts, flagged = [], 0
    for path in cfg.files:
        table, n = _read_light_curve(cfg, path)
        parts.append(table)
        flagged += n
    parts.sort(key=lambda t: np.nanmin(t["time"]) if t["time"].size else 0.0)
    table = {k: np.concatenate([t[k] for t in parts]) for k in parts[0]}
    if flagged:
        log.info("%s: dropped %d rows with quality flags set", cfg.name, flagged)
    table, dropped = _clean(cfg.file, table, cfg.name)
    time, flux, error = table["time"], table["flux"], table["error"]
    segment = cleaning.segment_labels(time, cfg.segment_gap_days)
    norm = _normalise(cfg, flux, error, segment) if cfg.normalise else 1.0
    keep = np.ones(time.size, dtype=bool)
    clipped = far = 0
    if planets:
        in_transit = cleaning.near_transits(time, planets, star)
        out = cleaning.sigma_clip(time, flux, segment, in_transit, cfg.clip_sigma, cfg.clip_window_days)
        clipped = int(out.sum())
        keep &= ~out
        if cfg.near_transits_hours is not None:
            near = cleaning.near_transits(time, planets, star, cfg.near_transits_hours / HOURS_PER_DAY)
            far = int((keep & ~near).sum())
            keep &= near
        if clipped or far:
            log.info("%s: clipped %d outliers (%.1f sigma), dropped %d points far from predicted transits",
                     cfg.name, clipped, cfg.clip_sigma, far)
        if not keep.any():
            raise InputError("no points are left near the predicted transits.", file=cfg.file,
                             key="near_transits_hours", fix="check the ephemeris priors, or widen the window.")
    q1, q2 = limb_darkening or (cfg.q1, cfg.q2)
    exposure_days = cfg.exposure_min / MINUTES_PER_DAY
    sampling = exposure.choose_sampling(cfg.name, exposure_days, float(np.median(error[keep])),
                                        exposure.sharpest_transits(planets, star, q1, q2), cfg.supersample)
    return Photometry(name=cfg.name, time=time[keep], flux=flux[keep], error=error[keep],
                      exposure_days=exposure_days, supersample=sampling.supersample,
                      band=cfg.band, dropped_nan=dropped, normalisation=norm, segment=segment[keep],
                      dropped_quality=flagged, clipped=clipped, dropped_far_from_transits=far,
                      integration_error_ppm=sampling.error_ppm, exposure_warning=sampling.warning)


def load_velocities(cfg):
    """Read one RV dataset from its :class:`~planetfit.config.VelocityConfig`.

    Activity indicators named in ``decorrelate`` are read as extra columns
    and centred on their medians.
    """
    columns = dict(cfg.columns, **{f"indicator:{c}": c for c in cfg.decorrelate})
    table, dropped = _clean(cfg.file, read_table(cfg.file, columns), cfg.name)
    indicators = {c: table[f"indicator:{c}"] - np.median(table[f"indicator:{c}"]) for c in cfg.decorrelate}
    return Velocities(name=cfg.name, time=table["time"] + cfg.time_offset_days, rv=table["rv"],
                      error=table["error"], dropped_nan=dropped, indicators=indicators)


def _suggest_offset(times, current):
    mid = float(np.median(times)) - current
    fits = [(off, what) for off, what in COMMON_OFFSETS.items()
            if BJD_PLAUSIBLE[0] < mid + off < BJD_PLAUSIBLE[1] and 2450000 < mid + off < 2470000]
    if fits:
        off, what = fits[0]
        return f"the times look like {what}: set 'time_offset_days: {off}'."
    return "set 'time_offset_days' so that times become BJD_TDB (about 2.45-2.47 million)."


def check_time_systems(config, datasets):
    """Check every dataset lies in a plausible BJD_TDB range and all share an era.

    Parameters
    ----------
    config : Config
    datasets : list of (dataset config, Photometry or Velocities, section name)
    """
    for i, (cfg, data, section) in enumerate(datasets):
        mid = float(np.median(data.time))
        if not BJD_PLAUSIBLE[0] < mid < BJD_PLAUSIBLE[1]:
            raise InputError(f"dataset '{cfg.name}' has times around {mid:.1f} after its offset, "
                             "which is not a BJD_TDB of the years 1950-2100.", file=config.path,
                             key=f"{section}.time_offset_days", line=config.lines.get(f"{section}.name"),
                             fix=_suggest_offset(data.time, cfg.time_offset_days))
    if len(datasets) > 1:
        mids = [float(np.median(d.time)) for _, d, _ in datasets]
        lo, hi = int(np.argmin(mids)), int(np.argmax(mids))
        if mids[hi] - mids[lo] > MAX_ERA_GAP_DAYS:
            raise InputError(f"datasets '{datasets[lo][0].name}' and '{datasets[hi][0].name}' are "
                             f"{mids[hi] - mids[lo]:.0f} days apart, more likely different time systems than different eras.",
                             file=config.path, key=f"{datasets[lo][2]}.time_offset_days",
                             fix="check 'time_offset_days' of both so that all times are BJD_TDB.")


def load_all(config):
    """Read and check every dataset of a config.

    Returns
    -------
    (list of Photometry, list of Velocities)
    """
    bands = {}
    for c in config.photometry:
        bands.setdefault(c.band, (c.q1, c.q2))  # a band's limb darkening has its first dataset's priors
    phot = [load_photometry(c, config.planets, config.star, bands[c.band]) for c in config.photometry]
    rvs = [load_velocities(c) for c in config.velocities]
    check_time_systems(config, [(c, d, f"photometry[{i}]") for i, (c, d) in enumerate(zip(config.photometry, phot))]
                       + [(c, d, f"velocities[{i}]") for i, (c, d) in enumerate(zip(config.velocities, rvs))])
    return phot, rvs
