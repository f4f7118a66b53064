"""summary.json and posterior.csv: the numbers of a run, for scripts.

Key names follow DESIGN.md's contract; STAT is
``{"median", "lower", "upper"}`` with percentile values (15.87, 50, 84.13).
"""

import io
import json

import numpy as np

from planetfit.context.derived import MASS_KEYS
from planetfit.core.stats import stat
from planetfit.report.files import write_text_atomic
from planetfit.report.summary_types import PLANET_KEYS, STAR_KEYS, Summary


def build_summary(config, model, derived, blocks, sampling):
    """The summary.json content.

    Parameters
    ----------
    config : Config
    model : Model
    derived : dict
        Output of :func:`planetfit.context.derived.derive` after context.
    blocks : dict
        Output of :func:`planetfit.context.blocks.add_context`.
    sampling : dict
        ``SamplingResult.summary()`` plus run facts.

    Notes
    -----
    Quantities that no data constrain (the star's Teff and age always, its
    mass, radius and density without a transit) carry ``"prior_only": true``.
    Without RVs the semi-amplitude is held fixed, so no mass is measured:
    such planets have ``mass_measured: false`` and report ``MASS_KEYS`` as
    null with a note, not an upper limit (an upper limit would need a free K
    constrained by data).
    """
    flagged = derived["prior_only"]
    star = {k: _stat(derived["star"][k], k in flagged["star"]) for k in STAR_KEYS if k in derived["star"]}
    star["mass_radius_source"] = config.star.mass_radius_source
    planets = {}
    for p, block in zip(model.planets, config.planets):
        q = derived["planets"][p.name]
        entry = {k: _stat(q[k], k in flagged["planets"][p.name]) for k in PLANET_KEYS if k in q}
        entry["transits"] = p.transits
        entry["orbit"] = block.orbit  # the config's word, echoed
        if not p.transits:
            entry["mass_is_minimum"] = p.inclination is None
            entry["note"] = (
                "not transiting: mass_earth and mass_jup are minimum masses (M sin i)"
                if p.inclination is None
                else "not transiting: true mass from the inclination prior (inclination_deg is prior only)"
            )
        entry["mass_measured"] = p.mass_measured
        if not p.mass_measured:
            # K is held fixed: whatever mass follows from it was assumed, not measured.
            entry.update(dict.fromkeys(MASS_KEYS))
            entry["note"] = "mass not measured (no RV semi-amplitude fitted): mass, density, gravity and K are null"
        entry.update(blocks[p.name])
        planets[p.name] = entry
    fitted = {name: stat(derived["parameters"][name]) for name in derived["parameter_names"]}
    return {
        "system": config.system,
        "star": star,
        "planets": planets,
        "fitted_parameters": fitted,
        "sampling": sampling,
    }


def _stat(samples, prior_only):
    """STAT of samples, with ``"prior_only": true`` for a quantity that no data constrain."""
    out = stat(samples)
    if prior_only and out is not None:
        out["prior_only"] = True
    return out


def _clean_json(obj):
    if isinstance(obj, dict):
        return {k: _clean_json(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean_json(v) for v in obj]
    if isinstance(obj, (np.floating, float)):
        return float(obj) if np.isfinite(obj) else None
    if isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, np.bool_):
        return bool(obj)
    return obj


def typed(summary):
    """The :class:`~planetfit.report.summary_types.Summary` of summary.json content built here (NaN, inf -> null)."""
    return Summary.from_json(_clean_json(summary))


def write_summary_json(path, summary):
    """Write a mapping as JSON laid out as summary.json is (NaN and inf become null); ``planetfit plan``'s plan.json."""
    write_text_atomic(path, json.dumps(_clean_json(summary), indent=2) + "\n")


def posterior_columns(derived):
    """Column name -> per-sample array for posterior.csv (star_*, <planet>_*; unmeasured masses left out)."""
    cols = {f"star_{k}": v for k, v in derived["star"].items()}
    for name, q in derived["planets"].items():
        skip = derived.get("unmeasured", {}).get(name, ())
        cols.update({f"{name}_{k}": v for k, v in q.items() if k not in skip})
    return cols


def write_posterior_csv(path, derived):
    """Write posterior.csv: physical quantities, one row per sample."""
    cols = posterior_columns(derived)
    buf = io.StringIO()
    buf.write(",".join(cols) + "\n")
    np.savetxt(buf, np.column_stack(list(cols.values())), delimiter=",", fmt="%.10g")
    write_text_atomic(path, buf.getvalue())
