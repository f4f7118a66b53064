"""Atmospheric observability: scale height, transmission signal, TSM and ESM.

Every function is vectorised over numpy arrays of posterior samples (one
value per sample).  The spectroscopy metrics are those of Kempton et al.
(2018, PASP 130, 114401, "A Framework for Prioritizing the TESS Planetary
Candidates Most Amenable to Atmospheric Characterization").
"""

import numpy as np

from planetfit.core.stats import stat
from planetfit.core.units import C_SI, H_SI, K_B_SI, M_U_SI, PPM, R_EARTH_M, R_SUN_M

METERS_PER_KM = 1e3

# Kempton et al. (2018), eq. (1) and Table 1: TSM scale factor and suggested
# threshold per planet-radius bin (Earth radii, lower edge inclusive).  The
# TSM is defined for planets smaller than 10 Earth radii only.
# value from memory; agrees with public transcriptions of Table 1 (paper itself not read)
TSM_RADIUS_BINS_EARTH = (0.0, 1.5, 2.75, 4.0, 10.0)
TSM_SCALE_FACTORS = (0.190, 1.26, 1.28, 1.15)
TSM_THRESHOLDS = (12.0, 92.0, 84.0, 96.0)

# Kempton et al. (2018), eq. (2): ESM normalisation, dayside temperature
# factor, reference wavelength, and the suggested threshold for terrestrial
# planets (Rp < 1.5 Earth radii).
ESM_NORMALISATION = 4.29e6
ESM_DAYSIDE_FACTOR = 1.10
ESM_WAVELENGTH_M = 7.5e-6
ESM_THRESHOLD_TERRESTRIAL = 7.5
TERRESTRIAL_RADIUS_EARTH = 1.5


def scale_height_km(temp_k, mean_molecular_weight, surface_gravity_ms2):
    """Isothermal pressure scale height H = k T / (mu m_u g).

    Parameters
    ----------
    temp_k : array_like
        Atmospheric temperature (usually the equilibrium temperature), K.
    mean_molecular_weight : float or array_like
        Mean molecular weight, atomic mass units.
    surface_gravity_ms2 : array_like
        Surface gravity, m s^-2.

    Returns
    -------
    ndarray
        Scale height, km.
    """
    temp = np.asarray(temp_k, dtype=float)
    gravity = np.asarray(surface_gravity_ms2, dtype=float)
    return K_B_SI * temp / (mean_molecular_weight * M_U_SI * gravity) / METERS_PER_KM


def transmission_signal_ppm(scale_height_km, planet_radius_earth, star_radius_rsun, n_scale_heights=2.0):
    """Amplitude of a transmission feature spanning n scale heights.

    The annulus of height n H around the planet adds
    Delta_delta = 2 n H Rp / R*^2 to the transit depth (first order in H / Rp).

    Parameters
    ----------
    scale_height_km : array_like
        Pressure scale height, km.
    planet_radius_earth, star_radius_rsun : array_like
        Planet radius (Earth radii) and stellar radius (solar radii).
    n_scale_heights : float
        Number of scale heights a strong feature spans.

    Returns
    -------
    ndarray
        Depth change, ppm.
    """
    h_m = np.asarray(scale_height_km, dtype=float) * METERS_PER_KM
    rp_m = np.asarray(planet_radius_earth, dtype=float) * R_EARTH_M
    rs_m = np.asarray(star_radius_rsun, dtype=float) * R_SUN_M
    return 2.0 * n_scale_heights * h_m * rp_m / rs_m**2 / PPM


def _radius_bin(planet_radius_earth):
    """Kempton et al. (2018) radius-bin index per sample; -1 outside 0-10 R_E."""
    radius = np.asarray(planet_radius_earth, dtype=float)
    index = np.digitize(radius, TSM_RADIUS_BINS_EARTH) - 1
    inside = (radius > 0) & (radius < TSM_RADIUS_BINS_EARTH[-1])
    return np.where(inside, index, -1)


def tsm(planet_radius_earth, planet_mass_earth, equilibrium_temp_k, star_radius_rsun, mag_j):
    """Transmission spectroscopy metric, Kempton et al. (2018) eq. (1).

    TSM = scale * Rp^3 T_eq / (Mp R*^2) * 10^(-m_J / 5), with Rp and Mp in
    Earth units, R* in solar radii and the scale factor of the radius bin.

    Returns
    -------
    ndarray
        TSM per sample; NaN where Rp >= 10 Earth radii or Mp <= 0.
    """
    radius = np.asarray(planet_radius_earth, dtype=float)
    mass = np.asarray(planet_mass_earth, dtype=float)
    index = _radius_bin(radius)
    scale = np.where(index >= 0, np.take(TSM_SCALE_FACTORS, np.clip(index, 0, None)), np.nan)
    mass = np.where(mass > 0, mass, np.nan)
    star = np.asarray(star_radius_rsun, dtype=float)
    return scale * radius**3 * np.asarray(equilibrium_temp_k, dtype=float) / (mass * star**2) * 10.0 ** (-mag_j / 5.0)


def planck_radiance(wavelength_m, temp_k):
    """Planck spectral radiance B_lambda(T), W m^-3 sr^-1."""
    temp = np.asarray(temp_k, dtype=float)
    exponent = H_SI * C_SI / (wavelength_m * K_B_SI * temp)
    return 2.0 * H_SI * C_SI**2 / wavelength_m**5 / np.expm1(exponent)


