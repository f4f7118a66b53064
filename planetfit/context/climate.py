"""Climate context: insolation, equilibrium and surface temperature, habitable zone.

Every function is vectorised over numpy arrays of posterior samples (one
value per sample).  This is first-order screening, not a climate model.
"""

import numpy as np

from planetfit.core.stats import stat
from planetfit.core.units import AU_M, L_SUN_W, R_SUN_M, S_EARTH_W_M2, SIGMA_SB_SI
from planetfit.inputs.schema import Climate
from planetfit.inputs.schema.settings import EARTH_CALIBRATED_TAU, FULL_REDISTRIBUTION

# Habitable-zone limits of Kopparapu et al. (2014, ApJL 787, L29), Table 1:
# S_eff = S_eff_sun + a T + b T^2 + c T^3 + d T^4 with T = Teff - 5780 K,
# in units of the present solar constant; valid for 2600 K <= Teff <= 7200 K.
# value from memory; agrees with several public transcriptions of Table 1
# (the paper's own table was not read).
HZ_COEFFICIENTS = {
    #                                   S_eff_sun  a          b          c           d
    "recent_venus": (1.776, 2.136e-4, 2.533e-8, -1.332e-11, -3.097e-15),
    "runaway_greenhouse_0p1_earth_mass": (0.990, 1.209e-4, 1.404e-8, -7.418e-12, -1.713e-15),
    "runaway_greenhouse_1_earth_mass": (1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15),
    "runaway_greenhouse_5_earth_mass": (1.188, 1.433e-4, 1.707e-8, -8.968e-12, -2.084e-15),
    "maximum_greenhouse": (0.356, 6.171e-5, 1.698e-9, -3.198e-12, -5.575e-16),
    "early_mars": (0.320, 5.547e-5, 1.526e-9, -2.874e-12, -5.011e-16),
}
HZ_REFERENCE_TEFF_K = 5780.0
HZ_TEFF_RANGE_K = (2600.0, 7200.0)

# Liquid surface water: 0 C to 65 C. About 65 C (340 K) is the moist-greenhouse
# limit, where water vapour reaches the stratosphere and the oceans are lost to
# photolysis and hydrogen escape (Kasting, Whitmire & Reynolds 1993, Icarus 101,
# 108; value from memory: ~340 K); the runaway greenhouse lies beyond it.
LIQUID_WATER_RANGE_K = (273.15, 338.15)

# Host old enough for the screening flag (project brief, issue 5).
MIN_HOST_AGE_GYR = 0.6

# Host Teff range "mid-F to early L" studied by current surveys.  Upper bound
# ~F5V (a mid-F dwarf), lower bound ~L1-L2V.
# value from memory: Pecaut & Mamajek (2013, ApJS 208, 9) dwarf sequence,
# F5V ~ 6500 K, L1-L2V ~ 2000 K.
SURVEY_TEFF_RANGE_K = (2000.0, 6500.0)

GENERAL_CAUTION = (
    "First-order screening, not a climate model: one Bond albedo, a grey "
    "greenhouse and fixed habitable-zone limits stand in for clouds, "
    "composition, rotation and geology."
)


def luminosity_lsun(radius_rsun, teff_k):
    """Stellar luminosity L = 4 pi R^2 sigma T^4, in nominal solar luminosities."""
    radius_m = np.asarray(radius_rsun, dtype=float) * R_SUN_M
    teff = np.asarray(teff_k, dtype=float)
    return 4.0 * np.pi * radius_m**2 * SIGMA_SB_SI * teff**4 / L_SUN_W


def insolation_earth(radius_rsun, teff_k, a_au, eccentricity=None):
    """Bolometric flux at the planet, in units of Earth's (nominal L_sun at 1 au).

    With an eccentricity the flux is the orbit average, which is the flux at
    distance a multiplied by (1 - e^2)^(-1/2).

    Parameters
    ----------
    radius_rsun, teff_k : array_like
        Stellar radius (solar radii) and effective temperature (K).
    a_au : array_like
        Semi-major axis, au.
    eccentricity : array_like, optional
        Orbital eccentricity; ``None`` means a circular orbit.

    Returns
    -------
    ndarray
    """
    a_m = np.asarray(a_au, dtype=float) * AU_M
    flux = luminosity_lsun(radius_rsun, teff_k) * L_SUN_W / (4.0 * np.pi * a_m**2)
    if eccentricity is not None:
        flux = flux / np.sqrt(1.0 - np.asarray(eccentricity, dtype=float) ** 2)
    return flux / S_EARTH_W_M2


def equilibrium_temp_k(insolation_earth, albedo=0.3, factor=FULL_REDISTRIBUTION):
    """Equilibrium temperature T_eq = (f (1 - A) S / sigma)^(1/4).

    For a circular orbit this equals T_eff sqrt(R*/a) (f (1 - A))^(1/4).

    Parameters
    ----------
    insolation_earth : array_like
        Insolation, Earth units.
    albedo : float or array_like
        Bond albedo A.
    factor : float
        Heat-redistribution factor f: 1/4 for heat spread over the whole
        planet (the default), 1/2 for the dayside only.

    Returns
    -------
    ndarray
    """
    flux = np.asarray(insolation_earth, dtype=float) * S_EARTH_W_M2
    return (factor * (1.0 - np.asarray(albedo, dtype=float)) * flux / SIGMA_SB_SI) ** 0.25


