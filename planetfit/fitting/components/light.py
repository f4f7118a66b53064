"""The planet's own light in a band: phase curve, secondary eclipse, and the star's ellipsoidal and beaming terms.

With theta = f + w the orbital angle (pi/2 at transit, 3 pi/2 at eclipse),
the planet's flux relative to the star's is the first harmonic

    F_p = A - B sin(theta + delta),  A = (E + N) / 2,  B = (E - N) / (2 cos delta),

which equals the eclipse depth E at superior conjunction and the nightside
flux N at inferior conjunction for any hotspot offset delta; its peak comes
delta before the eclipse (an eastward hotspot, Knutson et al. 2007, Nature
447, 183). Near each predicted eclipse the planet's uniform disk is
occulted by the stellar limb: batman's secondary-eclipse kernel (Kreidberg
2015) gives the visible fraction, called with times shifted by the light
travel time across the orbit (:mod:`planetfit.core.eclipse`), so the eclipse
falls at the time planetfit computes rather than at batman's own
``t_secondary`` (which overwrites ``t0``). The star adds
A_ell cos(2 theta) (ellipsoidal, minima at conjunctions) and
-A_beam (cos theta + e cos w) (Doppler beaming: brighter when approaching,
in units of the RV curve v / K).

The term covers every point (it is not sparse): its dataset is scored in full.
"""

import math

import numpy as np
from batman import _eclipse, _rsky

from planetfit.core.eclipse import eclipse_bjd, light_travel_delay_days
from planetfit.core.quantities import band_quantity
from planetfit.core.units import C_SI, M_SUN_KG, PPM, R_SUN_M
from planetfit.fitting.parameters import Parameter

#: batman's code for a secondary eclipse.
_SECONDARY = 2
#: Steps of the mean-anomaly grid on which the phase curve's true anomaly is interpolated.
ANOMALY_GRID = 256
MEAN_ANOMALY_GRID = np.linspace(0, 2 * np.pi, ANOMALY_GRID + 1)
#: Most Newton steps on Kepler's equation from E = M + e sin M (quadratic convergence).
NEWTON_STEPS = 8
LIGHT_KEYS = ("eclipse_depth_ppm", "nightside_ppm", "hotspot_offset_deg", "ellipsoidal_ppm", "beaming_ppm")


class PlanetLight:
    """One planet's light in one band: its parameters ``<planet>.<band>.<key>`` (planet group of the tables)."""

    def __init__(self, planet, band, block, response):
        self.planet, self.band, self.response = planet, band, response  # response: inputs.bands.Band
        self.predicted = block.star_terms_from_mass
        self.coefficients = (block.ellipsoidal_coefficient, block.beaming_coefficient)
        keys = LIGHT_KEYS[:3] if self.predicted else LIGHT_KEYS
        self.declared = {
            key: Parameter(planet.name, f"{band}.{key}", getattr(block, key), band_quantity(key, band), "planet")
            for key in keys
        }
        self.parameters = list(self.declared.values())

    def value(self, values, key):
        """One parameter's value (scalar or array)."""
        return values[self.declared[key].name]


def true_anomaly_grid(e):
    """f - M on :data:`MEAN_ANOMALY_GRID` (Newton on Kepler's equation, until the steps fall below 1e-12 rad)."""
    mean = MEAN_ANOMALY_GRID
    ecc = mean + e * np.sin(mean)
    for _ in range(NEWTON_STEPS):
        step = (ecc - e * np.sin(ecc) - mean) / (1 - e * np.cos(ecc))
        ecc -= step
        if np.max(np.abs(step)) < 1e-12:
            break
    f = 2 * np.arctan2(math.sqrt(1 + e) * np.sin(ecc / 2), math.sqrt(1 - e) * np.cos(ecc / 2))
    return np.mod(f - mean + np.pi, 2 * np.pi) - np.pi


def orbital_angle(times, period_days, periastron_bjd, e, omega_rad):
    """theta = f + w at ``times``: exact for circular orbits, else f - M interpolated on a grid of M.

    f - M is smooth and periodic, so linear interpolation on :data:`ANOMALY_GRID` steps errs by about
    (2 pi / ANOMALY_GRID)^2 / 8 times its second derivative: measured against radvel's true anomaly,
    8e-5 rad at e = 0.3, 3e-4 at e = 0.5 (0.15 ppm of a 1000-ppm phase curve), 7e-3 at e = 0.8.
    """
    mean = (2 * np.pi / period_days) * np.mod(times - periastron_bjd, period_days)
    if e == 0:
        return mean + omega_rad
    grid = true_anomaly_grid(e)
    return mean + np.interp(mean, MEAN_ANOMALY_GRID, grid) + omega_rad


