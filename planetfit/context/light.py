"""What the planet's light says: brightness temperatures, an albedo bound, Bond albedo and heat redistribution.

Per planet and band (summary.json ``planets.<p>.planet_light.<band>``):
the fitted eclipse depth, nightside flux and hotspot offset; the dayside
and nightside brightness temperatures, the temperature of a blackbody
planet whose band flux over the star's, times (Rp/R*)^2, gives the eclipse
depth (or nightside flux), the star taken as a blackbody at its Teff; and
the geometric albedo if all the eclipse depth were reflected light,
depth x (r/Rp)^2 with r the star-planet distance at eclipse (a for circular
orbits). Per planet: e cos w, e sin w, the observed mid-eclipse time of the
reference epoch, and, where a band measures both dayside and nightside,
the Bond albedo and heat-redistribution efficiency of Cowan & Agol (2011,
ApJ 729, 54, eqs. 4 and 5), which take the brightness temperatures as the
hemisphere-averaged temperatures and neglect reflected light.
"""

import numpy as np

from planetfit.core.eclipse import eclipse_bjd
from planetfit.core.stats import stat
from planetfit.core.units import C_SI, H_SI, K_B_SI, M_EARTH_KG, M_SUN_KG, PPM, R_SUN_M
from planetfit.fitting.components.light import star_terms_ppm

#: Bracket of the brightness-temperature search, K.
TEMPERATURE_RANGE_K = (1.0, 1.0e5)
BISECTIONS = 60
ASSUMPTIONS = (
    "brightness temperatures: planet and star as blackbodies (the star at its Teff), over the band "
    "(its wavelength, or its response curve photon-weighted)",
    "geometric_albedo_max: all of the eclipse depth taken as reflected light (no thermal emission); "
    "above 1, reflected light alone cannot make the eclipse",
)
COWAN_AGOL = (
    "bond_albedo, heat_redistribution: Cowan & Agol (2011) eqs. 4-5 with the dayside and nightside "
    "brightness temperatures of band '{band}' as hemisphere temperatures; reflected light neglected"
)


def planck_si(wavelength_m, temp_k):
    """Blackbody spectral radiance B_lambda (W m^-3 sr^-1); zero where it underflows."""
    x = H_SI * C_SI / (wavelength_m * K_B_SI * np.asarray(temp_k, dtype=float))
    with np.errstate(over="ignore"):
        return 2 * H_SI * C_SI**2 / wavelength_m**5 / np.expm1(x)


def band_flux(band, temp_k):
    """Photon-weighted band flux of blackbodies at ``temp_k`` (array), sum of weight x B_lambda."""
    lam = band.wavelength_um * 1e-6
    return np.tensordot(planck_si(lam, np.asarray(temp_k, dtype=float)[..., None]), band.weight, axes=1)


def brightness_temp_k(flux_ratio, radius_ratio, star_teff_k, band):
    """Temperature of a blackbody planet with band flux ratio ``flux_ratio`` to a blackbody star at its Teff.

    Solves (Rp/R*)^2 F(T_p) / F(T_*) = flux_ratio, F the band flux
    (:func:`band_flux`), by bisection in ln T (arrays welcome; zero flux
    gives the bracket's lower end).
    """
    target = np.asarray(flux_ratio, dtype=float) / np.asarray(radius_ratio, dtype=float) ** 2
    target = target * band_flux(band, star_teff_k)
    lo, hi = (np.full(np.shape(target), np.log(t)) for t in TEMPERATURE_RANGE_K)
    for _ in range(BISECTIONS):
        mid = 0.5 * (lo + hi)
        low = band_flux(band, np.exp(mid)) < target
        lo, hi = np.where(low, mid, lo), np.where(low, hi, mid)
    return np.exp(0.5 * (lo + hi))


def cowan_agol_temperatures(t0_k, bond_albedo, redistribution):
    """Dayside and nightside temperatures, Cowan & Agol (2011) eqs. 4 and 5; T0 = Teff sqrt(R*/a)."""
    base = np.asarray(t0_k) * (1 - np.asarray(bond_albedo)) ** 0.25
    eps = np.asarray(redistribution)
    return base * (2 / 3 - 5 * eps / 12) ** 0.25, base * (eps / 4) ** 0.25


def bond_albedo_redistribution(t_day_k, t_night_k, t0_k):
    """(Bond albedo, redistribution efficiency) from dayside and nightside temperatures: eqs. 4-5 inverted.

    eps = 8 T_n^4 / (3 T_d^4 + 5 T_n^4) and 1 - A_B = (3 T_d^4 + 5 T_n^4) / (2 T0^4).
    """
    d4, n4 = np.asarray(t_day_k) ** 4, np.asarray(t_night_k) ** 4
    weighted = 3 * d4 + 5 * n4
    return 1 - weighted / (2 * np.asarray(t0_k) ** 4), 8 * n4 / weighted


