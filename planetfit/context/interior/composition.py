"""Composition verdict from mass and radius samples, by interpolation in the shipped grid.

A sample is *rocky* when its radius is at or below the pure-silicate curve at
its mass (no volatiles needed). Rocky samples get an iron fraction from the
water-free grid. Above it, the sample is compared with a 50 % water world
over an Earth-like interior *at the planet's equilibrium temperature*
(:mod:`~planetfit.context.interior.warm`): cold (the grid) where water stays
condensed, the irradiated-ocean relation of Aguichine et al. (2021) where it
does not; samples below that water world are consistent with a water-rich
interior, samples above it need a light (H/He) envelope, and samples where
only bounds on the water world are known are counted as undetermined.
Samples outside the grid's mass range are counted and left out, never
extrapolated.
"""

import numpy as np
from scipy.stats import truncnorm

from planetfit.context.interior.grid import EARTH_LIKE_IRON_FRACTION, REFERENCE_CURVES, load_grid
from planetfit.context.interior.warm import (
    CONDENSED,
    RUNAWAY_GREENHOUSE_TEQ_K,
    WARM,
    WARM_RELATION,
    warm_water_world_radius_earth,
    water_layer_states,
    water_world_bounds,
)
from planetfit.core.stats import stat

ASSUMPTIONS = (
    "Cold (300 K isotherms), fully differentiated planet without atmosphere: "
    "pure epsilon-iron core; Mg-silicate mantle (olivine, wadsleyite, ringwoodite to 23 GPa, "
    "MgSiO3 perovskite to 120 GPa, post-perovskite above); water layer of liquid water (IAPWS-95), "
    "ice VI, ice VII (Frank et al. 2004) to 28 GPa, ice VII/X from density-functional points "
    "(French et al. 2009) to 8.9 TPa and a Thomas-Fermi-Dirac-limited fit above. "
    "Where the equilibrium temperature (zero albedo, full redistribution) is above the runaway "
    "greenhouse limit (about 285 K: Kopparapu et al. 2014; Turbet et al. 2020) water cannot stay "
    "condensed, and the 50% water world is taken from the irradiated-ocean relation of Aguichine "
    "et al. (2021, 400-1300 K, about 1-20 Earth masses); outside it only bounds are used and the "
    "water/gas distinction may be left undetermined. "
    "Iron fraction is the core share of the iron + silicate interior; water fraction is the "
    "share of the total mass. Radii are model-dependent at the ~5% level (heat in the rock, light "
    "elements in the core and iron in the mantle are left out)."
)
_CAVEAT = "assuming a cold, fully differentiated planet with no atmosphere (model-dependent at the ~5% level)"
_MAJORITY = 0.5  # common practice, no published source: flag when most samples agree


def fraction_from_curves(radius, curves, fractions):
    """Invert monotonic rows ``curves[k, :]`` (radius at each fraction node) at ``radius[k]``.

    Radii outside a row clip to its end nodes. Returns the interpolated fraction.
    """
    decreasing = curves[:, 0] > curves[:, -1]
    rows = np.where(decreasing[:, None], -curves, curves)
    target = np.where(decreasing, -radius, radius)
    k = np.clip((rows <= target[:, None]).sum(axis=1) - 1, 0, len(fractions) - 2)
    idx = np.arange(len(radius))
    lo, hi = rows[idx, k], rows[idx, k + 1]
    t = np.clip((target - lo) / (hi - lo), 0.0, 1.0)
    return fractions[k] + t * (fractions[k + 1] - fractions[k])


def _water_note(out):
    """What water layer the verdict compared with: the phrase for the text and the caveat's clause."""
    t = out["equilibrium_temp_k"]
    if t is None:
        return "a cold 50% water world", "a cold (300 K) water layer: no equilibrium temperature was given"
    tm, state = t["median"], out["water_layer"]
    if state == CONDENSED:
        return (
            f"a 50% water world with condensed water (T_eq {tm:.0f} K)",
            f"at T_eq {tm:.0f} K water stays condensed (below the runaway greenhouse limit, "
            f"{RUNAWAY_GREENHOUSE_TEQ_K:.0f} K), so the cold water layer applies",
        )
    relation = f"the {WARM_RELATION} at T_eq {tm:.0f} K"
    basis = WARM_RELATION if state == WARM else "bounded by the cold model and the 400-1300 K " + WARM_RELATION
    return (
        f"a 50% water world at T_eq {tm:.0f} K (supercritical water under steam; {basis})",
        f"at T_eq {tm:.0f} K water cannot stay condensed (above the runaway greenhouse limit, "
        f"{RUNAWAY_GREENHOUSE_TEQ_K:.0f} K): the water world is {relation} where it applies "
        "(400-1300 K, about 1-20 Earth masses), bounds elsewhere",
    )


