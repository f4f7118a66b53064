"""Reading light curves from FITS binary tables (astropy.io.fits).

Mission light-curve products keep one row per exposure in a binary-table
extension: a time column in days relative to a reference Julian date given
by the header keywords BJDREFI (integer part) and BJDREFF (fraction), the
time scale in TIMESYS, and flux, flux-error and quality-bitmask columns.
Times are returned as absolute BJD_TDB; a time scale other than TDB stops
with an :class:`~planetfit.core.errors.InputError`.
"""

import numpy as np
from astropy.io import fits

from planetfit.core.errors import DATA_FILE_MISSING_FIX, InputError, reading
from planetfit.inputs.files import MAX_TABLE_MB, check_readable, excerpt, excerpts

#: File name endings read as FITS.
FITS_SUFFIXES = (".fits", ".fit", ".fts", ".fits.gz", ".fit.gz")


def is_fits(path):
    """True if ``path`` names a FITS file by its ending."""
    return str(path).lower().endswith(FITS_SUFFIXES)


def _keyword(headers, name):
    for header in headers:
        if name in header:
            return header[name]
    return None


def _table_hdu(hdul, path):
    for hdu in hdul:
        if isinstance(hdu, fits.BinTableHDU):
            return hdu
    raise InputError(
        "the FITS file has no binary-table extension.",
        file=path,
        fix="give a light-curve product with a table of time, flux and error columns.",
    )


def reference_bjd(headers, path):
    """Reference Julian date (days) of the time column from BJDREFI + BJDREFF, checked to be TDB."""
    timesys = _keyword(headers, "TIMESYS")
    if timesys is None or str(timesys).strip().upper() != "TDB":
        found = "no TIMESYS keyword" if timesys is None else f"TIMESYS = '{timesys}'"
        raise InputError(
            f"the times are not marked as TDB ({found}); planetfit needs BJD_TDB.",
            file=path,
            key="TIMESYS",
            fix="convert the times to the TDB scale (barycentric dynamical time) "
            "and set TIMESYS = 'TDB', or give a table already in BJD_TDB.",
        )
    integer, fraction = _keyword(headers, "BJDREFI"), _keyword(headers, "BJDREFF")
    if integer is None or fraction is None:
        raise InputError(
            "the header lacks BJDREFI and BJDREFF, so the time column has no reference date.",
            file=path,
            key="BJDREFI",
            fix="add BJDREFI (integer days) and BJDREFF (fraction) to the "
            "table header, or convert the file to CSV with BJD_TDB times.",
        )
    unit = _keyword(headers, "TIMEUNIT")
    if unit is not None and str(unit).strip().lower() not in ("d", "day", "days"):
        raise InputError(
            f"TIMEUNIT = '{unit}'; the time column must be in days.",
            file=path,
            key="TIMEUNIT",
            fix="give times in days.",
        )
    return float(integer), float(fraction)


def _column(hdu, name, path, key):
    """One column of the table as floats; a vector column (several values per row) is refused."""
    try:
        values = np.array(hdu.data[name], dtype=float)
    except (TypeError, ValueError):
        raise InputError(
            f"column '{excerpt(name)}' does not hold numbers.", file=path, key=key, fix="name a numeric column."
        ) from None
    if values.ndim != 1:
        raise InputError(
            f"column '{excerpt(name)}' holds {int(np.prod(values.shape[1:]))} values per row (a vector column); "
            "planetfit needs one.",
            file=path,
            key=key,
            fix="name a column with one value per row, or write the wanted element into a table of its own.",
        )
    return values


def read_fits_table(path, columns, max_mb=MAX_TABLE_MB, key_prefix=""):
    """Read the named columns of a FITS light curve.

    Parameters
    ----------
    path : Path
    columns : dict
        Our name -> the table's column name (matched ignoring case). The
        ``time`` column is shifted by BJDREFI + BJDREFF to absolute BJD_TDB.
    max_mb : float
        Largest file read (:func:`planetfit.inputs.files.check_readable`).
    key_prefix : str
        The dataset's config key (``photometry[0].``), put before the keys messages name.

    Returns
    -------
    dict of ndarray
        Our name -> float array (NaN kept; the caller decides).
    """
    lift = f"set '{key_prefix}max_file_mb' above the file's size to read it, or give a smaller file."
    check_readable(path, "FITS file", max_mb, key=f"{key_prefix}file" if key_prefix else None, lift=lift)
    with reading(
        path,
        "FITS file",
        DATA_FILE_MISSING_FIX,
        "give a valid FITS light-curve product, or a CSV table.",
        unreadable=(OSError, ValueError, TypeError),
    ):
        hdul = fits.open(path, memmap=False)
    with hdul:
        hdu = _table_hdu(hdul, path)
        ref_int, ref_frac = reference_bjd([hdu.header, hdul[0].header], path)
        names = {n.lower(): n for n in hdu.columns.names}
        out = {}
        for ours, theirs in columns.items():
            if theirs.lower() not in names:
                raise InputError(
                    f"no column named '{excerpt(theirs)}' (for {ours}); the table has: {excerpts(hdu.columns.names)}.",
                    file=path,
                    key=f"{key_prefix}columns.{ours}",
                    fix=f"set 'columns: {{{ours}: <one of those names>}}' in the config.",
                )
            out[ours] = _column(hdu, names[theirs.lower()], path, f"{key_prefix}columns.{ours}")
    # Integer and fraction added separately keep sub-microsecond precision.
    out["time"] = (out["time"] + ref_frac) + ref_int
    return out
