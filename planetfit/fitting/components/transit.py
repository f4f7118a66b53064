"""Transit light curves with batman, computed only where they can differ from 1.

batman (Kreidberg 2015, PASP 127, 1161) implements Mandel & Agol (2002)
quadratic limb darkening. We call its two compiled kernels directly -- the
sky-projected separation and the quadratic-law flux -- on the points inside
a window around each predicted transit, so a model costs time in proportion
to the in-transit points, not the whole light curve. Outside the window the
flux is exactly 1. Long exposures are integrated by supersampling (Kipping
2010, MNRAS 408, 1758): each exposure is averaged over ``supersample``
sub-exposures at the centres of equal slices of it -- the composite midpoint
rule, whose error falls as 1 / supersample^2 (an equal-weight average that
includes the exposure's end points falls only as 1 / supersample) -- the
grid of offsets built once per dataset. How many sub-exposures a dataset
needs is decided by :mod:`planetfit.fitting.components.exposure`.
"""

import math

import numpy as np
from batman import _quadratic_ld, _rsky

from planetfit.core.quantities import DATASET
from planetfit.fitting.components.base import LIMB_DARKENING
from planetfit.fitting.parameters import Parameter
from planetfit.inputs import schema

#: batman's code for a primary transit (as opposed to a secondary eclipse).
_PRIMARY = 1
#: Safety margin on the half-window beyond half the longest possible duration.
WINDOW_MARGIN = 1.25


def midpoint_offsets(exposure_days, n):
    """Offsets from mid-exposure of the centres of ``n`` equal slices of the exposure (composite midpoint rule)."""
    return exposure_days * ((np.arange(n) + 0.5) / n - 0.5)


def quadratic_coefficients(q1, q2):
    """Quadratic limb-darkening u1, u2 from Kipping (2013, MNRAS 435, 2152) q1, q2 in [0, 1]."""
    sq = q1**0.5
    return 2 * sq * q2, sq * (1 - 2 * q2)


class TransitLightCurve:
    """Relative flux of transits of one planet over one dataset's times.

    Parameters
    ----------
    times_bjd : ndarray
        Sorted mid-exposure times.
    exposure_days : float
        Exposure length; used when ``supersample > 1``.
    supersample : int
        Sub-exposures per exposure, at the centres of equal slices
        (1: the flux at mid-exposure).
    """

    def __init__(self, times_bjd, exposure_days, supersample):
        self.times = np.ascontiguousarray(times_bjd, dtype=float)
        self.supersample = int(supersample)
        self.offsets = midpoint_offsets(exposure_days, self.supersample)
        self.pad_days = exposure_days / 2

    def window(self, period_days, transit_bjd, half_width_days):
        """Indices of points within ``half_width_days`` of a predicted mid-transit (sorted)."""
        t = self.times
        first = math.floor((t[0] - half_width_days - transit_bjd) / period_days)
        last = math.ceil((t[-1] + half_width_days - transit_bjd) / period_days)
        centres = transit_bjd + period_days * np.arange(first, last + 1)
        starts = t.searchsorted(centres - half_width_days, "left")
        lengths = t.searchsorted(centres + half_width_days, "right") - starts
        ends = lengths.cumsum()
        return np.arange(ends[-1]) + np.repeat(starts - ends + lengths, lengths)

    def half_window_days(self, period_days, a_over_rstar, radius_ratio, sin_i, e, omega_rad):
        """Half-width of the window: the longest transit this geometry allows, with margin."""
        chord = min(1.0, (1 + radius_ratio) / (a_over_rstar * sin_i))
        speed_factor = math.sqrt(1 - e * e) / (1 - e)  # longest at apoastron
        return WINDOW_MARGIN * period_days / (2 * math.pi) * math.asin(chord) * speed_factor + self.pad_days

    def flux(
        self, index, period_days, transit_bjd, a_over_rstar, inc_rad, e, omega_rad, radius_ratio, u1, u2, shift=None
    ):
        """Relative flux at ``self.times[index]`` (exposure-integrated).

        ``shift`` (days, one per index) is subtracted from the times: a transit
        ``shift`` late on the linear ephemeris.

        Returns
        -------
        ndarray
            One value per index; 1 means no transit.
        """
        t = self.times[index] if shift is None else self.times[index] - shift
        t = t if self.supersample == 1 else (t[:, None] + self.offsets).ravel()
        d = _rsky._rsky(t, transit_bjd, period_days, a_over_rstar, inc_rad, e, omega_rad, _PRIMARY, 1)
        f = _quadratic_ld._quadratic_ld(d, radius_ratio, u1, u2, 1)
        if self.supersample > 1:
            f = f.reshape(-1, self.supersample).sum(axis=1) * (1 / self.supersample)
        return f


@LIMB_DARKENING.register(schema.QuadraticLaw)
class QuadraticLimbDarkening:
    """A band's quadratic limb darkening, sampled as Kipping's (2013) q1, q2 (uniform priors cover every
    physical u1, u2 exactly once)."""

    def __init__(self, band, q1_prior, q2_prior):
        self.q1 = Parameter(band, "limb_darkening_q1", q1_prior, DATASET["limb_darkening_q1"])
        self.q2 = Parameter(band, "limb_darkening_q2", q2_prior, DATASET["limb_darkening_q2"])
        self.parameters = [self.q1, self.q2]

    def coefficients(self, values):
        """(u1, u2) of parameter values."""
        return quadratic_coefficients(values[self.q1.name], values[self.q2.name])


class TransitTerm:
    """One planet's transits in one dataset: the flux deficit 1 - F inside windows around predicted transits.

    Parameters
    ----------
    planet : Planet
    light_curve : TransitLightCurve
        Built once for the dataset's times and sub-exposures.
    limb_darkening : QuadraticLimbDarkening
        The dataset's band.
    """

    sparse = True
    part = "transit"
    parameters = ()

    def __init__(self, planet, light_curve, limb_darkening):
        self.planet, self.light_curve, self.limb_darkening = planet, light_curve, limb_darkening

    def deficit(self, values, orbit):
        """(indices, 1 - flux there) for one walker's values (floats) and its planet's orbit; None if no point."""
        p, lc = self.planet, self.light_curve
        per, t0, k = values[p.period.name], values[p.transit_time.name], values[p.radius_ratio.name]
        sin_i = math.sqrt(1 - orbit.cos_i**2)
        half = lc.half_window_days(per, orbit.a_over_rstar, k, sin_i, orbit.eccentricity, orbit.omega_rad)
        timing = p.timing
        index = lc.window(per, t0, half if timing is None else half + timing.reach_days)
        if not index.size:
            return None
        shift = None if timing is None else timing.point_offsets_days(values, lc.times[index], per, t0)
        u1, u2 = self.limb_darkening.coefficients(values)
        f = lc.flux(
            index,
            per,
            t0,
            orbit.a_over_rstar,
            math.acos(orbit.cos_i),
            orbit.eccentricity,
            orbit.omega_rad,
            k,
            u1,
            u2,
            shift,
        )
        return index, 1 - f
