"""Reading light curves from FITS binary tables (astropy.io.fits).

Mission light-curve products keep one row per exposure in a binary-table
extension: a time column in days relative to a reference Julian date given
by the header keywords BJDREFI (integer part) and BJDREFF (fraction), the
time scale in TIMESYS, and flux, flux-error and quality-bitmask columns.
Times are returned as absolute BJD_TDB; a time scale other than TDB, or a
time reference other than the solar-system barycentre (TIMEREF), stops
with an :class:`~planetfit.core.errors.InputError`.

Kepler, K2 and TESS products are recognised by their TELESCOP / MISSION
keywords (:data:`MISSIONS`): their quality column, the flags that mark
cadences taken in a spacecraft event, and their flux columns. The cadence
is TIMEDEL (days), else the frame time times the number of co-added frames
(FRAMETIM x NUM_FRM, seconds); the keyword EXPOSURE is the whole file's
exposure in days and is never read as the cadence.
"""

import dataclasses

import numpy as np
from astropy.io import fits

from planetfit.core.errors import DATA_FILE_MISSING_FIX, InputError, reading
from planetfit.core.units import MINUTES_PER_DAY, SECONDS_PER_DAY
from planetfit.inputs.files import MAX_TABLE_MB, check_readable, excerpt, excerpts

#: File name endings read as FITS.
FITS_SUFFIXES = (".fits", ".fit", ".fts", ".fits.gz", ".fit.gz")


@dataclasses.dataclass(frozen=True)
class Mission:
    """What planetfit knows of one mission's light-curve products.

    ``drop_bits`` are the quality bits (bit n has value 2**(n - 1)) of
    cadences taken during a spacecraft event or excluded by the mission's
    own pipeline; rows with any of them set are dropped by default. Flags
    that only inform (cosmic rays corrected, scattered light, rolling band,
    discontinuities, impulsive outliers, which planetfit's own clipping
    handles while sparing transits) are kept.
    """

    name: str
    quality_column: str
    drop_bits: tuple
    flux_columns: tuple = ("PDCSAP_FLUX", "PDCSAP_FLUX_ERR")
    simple_aperture_columns: tuple = ("SAP_FLUX", "SAP_FLUX_ERR")

    @property
    def drop_mask(self):
        """The bitmask of :attr:`drop_bits`."""
        return sum(1 << (b - 1) for b in self.drop_bits)


# Bit meanings (value from memory, documents not at hand): Kepler Archive Manual (KDMC-10008-006), table 2-3:
# 1 attitude tweak, 2 safe mode, 3 coarse point, 4 Earth point, 6 reaction-wheel desaturation, 7 and 13
# Argabrightening, 9 manual exclude, 15 detector anomaly, 17 no data, 21 thruster firing. TESS Science Data
# Products Description (EXP-TESS-ARC-ICD-0014), section 9: 1 attitude tweak, 2 safe mode, 3 coarse point, 4 Earth
# point, 5 Argabrightening, 6 reaction-wheel desaturation, 8 manual exclude, 15 bad calibration.
_KEPLER_BITS = (1, 2, 3, 4, 6, 7, 9, 13, 15, 17, 21)
#: Missions by their TELESCOP (or MISSION) keyword, upper case.
MISSIONS = {
    "KEPLER": Mission("Kepler", "SAP_QUALITY", _KEPLER_BITS),
    "K2": Mission("K2", "SAP_QUALITY", _KEPLER_BITS),
    "TESS": Mission("TESS", "QUALITY", (1, 2, 3, 4, 5, 6, 8, 15)),
}


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


def mission_of(headers):
    """The :class:`Mission` named by the TELESCOP or MISSION keyword (MISSION first: K2 flies on Kepler), or None."""
    for name in ("MISSION", "TELESCOP"):
        value = _keyword(headers, name)
        if value is not None and str(value).strip().upper() in MISSIONS:
            return MISSIONS[str(value).strip().upper()]
    return None


def cadence_min(headers):
    """(cadence in minutes, the keywords it came from) from TIMEDEL or FRAMETIM x NUM_FRM; (None, None) without."""
    timedel = _keyword(headers, "TIMEDEL")
    if timedel is not None and float(timedel) > 0:
        return float(timedel) * MINUTES_PER_DAY, "TIMEDEL"
    frame_s, frames = _keyword(headers, "FRAMETIM"), _keyword(headers, "NUM_FRM")
    if frame_s is not None and frames is not None and float(frame_s) * float(frames) > 0:
        return float(frame_s) * float(frames) * MINUTES_PER_DAY / SECONDS_PER_DAY, "FRAMETIM x NUM_FRM"
    return None, None


@dataclasses.dataclass
class FitsLightCurve:
    """A FITS light curve's table, headers (table first), reference date and mission (None if not one we know)."""

    path: object
    data: object
    names: list
    headers: list
    mission: Mission = None

    def has(self, column):
        """Whether the table has ``column`` (ignoring case)."""
        return column.lower() in {n.lower() for n in self.names}

    def column(self, theirs, key, fix):
        """The table's column ``theirs`` (ignoring case) as floats; ``key`` and ``fix`` for the message without it."""
        by_lower = {n.lower(): n for n in self.names}
        if theirs.lower() not in by_lower:
            raise InputError(
                f"no column named '{excerpt(theirs)}'; the table has: {excerpts(self.names)}.",
                file=self.path,
                key=key,
                fix=fix,
            )
        try:
            values = np.array(self.data[by_lower[theirs.lower()]], dtype=float)
        except (TypeError, ValueError):
            raise InputError(
                f"column '{excerpt(theirs)}' does not hold numbers.",
                file=self.path,
                key=key,
                fix="name a numeric column.",
            ) from None
        if values.ndim != 1:
            raise InputError(
                f"column '{excerpt(theirs)}' holds {int(np.prod(values.shape[1:]))} values per row (a vector column); "
                "planetfit needs one.",
                file=self.path,
                key=key,
                fix="name a column with one value per row, or write the wanted element into a table of its own.",
            )
        return values

    def times_bjd(self, relative):
        """Absolute BJD_TDB of the time column's values (days from BJDREFI + BJDREFF)."""
        ref_int, ref_frac = reference_bjd(self.headers, self.path)
        # Integer and fraction added separately keep sub-microsecond precision.
        return (relative + ref_frac) + ref_int


def open_light_curve(path, max_mb=MAX_TABLE_MB, key_prefix=""):
    """Read a FITS light curve's first binary table, its headers and mission (:class:`FitsLightCurve`).

    ``max_mb`` bounds the file read (:func:`planetfit.inputs.files.check_readable`); ``key_prefix`` is the
    dataset's config key (``photometry[0].``) for messages.
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
        headers = [hdu.header.copy(), hdul[0].header.copy()]
        reference_bjd(headers, path)
        lc = FitsLightCurve(path, hdu.data.copy(), list(hdu.columns.names), headers)
    lc.mission = mission_of(headers)
    return lc
