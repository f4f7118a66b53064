"""Context for each planet from its derived samples: composition, climate, atmosphere.

Adds per-sample insolation and equilibrium temperature (zero Bond albedo,
full redistribution: the conventional values for tables) to each planet,
and the ``composition``, ``climate`` and ``atmosphere`` blocks of
summary.json.
"""

import numpy as np

from planetfit.context import atmosphere, climate, interior


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
        block = {
            "composition": None,
            "atmosphere": None,
            "climate": climate.climate_block(
                star["radius_rsun"],
                star["teff_k"],
                q["semi_major_axis_au"],
                ecc,
                settings,
                star_age_gyr=star.get("age_gyr"),
                rng=rng,
            ),
        }
        if p.transits and np.any(q["mass_earth"] > 0):
            block["composition"] = interior.composition(q["mass_earth"], q["radius_earth"])
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
