"""The star's mass and radius from what is measured about it: published empirical relations and their scatter.

FGK dwarfs and subgiants: the Teff-log g-[Fe/H] calibration of Torres,
Andersen & Gimenez (2010, A&ARv 18, 67; Sect. 8). M dwarfs (Teff < 4000 K or
M_K > 4): radius from the absolute Ks magnitude by Mann et al. (2015, ApJ
804, 64; eq. 4, Table 1) and mass from it by Mann et al. (2019, ApJ 871, 63;
eq. 4, Table 6, fifth order).

Propagation (:func:`relation_priors`): the inputs are drawn from their
priors (``N_DRAWS`` draws with a fixed seed, so a config always gives the
same priors), each draw goes through the relation and is scattered by the
relation's intrinsic scatter (log-normal for Torres et al., fractional for
Mann et al.), and mass and radius each get the normal prior with the
draws' mean and standard deviation. Mass and radius are given independent
priors: their correlation through log g is dropped, which widens the
prior on the stellar density (the density check is then conservative).
"""

import dataclasses

import numpy as np

from .priors import Normal

#: Monte Carlo draws of the inputs, and their seed (fixed: the same config gives the same priors).
N_DRAWS = 20000
SEED = 2010

#: Torres et al. (2010), Sect. 8: log M = a1 + a2 X + a3 X^2 + a4 X^3 + a5 (log g)^2 + a6 (log g)^3 + a7 [Fe/H],
#: log R the same with b1..b7, X = log Teff - 4.1. The form, X, the scatter and the 0.6 M_sun limit are checked
#: against the paper's text (its LaTeX source on authorea.com, Sect. 8). a1..a7 and b1..b7 are checked against
#: third-party transcriptions of the paper's coefficient table, not against the journal table itself: a1..a7 in
#: gist.github.com/j-faria/dd635ffdf47ae758e7f3ce8384da8c99, a1..a7 and b1..b7 (with their errors) in
#: github.com/MariaTsantaki/mass_radius, mass_radius_age.py; all 14 agree. The paper's own solar values (Sect. 8)
#: test a1..a6 and b1..b6 together; a7 and b7 ([Fe/H]) are tested only weakly (alpha Cen).
#: value from memory: that the coefficient table is Table 4 of the journal version.
TORRES_MASS = (1.5689, 1.3787, 0.4243, 1.139, -0.1425, 0.01969, 0.1010)
TORRES_RADIUS = (2.4427, 0.6679, 0.1771, 0.705, -0.21415, 0.02306, 0.04173)
#: Torres et al. (2010), Sect. 8: scatter of the calibrations, dex (6.4 % in mass, 3.2 % in radius); checked
#: against the paper's text (authorea.com LaTeX source, Sect. 8).
TORRES_SCATTER_DEX = {"mass_msun": 0.027, "radius_rsun": 0.014}
#: Torres et al. (2010), Sect. 8: the calibration holds for main-sequence and evolved stars above 0.6 M_sun.
TORRES_MIN_MASS_MSUN = 0.6
#: Where planetfit applies it: FGK dwarfs and subgiants (common practice, no published source for these bounds).
TORRES_RANGE = {"teff_k": (4000.0, 7500.0), "logg_cgs": (3.5, 5.0), "feh_dex": (-1.0, 0.5)}

#: Mann et al. (2015), eq. 4 and Table 1: R = a + b M_K + c M_K^2, scatter 2.89 %, valid for 4.6 < M_K < 9.8
#: (value from memory: the range, the coefficients and the scatter, not re-checked against the journal text: no
#: readable copy of the paper's body or tables was found; the radius at M_K ~ 6 is tested against interferometric
#: radii of stars near M_K = 6).
MANN15_RADIUS = (1.9515, -0.3520, 0.01680)
MANN15_SCATTER = 0.0289
MANN15_RANGE = (4.6, 9.8)
#: Mann et al. (2019), eq. 4: log10 M = sum a_i (M_K - 7.5)^i, n = 5 the preferred order, zero point 7.5, intrinsic
#: scatter sigma_e about 2 % of the mass, 'safe' range 4.5 < M_K < 10.5: checked against the authors' LaTeX source
#: (github.com/awmann/masses_paper, Masses_1.tex, a 61-binary pre-publication draft: the relation's section, the
#: coefficient table with sigma_e = 0.019-0.020, and the usage advice). The coefficients a0..a5: value from memory of
#: the published Table 6 (n = 5), not re-checked against the journal text (nor the equation and table numbers); the
#: draft's own coefficients are an earlier fit and differ, but the relation below agrees with the draft's tabulated
#: masses within 1.2 of its sigma over 4.5 <= M_K <= 10.5 (tests/inputs/test_stellar_relations.py).
MANN19_MASS = (-0.642, -0.208, -8.43e-4, 7.87e-3, 1.42e-4, -2.13e-4)
MANN19_ZERO_POINT = 7.5
MANN19_SCATTER = 0.020
MANN19_RANGE = (4.5, 10.5)
#: The issue's M-dwarf rule: below this Teff, or above this M_K, the M-dwarf relations apply.
M_DWARF_TEFF_K = 4000.0
M_DWARF_MK = 4.0

