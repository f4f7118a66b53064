"""The iron fraction a rocky planet built from its star's Fe, Mg and Si would have, against the planet's own.

Stoichiometric model of the kind used by Dorn et al. (2015, A&A 577, A83)
and Adibekyan et al. (2021, Science 374, 330): the refractory elements
condense in the star's proportions; all iron is metal, magnesium and silicon
are oxides (MgO, SiO2, together the Mg-silicate mantle of the interior
grid). The iron mass fraction is then

    f = n_Fe A_Fe / (n_Fe A_Fe + n_Mg (A_Mg + A_O) + n_Si (A_Si + 2 A_O)),

with number ratios from the star's [X/H] over the solar photosphere of
Asplund et al. (2009, ARA&A 47, 481, Table 1). It is the interior grid's
"iron fraction" (core share of an iron + Mg-silicate interior). Minor
elements (Ca, Al, Ni, S) and iron in the mantle are left out, which moves f
by a few hundredths (Adibekyan et al. 2021 use a fuller mineralogy).
"""

import numpy as np

from planetfit.context.interior.composition import fraction_from_curves
from planetfit.context.interior.grid import REFERENCE_CURVES, load_grid
from planetfit.core.stats import stat

#: Solar photospheric abundances log eps(X) = log10(N_X / N_H) + 12 and their uncertainties, Asplund, Grevesse,
#: Sauval & Scott (2009, ARA&A 47, 481), Table 1 (value from memory: Fe 7.50, Mg 7.60, Si 7.51 and their errors).
SOLAR_LOG_EPS = {"Fe": (7.50, 0.04), "Mg": (7.60, 0.04), "Si": (7.51, 0.03)}
#: Standard atomic weights, g/mol, IUPAC/CIAAW (2013) conventional values (value from memory).
ATOMIC_WEIGHT = {"Fe": 55.845, "Mg": 24.305, "Si": 28.085, "O": 15.999}
#: The star's abundance keys and their elements.
ABUNDANCE_KEYS = {"Fe": "feh_dex", "Mg": "mgh_dex", "Si": "sih_dex"}
MODEL = (
    "Stoichiometric iron fraction from the star's [Fe/H], [Mg/H], [Si/H] (solar reference Asplund et al. 2009): "
    "all Fe as metal, Mg and Si as MgO and SiO2 (as in Dorn et al. 2015; Adibekyan et al. 2021); minor "
    "elements and mantle iron left out."
)


def iron_fraction_from_abundances(feh_dex, mgh_dex, sih_dex, solar=None):
    """Iron mass fraction of a rocky planet of the star's Fe, Mg and Si (scalars or arrays).

    ``solar`` maps element -> log eps; default :data:`SOLAR_LOG_EPS`'s values.
    """
    eps = {k: v[0] for k, v in SOLAR_LOG_EPS.items()} if solar is None else solar
    n_fe = 10.0 ** (eps["Fe"] + np.asarray(feh_dex, dtype=float))
    n_mg = 10.0 ** (eps["Mg"] + np.asarray(mgh_dex, dtype=float))
    n_si = 10.0 ** (eps["Si"] + np.asarray(sih_dex, dtype=float))
    a = ATOMIC_WEIGHT
    iron = n_fe * a["Fe"]
    return iron / (iron + n_mg * (a["Mg"] + a["O"]) + n_si * (a["Si"] + 2.0 * a["O"]))


def star_iron_samples(star, rng, n):
    """Draws of the star-predicted iron fraction: abundances from their priors, solar reference from its errors."""
    solar = {k: rng.normal(mean, sd, n) for k, (mean, sd) in SOLAR_LOG_EPS.items()}
    given = [np.asarray(getattr(star, ABUNDANCE_KEYS[k]).sample(rng, n), dtype=float) for k in ("Fe", "Mg", "Si")]
    return iron_fraction_from_abundances(*given, solar=solar)


def planet_iron_fractions(mass_earth, radius_earth):
    """Per sample: the iron fraction of a rocky (water-free) interior, NaN where the sample is not rocky or off the
    grid; samples denser than pure iron get 1."""
    m = np.asarray(mass_earth, dtype=float).ravel()
    r = np.asarray(radius_earth, dtype=float).ravel()
    grid = load_grid()
    out = np.full(m.size, np.nan)
    usable = grid.inside(m) & np.isfinite(r) & (r > 0)
    no_iron, dry = grid.node_index(*REFERENCE_CURVES["silicate"])
    curves = grid.radius_at_mass(m[usable], slice(None), dry)
    rocky = r[usable] <= curves[:, no_iron]
    iron = np.full(rocky.size, np.nan)
    iron[rocky] = fraction_from_curves(r[usable][rocky], curves[rocky], grid.iron_fraction)
    out[usable] = iron
    return out


def star_iron_block(star, mass_earth, radius_earth, rng):
    """Composition keys comparing the planet's iron fraction with its star's, or {} without the three abundances.

    Returns
    -------
    dict
        ``star_iron_fraction`` (STAT), ``p_iron_above_star`` (the planet is iron-enriched over its star: a
        "super-Mercury" when far above) and ``p_iron_below_star``, both over the rocky samples (None when no
        sample is rocky), ``star_iron_verdict`` (a sentence), ``star_iron_model``.
    """
    if any(getattr(star, key) is None for key in ABUNDANCE_KEYS.values()):
        return {}
    planet = planet_iron_fractions(mass_earth, radius_earth)
    star_iron = star_iron_samples(star, rng, planet.size)
    rocky = np.isfinite(planet)
    above = float(np.mean(planet[rocky] > star_iron[rocky])) if rocky.any() else None
    expected = stat(star_iron)
    text = (
        f"Built from its star's Fe, Mg and Si a rocky planet would have iron fraction {expected['median']:.2f} "
        f"({expected['lower']:.2f}-{expected['upper']:.2f})"
    )
    if above is None:
        text += "; no sample of the planet is rocky, so its iron fraction is not compared."
    else:
        text += (
            f"; of the planet's rocky samples {above:.0%} are richer in iron (toward a 'super-Mercury') and "
            f"{1.0 - above:.0%} poorer."
        )
    return {
        "star_iron_fraction": expected,
        "p_iron_above_star": above,
        "p_iron_below_star": None if above is None else 1.0 - above,
        "star_iron_verdict": text,
        "star_iron_model": MODEL,
    }