def esm(planet_radius_earth, equilibrium_temp_k, star_radius_rsun, star_teff_k, mag_k):
    """Emission spectroscopy metric, Kempton et al. (2018) eq. (2).

    ESM = 4.29e6 * B_7.5(T_day) / B_7.5(T_eff) * (Rp / R*)^2 * 10^(-m_K / 5),
    with T_day = 1.10 T_eq and B_7.5 the Planck function at 7.5 micron.

    Returns
    -------
    ndarray
        ESM per sample.
    """
    ratio = (
        np.asarray(planet_radius_earth, dtype=float) * R_EARTH_M / (np.asarray(star_radius_rsun, dtype=float) * R_SUN_M)
    )
    dayside_k = ESM_DAYSIDE_FACTOR * np.asarray(equilibrium_temp_k, dtype=float)
    planck_ratio = planck_radiance(ESM_WAVELENGTH_M, dayside_k) / planck_radiance(ESM_WAVELENGTH_M, star_teff_k)
    return ESM_NORMALISATION * planck_ratio * ratio**2 * 10.0 ** (-mag_k / 5.0)


def tsm_threshold(planet_radius_earth):
    """Kempton et al. (2018) suggested TSM threshold for a planet radius.

    Returns
    -------
    float or None
        Threshold of the radius bin, ``None`` outside 0-10 Earth radii.
    """
    index = int(_radius_bin(planet_radius_earth))
    return TSM_THRESHOLDS[index] if index >= 0 else None


def _metrics(planet_radius_earth, planet_mass_earth, equilibrium_temp_k, star_radius_rsun, star_teff_k, mag_j, mag_k):
    """TSM and ESM STATs (None without the magnitude they need) and the notes on why one is missing."""
    notes, tsm_stat, esm_stat = [], None, None
    if mag_j is None:
        notes.append("TSM not computed: no J magnitude given.")
    else:
        tsm_stat = stat(tsm(planet_radius_earth, planet_mass_earth, equilibrium_temp_k, star_radius_rsun, mag_j))
        if tsm_stat is None:
            notes.append("TSM undefined: the TSM applies to planets under 10 Earth radii.")
    if mag_k is None:
        notes.append("ESM not computed: no K magnitude given.")
    else:
        esm_stat = stat(esm(planet_radius_earth, equilibrium_temp_k, star_radius_rsun, star_teff_k, mag_k))
    return tsm_stat, esm_stat, notes


def atmosphere_block(
    planet_radius_earth,
    planet_mass_earth,
    surface_gravity_ms2,
    equilibrium_temp_k,
    star_radius_rsun,
    star_teff_k,
    mag_j=None,
    mag_k=None,
    mean_molecular_weight=2.3,
    n_scale_heights=2,
):
    """Observability summary of one planet from posterior samples.

    Parameters
    ----------
    planet_radius_earth, planet_mass_earth : array_like
        Planet radius and mass samples, Earth units.
    surface_gravity_ms2, equilibrium_temp_k : array_like
        Surface gravity (m s^-2) and equilibrium temperature (K) samples.
    star_radius_rsun, star_teff_k : array_like
        Stellar radius (solar radii) and effective temperature (K) samples.
    mag_j, mag_k : float, optional
        Host J and K magnitudes; TSM (ESM) is ``None`` without J (K).
    mean_molecular_weight : float
        Atomic mass units.
    n_scale_heights : float
        Scale heights spanned by a strong transmission feature.

    Returns
    -------
    dict
        ``scale_height_km``, ``transmission_signal_ppm``, ``tsm``, ``esm``
        (STATs or ``None``), ``tsm_threshold``, ``esm_threshold``,
        ``mean_molecular_weight``, ``n_scale_heights``, ``notes``.
    """
    mu = float(mean_molecular_weight)
    height = scale_height_km(equilibrium_temp_k, mu, surface_gravity_ms2)
    signal = transmission_signal_ppm(height, planet_radius_earth, star_radius_rsun, n_scale_heights)
    median_radius = float(np.nanmedian(np.asarray(planet_radius_earth, dtype=float)))
    tsm_stat, esm_stat, missing = _metrics(
        planet_radius_earth, planet_mass_earth, equilibrium_temp_k, star_radius_rsun, star_teff_k, mag_j, mag_k
    )
    notes = [
        f"Scale height for mean molecular weight {mu:g} at the equilibrium temperature; transmission signal for "
        f"{n_scale_heights:g} scale heights.",
        "TSM and ESM follow Kempton et al. (2018, PASP 130, 114401); they define T_eq for zero albedo and full "
        "redistribution, so compare thresholds with that in mind.",
    ] + missing
    return {
        "scale_height_km": stat(height),
        "transmission_signal_ppm": stat(signal),
        "tsm": tsm_stat,
        "esm": esm_stat,
        "tsm_threshold": tsm_threshold(median_radius),
        "esm_threshold": ESM_THRESHOLD_TERRESTRIAL if 0 < median_radius < TERRESTRIAL_RADIUS_EARTH else None,
        "mean_molecular_weight": mu,
        "n_scale_heights": float(n_scale_heights),
        "notes": notes,
    }
