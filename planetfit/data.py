"""Reading photometry and radial-velocity tables into checked arrays.

Tables are CSV or whitespace-separated text with a header line naming the
columns (lines starting with ``#`` are comments). The config maps our
quantities (time, flux, error / time, rv, error) to the file's column names.
Times become BJD_TDB by adding ``time_offset_days``. Rows with NaN are
dropped and counted; everything else that is wrong stops with an
:class:`~planetfit.errors.InputError` naming the file, column or line.
"""

import dataclasses
import logging

import numpy as np

from .errors import InputError
from .units import MINUTES_PER_DAY

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
    supersample: int
    band: str
    dropped_nan: int = 0
    normalisation: float = 1.0


@dataclasses.dataclass
class Velocities:
    """One spectrograph's radial velocities (m/s) at times in BJD_TDB."""

    name: str
    time: np.ndarray
    rv: np.ndarray
    error: np.ndarray
    dropped_nan: int = 0


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
    try:
        text = path.read_text()
    except FileNotFoundError:
        raise InputError("data file not found.", file=path,
                         fix="check the 'file' path; relative paths are relative to the config file.") from None
    except (IsADirectoryError, PermissionError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the data file ({exc.__class__.__name__}).", file=path,
                         fix="give a readable CSV or whitespace-separated text file with a header line.") from None
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


def load_photometry(cfg):
    """Read one photometry dataset from its :class:`~planetfit.config.PhotometryConfig`."""
    table, dropped = _clean(cfg.file, read_table(cfg.file, cfg.columns), cfg.name)
    flux, error = table["flux"], table["error"]
    norm = 1.0
    if cfg.normalise:
        norm = float(np.median(flux))
        if not norm > 0:
            raise InputError("the median flux is not positive, so it cannot be normalised.", file=cfg.file,
                             key="columns.flux", fix="give fluxes (not magnitudes or differences), or set 'normalise: false'.")
        flux, error = flux / norm, error / norm
    return Photometry(name=cfg.name, time=table["time"] + cfg.time_offset_days, flux=flux, error=error,
                      exposure_days=cfg.exposure_min / MINUTES_PER_DAY, supersample=cfg.supersample,
                      band=cfg.band, dropped_nan=dropped, normalisation=norm)


def load_velocities(cfg):
    """Read one RV dataset from its :class:`~planetfit.config.VelocityConfig`."""
    table, dropped = _clean(cfg.file, read_table(cfg.file, cfg.columns), cfg.name)
    return Velocities(name=cfg.name, time=table["time"] + cfg.time_offset_days, rv=table["rv"],
                      error=table["error"], dropped_nan=dropped)


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
    phot = [load_photometry(c) for c in config.photometry]
    rvs = [load_velocities(c) for c in config.velocities]
    check_time_systems(config, [(c, d, f"photometry[{i}]") for i, (c, d) in enumerate(zip(config.photometry, phot))]
                       + [(c, d, f"velocities[{i}]") for i, (c, d) in enumerate(zip(config.velocities, rvs))])
    return phot, rvs
