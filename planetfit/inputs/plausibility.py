"""Plausibility of the data before any fit: units, error columns, transits in the data, rows used twice.

A number far outside what an instrument can give usually means a unit or a
column mix-up (km/s read as m/s, errors in ppm, magnitudes read as flux). A
fit of such data runs and gives a confident wrong answer, so where the fit
would be meaningless the check stops with an
:class:`~planetfit.core.errors.InputError`; where the data may be real but
odd it warns. Every message quotes the number that tripped it.
"""

import numpy as np

from planetfit.core.errors import InputError
from planetfit.core.units import PPM
from planetfit.inputs import cleaning, schema

#: RV uncertainties or scatter below this (m/s) are not a spectrograph's: 1 cm/s.
RV_FLOOR_MS = 0.01
#: RV uncertainties above this (m/s) are not a planet search's, and a scatter above it is not a planet's: 10 km/s.
RV_CEILING_MS = 1.0e4
#: Median relative flux errors above this are warned about; above :data:`FLUX_ERROR_MEANINGLESS` refused.
FLUX_ERROR_WARN, FLUX_ERROR_MEANINGLESS = 0.1, 1.0
#: Significance (sigma of the in-window mean) of a brightening at the predicted transits that is refused.
INVERTED_SIGMA = 5.0
#: Half-width (days) of the window about each predicted mid-transit compared with its surroundings: one hour.
CORE_HALF_DAYS = 1.0 / 24.0
#: The surroundings: points within this many longest transits of a predicted one, outside the transit.
AROUND_TRANSITS = 3.0


def check_velocities(d, cfg):
    """Refuse RVs whose uncertainties cannot be in m/s; return warnings on a scatter that cannot be a planet's."""
    error, scatter = float(np.median(d.error)), float(np.std(d.rv))
    section = f"{cfg.section}.columns"
    if error < RV_FLOOR_MS:
        raise InputError(
            f"the RVs' median uncertainty is {error:.3g} m/s, below the 1 cm/s no spectrograph reaches: km/s given "
            "as m/s?",
            file=cfg.path,
            key=f"{section}.error",
            fix="give RVs and their uncertainties in m/s (multiply km/s by 1000).",
        )
    if error > RV_CEILING_MS:
        raise InputError(
            f"the RVs' median uncertainty is {error:.3g} m/s, above 10 km/s: cm/s given as m/s, or the wrong column?",
            file=cfg.path,
            key=f"{section}.error",
            fix="give RVs and their uncertainties in m/s, and check 'columns: {error: ...}'.",
        )
    if d.rv.size > 1 and scatter < RV_FLOOR_MS:
        return [
            f"dataset '{d.name}': the RVs scatter by {scatter:.3g} m/s (standard deviation), below 1 cm/s: "
            "km/s given as m/s, or a column that is not the RVs? Fix: map 'rv' to the RV column, in m/s."
        ]
    if scatter > RV_CEILING_MS:
        return [
            f"dataset '{d.name}': the RVs scatter by {scatter:.3g} m/s (standard deviation), more than 10 km/s, "
            "which no planet causes: a stellar companion, RVs of several stars, or units other than m/s? "
            "Fix: give RVs in m/s of one star."
        ]
    return []


def check_light_curve(d, cfg):
    """Refuse a light curve whose errors are its fluxes, or whose columns are magnitudes; return warnings."""
    columns = cfg.columns.model_dump()
    where = {"file": cfg.path, "key": f"{cfg.section}.columns.error"}
    if columns["flux"].lower() == columns["error"].lower() or np.array_equal(d.flux, d.error):
        raise InputError(
            f"the error column is the flux column ('{columns['error'][:40]}'): every point would have a 100 % error.",
            **where,
            fix="map 'error' to the column of flux uncertainties.",
        )
    if "mag" in columns["flux"].lower():
        raise InputError(
            f"the flux column '{columns['flux'][:40]}' holds magnitudes: a transit would read as a brightening.",
            file=cfg.path,
            key=f"{cfg.section}.columns.flux",
            fix="convert magnitudes to relative flux, 10**(-0.4 (m - median m)), with errors 0.921 sigma_m * flux.",
        )
    level = float(np.median(d.flux))
    if not level > 0:
        return []  # differences or magnitudes about zero: refused by the normalisation, or fitted as given
    relative = float(np.median(d.error)) / level
    if relative > FLUX_ERROR_MEANINGLESS:
        raise InputError(
            f"the median flux error is {relative:.3g} times the median flux: errors in ppm or percent, or the "
            "wrong column?",
            **where,
            fix="give errors in the flux column's units (relative flux: 400 ppm is 0.0004).",
        )
    if relative > FLUX_ERROR_WARN:
        return [
            f"dataset '{d.name}': the median flux error is {relative:.3g} of the flux ({relative / PPM:.0f} ppm), "
            "more than a tenth: are the errors in percent? Fix: give errors in the flux column's units."
        ]
    return []


