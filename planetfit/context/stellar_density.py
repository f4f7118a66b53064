"""The stellar density check: does the transit agree with the star that was assumed?

A transit measures the star's mean density (from a/R* and the period, with
the orbit's shape); the star's mass and radius priors predict it. The check
compares the posterior of the density with its prior, both in log density:
the shift of the posterior median from the prior median in units of the
prior's standard deviation (half the 15.87-84.13 percentile width). Above
``TENSION_WARN_SIGMA`` a warning names what can cause it.
"""

import numpy as np

from planetfit.context.derived import bulk_density_gcc
from planetfit.core.stats import stat
from planetfit.core.units import M_SUN_KG, R_SUN_M

#: The data move the density this many prior sigma: warn (the issue's threshold).
TENSION_WARN_SIGMA = 3.0


def density_check(config, model, derived, rng):
    """The density's prior and its tension with the posterior, and the warnings.

    Parameters
    ----------
    config : Config
    model : Model
    derived : dict
        Output of :func:`planetfit.context.derived.derive`; its star density is the posterior.
    rng : numpy.random.Generator
        For the prior draws.

    Returns
    -------
    block : dict
        ``density_prior_gcc`` (STAT) and ``density_tension_sigma`` (>= 0; None when no transit measures the
        density, which then is its prior, or when the star's mass and radius are fixed).
    warnings : list of str
    """
    posterior = np.asarray(derived["star"]["density_gcc"], dtype=float)
    n = posterior.size
    mass = np.asarray(config.star.mass_msun.sample(rng, n), dtype=float)
    radius = np.asarray(config.star.radius_rsun.sample(rng, n), dtype=float)
    ok = (mass > 0) & (radius > 0)
    prior = bulk_density_gcc(mass[ok] * M_SUN_KG, radius[ok] * R_SUN_M)
    block = {"density_prior_gcc": stat(prior), "density_tension_sigma": None}
    transiting = [p for p in model.planets if p.transits]
    if not transiting or "density_gcc" in derived["prior_only"]["star"]:
        return block, []
    lo, mid, hi = np.percentile(np.log(prior), [15.87, 50.0, 84.13])
    if hi <= lo:  # mass and radius fixed: the density is fixed too, and no data can move it
        return block, []
    shift = (float(np.median(np.log(posterior))) - mid) / (0.5 * (hi - lo))
    block["density_tension_sigma"] = abs(shift)
    if abs(shift) <= TENSION_WARN_SIGMA:
        return block, []
    return block, [_warning(shift, block["density_prior_gcc"], stat(posterior), transiting)]


def _warning(shift, prior, posterior, transiting):
    circular = [p.name for p in transiting if not p.orbit.eccentric]
    direction = "denser" if shift > 0 else "less dense"
    orbit = (
        f"an eccentric orbit fitted as circular (set 'orbit: eccentric' for planet {', '.join(circular)})"
        if circular
        else "an orbit more eccentric than its prior allows (check 'eccentricity_max' and the sqrt(e) priors)"
    )
    return (
        f"stellar density: the transit makes the star {direction} than its prior says, by {abs(shift):.1f} prior "
        f"sigma ({posterior['median']:.3g} g/cm3 against the prior's {prior['median']:.3g} "
        f"[{prior['lower']:.3g}-{prior['upper']:.3g}] g/cm3), so the planet's mass, radius and density inherit "
        f"the conflict. Possible causes: {orbit}; light of a companion star diluting the transit (give the "
        "photometry dataset a 'dilution' prior); or wrong stellar parameters (check Teff, log g, [Fe/H], "
        "'mass_msun' and 'radius_rsun')."
    )
