"""Is the fitted multi-planet system dynamically possible? The ``dynamics`` block of summary.json.

Every posterior sample is checked, pair by adjacent pair (planets ordered
by their median semi-major axis): Gladman's (1993) Hill criterion and
orbit crossing (:mod:`planetfit.core.stability`); with ``stability:
nbody`` a random subset is integrated with rebound and its MEGNO judged
(:mod:`planetfit.context.nbody`). Orbits are taken as coplanar; planets
seen only in RVs enter with their minimum masses unless an inclination
prior gives their true mass.
"""

import numpy as np

from planetfit.context.nbody import megno_block
from planetfit.core.stability import hill_margin, orbits_cross
from planetfit.core.stats import stat
from planetfit.core.units import M_EARTH_KG, M_SUN_KG

#: Below this fraction of stable samples the run warns that most of the posterior is unstable.
MOST_UNSTABLE = 0.5

ASSUMPTIONS = (
    "coplanar orbits; adjacent pairs only (Gladman 1993 is a two-planet criterion); Hill stability forbids close "
    "encounters and exchanges of order but not the ejection of the outer planet; orbit crossing means the inner "
    "apoastron reaches the outer periastron"
)


def _masses_msun(derived, planet):
    return derived["planets"][planet.name]["mass_earth"] * (M_EARTH_KG / M_SUN_KG)


def _order(model, derived):
    """The planets by median semi-major axis, innermost first."""
    return sorted(model.planets, key=lambda p: float(np.median(derived["planets"][p.name]["semi_major_axis_au"])))


def pair_checks(model, derived):
    """Per adjacent pair (inner, outer, Hill margin per sample, crossing per sample)."""
    planets, mstar = _order(model, derived), derived["star"]["mass_msun"]
    out = []
    for inner, outer in zip(planets, planets[1:]):
        qi, qo = derived["planets"][inner.name], derived["planets"][outer.name]
        ai, ao, ei, eo = qi["semi_major_axis_au"], qo["semi_major_axis_au"], qi["eccentricity"], qo["eccentricity"]
        mi, mo = _masses_msun(derived, inner), _masses_msun(derived, outer)
        with np.errstate(divide="ignore", invalid="ignore"):
            margin = np.where(mi + mo > 0, hill_margin(mstar, mi, mo, ai, ao, ei, eo), np.inf)
        out.append((inner.name, outer.name, margin, orbits_cross(ai, ao, ei, eo)))
    return out


def _minimum_mass_planets(model, velocities):
    return [p.name for p in model.planets if not p.transits and p.inclination is None and velocities]


def dynamics_block(config, model, derived, rng):
    """The ``dynamics`` block and its warnings, or (None, []) for a single planet.

    Returns
    -------
    block : dict or None
        ``p_hill_stable`` (every pair Hill stable), ``p_orbits_cross`` (any
        pair's orbits cross), per pair the same with the Hill margin
        (left over right side of Gladman's inequality), ``samples``,
        ``minimum_mass_planets``, ``assumptions``; for ``stability: nbody``
        also ``p_megno_stable`` and the integration settings. Without RVs
        no mass is measured: the Hill and N-body probabilities are null.
    warnings : list of str
    """
    if len(model.planets) < 2:
        return None, []
    weighed = bool(config.velocities)
    block = _pairs_block(pair_checks(model, derived), weighed)
    block["minimum_mass_planets"] = _minimum_mass_planets(model, config.velocities)
    block["assumptions"] = ASSUMPTIONS
    if block["minimum_mass_planets"]:
        block["assumptions"] += (
            f"; {', '.join(block['minimum_mass_planets'])} entered with minimum masses (M sin i, i.e. coplanar with "
            "an edge-on orbit): heavier true masses make a pair less stable"
        )
    if not weighed:
        block["assumptions"] += "; no RVs: planet masses are not measured, so only orbit crossing is tested"
    warnings = _warnings(block)
    if config.dynamics.nbody and weighed:
        nbody = megno_block(_order(model, derived), derived, config.dynamics, rng)
        block.update(nbody)
        if nbody["p_megno_stable"] < MOST_UNSTABLE:
            warnings.append(
                f"dynamics: only {nbody['p_megno_stable']:.0%} of {nbody['nbody_samples']} N-body integrations are "
                f"regular (MEGNO < {nbody['megno_stable_below']:g} over {nbody['nbody_orbits']:g} outer orbits): "
                "most of the posterior is chaotic."
            )
    return block, warnings


def _pairs_block(pairs, weighed):
    """The probabilities of the whole system and per pair (Hill ones null without measured masses)."""
    stable = np.logical_and.reduce([m > 1 for _, _, m, _ in pairs])
    crossing = np.logical_or.reduce([c for _, _, _, c in pairs])

    def hill(x):
        return float(np.mean(x)) if weighed else None

    return {
        "p_hill_stable": hill(stable),
        "p_orbits_cross": float(np.mean(crossing)),
        "samples": int(stable.size),
        "pairs": [
            {
                "inner": i,
                "outer": o,
                "p_hill_stable": hill(m > 1),
                "p_orbits_cross": float(np.mean(c)),
                "hill_margin": stat(m) if weighed else None,
            }
            for i, o, m, c in pairs
        ],
    }


def _warnings(block):
    out = []
    if block["p_hill_stable"] is not None and block["p_hill_stable"] < MOST_UNSTABLE:
        out.append(
            f"dynamics: only {block['p_hill_stable']:.0%} of the posterior samples are Hill stable (Gladman 1993): "
            "most of the fitted systems could not last; consider 'dynamics: {stability_prior: hill}' or check "
            "the masses and eccentricities."
        )
    if block["p_orbits_cross"] > 1 - MOST_UNSTABLE:
        out.append(
            f"dynamics: in {block['p_orbits_cross']:.0%} of the posterior samples two planets' orbits cross: "
            "the fit is not a possible system."
        )
    return out
