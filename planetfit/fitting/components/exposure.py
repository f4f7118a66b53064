"""How many sub-exposures a light curve needs: the exposure-integration error bound.

A dataset's model averages every exposure over ``supersample``
sub-exposures at the centres of equal slices (composite midpoint rule;
Kipping 2010, MNRAS 408, 1758, for exposure integration of transits). Its
error grows with the exposure and with the sharpness of the transit, so
each dataset gets the smallest number that keeps the error below a tenth
of its median flux error (:data:`ERROR_FRACTION`) for the sharpest transit
the priors allow: the deepest radius ratio, impact 0, a circular orbit,
star and period at their prior centres (a/R* from Kepler's third law) and
limb darkening at the prior centre of q1, q2. The error is the largest
difference, over mid-exposure times spanning ingress, mid-transit and
egress, from a dense midpoint integration of the same batman model.
"""

import dataclasses
import math

import numpy as np

from planetfit.core.geometry import CIRCULAR_OMEGA_RAD, solve_orbit
from planetfit.core.units import MINUTES_PER_DAY, PPM
from planetfit.fitting.components.transit import TransitLightCurve, quadratic_coefficients

#: Bound on the integration error, as a fraction of the dataset's median flux error.
ERROR_FRACTION = 0.1
#: Most sub-exposures chosen automatically (a user's explicit ``supersample`` may exceed it).
MAX_SUPERSAMPLE = 50
#: Sub-exposures of the reference integration. The midpoint error falls as 1/n^2, so at
#: n <= MAX_SUPERSAMPLE the reference's own error is below (50/1024)^2 = 0.24% of the estimate's.
REFERENCE_SUPERSAMPLE = 1024
#: Mid-exposure times probed: evenly over the transit, and densely within an exposure of each contact.
PROBES_ACROSS = 128
PROBES_PER_CONTACT = 96
#: The dense probes start an irrational fraction (golden ratio - 1) of their spacing into the range, so
#: no sub-exposure lands exactly on a contact, where batman's elliptic integral fails to converge.
PROBE_PHASE = (math.sqrt(5) - 1) / 2


@dataclasses.dataclass(frozen=True)
class SharpTransit:
    """A central transit (impact 0, circular orbit) of given period, a/R*, radius ratio and limb darkening."""

    period_days: float
    a_over_rstar: float
    radius_ratio: float
    u1: float
    u2: float

    def contact_days(self):
        """Times of first and second contact from mid-transit (negative: before), days."""
        phase = [math.asin(min(1.0, x / self.a_over_rstar)) for x in (1 + self.radius_ratio, 1 - self.radius_ratio)]
        return [-self.period_days / (2 * math.pi) * p for p in phase if p > 0]

    def mean_flux(self, times, exposure_days, supersample):
        """Exposure-averaged flux at mid-exposure ``times`` (mid-transit at 0), as the fit computes it."""
        lc = TransitLightCurve(times, exposure_days, supersample)
        return lc.flux(
            np.arange(times.size),
            self.period_days,
            0.0,
            self.a_over_rstar,
            math.pi / 2,
            0.0,
            CIRCULAR_OMEGA_RAD,
            self.radius_ratio,
            self.u1,
            self.u2,
        )


def sharpest_transits(planets, star, q1, q2):
    """The sharpest transit the priors allow, for every transiting planet.

    Parameters
    ----------
    planets : list of PlanetConfig
    star : StarConfig
    q1, q2 : Prior
        The band's limb-darkening priors (Kipping 2013 q1, q2).

    Returns
    -------
    list of SharpTransit
    """
    transiting = [p for p in planets if p.transits]
    if not transiting:
        return []
    mass = star.mass_msun.centre
    radius = star.radius_rsun.centre
    u1, u2 = quadratic_coefficients(q1.centre, q2.centre)
    out = []
    for p in transiting:
        period = p.period_days.centre
        a_r = float(solve_orbit(period, 0.0, 0.0, 0.0, CIRCULAR_OMEGA_RAD, mass, radius)[0])
        out.append(SharpTransit(period, a_r, p.radius_ratio.span[1], u1, u2))
    return out


