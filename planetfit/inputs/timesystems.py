"""Time systems: conversion to BJD_TDB and the usual Julian-date references.

Every time planetfit fits is a barycentric Julian date in the TDB scale.
Tables may give BJD_TDB (default), BJD_UTC (barycentric times counted in
UTC) or HJD_UTC (heliocentric, UTC), converted here with astropy.time
(Eastman, Siverd & Gaudi 2010, PASP 122, 935, explain the three).
Published tables often subtract a reference date; :data:`REFERENCES` lists
the usual ones, used to tell the user which would make a dataset's times
consistent with the rest of the config.
"""

import numpy as np
from astropy import units as u
from astropy.coordinates import EarthLocation, SkyCoord
from astropy.time import Time

from planetfit.core.errors import InputError

#: Time systems a dataset may declare.
TIME_SYSTEMS = ("BJD_TDB", "BJD_UTC", "HJD_UTC")
#: Systems whose conversion needs the star's sky position.
NEEDS_COORDINATES = ("HJD_UTC",)

#: Usual references subtracted from Julian dates in published tables, and what they are called.
REFERENCES = {
    0.0: "none: full Julian dates",
    2400000.0: "reduced JD",
    2400000.5: "Modified Julian Date",
    2450000.0: "truncated JD",
    2454833.0: "Kepler/K2 BJD",
    2457000.0: "TESS BJD",
}
#: JD 2433282.5 is 1950-01-01, JD 2488069.5 is 2100-01-01: the plausible dates of modern data.
PLAUSIBLE_JD = (2433282.5, 2488069.5)


def _split_jd(jd):
    """Two-part Julian dates (integer, fraction) keeping sub-microsecond precision."""
    jd = np.asarray(jd, dtype=float)
    whole = np.floor(jd)
    return whole, jd - whole


def to_bjd_tdb(jd, system, ra_deg=None, dec_deg=None):
    """Julian dates in ``system`` converted to BJD_TDB.

    Parameters
    ----------
    jd : ndarray
        Full Julian dates (any reference already added).
    system : {"BJD_TDB", "BJD_UTC", "HJD_UTC"}
    ra_deg, dec_deg : float, optional
        The star's ICRS position; needed for HJD_UTC.

    Returns
    -------
    ndarray

    Notes
    -----
    BJD_UTC -> BJD_TDB is a change of time scale only. HJD_UTC is the
    arrival time at the Sun's centre: the time at the geocentre is found by
    removing astropy's heliocentric light-travel time (two fixed-point
    passes, since that delay depends on the arrival time at the geocentre;
    it changes by < 1 ms per day), then astropy's barycentric light-travel
    time is added and the scale changed to TDB.
    """
    jd = np.asarray(jd, dtype=float)
    if system == "BJD_TDB":
        return jd
    whole, fraction = _split_jd(jd)
    if system == "BJD_UTC":
        return Time(whole, fraction, format="jd", scale="utc").tdb.jd
    star = SkyCoord(ra_deg * u.deg, dec_deg * u.deg, frame="icrs")
    geocentre = EarthLocation.from_geocentric(0.0, 0.0, 0.0, unit=u.m)
    helio = Time(whole, fraction, format="jd", scale="utc", location=geocentre)
    arrival = helio
    for _ in range(2):
        arrival = helio - arrival.light_travel_time(star, kind="heliocentric")
    bary = arrival.tdb + arrival.light_travel_time(star, kind="barycentric")
    return bary.jd1 + bary.jd2


def calendar_span(jd_lo, jd_hi):
    """``'2019-07 to 2019-09'`` (or ``'2019-07'``): the months of two Julian dates."""
    lo, hi = Time([jd_lo, jd_hi], format="jd", scale="tdb").to_value("iso", subfmt="date")
    return lo[:7] if lo[:7] == hi[:7] else f"{lo[:7]} to {hi[:7]}"


def is_plausible(jd):
    """Whether Julian dates lie in 1950-2100."""
    jd = np.asarray(jd, dtype=float)
    return bool(np.all((jd > PLAUSIBLE_JD[0]) & (jd < PLAUSIBLE_JD[1])))


# ----------------------------------------------------------------- checking a config's times

#: A dataset farther than this from every other dataset and every planet's reference transit is suspect.
ERA_WARNING_DAYS = 2000.0
#: Datasets further apart than this (days, ~30 years) are taken to be in different time systems.
MAX_ERA_GAP_DAYS = 11000.0


def _gap_days(span, spans):
    """Smallest distance (days) between interval ``span`` and any of ``spans`` (0 if they overlap); inf if none."""
    lo, hi = span
    return min((max(0.0, a - hi, lo - b) for a, b in spans), default=float("inf"))


