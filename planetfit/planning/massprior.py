"""A mass for a planet seen only in transit: a published mass-radius relation, or the user's guess.

The relation is Chen & Kipping (2017, ApJ 834, 17, "Probabilistic
forecasting of the masses and radii of other worlds"): a continuous broken
power law log10 R = C + S log10 M (Earth units) with four regimes (Terran,
Neptunian, Jovian worlds, stars) and a Gaussian intrinsic scatter in
log10 R per regime. A mass is drawn for each posterior radius from
p(log M | R) ∝ p(R | M) on a log-uniform mass prior. The relation's own
hyper-parameter uncertainties are left out (their median values are used).
"""

import numpy as np
from scipy.stats import truncnorm

from planetfit.core.geometry import rv_amplitude_ms
from planetfit.core.units import M_EARTH_KG, M_JUP_KG, M_SUN_KG

# source: Chen & Kipping (2017), ApJ 834, 17, Table 1 (posterior medians of the hyper-parameters);
# value from memory of that table: C = 0.00346, slopes 0.2790, 0.589, -0.044, 0.881, transitions
# 2.04 Earth masses, 0.414 Jupiter masses and 0.0800 solar masses, intrinsic scatter in log10 R
# 0.0403, 0.146, 0.0737, 0.0444. The abstract gives the Terran-Neptunian transition as 2.0 (+0.7 -0.6).
CK17_LOG_RADIUS_AT_EARTH_MASS = 0.00346
CK17_SLOPES = (0.2790, 0.589, -0.044, 0.881)
CK17_TRANSITIONS_EARTH = (2.04, 0.414 * M_JUP_KG / M_EARTH_KG, 0.0800 * M_SUN_KG / M_EARTH_KG)
CK17_SCATTER_DEX = (0.0403, 0.146, 0.0737, 0.0444)
CK17_REFERENCE = "Chen & Kipping (2017, ApJ 834, 17) probabilistic mass-radius relation"
#: The log-uniform mass prior of the inversion, Earth masses (dwarf planets to brown dwarfs).
MASS_RANGE_EARTH = (1e-2, 1e4)
_GRID_POINTS = 600


def chen_kipping_log_radius(log_mass):
    """Mean log10 R (Earth radii) and its intrinsic scatter (dex) at log10 M (Earth masses)."""
    log_mass = np.asarray(log_mass, dtype=float)
    breaks = np.log10(CK17_TRANSITIONS_EARTH)
    regime = np.searchsorted(breaks, log_mass)
    # The constant of each regime follows from continuity at the transitions.
    constants = [CK17_LOG_RADIUS_AT_EARTH_MASS]
    for k, b in enumerate(breaks):
        constants.append(constants[-1] + (CK17_SLOPES[k] - CK17_SLOPES[k + 1]) * b)
    mean = np.asarray(constants)[regime] + np.asarray(CK17_SLOPES)[regime] * log_mass
    return mean, np.asarray(CK17_SCATTER_DEX)[regime]


def masses_from_radii(radius_earth, rng):
    """One mass (Earth masses) per radius, drawn from the Chen & Kipping (2017) relation inverted."""
    grid = np.linspace(*np.log10(MASS_RANGE_EARTH), _GRID_POINTS)
    mean, sd = chen_kipping_log_radius(grid)
    log_r = np.log10(np.asarray(radius_earth, dtype=float))[:, None]
    weight = np.exp(-0.5 * ((log_r - mean) / sd) ** 2) / sd
    cdf = np.cumsum(weight, axis=1)
    cdf /= cdf[:, -1:]
    index = (cdf < rng.uniform(size=(len(cdf), 1))).sum(axis=1)
    step = grid[1] - grid[0]
    return 10 ** (grid[np.minimum(index, grid.size - 1)] + step * (rng.uniform(size=index.size) - 0.5))


def masses_from_guess(mass_earth, sd_earth, size, rng):
    """``size`` masses from the user's guess, a normal distribution truncated at zero."""
    if sd_earth == 0:
        return np.full(size, float(mass_earth))
    return truncnorm.rvs(-mass_earth / sd_earth, np.inf, loc=mass_earth, scale=sd_earth, size=size, random_state=rng)


def amplitudes_ms(planet, star, values, mass_earth):
    """The semi-amplitude each sample's orbit gives a planet of ``mass_earth``, m/s."""
    orbit = planet.solve(values, star)
    sin_i = np.sqrt(np.clip(1 - orbit.cos_i**2, 0.0, 1.0))
    mstar = values[star.mass.name] * M_SUN_KG
    return rv_amplitude_ms(mass_earth * M_EARTH_KG, values[planet.period.name], orbit.eccentricity, sin_i, mstar)