TORRES_NAME = "Torres, Andersen & Gimenez (2010) Teff-log g-[Fe/H] calibration"
MANN_NAMES = {
    "mass_msun": "Mann et al. (2019) absolute-K mass relation",
    "radius_rsun": "Mann et al. (2015) absolute-K radius relation",
}
#: A given mass or radius prior further than this many combined sigma from the relation's contradicts it.
CONTRADICTION_SIGMA = 3.0
_FIX = "give 'mass_msun' and 'radius_rsun' priors yourself (e.g. from isochrones); '{key}' is then not used for them"


class RelationError(ValueError):
    """The star's inputs do not allow a relation: ``problem``, ``fix`` and the star's ``key`` at fault."""

    def __init__(self, problem, fix, key):
        super().__init__(problem)
        self.problem, self.fix, self.key = problem, fix, key


@dataclasses.dataclass
class RelationPriors:
    """Mass and radius priors from a relation (None outside its range, when not needed), with where they come from."""

    mass_msun: Normal | None
    radius_rsun: Normal | None
    names: dict  # quantity -> the relation's name
    scatter: dict  # quantity -> its intrinsic scatter, as text
    inputs: str  # what went in, as text


def torres_mass_radius(teff_k, logg_cgs, feh_dex):
    """Mass (M_sun) and radius (R_sun) of Torres et al. (2010), Sect. 8, without scatter."""
    x = np.log10(teff_k) - 4.1
    g = np.asarray(logg_cgs, dtype=float)

    def poly(c):
        return c[0] + c[1] * x + c[2] * x**2 + c[3] * x**3 + c[4] * g**2 + c[5] * g**3 + c[6] * np.asarray(feh_dex)

    return 10.0 ** poly(TORRES_MASS), 10.0 ** poly(TORRES_RADIUS)


def mann_mass_radius(abs_k):
    """Mass (Mann et al. 2019) and radius (Mann et al. 2015) from the absolute Ks magnitude, without scatter."""
    mk = np.asarray(abs_k, dtype=float)
    radius = np.polynomial.polynomial.polyval(mk, MANN15_RADIUS)
    mass = 10.0 ** np.polynomial.polynomial.polyval(mk - MANN19_ZERO_POINT, MANN19_MASS)
    return mass, radius


def absolute_magnitude(mag, parallax_mas):
    """Absolute magnitude from the apparent one and the parallax (no extinction)."""
    return mag + 5.0 * np.log10(np.asarray(parallax_mas, dtype=float) / 1000.0) + 5.0


def _draws(prior, rng):
    return np.asarray(prior.sample(rng, N_DRAWS), dtype=float)


def _check_range(value, bounds, what, key):
    lo, hi = bounds
    if not lo <= value <= hi:
        raise RelationError(
            f"{what} is {value:.3g}, outside the relation's range {lo:g} to {hi:g}.", _FIX.format(key=key), key
        )


