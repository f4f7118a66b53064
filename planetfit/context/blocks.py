"""Context for each planet from its derived samples: composition, climate, atmosphere.

Adds per-sample insolation and equilibrium temperature (zero Bond albedo,
full redistribution: the conventional values for tables) to each planet,
and the ``composition``, ``climate`` and ``atmosphere`` blocks of
summary.json; for a planet whose light is fitted, its ``planet_light`` keys
(:mod:`planetfit.context.light`), the climate then using the measured Bond albedo.
"""

import numpy as np

from planetfit.context import atmosphere, climate, interior
from planetfit.context.interior.abundances import star_iron_block
from planetfit.context.light import light_context

#: The composition verdict of a transiting planet whose mass is not measured.
NEEDS_A_MASS = (
    "needs a mass: the radius alone does not decide between rocky and volatile-rich interiors; fit radial "
    "velocities (with rv_amplitude_ms) to measure the mass"
)
#: Caution of a climate block that uses the measured Bond albedo.
_MEASURED = "Bond albedo {:.3g} is the measured posterior median (planet_light), not the config's {:g}."


def add_context(config, model, derived, rng):
    """Attach context to ``derived`` in place and return the blocks per planet.

    Parameters
    ----------
    config : Config
        Its ``climate`` block holds the assumptions.
    model : Model
    derived : dict
        Output of :func:`planetfit.context.derived.derive`.
    rng : numpy.random.Generator

    Returns
    -------
    dict
        planet name -> {"composition", "climate", "atmosphere"} (each a dict
        or None when the planet's radius or true mass is unknown).
    """
    star, settings = derived["star"], config.climate
    blocks = {}
    for p in model.planets:
        q = derived["planets"][p.name]
        ecc = q["eccentricity"] if p.orbit.eccentric else None
        insolation = climate.insolation_earth(star["radius_rsun"], star["teff_k"], q["semi_major_axis_au"], ecc)
        q["insolation_earth"] = insolation
        q["equilibrium_temp_k"] = climate.equilibrium_temp_k(insolation, albedo=0.0)
        light = light_context(model, p, derived)
        planet_settings = _measured_albedo(settings, light)
        block = {
            "composition": None,
            "atmosphere": None,
            "climate": climate.climate_block(
                star["radius_rsun"],
                star["teff_k"],
                q["semi_major_axis_au"],
                ecc,
                planet_settings,
                star_age_gyr=star.get("age_gyr"),
                rng=rng,
            ),
            **light,
        }
        if planet_settings is not settings:
            block["climate"]["cautions"].append(_MEASURED.format(planet_settings.albedo, settings.albedo))
        if p.transits:
            block.update(_interior_and_atmosphere(config, p, q, star, rng))
        blocks[p.name] = block
    return blocks


def _interior_and_atmosphere(config, p, q, star, rng):
    """A transiting planet's ``composition`` and ``atmosphere`` blocks (without a mass: a verdict asking for one)."""
    if not p.mass_measured:
        return {"composition": {"verdict": NEEDS_A_MASS, "mass_measured": False, "p_rocky": None}}
    if not np.any(q["mass_earth"] > 0):
        return {}
    composition = interior.composition(q["mass_earth"], q["radius_earth"], q["equilibrium_temp_k"])
    composition.update(star_iron_block(config.star, q["mass_earth"], q["radius_earth"], rng))
    return {
        "composition": composition,
        "atmosphere": atmosphere.atmosphere_block(
            q["radius_earth"],
            q["mass_earth"],
            q["surface_gravity_ms2"],
            q["equilibrium_temp_k"],
            star["radius_rsun"],
            star["teff_k"],
            mag_j=config.star.mag_j,
            mag_k=config.star.mag_k,
            mean_molecular_weight=config.climate.mu,
        ),
    }


def _measured_albedo(settings, light):
    """The climate settings with the measured Bond albedo (posterior median, clipped to [0, 0.99]) if there is one."""
    measured = light.get("bond_albedo")
    if measured is None or measured["median"] is None:
        return settings
    return settings.model_copy(update={"albedo": float(np.clip(measured["median"], 0.0, 0.99))})