def star_terms_ppm(mass_ratio, a_over_rstar, sin_i, k_ms, ellipsoidal_coefficient, beaming_coefficient):
    """Ellipsoidal and beaming amplitudes (ppm) predicted from the orbit (reviewed by Shporer 2017, PASP 129,
    072001; beaming: Loeb & Gaudi 2003, ApJ 588, L117).

    A_ell = alpha_ell (Mp / M*) (R*/a)^3 sin^2 i and A_beam = alpha_beam 4 K / c; the coefficients, of order
    one, depend on the band through limb and gravity darkening (alpha_ell) and the stellar spectrum (alpha_beam).
    """
    ellipsoidal = ellipsoidal_coefficient * mass_ratio * a_over_rstar**-3 * sin_i**2
    return ellipsoidal / PPM, beaming_coefficient * 4 * k_ms / C_SI / PPM


def phase_coefficients(eclipse_ppm, nightside_ppm, offset_deg):
    """(A, B, delta_rad) of F_p = A - B sin(theta + delta) (module notes); arrays welcome."""
    delta = np.radians(offset_deg)
    return 0.5 * (eclipse_ppm + nightside_ppm), 0.5 * (eclipse_ppm - nightside_ppm) / np.cos(delta), delta


class PlanetLightTerm:
    """One planet's light in one dataset: minus its flux (and the star's phase terms) at every point.

    Parameters
    ----------
    light : PlanetLight
    light_curve : TransitLightCurve
        The dataset's times, sub-exposures and windows (shared with its transits).
    star : Star
        For a in metres (light travel time).
    """

    sparse = False
    part = "planet light"

    def __init__(self, light, light_curve, star):
        self.light, self.light_curve, self.star = light, light_curve, star
        self.planet = light.planet
        self.everywhere = np.arange(light_curve.times.size)

    def visible_fraction(self, values, orbit):
        """(indices near predicted eclipses, fraction of the planet's disk seen there), exposure-averaged."""
        p, lc = self.planet, self.light_curve
        per, t0, k = values[p.period.name], values[p.transit_time.name], values[p.radius_ratio.name]
        e, w, a_r, cos_i = orbit.eccentricity, orbit.omega_rad, orbit.a_over_rstar, orbit.cos_i
        sin_i = math.sqrt(1 - cos_i * cos_i)
        a_m = a_r * values[self.star.radius.name] * R_SUN_M
        t_ecl = float(eclipse_bjd(t0, per, e, w, a_m, sin_i))
        index = lc.window(per, t_ecl, lc.half_window_days(per, a_r, k, sin_i, e, w + math.pi))
        if not index.size:
            return index, np.empty(0)
        delay = float(light_travel_delay_days(a_m, e, w, sin_i))
        t = lc.times[index] - delay
        if lc.supersample > 1:
            t = (t[:, None] + lc.offsets).ravel()
        d = _rsky._rsky(t, t0, per, a_r, math.acos(cos_i), e, w, _SECONDARY, 1)
        seen = _eclipse._eclipse(d, k, 1.0, 1) - 1.0
        if lc.supersample > 1:
            seen = seen.reshape(-1, lc.supersample).mean(axis=1)
        return index, seen

    def flux_ppm(self, values, orbit):
        """The planet's flux and the star's phase terms at every point, ppm of the star's flux (one walker)."""
        light, p = self.light, self.planet
        e, w = orbit.eccentricity, orbit.omega_rad
        theta = orbital_angle(self.light_curve.times, values[p.period.name], orbit.periastron_bjd, e, w)
        a, b, delta = phase_coefficients(
            light.value(values, "eclipse_depth_ppm"),
            light.value(values, "nightside_ppm"),
            light.value(values, "hotspot_offset_deg"),
        )
        planet = a - b * np.sin(theta + delta)
        index, seen = self.visible_fraction(values, orbit)
        planet[index] *= seen
        ellipsoidal, beaming = self.star_terms(values, orbit)
        if ellipsoidal or beaming:
            cos_theta = np.cos(theta)
            planet += ellipsoidal * (2 * cos_theta * cos_theta - 1) - beaming * (cos_theta + e * math.cos(w))
        return planet

    def star_terms(self, values, orbit):
        """(ellipsoidal, beaming) amplitudes in ppm: fitted, or predicted from the sampled mass."""
        light = self.light
        if not light.predicted:
            return light.value(values, "ellipsoidal_ppm"), light.value(values, "beaming_ppm")
        mass_ratio = orbit.mass_kg / (values[self.star.mass.name] * M_SUN_KG)
        sin_i = math.sqrt(1 - orbit.cos_i**2)
        k_ms = values[self.planet.amplitude.name]
        return star_terms_ppm(mass_ratio, orbit.a_over_rstar, sin_i, k_ms, *light.coefficients)

    def deficit(self, values, orbit):
        """(every index, minus the added flux): the planet's light raises the flux."""
        return self.everywhere, -PPM * self.flux_ppm(values, orbit)