def _m_dwarf(star, rng, scatter):
    """Mann et al. (2015, 2019) from parallax and K magnitude."""
    if star.parallax_mas is None or star.mag_k is None:
        key = "parallax_mas" if star.parallax_mas is None else "mag_k"
        raise RelationError(
            f"an M dwarf (Teff below {M_DWARF_TEFF_K:g} K) takes its mass and radius from the absolute K magnitude, "
            f"and '{key}' is missing.",
            "add 'parallax_mas' (a prior, e.g. {normal: [45.1, 0.05]}) and 'mag_k' (2MASS Ks), "
            "or give 'mass_msun' and 'radius_rsun' priors",
            key,
        )
    centre = float(absolute_magnitude(star.mag_k, star.parallax_mas.centre))
    what = "the absolute K magnitude M_K (from 'mag_k' and 'parallax_mas')"
    errors = {}
    for key, bounds in (("mass_msun", MANN19_RANGE), ("radius_rsun", MANN15_RANGE)):
        try:
            _check_range(centre, bounds, f"{what}, for the {MANN_NAMES[key]},", "parallax_mas")
        except RelationError as exc:
            errors[key] = exc
    mass, radius = mann_mass_radius(absolute_magnitude(star.mag_k, _draws(star.parallax_mas, rng)))
    if scatter:
        mass = mass * (1.0 + MANN19_SCATTER * rng.standard_normal(N_DRAWS))
        radius = radius * (1.0 + MANN15_SCATTER * rng.standard_normal(N_DRAWS))
    text = {"mass_msun": f"{MANN19_SCATTER:.1%}", "radius_rsun": f"{MANN15_SCATTER:.2%}"}
    return mass, radius, dict(MANN_NAMES), text, f"M_K = {centre:.2f} from mag_k and parallax_mas", errors


def _fgk(star, rng, scatter):
    """Torres et al. (2010) from Teff, log g and [Fe/H]."""
    for key in ("logg_cgs", "feh_dex"):
        if getattr(star, key) is None:
            raise RelationError(
                f"an FGK star (Teff {star.teff_k.centre:.0f} K) takes its mass and radius from Teff, log g and "
                f"[Fe/H] (Torres et al. 2010), and '{key}' is missing.",
                f"add '{key}' (a prior from spectroscopy, e.g. {{normal: [4.4, 0.1]}} for log g), or give "
                "'mass_msun' and 'radius_rsun' priors",
                key,
            )
    for key, bounds in TORRES_RANGE.items():
        _check_range(getattr(star, key).centre, bounds, f"'{key}'", key)
    mass, radius = torres_mass_radius(*(_draws(getattr(star, k), rng) for k in ("teff_k", "logg_cgs", "feh_dex")))
    centre = float(torres_mass_radius(*(getattr(star, k).centre for k in TORRES_RANGE))[0])
    if centre < TORRES_MIN_MASS_MSUN:
        raise RelationError(
            f"the Torres et al. (2010) calibration gives {centre:.2f} M_sun; it holds only above "
            f"{TORRES_MIN_MASS_MSUN:g} M_sun.",
            "for an M dwarf give 'parallax_mas' and 'mag_k' (Mann et al. relations), or " + _FIX.format(key="logg_cgs"),
            "logg_cgs",
        )
    if scatter:
        mass = mass * 10.0 ** (TORRES_SCATTER_DEX["mass_msun"] * rng.standard_normal(N_DRAWS))
        radius = radius * 10.0 ** (TORRES_SCATTER_DEX["radius_rsun"] * rng.standard_normal(N_DRAWS))
    text = {k: f"{v:g} dex" for k, v in TORRES_SCATTER_DEX.items()}
    names = dict.fromkeys(TORRES_SCATTER_DEX, TORRES_NAME)
    return mass, radius, names, text, "Teff, log g and [Fe/H]", {}


def is_m_dwarf(star):
    """The issue's rule: Teff below 4000 K, or M_K above 4 where parallax and K magnitude are given."""
    if star.teff_k.centre < M_DWARF_TEFF_K:
        return True
    if star.parallax_mas is not None and star.mag_k is not None:
        return float(absolute_magnitude(star.mag_k, star.parallax_mas.centre)) > M_DWARF_MK
    return False


def _rounded_normal(draws):
    """The normal prior of the draws' mean and standard deviation, both to two significant digits of the latter
    (the Monte Carlo error of 20000 draws is below that rounding)."""
    draws = draws[np.isfinite(draws) & (draws > 0)]  # a parallax draw at or below zero has no magnitude
    sd = float(np.std(draws)) if draws.size > 1 else 0.0
    if not 0.0 < sd < np.inf:
        raise RelationError(
            "the relation's inputs give no finite spread of mass or radius.",
            "give 'teff_k', 'logg_cgs', 'feh_dex' or 'parallax_mas' as priors with a width, or "
            + _FIX.format(key="teff_k"),
            "teff_k",
        )
    digits = 1 - int(np.floor(np.log10(sd)))
    return Normal(round(float(np.mean(draws)), digits), round(sd, digits))