def _volatile_text(out, p_rocky, phrase):
    """The verdict for samples above the silicate curve without a majority needing an envelope."""
    undetermined = out["p_water_or_gas_undetermined"]
    if undetermined >= _MAJORITY:
        return (
            f"Larger than rock with probability {1.0 - p_rocky:.0%}; the water layer would be steam or "
            f"supercritical and, for {undetermined:.0%} of samples, the published relation ({WARM_RELATION}) "
            "does not reach this temperature or mass: whether the planet holds water or a gas envelope "
            "cannot be judged"
        )
    text = (
        f"Volatile-rich with probability {out['p_volatile_rich']:.0%} (above the pure-silicate curve); "
        f"consistent with a water-rich interior with probability {out['p_water_rich_consistent']:.0%} "
        f"(at or below {phrase})"
    )
    water = out["min_water_fraction"]
    if water is not None:
        text += f", needing at least {water['median']:.0%} water over an Earth-like interior"
    if out["p_needs_envelope"] > 0.005:
        text += f"; {out['p_needs_envelope']:.0%} of samples need a light (H/He) envelope"
    if undetermined > 0.005:
        text += f"; {undetermined:.0%} cannot be judged (water or gas)"
    return text


def _verdict(out, p_rocky):
    if p_rocky is None:
        lo, hi = load_grid().mass_range_earth
        return (
            f"No verdict: every sample lies outside the model grid ({lo:g}-{hi:g} Earth "
            f"masses) or is not a positive mass and radius."
        )
    phrase, water_caveat = _water_note(out)
    if out["gas_envelope_required"]:
        text = (
            f"A light (H/He) gas envelope is required even as a water world: {out['p_needs_envelope']:.0%} "
            f"of samples are larger than {phrase}"
        )
    elif p_rocky >= _MAJORITY:
        iron = out["iron_fraction"]
        text = (
            f"Rocky with probability {p_rocky:.0%} (at or below the pure-silicate curve), "
            f"iron mass fraction {iron['median']:.2f} ({iron['lower']:.2f}-{iron['upper']:.2f}, "
            f"Earth 0.33) and denser than Earth-like with probability "
            f"{out['p_denser_than_earth_like']:.0%}"
        )
    else:
        text = _volatile_text(out, p_rocky, phrase)
    outside = out["fraction_outside_grid"]
    if outside > _MAJORITY:
        lo, hi = out["grid_mass_range_earth"]
        text = (
            f"Only {1.0 - outside:.0%} of samples lie inside the model grid ({lo:g}-{hi:g} "
            f"Earth masses), and for those: {text[0].lower()}{text[1:]}"
        )
    elif outside > 0:
        text += f", with {outside:.0%} of samples outside the model grid"
    return f"{text}; {_CAVEAT}; {water_caveat}."


def _radii_at_median_mass(grid, mass_earth):
    """The reference curves' radii at the median of the finite masses (None off the grid)."""
    m = np.asarray(mass_earth, dtype=float).ravel()
    median = np.median(m[np.isfinite(m)]) if np.isfinite(m).any() else np.nan
    radii = {
        name: grid.radius_at_mass([median], *grid.node_index(*nodes))[0] for name, nodes in REFERENCE_CURVES.items()
    }
    return {name: (float(value) if np.isfinite(value) else None) for name, value in radii.items()}


def _fractions(grid, m, r, rocky, between):
    """Iron fractions of the rocky samples (water-free grid) and minimum water fractions of those ``between``
    the silicate and water-world curves (over an Earth-like interior)."""
    i_earth, j_dry = grid.node_index(EARTH_LIKE_IRON_FRACTION, 0.0)
    iron = fraction_from_curves(r[rocky], grid.radius_at_mass(m[rocky], slice(None), j_dry), grid.iron_fraction)
    water = fraction_from_curves(r[between], grid.radius_at_mass(m[between], i_earth, slice(None)), grid.water_fraction)
    return iron, water


