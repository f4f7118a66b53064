"""A photometry dataset's file as the config and the file itself describe it: columns, quality flags, cadence.

For a Kepler, K2 or TESS product (:data:`planetfit.inputs.fits.MISSIONS`)
the columns the config leaves out are the mission's: the corrected flux
(PDCSAP) and its error, or the simple-aperture flux with
``mission_flux: sap``; the quality column is the mission's, its rows
dropped when any of the mission's event flags is set, unless
``quality_column`` or ``quality_keep_bits`` say otherwise
(``quality_column: none`` turns filtering off). The cadence is
``exposure_min`` if given, else the file header's (:func:`cadence_min`).
"""

import dataclasses

import numpy as np

from planetfit.core.errors import InputError
from planetfit.inputs.fits import cadence_min, open_light_curve

#: Prefix of a baseline regressor's column among the columns read.
REGRESSOR = "regressor:"
#: Every quality bit (32 of them): with a named quality column, any set bit outside ``quality_keep_bits`` drops.
ALL_BITS = (1 << 32) - 1


@dataclasses.dataclass
class QualityRule:
    """Which quality column a dataset reads, and the bitmask of the flags that drop a row."""

    column: str = None
    drop_mask: int = 0
    source: str = ""  # how the rule was chosen, for the overview and messages

    def flagged(self, quality):
        """True for rows with a flag of :attr:`drop_mask` set."""
        return (quality.astype(np.int64) & self.drop_mask) != 0


def quality_rule(cfg, mission, path):
    """The :class:`QualityRule` of a dataset for a file of ``mission`` (None for a text table or unknown FITS)."""
    keep = sum(1 << (b - 1) for b in cfg.quality_keep_bits)
    if cfg.quality_off:
        return QualityRule(source="quality_column: none")
    if cfg.named_quality_column is not None:
        return QualityRule(cfg.named_quality_column, ALL_BITS & ~keep, "quality_column")
    if mission is None:
        if cfg.quality_keep_bits:
            raise InputError(
                "bits to keep need a quality column, and this file is no Kepler, K2 or TESS product whose "
                "quality column planetfit knows.",
                file=path,
                key=f"{cfg.section}.quality_keep_bits",
                fix="add 'quality_column: <column name>' or remove 'quality_keep_bits'.",
            )
        return QualityRule(source="no quality column")
    if cfg.quality_keep_bits:
        return QualityRule(mission.quality_column, ALL_BITS & ~keep, f"{mission.name} product, quality_keep_bits")
    bits = ", ".join(str(b) for b in mission.drop_bits)
    return QualityRule(mission.quality_column, mission.drop_mask, f"{mission.name} event flags (bits {bits})")


def _flux_columns(cfg, lc):
    """(flux, error) columns of a FITS file: the config's, else the mission product's corrected or SAP ones."""
    mission = lc.mission
    if mission is None:
        if "mission_flux" in cfg.model_fields_set:
            raise InputError(
                "'mission_flux' chooses between the flux columns of a Kepler, K2 or TESS product, and this file is "
                "none (no TELESCOP or MISSION keyword naming one).",
                file=lc.path,
                key=f"{cfg.section}.mission_flux",
                fix="remove 'mission_flux' and name the columns with 'columns: {flux: ..., error: ...}'.",
            )
        return cfg.columns.flux, cfg.columns.error
    own = mission.simple_aperture_columns if cfg.simple_aperture else mission.flux_columns
    return tuple(
        getattr(cfg.columns, ours) if cfg.column_given(ours) else theirs for ours, theirs in zip(("flux", "error"), own)
    )


