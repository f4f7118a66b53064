"""Composition verdict from mass and radius samples, by interpolation in the shipped grid.

A sample is *rocky* when its radius is at or below the pure-silicate curve at
its mass (no volatiles needed). Rocky samples get an iron fraction from the
water-free grid; samples between the silicate and water-world curves get the
minimum water fraction over an Earth-like interior; samples above the 50 %
water world need a gas envelope. Samples outside the grid's mass range are
counted and left out, never extrapolated.
"""

import numpy as np
from scipy.stats import truncnorm

from planetfit.context.interior.grid import EARTH_LIKE_IRON_FRACTION, REFERENCE_CURVES, load_grid
from planetfit.core.stats import stat

ASSUMPTIONS = (
    "Cold (room-temperature isotherms), fully differentiated planet without atmosphere: "
    "pure epsilon-iron core; Mg-silicate mantle (olivine, wadsleyite, ringwoodite to 23 GPa, "
    "MgSiO3 perovskite to 120 GPa, post-perovskite above); ice VII water layer. "
    "Iron fraction is the core share of the iron + silicate interior; water fraction is the "
    "share of the total mass. Radii are model-dependent at the ~5% level (heat, light "
    "elements in the core and iron in the mantle are left out)."
)
_CAVEAT = "assuming a cold, fully differentiated planet with no atmosphere (model-dependent at the ~5% level)"
_MAJORITY = 0.5  # common practice, no published source: flag when most samples agree


def _fraction_from_curves(radius, curves, fractions):
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


def _verdict(out, p_rocky):
    if p_rocky is None:
        lo, hi = load_grid().mass_range_earth
        return (
            f"No verdict: every sample lies outside the model grid ({lo:g}-{hi:g} Earth "
            f"masses) or is not a positive mass and radius."
        )
    if out["gas_envelope_required"]:
        text = (
            f"A gas envelope is required: {out['p_above_water_world']:.0%} of samples are larger than a 50% water world"
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
        water = out["min_water_fraction"]
        text = f"Volatile-rich with probability {out['p_volatile_rich']:.0%} (above the pure-silicate curve)"
        if water is not None:
            text += f", needing at least {water['median']:.0%} water over an Earth-like interior"
    outside = out["fraction_outside_grid"]
    if outside > _MAJORITY:
        lo, hi = out["grid_mass_range_earth"]
        text = (
            f"Only {1.0 - outside:.0%} of samples lie inside the model grid ({lo:g}-{hi:g} "
            f"Earth masses), and for those: {text[0].lower()}{text[1:]}"
        )
    elif outside > 0:
        text += f", with {outside:.0%} of samples outside the model grid"
    return f"{text}; {_CAVEAT}."


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
    iron = _fraction_from_curves(r[rocky], grid.radius_at_mass(m[rocky], slice(None), j_dry), grid.iron_fraction)
    water = _fraction_from_curves(
        r[between], grid.radius_at_mass(m[between], i_earth, slice(None)), grid.water_fraction
    )
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


def composition(mass_earth, radius_earth):
    """Composition verdict from joint mass and radius samples.

    Parameters
    ----------
    mass_earth, radius_earth : array_like
        Paired posterior samples in Earth units.

    Returns
    -------
    dict
        JSON-serialisable: ``p_rocky``, ``p_volatile_rich``, ``p_denser_than_earth_like``,
        ``p_above_water_world`` (None when no sample is classifiable),
        ``iron_fraction`` (STAT of rocky samples or None), ``fraction_denser_than_iron``
        (rocky samples below the pure-iron curve, their iron fraction clipped to 1),
        ``min_water_fraction`` (STAT over an Earth-like interior of samples between the
        silicate and water-world curves, or None), ``gas_envelope_required``,
        ``fraction_outside_grid``, ``grid_mass_range_earth``, ``reference_radii_earth``
        (the four curves at the median mass; None off the grid), ``verdict``,
        ``assumptions``.
    """
    m = np.asarray(mass_earth, dtype=float).ravel()
    r = np.asarray(radius_earth, dtype=float).ravel()
    if m.shape != r.shape or m.size == 0:
        raise ValueError(
            f"mass_earth and radius_earth must be non-empty and of equal length (got {m.size} and {r.size})"
        )
    grid = load_grid()
    usable = grid.inside(m) & np.isfinite(r) & (r > 0)
    m, r = m[usable], r[usable]
    curves = {name: grid.radius_at_mass(m, *grid.node_index(*nodes)) for name, nodes in REFERENCE_CURVES.items()}

    rocky = r <= curves["silicate"]
    above = r > curves["water_world"]
    iron, water = _fractions(grid, m, r, rocky, ~rocky & ~above)

    def mean(flags):
        return float(flags.mean()) if m.size else None

    p_rocky = mean(rocky)
    p_above = mean(above)
    out = {
        "p_rocky": p_rocky,
        "p_volatile_rich": None if p_rocky is None else 1.0 - p_rocky,
        "p_denser_than_earth_like": mean(r < curves["earth_like"]),
        "p_above_water_world": p_above,
        "iron_fraction": stat(iron),
        "fraction_denser_than_iron": float((r[rocky] <= curves["iron"][rocky]).mean()) if rocky.any() else 0.0,
        "min_water_fraction": stat(water),
        "gas_envelope_required": bool(p_above is not None and p_above > _MAJORITY),
        "fraction_outside_grid": float(1.0 - usable.mean()),
        "grid_mass_range_earth": list(grid.mass_range_earth),
        "reference_radii_earth": _radii_at_median_mass(grid, mass_earth),
        "assumptions": ASSUMPTIONS,
    }
    out["verdict"] = _verdict(out, p_rocky)
    return out


def quick_verdict(mass_earth, mass_sd, radius_earth, radius_sd, n=20000, seed=0):
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

    return composition(draw(mass_earth, mass_sd, "mass"), draw(radius_earth, radius_sd, "radius"))