def _fixed(light, key):
    return light.declared[key].prior.fixed


def _band_block(light, values, q, star):
    """One band's block (STATs) and its per-sample brightness temperatures (day, night or None)."""
    depth = light.value(values, "eclipse_depth_ppm") * PPM
    night = light.value(values, "nightside_ppm") * PPM
    k, w, e = q["radius_ratio"], np.radians(q["omega_deg"]), q["eccentricity"]
    star_teff = star["teff_k"]
    t_day = brightness_temp_k(depth, k, star_teff, light.response)
    t_night = None if _fixed(light, "nightside_ppm") else brightness_temp_k(night, k, star_teff, light.response)
    distance_r = q["a_over_rstar"] * (1 - e * e) / (1 - e * np.sin(w))
    block = {key: stat(light.value(values, key)) for key in light.declared}
    if light.predicted:
        mass_ratio = q["mass_earth"] * M_EARTH_KG / (star["mass_msun"] * M_SUN_KG)
        sin_i = np.sin(np.radians(q["inclination_deg"]))
        terms = star_terms_ppm(mass_ratio, q["a_over_rstar"], sin_i, q["rv_amplitude_ms"], *light.coefficients)
        block.update(ellipsoidal_ppm=stat(terms[0]), beaming_ppm=stat(terms[1]), star_terms_predicted=True)
    block.update(
        dayside_brightness_temp_k=stat(t_day),
        nightside_brightness_temp_k=None if t_night is None else stat(t_night),
        geometric_albedo_max=stat(depth * (distance_r / k) ** 2),
        band_wavelength_um=light.response.effective_wavelength_um,
        assumptions=list(ASSUMPTIONS),
    )
    return block, t_day, t_night


def light_context(model, planet, derived):
    """The planet-light keys of one planet's summary entry (empty when no band declares its light).

    Adds per-sample ``e_cos_w``, ``e_sin_w``, ``eclipse_bjd`` (and ``bond_albedo``,
    ``heat_redistribution`` where measured) to ``derived["planets"][planet.name]``.
    """
    lights = [light for (_, name), light in model.lights.items() if name == planet.name]
    if not lights:
        return {}
    q, values, star = derived["planets"][planet.name], derived["parameters"], derived["star"]
    e, w = q["eccentricity"], np.radians(q["omega_deg"])
    sin_i = np.sin(np.radians(q["inclination_deg"]))
    a_m = q["a_over_rstar"] * star["radius_rsun"] * R_SUN_M
    q.update(
        e_cos_w=e * np.cos(w),
        e_sin_w=e * np.sin(w),
        eclipse_bjd=eclipse_bjd(q["transit_bjd"], q["period_days"], e, w, a_m, sin_i),
    )
    out = {"planet_light": {}, "bond_albedo": None, "heat_redistribution": None}
    for light in lights:
        block, t_day, t_night = _band_block(light, values, q, star)
        out["planet_light"][light.band] = block
        if t_night is not None and out["bond_albedo"] is None and not _fixed(light, "eclipse_depth_ppm"):
            albedo, eps = bond_albedo_redistribution(t_day, t_night, star["teff_k"] / np.sqrt(q["a_over_rstar"]))
            q.update(bond_albedo=albedo, heat_redistribution=eps)
            out.update(bond_albedo=stat(albedo), heat_redistribution=stat(eps))
            block["assumptions"].append(COWAN_AGOL.format(band=light.band))
    out.update({key: stat(q[key]) for key in ("e_cos_w", "e_sin_w", "eclipse_bjd")})
    return out


def light_warnings(blocks):
    """Warnings where the Cowan & Agol (2011) reading of a planet's light fails (Bond albedo or redistribution
    outside [0, 1] at the posterior median), from the blocks of :func:`planetfit.context.blocks.add_context`."""
    out = []
    for name, block in blocks.items():
        for key in ("bond_albedo", "heat_redistribution"):
            value = (block.get(key) or {}).get("median")
            if value is not None and not 0 <= value <= 1:
                out.append(
                    f"planet {name}: {key} {value:.3g} lies outside [0, 1]: the blackbody brightness temperatures "
                    "do not fit Cowan & Agol's (2011) energy balance (reflected light, a non-blackbody spectrum or a "
                    "wrong stellar Teff); do not quote it as measured."
                )
    return out
