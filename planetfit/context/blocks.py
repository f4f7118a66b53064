"""Context for each planet from its derived samples: composition, climate, atmosphere.

Adds per-sample insolation and equilibrium temperature (zero Bond albedo,
full redistribution: the conventional values for tables) to each planet,
and the ``composition``, ``climate`` and ``atmosphere`` blocks of
summary.json; for a planet whose light is fitted, its ``planet_light`` keys
(:mod:`planetfit.context.light`), the climate then using the measured Bond albedo.
"""

import numpy as np

from planetfit.context import atmosphere, climate, interior
from planetfit.context.light import light_context

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
        if p.transits and np.any(q["mass_earth"] > 0):
            block["composition"] = interior.composition(q["mass_earth"], q["radius_earth"], q["equilibrium_temp_k"])
            block["atmosphere"] = atmosphere.atmosphere_block(
                q["radius_earth"],
                q["mass_earth"],
                q["surface_gravity_ms2"],
                q["equilibrium_temp_k"],
                star["radius_rsun"],
                star["teff_k"],
                mag_j=config.star.mag_j,
                mag_k=config.star.mag_k,
                mean_molecular_weight=settings.mu,
            )
        blocks[p.name] = block
    return blocks


def _measured_albedo(settings, light):
    """The climate settings with the measured Bond albedo (posterior median, clipped to [0, 0.99]) if there is one."""
    measured = light.get("bond_albedo")
    if measured is None or measured["median"] is None:
        return settings
    return settings.model_copy(update={"albedo": float(np.clip(measured["median"], 0.0, 0.99))})