def rocky_flags(mass_earth, radius_earth):
    """Per sample: 1.0 at or below the pure-silicate curve (rocky, as :func:`composition` counts it), 0.0 above
    it, NaN outside the grid or for a non-positive radius."""
    m = np.asarray(mass_earth, dtype=float).ravel()
    r = np.asarray(radius_earth, dtype=float).ravel()
    grid = load_grid()
    usable = grid.inside(m) & np.isfinite(r) & (r > 0)
    out = np.full(m.size, np.nan)
    silicate = grid.radius_at_mass(m[usable], *grid.node_index(*REFERENCE_CURVES["silicate"]))
    out[usable] = (r[usable] <= silicate).astype(float)
    return out


def _samples(mass_earth, radius_earth, teq_k):
    """Flat mass, radius and per-sample equilibrium temperature (None when not given) arrays."""
    m = np.asarray(mass_earth, dtype=float).ravel()
    r = np.asarray(radius_earth, dtype=float).ravel()
    if m.shape != r.shape or m.size == 0:
        raise ValueError(
            f"mass_earth and radius_earth must be non-empty and of equal length (got {m.size} and {r.size})"
        )
    if teq_k is None:
        return m, r, None
    t = np.asarray(teq_k, dtype=float).ravel()
    if t.size not in (1, m.size):
        raise ValueError(f"teq_k must be one value or one per sample ({m.size}), got {t.size}")
    return m, r, np.broadcast_to(t, m.shape).copy()


def _water_world_at_median(m, t):
    """Bounds on the 50 % water world's radius at the median mass and temperature, and its relation."""
    grid = load_grid()
    m0 = np.array([np.median(m)])
    cold = grid.radius_at_mass(m0, *grid.node_index(*REFERENCE_CURVES["water_world"]))
    if t is None:
        return {"lower": float(cold[0]), "upper": float(cold[0])}, "cold structure model (the shipped grid)"
    t0 = np.array([np.median(t)])
    lower, upper = water_world_bounds(m0, cold, t0)
    state = water_layer_states(t0)[0]
    exact = state == CONDENSED or (state == WARM and np.isfinite(warm_water_world_radius_earth(m0, t0)[0]))
    if state == CONDENSED:
        relation = "cold structure model (the shipped grid): water condensed below the runaway greenhouse limit"
    elif exact:
        relation = f"{WARM_RELATION} at the median T_eq"
    else:
        relation = f"bounds only: cold model below, {WARM_RELATION} (400-1300 K) above where it applies"
    bounds = {key: (float(v[0]) if np.isfinite(v[0]) else None) for key, v in (("lower", lower), ("upper", upper))}
    return bounds, relation


def _water_columns(m, r, t, curves, rocky):
    """The water-world comparison at each sample's temperature.

    Keys: ``equilibrium_temp_k`` (STAT or None), ``runaway_greenhouse_teq_k``, ``water_layer`` (state
    at the median T_eq), ``water_world_radius_earth`` (lower/upper bounds at the median mass and
    T_eq), ``water_world_relation``, ``p_water_rich_consistent``, ``p_needs_envelope``,
    ``p_water_or_gas_undetermined``.
    """
    if t is None:
        lower = upper = curves["water_world"]
    else:
        lower, upper = water_world_bounds(m, curves["water_world"], t)

    def mean(flags):
        return float(flags.mean()) if m.size else None

    bounds, relation = _water_world_at_median(m, t) if m.size else (None, None)
    return {
        "equilibrium_temp_k": None if t is None else stat(t),
        "runaway_greenhouse_teq_k": RUNAWAY_GREENHOUSE_TEQ_K,
        "water_layer": None if t is None or not t.size else str(water_layer_states(np.median(t))),
        "water_world_radius_earth": bounds,
        "water_world_relation": relation,
        "p_water_rich_consistent": mean(~rocky & (r <= lower)),
        "p_needs_envelope": mean(r > upper),
        "p_water_or_gas_undetermined": mean(~rocky & (r > lower) & (r <= upper)),
    }