def surface_temp_k(equilibrium_temp_k, tau):
    """Grey-atmosphere surface temperature T_s = T_eq (1 + 3 tau / 4)^(1/4).

    Parameters
    ----------
    equilibrium_temp_k : array_like
        Equilibrium temperature, K.
    tau : float or array_like
        Effective infrared optical depth of the atmosphere.
    """
    tau = np.asarray(tau, dtype=float)
    return np.asarray(equilibrium_temp_k, dtype=float) * (1.0 + 0.75 * tau) ** 0.25


def hz_insolation_earth(teff_k):
    """Kopparapu et al. (2014) habitable-zone limits as effective fluxes.

    Parameters
    ----------
    teff_k : array_like
        Stellar effective temperature, K.

    Returns
    -------
    dict of str to ndarray
        S_eff (Earth units) per limit name of ``HZ_COEFFICIENTS``; NaN where
        Teff lies outside ``HZ_TEFF_RANGE_K`` (never extrapolated).
    """
    teff = np.asarray(teff_k, dtype=float)
    valid = (teff >= HZ_TEFF_RANGE_K[0]) & (teff <= HZ_TEFF_RANGE_K[1])
    t = teff - HZ_REFERENCE_TEFF_K
    limits = {}
    for name, (s_sun, a, b, c, d) in HZ_COEFFICIENTS.items():
        s_eff = s_sun + a * t + b * t**2 + c * t**3 + d * t**4
        limits[name] = np.where(valid, s_eff, np.nan)
    return limits


def hz_distance_au(s_eff, luminosity_lsun):
    """Distance (au) at which a star of luminosity L gives effective flux S_eff.

    d = sqrt(L / S_eff), with L in solar luminosities and S_eff in Earth units
    (Kopparapu et al. 2013, ApJ 765, 131, eq. 3).
    """
    return np.sqrt(np.asarray(luminosity_lsun, dtype=float) / np.asarray(s_eff, dtype=float))


def _fraction(mask, defined):
    """Fraction of defined samples where ``mask`` holds; None if none is defined."""
    n = int(np.count_nonzero(defined))
    return float(np.count_nonzero(mask & defined)) / n if n else None


def _temperatures(insolation, settings, rng):
    """Equilibrium and grey-greenhouse surface temperatures, and the caution on how."""
    t_eq = equilibrium_temp_k(insolation, settings.albedo, settings.redistribution_factor)
    tau_lo, tau_hi = settings.tau_range
    tau = rng.uniform(tau_lo, tau_hi, size=t_eq.shape) if tau_hi > tau_lo else tau_lo
    tau_text = f"tau uniform in [{tau_lo:g}, {tau_hi:g}]" if tau_hi > tau_lo else f"tau = {tau_lo:.3g}"
    if tau_hi == tau_lo == EARTH_CALIBRATED_TAU:
        tau_text += " (the default, calibrated to Earth's 288 K at Bond albedo 0.3)"
    caution = (
        f"p_surface_liquid_water: grey greenhouse with Bond albedo {settings.albedo:g} and {tau_text}; "
        "0-65 C, the upper end being the moist-greenhouse limit (about 340 K). Says nothing about whether "
        "water or an atmosphere is present."
    )
    return t_eq, surface_temp_k(t_eq, tau), caution


def _habitable_zone(insolation, radius, teff):
    """Conservative and optimistic habitable-zone fractions, limits (au) and cautions."""
    limits = hz_insolation_earth(teff)
    defined = np.isfinite(limits["recent_venus"])
    conservative = (insolation <= limits["runaway_greenhouse_1_earth_mass"]) & (
        insolation >= limits["maximum_greenhouse"]
    )
    optimistic = (insolation <= limits["recent_venus"]) & (insolation >= limits["early_mars"])
    cautions = [
        "p_conservative_hz / p_optimistic_hz: Kopparapu et al. (2014) 1-D cloud-free limits (runaway "
        "greenhouse for 1 Earth mass to maximum greenhouse; recent Venus to early Mars); clouds and slow "
        "rotation can move the inner edge."
    ]
    outside = 1.0 - float(np.mean(defined))
    if outside > 0:
        cautions.append(
            f"Host Teff outside {HZ_TEFF_RANGE_K[0]:.0f}-{HZ_TEFF_RANGE_K[1]:.0f} K for {100 * outside:.1f}% of "
            "samples: no habitable-zone limits there (never extrapolated); "
            + (
                "habitable-zone probabilities use the other samples."
                if defined.any()
                else "habitable-zone limits and probabilities are undefined."
            )
        )
    luminosity = luminosity_lsun(radius, teff)
    hz_limits = (
        {name: stat(hz_distance_au(s_eff, luminosity)) for name, s_eff in limits.items()} if defined.any() else None
    )
    return {
        "p_conservative_hz": _fraction(conservative, defined),
        "p_optimistic_hz": _fraction(optimistic, defined),
        "hz_limits_au": hz_limits,
    }, cautions