def check_read(config, photometry, velocities):
    """Every check of the data as read (before normalisation); the warnings go to each dataset's reading."""
    for d, c in zip(photometry, config.photometry):
        d.reading.warnings += check_light_curve(d, c)
    for d, c in zip(velocities, config.velocities):
        d.reading.warnings += check_velocities(d, c)


def check_rows_used_once(config):
    """Refuse a file read twice by one dataset, or by two datasets of one kind whose selections overlap."""
    for items in (config.photometry, config.velocities):
        seen = {}
        for c in items:
            if len(set(c.files)) < len(c.files):
                twice = next(f for f in c.files if c.files.count(f) > 1)
                raise InputError(
                    f"the file '{twice.name}' is listed twice, so its rows would count twice.",
                    file=twice,
                    key=f"{c.section}.file",
                    fix="list each file once.",
                )
            for f in c.files:
                other = seen.get(f)
                if other is not None and _overlap(other.select, c.select):
                    raise InputError(
                        f"datasets '{other.name}' and '{c.name}' both read '{f.name}' with selections that "
                        f"overlap ({other.select or 'all rows'} and {c.select or 'all rows'}), so those rows would "
                        "count twice.",
                        file=f,
                        key=f"{c.section}.select",
                        fix="give each dataset a 'select' of its own rows (e.g. one instrument label each).",
                    )
                seen.setdefault(f, c)


def _overlap(a, b):
    """Whether two ``select`` mappings may pick the same row (only one differing value on a shared column can't)."""
    if not a or not b:
        return True
    return not any(k in b and str(b[k]) != str(v) for k, v in a.items())


#: Light curves whose variability a Gaussian process models: no inverted-transit check (see below).
VARIABILITY_BLOCKS = (schema.OscillatorGP, schema.Matern32GP, schema.RotationGP, schema.SharedGP)


def check_transits_in_data(config, photometry):
    """Refuse a transiting planet with no predicted transit in any light curve, or whose transits brighten."""
    transiting = [p for p in config.planets if p.transits]
    if not photometry or not transiting:
        return
    times = np.concatenate([d.time for d in photometry])
    for p in transiting:
        if not cleaning.near_transits(times, [p], config.star).any():
            raise InputError(
                f"no light curve holds a transit of planet {p.name} that its priors predict (transit time "
                f"{p.transit_bjd.centre:.4f} +- {p.transit_bjd.half_width:.4f}, period {p.period_days.centre:.5g} "
                f"+- {p.period_days.half_width:.2g} d; data from BJD_TDB {times.min():.3f} to {times.max():.3f}).",
                file=config.path,
                key=f"planets.{p.name}.transit_bjd",
                line=config.line(f"planets.{p.name}.transit_bjd"),
                fix="check the transit time and period priors (and the data's time system), or set "
                "'transits: false' for a planet not seen in transit.",
            )
        for d, c in zip(photometry, config.photometry):
            # A star's own variability (a GP-modelled light curve) can lift the transit cores above the points
            # around them by many sigma (a spotted star: 6.7 sigma in tests/fitting/test_rotation_gp.py), so the
            # comparison is made only where the baseline is smooth.
            if not isinstance(c, VARIABILITY_BLOCKS):
                _refuse_brightening(d, c, p, config.star)


def _refuse_brightening(d, cfg, planet, star):
    """Refuse a light curve that is brighter at a planet's predicted transit cores than elsewhere."""
    core = cleaning.near_transits(d.time, [planet], star, CORE_HALF_DAYS)
    around = cleaning.near_transits(
        d.time, [planet], star, AROUND_TRANSITS * cleaning.longest_half_days(planet, star)
    ) & ~cleaning.near_transits(d.time, [planet], star)
    if core.sum() < 3 or around.sum() < 3:
        return
    # Compared with the points around the transits (not the whole light curve, which may vary slowly), with
    # the larger of the stated errors and the scatter there.
    rise = float(np.mean(d.flux[core]) - np.median(d.flux[around]))
    scatter = max(
        float(np.median(d.error[around])),
        cleaning.MAD_TO_SIGMA * float(np.median(np.abs(d.flux[around] - np.median(d.flux[around])))),
    )
    sigma = scatter * np.sqrt(1.0 / core.sum() + 1.0 / around.sum())
    if rise > INVERTED_SIGMA * sigma:
        raise InputError(
            f"the flux rises by {rise / PPM:.0f} ppm ({rise / sigma:.1f} sigma) at the predicted transits of "
            f"planet {planet.name}: an inverted transit, as magnitudes read as flux would give.",
            file=cfg.path,
            key=f"{cfg.section}.columns.flux",
            fix="give fluxes (not magnitudes or their differences), or check the transit time and period priors.",
        )