def relation_priors(star, scatter=True, needed=("mass_msun", "radius_rsun")):
    """Normal mass and radius priors for ``star`` (a schema ``StarBlock``) from the relation its inputs select.

    Parameters
    ----------
    star : schema.StarBlock
        ``teff_k`` and, for FGK stars, ``logg_cgs`` and ``feh_dex``; for M dwarfs ``parallax_mas`` and ``mag_k``.
    scatter : bool
        Include the relation's intrinsic scatter (False only to measure what it adds).
    needed : tuple of str
        The quantities that must come from the relation; a quantity outside its relation's range is left out
        (None) when not needed.

    Raises
    ------
    RelationError
        An input is missing or the star lies outside the range of a needed relation.
    """
    rng = np.random.default_rng(SEED)
    mass, radius, names, text, inputs, errors = (_m_dwarf if is_m_dwarf(star) else _fgk)(star, rng, scatter)
    for key in needed:
        if key in errors:
            raise errors[key]
    priors = {
        key: None if key in errors else _rounded_normal(draws)
        for key, draws in (("mass_msun", mass), ("radius_rsun", radius))
    }
    return RelationPriors(priors["mass_msun"], priors["radius_rsun"], names, text, inputs)


def contradiction(given, relation, key):
    """Raise when a given prior lies more than ``CONTRADICTION_SIGMA`` combined sigma from the relation's."""
    lo, hi = given.span
    sd_given = given.sd if isinstance(given, Normal) else (hi - lo) / np.sqrt(12.0)
    z = abs(given.centre - relation.mean) / np.hypot(sd_given, relation.sd)
    if z > CONTRADICTION_SIGMA:
        raise RelationError(
            f"the given prior {given.describe()} lies {z:.1f} sigma from what the star's measured inputs give "
            f"({relation.describe()}): the two contradict each other.",
            f"keep one: remove '{key}' (the relation's prior is then used), or remove the relation inputs "
            "('logg_cgs', 'parallax_mas') if your prior is the better one",
            key,
        )


#: How a relation's prior was made, for the report.
PROPAGATION = (
    f"normal prior with the mean and standard deviation of {N_DRAWS} Monte Carlo draws: the inputs drawn from "
    "their priors, passed through the relation and scattered by its intrinsic scatter"
)
_QUANTITIES = ("mass_msun", "radius_rsun")


def resolve_mass_radius(star):
    """The star's mass and radius priors: the given ones win, a relation fills in what is missing.

    Returns
    -------
    priors : dict
        ``mass_msun``, ``radius_rsun`` -> Prior.
    source : dict
        The same keys -> ``{"from", "prior"}`` (plus ``intrinsic_scatter``, ``inputs`` and ``propagation``
        for a relation's prior).

    Raises
    ------
    RelationError
        A missing quantity cannot be had from the inputs, or a given prior contradicts the relation's.
    """
    given = {k: getattr(star, k) for k in _QUANTITIES}
    complete = all(p is not None for p in given.values())
    source = {k: {"from": "user prior", "prior": p.describe()} for k, p in given.items() if p is not None}
    if complete and star.logg_cgs is None and star.parallax_mas is None:
        return given, source
    try:
        relation = relation_priors(star, needed=tuple(k for k, p in given.items() if p is None))
    except RelationError:
        if complete:  # the given priors win; the relation's inputs need not be complete
            return given, source
        raise
    derived = {"mass_msun": relation.mass_msun, "radius_rsun": relation.radius_rsun}
    for key, prior in given.items():
        if prior is not None and derived[key] is not None:
            contradiction(prior, derived[key], key)
        elif prior is None:
            source[key] = {
                "from": relation.names[key],
                "prior": derived[key].describe(),
                "intrinsic_scatter": relation.scatter[key],
                "inputs": relation.inputs,
                "propagation": PROPAGATION,
            }
    return {k: given[k] if given[k] is not None else derived[k] for k in _QUANTITIES}, source