def composition(mass_earth, radius_earth, teq_k=None):
    """Composition verdict from joint mass and radius samples.

    Parameters
    ----------
    mass_earth, radius_earth : array_like
        Paired posterior samples in Earth units.
    teq_k : float or array_like, optional
        Equilibrium temperature (zero albedo, full redistribution), scalar or per sample;
        None treats the water layer as cold (300 K).

    Returns
    -------
    dict
        JSON-serialisable: ``p_rocky``, ``p_volatile_rich``, ``p_denser_than_earth_like``,
        ``p_above_water_world`` (cold 50 % water world), ``iron_fraction`` (STAT of rocky
        samples or None), ``fraction_denser_than_iron``, ``min_water_fraction`` (STAT over an
        Earth-like interior, condensed water only, or None), ``gas_envelope_required`` (most
        samples need a light envelope even as a water world at their temperature),
        ``fraction_outside_grid``, ``grid_mass_range_earth``, ``reference_radii_earth`` (cold
        curves at the median mass), the keys of :func:`_water_columns`, ``verdict``, ``assumptions``.
    """
    m, r, t = _samples(mass_earth, radius_earth, teq_k)
    grid = load_grid()
    usable = grid.inside(m) & np.isfinite(r) & (r > 0)
    m, r = m[usable], r[usable]
    t = None if t is None else t[usable]
    curves = {name: grid.radius_at_mass(m, *grid.node_index(*nodes)) for name, nodes in REFERENCE_CURVES.items()}

    rocky = r <= curves["silicate"]
    above = r > curves["water_world"]
    condensed = np.ones(m.size, bool) if t is None else water_layer_states(t) == CONDENSED
    iron, water = _fractions(grid, m, r, rocky, ~rocky & ~above & condensed)

    def mean(flags):
        return float(flags.mean()) if m.size else None

    p_rocky = mean(rocky)
    out = {
        "p_rocky": p_rocky,
        "p_volatile_rich": None if p_rocky is None else 1.0 - p_rocky,
        "p_denser_than_earth_like": mean(r < curves["earth_like"]),
        "p_above_water_world": mean(above),
        "iron_fraction": stat(iron),
        "fraction_denser_than_iron": float((r[rocky] <= curves["iron"][rocky]).mean()) if rocky.any() else 0.0,
        "min_water_fraction": stat(water),
        "fraction_outside_grid": float(1.0 - usable.mean()),
        "grid_mass_range_earth": list(grid.mass_range_earth),
        "reference_radii_earth": _radii_at_median_mass(grid, mass_earth),
        **_water_columns(m, r, t, curves, rocky),
        "assumptions": ASSUMPTIONS,
    }
    out["gas_envelope_required"] = bool(out["p_needs_envelope"] is not None and out["p_needs_envelope"] > _MAJORITY)
    out["verdict"] = _verdict(out, p_rocky)
    return out


def quick_verdict(mass_earth, mass_sd, radius_earth, radius_sd, n=20000, seed=0, teq_k=None):
    """Composition verdict for a mass and radius given as Gaussian estimates.

    Samples are drawn from normal distributions truncated at zero
    (``scipy.stats.truncnorm``), mass and radius independently.

    Parameters
    ----------
    mass_earth, mass_sd, radius_earth, radius_sd : float
        Mean and standard deviation, Earth units; means must be positive.
    n : int
        Number of samples.
    seed : int
        Random seed.
    teq_k : float, optional
        Equilibrium temperature (K, zero albedo, full redistribution); None for a cold water layer.

    Returns
    -------
    dict
        As :func:`composition`.
    """
    rng = np.random.default_rng(seed)

    def draw(mean, sd, label):
        if not (np.isfinite(mean) and mean > 0 and np.isfinite(sd) and sd >= 0):
            raise ValueError(f"{label} must be positive with a non-negative uncertainty (got {mean} +- {sd})")
        if sd == 0:
            return np.full(n, float(mean))
        return truncnorm.rvs(-mean / sd, np.inf, loc=mean, scale=sd, size=n, random_state=rng)

    return composition(draw(mass_earth, mass_sd, "mass"), draw(radius_earth, radius_sd, "radius"), teq_k=teq_k)