def _probe_times(transit, exposure_days):
    """Mid-exposure times spanning the whole transit, dense around its four contacts (sorted)."""
    contacts = transit.contact_days()
    edge = -contacts[0] + exposure_days
    step = 2 * exposure_days / PROBES_PER_CONTACT
    dense = [c - exposure_days + step * (np.arange(PROBES_PER_CONTACT) + PROBE_PHASE) for c in contacts]
    dense += [-d for d in dense]
    return np.sort(np.concatenate([np.linspace(-edge, edge, PROBES_ACROSS)] + dense))


class IntegrationError:
    """Largest exposure-integration error (ppm) at any number of sub-exposures, for a set of transits.

    The reference integrations are computed once, at construction.
    """

    def __init__(self, transits, exposure_days):
        self.exposure_days = exposure_days
        self.probes = []
        for tr in transits:
            t = _probe_times(tr, exposure_days)
            self.probes.append((tr, t, tr.mean_flux(t, exposure_days, REFERENCE_SUPERSAMPLE)))

    def __call__(self, supersample):
        """Largest |model - reference| over the probed times and transits, ppm (0 without transits)."""
        return max(
            (
                float(np.max(np.abs(tr.mean_flux(t, self.exposure_days, supersample) - ref))) / PPM
                for tr, t, ref in self.probes
            ),
            default=0.0,
        )

    def smallest_supersample(self, bound_ppm, most=MAX_SUPERSAMPLE):
        """Smallest n <= ``most`` whose error is below ``bound_ppm``, and that error; ``most`` and its error if none."""
        for n in range(1, most + 1):
            err = self(n)
            if err < bound_ppm:
                return n, err
        return most, err


@dataclasses.dataclass
class ExposureSampling:
    """Sub-exposures of one dataset, the estimated largest integration error and any warning."""

    supersample: int
    error_ppm: float
    bound_ppm: float
    warning: str = None


def choose_sampling(name, exposure_days, median_error, transits, requested=None):
    """Sub-exposures for one dataset: the smallest within the bound, or the user's ``requested`` checked.

    Parameters
    ----------
    name : str
        Dataset name (for the warning).
    exposure_days : float
    median_error : float
        Median relative flux error of the dataset.
    transits : list of SharpTransit
        Empty for a dataset without transiting planets (one sub-exposure).
    requested : int, optional
        The config's ``supersample``; None to choose.

    Returns
    -------
    ExposureSampling
        With a warning when the error exceeds the bound.
    """
    bound = ERROR_FRACTION * median_error / PPM
    error = IntegrationError(transits, exposure_days)
    if requested is None:
        n, err = error.smallest_supersample(bound)
    else:
        n, err = requested, error(requested)
    if err < bound:
        return ExposureSampling(n, err, bound)
    exposure_min = exposure_days * MINUTES_PER_DAY
    what = (
        f"'supersample: {n}' leaves"
        if requested is not None
        else f"even {n} sub-exposures per {exposure_min:g}-min exposure (the most chosen automatically) leave"
    )
    if requested is not None and requested < MAX_SUPERSAMPLE:
        needed, needed_err = error.smallest_supersample(bound)
        fix = (
            f"set 'supersample: {needed}', or remove the key to have it chosen."
            if needed_err < bound
            else f"set 'supersample' above {MAX_SUPERSAMPLE}."
        )
    else:
        fix = f"set 'supersample' above {n} (each model evaluation costs proportionally more)."
    warning = (
        f"{name}: {what} an exposure-integration error of up to {err:.3g} ppm for the sharpest "
        f"transit the priors allow, above the bound of {bound:.3g} ppm (a tenth of the median flux error, "
        f"{median_error / PPM:.3g} ppm); the fitted transit shape may be biased. Fix: {fix}"
    )
    return ExposureSampling(n, err, bound, warning)