def _host_flags(teff, star_age_gyr):
    """Host age and Teff screening fractions, and their cautions."""
    cautions, p_age = [], None
    if star_age_gyr is not None:
        age = np.asarray(star_age_gyr, dtype=float)
        p_age = _fraction(age > MIN_HOST_AGE_GYR, np.isfinite(age))
        cautions.append(
            f"p_host_older_than_0p6_gyr: young hosts are active; an age above {MIN_HOST_AGE_GYR:g} Gyr "
            "does not mean the planet kept its atmosphere."
        )
    in_survey = (teff >= SURVEY_TEFF_RANGE_K[0]) & (teff <= SURVEY_TEFF_RANGE_K[1])
    cautions.append(
        f"p_host_teff_in_survey_range: {SURVEY_TEFF_RANGE_K[0]:.0f}-{SURVEY_TEFF_RANGE_K[1]:.0f} K, "
        "roughly mid-F (F5V) to early L dwarfs; a screening range, not a physical limit."
    )
    return {
        "p_host_older_than_0p6_gyr": p_age,
        "p_host_teff_in_survey_range": _fraction(in_survey, np.isfinite(teff)),
    }, cautions


def climate_block(star_radius_rsun, star_teff_k, a_au, eccentricity, settings, star_age_gyr=None, rng=None):
    """Climate screening of one planet from posterior samples.

    Parameters
    ----------
    star_radius_rsun, star_teff_k, a_au : array_like
        Samples of stellar radius (solar radii), Teff (K), semi-major axis (au).
    eccentricity : array_like or None
        Eccentricity samples (``None`` for circular orbits).
    settings : planetfit.inputs.schema.Climate
    star_age_gyr : array_like, optional
        Host age samples, Gyr.
    rng : numpy.random.Generator, optional
        Draws tau from a range; default ``numpy.random.default_rng(0)``.

    Returns
    -------
    dict
        ``equilibrium_temp_k``, ``surface_temp_k``, ``insolation_earth``
        (STATs), the probabilities ``p_conservative_hz``,
        ``p_optimistic_hz``, ``p_surface_liquid_water``,
        ``p_host_older_than_0p6_gyr`` (None without ages),
        ``p_host_teff_in_survey_range``, ``hz_limits_au`` (STAT per limit,
        None when Teff is out of range), ``cautions`` and ``settings``.
    """
    radius, teff, a = np.broadcast_arrays(
        *(np.atleast_1d(np.asarray(x, dtype=float)) for x in (star_radius_rsun, star_teff_k, a_au))
    )
    rng = np.random.default_rng(0) if rng is None else rng
    insolation = insolation_earth(radius, teff, a, eccentricity)
    t_eq, t_surface, temperature_caution = _temperatures(insolation, settings, rng)
    hz, hz_cautions = _habitable_zone(insolation, radius, teff)
    host, host_cautions = _host_flags(teff, star_age_gyr)
    orbit_caution = (
        ["Insolation and temperatures use the orbit-averaged flux, (1 - e^2)^(-1/2) times the flux at distance a."]
        if eccentricity is not None
        else []
    )
    liquid = (t_surface >= LIQUID_WATER_RANGE_K[0]) & (t_surface <= LIQUID_WATER_RANGE_K[1])
    return {
        "equilibrium_temp_k": stat(t_eq),
        "surface_temp_k": stat(t_surface),
        "insolation_earth": stat(insolation),
        "p_conservative_hz": hz["p_conservative_hz"],
        "p_optimistic_hz": hz["p_optimistic_hz"],
        "p_surface_liquid_water": _fraction(liquid, np.isfinite(t_surface)),
        **host,
        "hz_limits_au": hz["hz_limits_au"],
        "cautions": [GENERAL_CAUTION] + orbit_caution + hz_cautions + [temperature_caution] + host_cautions,
        "settings": settings.model_dump(),
    }


def quick_climate(teff_k, radius_rsun, a_au, albedo=0.3, tau=EARTH_CALIBRATED_TAU):
    """Climate screening for single values (the ``planetfit climate`` command).

    Returns
    -------
    dict
        The keys of :func:`climate_block`, with plain numbers in place of
        STATs (probabilities are 0.0 or 1.0).
    """
    block = climate_block(radius_rsun, teff_k, a_au, None, Climate(albedo=albedo, tau=tau))
    for key in ("equilibrium_temp_k", "surface_temp_k", "insolation_earth"):
        block[key] = block[key]["median"]
    if block["hz_limits_au"] is not None:
        block["hz_limits_au"] = {name: value["median"] for name, value in block["hz_limits_au"].items()}
    return block
