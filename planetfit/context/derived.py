"""Posterior samples -> physical quantities of the star and each planet.

Per sample: the planet mass from the exact mass function with the sampled
inclination and star mass (not the Mp << M* shortcut), radius from the
radius ratio and the sampled stellar radius, bulk density, surface gravity,
a in au and in stellar radii, inclination, eccentricity, total transit
duration, stellar density. Teff and age do not enter the likelihood, so
their posterior is their prior: they are drawn from it here, independently
per sample. Constants come from :mod:`planetfit.core.units` (astropy).
"""

import numpy as np

from planetfit.core.geometry import planet_mass_kg, semi_major_axis_m, transit_duration_days
from planetfit.core.units import (
    AU_M,
    G_SI,
    HOURS_PER_DAY,
    KG_M3_TO_G_CM3,
    M_EARTH_KG,
    M_JUP_KG,
    M_SUN_KG,
    R_EARTH_M,
    R_JUP_M,
    R_SUN_M,
)

#: Planet quantities that follow from the RV semi-amplitude: not measured when K is held fixed (a transit-only fit).
MASS_KEYS = ("rv_amplitude_ms", "mass_earth", "mass_jup", "density_gcc", "surface_gravity_ms2")


def bulk_density_gcc(mass_kg, radius_m):
    """Mean density M / (4/3 pi R^3) in g/cm^3."""
    return mass_kg / (4.0 / 3.0 * np.pi * radius_m**3) * KG_M3_TO_G_CM3


def derive(config, model, samples, rng):
    """Physical quantities for every posterior sample.

    Parameters
    ----------
    config : Config
    model : Model
        Its layout reads the samples; its prior-only parameters are drawn here.
    samples : ndarray, shape (n, ndim)
    rng : numpy.random.Generator
        For the prior-only parameters and the stellar Teff and age, drawn from their priors.

    Returns
    -------
    dict
        ``"star"`` -> {quantity: array}, ``"planets"`` -> {name: {quantity:
        array}}, ``"parameters"`` -> {parameter name: array} (sampled and
        prior-only ones), ``"prior_only"`` -> {"star": set of keys,
        "planets": {name: set of keys}}, the quantities no data constrain,
        ``"unmeasured"`` -> {name: set of keys}, the :data:`MASS_KEYS` of
        planets whose mass is not measured (K held fixed).
        Arrays have one value per sample.
    """
    n = samples.shape[0]
    values = {
        k: np.broadcast_to(np.asarray(v, dtype=float), (n,)).copy() for k, v in model.layout.values(samples).items()
    }
    drawn = {p.name: np.asarray(p.prior.sample(rng, n), dtype=float) for p in model.prior_only}
    values.update(drawn)
    star_model = model.star
    mstar, rstar = values[star_model.mass.name], values[star_model.radius.name]
    star = {
        "mass_msun": mstar,
        "radius_rsun": rstar,
        "density_gcc": bulk_density_gcc(mstar * M_SUN_KG, rstar * R_SUN_M),
        "teff_k": np.asarray(config.star.teff_k.sample(rng, n), dtype=float),
    }
    flagged = {
        "star": {"teff_k"} | ({"mass_msun", "radius_rsun", "density_gcc"} if star_model.mass.name in drawn else set()),
        "planets": {},
    }
    if config.star.age_gyr is not None:
        star["age_gyr"] = np.asarray(config.star.age_gyr.sample(rng, n), dtype=float)
        flagged["star"].add("age_gyr")
    planets = {}
    for p in model.planets:
        planets[p.name] = _planet(p, values, model.star, mstar, rstar)
        flagged["planets"][p.name] = {p.inclination.key} if p.inclination is not None else set()
    unmeasured = {p.name: set(MASS_KEYS) for p in model.planets if not p.mass_measured}
    return {"star": star, "planets": planets, "parameters": values, "prior_only": flagged, "unmeasured": unmeasured}


def planet_quantities(planet, star, values):
    """Derived quantities of one planet (mass, radius, ...) from parameter values, scalars or arrays."""
    shape = np.broadcast_shapes(*(np.shape(v) for v in values.values()))
    values = {k: np.broadcast_to(np.asarray(v, dtype=float), shape) for k, v in values.items()}
    return _planet(planet, values, star, values[star.mass.name], values[star.radius.name])


def _planet(planet, values, star, mstar_msun, rstar_rsun):
    """Derived quantities of one planet component from parameter value arrays."""
    per, k_ms = values[planet.period.name], values[planet.amplitude.name]
    orbit = planet.solve(values, star)
    e = np.broadcast_to(orbit.eccentricity, per.shape)
    w = np.broadcast_to(orbit.omega_rad, per.shape)
    out = {
        "period_days": per,
        "transit_bjd": values[planet.transit_time.name],
        "eccentricity": e,
        "omega_deg": np.degrees(w),
        "rv_amplitude_ms": k_ms,
    }
    if planet.transits:
        mass_kg = orbit.mass_kg
        a_r, cos_i = orbit.a_over_rstar, orbit.cos_i
        k, b = values[planet.radius_ratio.name], values[planet.impact.name]
        radius_m = k * rstar_rsun * R_SUN_M
        out.update(
            radius_ratio=k,
            impact=b,
            inclination_deg=np.degrees(np.arccos(cos_i)),
            a_over_rstar=a_r,
            semi_major_axis_au=a_r * rstar_rsun * R_SUN_M / AU_M,
            radius_earth=radius_m / R_EARTH_M,
            radius_jup=radius_m / R_JUP_M,
            density_gcc=bulk_density_gcc(mass_kg, radius_m),
            surface_gravity_ms2=G_SI * mass_kg / radius_m**2,
            transit_duration_hr=transit_duration_days(per, a_r, k, b, cos_i, e, w) * HOURS_PER_DAY,
        )
    else:
        # Without an inclination prior the mass is the minimum mass M sin i.
        incl = values.get(planet.inclination.name) if planet.inclination is not None else None
        sin_i = 1.0 if incl is None else np.abs(np.sin(np.radians(incl)))
        mass_kg = planet_mass_kg(k_ms, per, e, sin_i, mstar_msun * M_SUN_KG)
        a_m = semi_major_axis_m(per, mstar_msun * M_SUN_KG + mass_kg)
        out.update(semi_major_axis_au=a_m / AU_M, a_over_rstar=a_m / (rstar_rsun * R_SUN_M))
        if incl is not None:
            out["inclination_deg"] = incl
    out.update(mass_earth=mass_kg / M_EARTH_KG, mass_jup=mass_kg / M_JUP_KG)
    return out