def _other_spans(config, datasets, i):
    """BJD_TDB spans of every plausible dataset but the ``i``-th, and the centres of the transit-time priors."""
    spans = [
        (float(d.time.min()), float(d.time.max()))
        for j, (_, d, _) in enumerate(datasets)
        if j != i and is_plausible([d.time.min(), d.time.max()])
    ]
    centres = [p.transit_bjd.centre for p in config.planets]
    return spans + [(c, c) for c in centres if is_plausible(c)]


def reference_candidates(times, offset_days, rest):
    """Each usual reference that would make ``times`` plausible: (reference, name, calendar span, consistent).

    ``times`` already include ``offset_days``; ``consistent`` means within
    :data:`ERA_WARNING_DAYS` of one of the ``rest`` spans.
    """
    out = []
    for ref, name in REFERENCES.items():
        lo, hi = times.min() - offset_days + ref, times.max() - offset_days + ref
        if is_plausible([lo, hi]):
            out.append((ref, name, calendar_span(lo, hi), _gap_days((lo, hi), rest) <= ERA_WARNING_DAYS))
    return out


def _advice(candidates):
    """The list of references with their calendar spans, and the fix: one only when exactly one fits the rest."""
    listed = "; ".join(
        f"{ref:.1f} ({name}): {span}{', consistent with the rest' if ok else ''}" for ref, name, span, ok in candidates
    )
    fitting = [ref for ref, _, _, ok in candidates if ok]
    if len(fitting) == 1:
        fix = (
            f"set 'time_offset_days: {fitting[0]:.1f}', the only usual reference consistent with the other "
            "datasets and the transit-time priors, if the file's documentation agrees."
        )
    elif fitting:
        fix = (
            "set 'time_offset_days' to the reference the file's documentation gives; the times alone cannot tell "
            f"which of {', '.join(f'{r:.1f}' for r in fitting)} it is."
        )
    else:
        fix = "set 'time_offset_days' so that the times become full Julian dates, as the file's documentation says."
    return (f" With the usual references as time_offset_days the data would lie in: {listed}." if listed else ""), fix


def check_time_references(config, datasets):
    """Check every dataset's times against the plausible era and against the other datasets and priors.

    Parameters
    ----------
    config : Config
    datasets : list of (dataset config, Photometry or Velocities, section name)

    Raises
    ------
    InputError
        For times that are no BJD of 1950-2100, a transit-time prior that is
        none, or datasets decades apart; the message lists the usual
        references with the calendar span each would give.

    Notes
    -----
    A dataset that is plausible but more than :data:`ERA_WARNING_DAYS` from
    every other dataset and reference transit gets a warning in its
    ``reading.warnings`` instead.
    """
    for p in config.planets:
        if not is_plausible(p.transit_bjd.centre):
            raise InputError(
                f"the transit-time prior is centred on {p.transit_bjd.centre:.3f}, not a BJD_TDB of the "
                "years 1950-2100.",
                file=config.path,
                key=f"planets.{p.name}.transit_bjd",
                line=config.lines.get(f"planets.{p.name}.transit_bjd"),
                fix="give the transit time as a full BJD_TDB (e.g. 2457000 + BTJD).",
            )
    for i, (cfg, data, section) in enumerate(datasets):
        _check_dataset(config, cfg, data, section, _other_spans(config, datasets, i))


def _check_dataset(config, cfg, data, section, rest):
    """One dataset's times against the plausible era and the ``rest``: an error, a warning, or nothing."""
    span = (float(data.time.min()), float(data.time.max()))
    key, line = f"{section}.time_offset_days", config.lines.get(f"{section}.name")
    listed, fix = _advice(reference_candidates(data.time, cfg.time_offset_days, rest))
    far = _gap_days(span, [s for s in rest if s[0] != s[1]])
    if not is_plausible(span):
        problem = f"has times {span[0]:.3f} to {span[1]:.3f} after its offset, which is not a Julian date of the "
        problem += "years 1950-2100."
    elif np.isfinite(far) and far > MAX_ERA_GAP_DAYS:
        problem = f"lies {far:.0f} days from every other dataset, more likely a different time reference than a "
        problem += "different era."
    else:
        if np.isfinite(_gap_days(span, rest)) and _gap_days(span, rest) > ERA_WARNING_DAYS:
            data.reading.warnings.append(
                f"dataset '{cfg.name}' ({calendar_span(*span)}) lies more than {ERA_WARNING_DAYS:.0f} days from every "
                f"other dataset and reference transit time; check its 'time_offset_days' ({cfg.time_offset_days:g})."
                f"{listed} Fix: {fix}"
            )
        return
    raise InputError(f"dataset '{cfg.name}' {problem}{listed}", file=config.path, key=key, line=line, fix=fix)
