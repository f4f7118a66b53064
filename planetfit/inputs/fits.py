"""Reading light curves from FITS binary tables (astropy.io.fits).

Mission light-curve products keep one row per exposure in a binary-table
extension: a time column in days relative to a reference Julian date given
by the header keywords BJDREFI (integer part) and BJDREFF (fraction), the
time scale in TIMESYS, and flux, flux-error and quality-bitmask columns.
Times are returned as absolute BJD_TDB; a time scale other than TDB, or a
time reference other than the solar-system barycentre (TIMEREF), stops
with an :class:`~planetfit.core.errors.InputError`.
"""

import numpy as np
from astropy.io import fits

from planetfit.core.errors import DATA_FILE_MISSING_FIX, InputError, reading

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
    timeref = _keyword(headers, "TIMEREF")
    if timeref is not None and str(timeref).strip().upper() != "SOLARSYSTEM":
        raise InputError(
            f"TIMEREF = '{str(timeref)[:20]}': the times are not barycentric (SOLARSYSTEM), so they are not BJD.",
            file=path,
            key="TIMEREF",
            fix="correct the times to the solar-system barycentre (BJD_TDB, TIMEREF = 'SOLARSYSTEM'), "
            "or give a table already in BJD_TDB.",
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


def read_fits_table(path, columns):
    """Read the named columns of a FITS light curve.

    Parameters
    ----------
    path : Path
    columns : dict
        Our name -> the table's column name (matched ignoring case). The
        ``time`` column is shifted by BJDREFI + BJDREFF to absolute BJD_TDB.

    Returns
    -------
    dict of ndarray
        Our name -> float array (NaN kept; the caller decides).
    """
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
                    f"no column named '{theirs}' (for {ours}); the table has: {', '.join(hdu.columns.names)}.",
                    file=path,
                    key=f"columns.{ours}",
                    fix=f"set 'columns: {{{ours}: <one of those names>}}' in the config.",
                )
            out[ours] = np.array(hdu.data[names[theirs.lower()]], dtype=float)
    # Integer and fraction added separately keep sub-microsecond precision.
    out["time"] = (out["time"] + ref_frac) + ref_int
    return out