def read_fits_photometry(cfg, path):
    """One FITS file's time (BJD_TDB), flux, error and quality columns, its :class:`QualityRule` and cadence.

    Returns
    -------
    table : dict of ndarray
        ``time``, ``flux``, ``error`` and, with a quality rule, ``quality`` (NaN as 0).
    rule : QualityRule
    cadence : (float or None, str or None)
        The header's cadence in minutes and the keywords it came from.
    """
    lc = open_light_curve(path, cfg.max_file_mb, f"{cfg.section}.")
    flux, error = _flux_columns(cfg, lc)
    fix = "set 'columns: {{{}: <one of those names>}}' in the config."
    table = {
        ours: lc.column(theirs, f"{cfg.section}.columns.{ours}", fix.format(ours))
        for ours, theirs in (("time", cfg.columns.time), ("flux", flux), ("error", error))
    }
    table["time"] = lc.times_bjd(table["time"])
    for column in cfg.regressor_columns:
        fix = "name columns of the file in 'baseline: {regressors: [...]}'."
        table[f"{REGRESSOR}{column}"] = lc.column(column, f"{cfg.section}.baseline.regressors", fix)
    rule = quality_rule(cfg, lc.mission, path)
    if rule.column is not None:
        if lc.mission is not None and cfg.named_quality_column is None and not lc.has(rule.column):
            raise InputError(
                f"this {lc.mission.name} product has no quality column '{rule.column}', which its rows' flags "
                "should be in.",
                file=path,
                key=f"{cfg.section}.quality_column",
                fix="name the file's quality column with 'quality_column: <column>', or set 'quality_column: none' "
                "to fit every row.",
            )
        quality = lc.column(
            rule.column,
            f"{cfg.section}.quality_column",
            "set 'quality_column: <one of those names>', or 'quality_column: none' to fit every row.",
        )
        table["quality"] = np.nan_to_num(quality, nan=0.0)
    return table, rule, cadence_min(lc.headers)


def exposure_min(cfg, cadences):
    """The dataset's exposure in minutes and where it came from: ``exposure_min``, else the FITS headers' cadence.

    Parameters
    ----------
    cfg : PhotometryConfig
    cadences : list of (float or None, str or None)
        Per file, as :func:`read_fits_photometry` returns them ((None, None) for a text table).
    """
    if cfg.exposure_min is not None:
        return cfg.exposure_min, "exposure_min"
    found = [(c, s) for c, s in cadences if c is not None]
    if len(found) < len(cadences):
        raise InputError(
            "the exposure time is not given, and the file does not state its cadence (no FITS TIMEDEL, or FRAMETIM "
            "and NUM_FRM keywords).",
            file=cfg.path,
            key=f"{cfg.section}.exposure_min",
            fix="add 'exposure_min: <minutes>', the length of one exposure (e.g. 2 for a 2-minute cadence).",
        )
    values = sorted({round(c, 6) for c, _ in found})
    if values[-1] > values[0] * (1 + 1e-3):
        raise InputError(
            f"the files of this dataset have different cadences ({', '.join(f'{v:g}' for v in values)} min).",
            file=cfg.path,
            key=f"{cfg.section}.file",
            fix="give one dataset per cadence (they may share a 'band'), or set 'exposure_min'.",
        )
    return found[0][0], found[0][1]


def non_positive_errors(path, t, bad, cfg, rule):
    """Stop on rows with zero or negative errors, saying how many carry quality flags the dataset keeps."""
    problem = f"{bad.size} rows have zero or negative uncertainties (first at time {t['time'][bad[0]]:.6f})."
    key, fix = f"{cfg.section}.columns.error", "give positive 1-sigma uncertainties, or remove those rows."
    flags = t["quality"][bad].astype(np.int64) if "quality" in t else np.zeros(0, dtype=np.int64)
    if np.any(flags):
        bits = sorted({b + 1 for b in range(32) if np.any(flags & (1 << b))})
        key = f"{cfg.section}.quality_keep_bits" if cfg.quality_keep_bits else f"{cfg.section}.quality_column"
        problem += (
            f" {np.count_nonzero(flags)} of them are flagged in the quality column '{rule.column}' (bits "
            f"{', '.join(map(str, bits))}), flags this dataset keeps ({rule.source})."
        )
        fix = "drop them: leave those bits out of 'quality_keep_bits' (or remove it to use the mission's flags)."
    elif rule is not None and rule.column is None:
        fix += (
            " If they are flagged cadences of a light-curve product, name its quality column with "
            "'quality_column: <column>' to drop them."
        )
    raise InputError(problem, file=path, key=key, fix=fix)
