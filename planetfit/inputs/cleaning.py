"""Cleaning light curves: segments at gaps, predicted transits, sigma clipping.

Everything here runs once when a dataset is read, before any fit. The
predicted transits use the centres of the ephemeris priors, widened by the
priors' half-widths propagated to each epoch, so no point that could lie in
a transit is clipped or cut away.
"""

import math

import numpy as np
from scipy import ndimage

from planetfit.core.geometry import solve_orbit

#: Margin on the longest transit a circular orbit allows (eccentric orbits can be slower).
DURATION_MARGIN = 1.5
#: Scale from the median absolute deviation to a Gaussian sigma (1 / Phi^-1(3/4)).
MAD_TO_SIGMA = 1.4826
MAX_CLIP_ITERATIONS = 10


def segment_labels(times, gap_days):
    """Integer label of the contiguous segment of every point: a new one starts after each gap > ``gap_days``."""
    return np.concatenate(([0], np.cumsum(np.diff(times) > gap_days)))


def segment_slices(labels):
    """Slices of the contiguous runs of equal ``labels`` (segments of time-sorted data)."""
    edges = np.concatenate(([0], np.flatnonzero(np.diff(labels)) + 1, [labels.size]))
    return [slice(a, b) for a, b in zip(edges[:-1], edges[1:])]


def near_transits(times, planets, star, half_width_days=None):
    """Mask of points that may lie within ``half_width_days`` of a predicted transit.

    Parameters
    ----------
    times : ndarray
        BJD_TDB.
    planets : list of PlanetConfig
        Only transiting planets count.
    star : StarConfig
    half_width_days : float, optional
        Half-width of the window around each mid-transit; by default the
        longest transit the priors allow (circular orbit, impact 0, largest
        radius ratio) times :data:`DURATION_MARGIN`.

    Notes
    -----
    The window grows by the priors' half-widths of the transit time and
    of the period times the number of orbits from the reference transit.
    """
    mask = np.zeros(times.size, dtype=bool)
    for p in planets:
        if p.transits:
            half = longest_half_days(p, star) if half_width_days is None else half_width_days
            mask |= _near_epochs(times, p.transit_bjd.centre, p.transit_bjd.half_width, p, half)
    return mask


def longest_half_days(p, star):
    """Half the longest transit the priors allow (circular orbit, impact 0, largest radius ratio), with margin."""
    period = p.period_days.centre
    a_r = float(solve_orbit(period, 0.0, 0.0, 0.0, math.pi / 2, star.mass_msun.centre, star.radius_rsun.centre)[0])
    chord = min(1.0, (1 + p.radius_ratio.bounds[1]) / a_r)
    return DURATION_MARGIN * period / (2 * math.pi) * math.asin(chord)


def _near_epochs(times, t0, dt0, p, half):
    """Mask of points within ``half`` of t0 + n P, widened by dt0 and n times the period prior's half-width."""
    period, dp = p.period_days.centre, p.period_days.half_width
    epoch = np.round((times - t0) / period)
    return np.abs(times - (t0 + epoch * period)) <= half + dt0 + np.abs(epoch) * dp


def near_eclipses(times, planets, star):
    """Mask of points that may lie in a secondary eclipse of ``planets`` (those whose light is fitted).

    The eclipse comes half an orbit after the transit, shifted by up to
    (2P/pi) |e cos w| (Winn 2010, eq. 33) for the largest |e cos w| the
    priors allow; the half-width is :func:`near_transits`' default.
    """
    mask = np.zeros(times.size, dtype=bool)
    for p in planets:
        shift = 2 * p.period_days.centre / math.pi * _largest_e_cos_w(p)
        t0 = p.transit_bjd.centre + 0.5 * p.period_days.centre
        mask |= _near_epochs(times, t0, p.transit_bjd.half_width + shift, p, longest_half_days(p, star))
    return mask


def _largest_e_cos_w(p):
    """Largest |e cos w| of a planet's priors: |sqrt(e) cos w| times the largest sqrt(e)."""
    if not hasattr(p, "sqrt_e_cos_w"):
        return 0.0
    c = max(abs(b) for b in p.sqrt_e_cos_w.bounds)
    s = max(abs(b) for b in p.sqrt_e_sin_w.bounds)
    return min(1.0, c) * math.sqrt(min(p.eccentricity_max, c * c + s * s))


def _running_median(times, flux, window_days):
    """Median of ``flux`` over about ``window_days`` around each point (regular cadence assumed)."""
    steps = np.diff(times)
    steps = steps[steps > 0]  # repeated time stamps are kept (a file listed twice): they set no cadence
    cadence = np.median(steps) if steps.size else window_days
    size = int(max(3, min(times.size, round(window_days / cadence))) // 2 * 2 + 1)
    return ndimage.median_filter(flux, size=size, mode="nearest")


def sigma_clip(times, flux, segments, protected, sigma, window_days):
    """Iterative sigma clipping about a running median, sparing ``protected`` points.

    Each pass takes the running median of the kept points of every segment,
    interpolates it to all points, estimates the scatter of the unprotected
    kept points from their median absolute deviation, and marks points
    farther than ``sigma`` times that scatter; passes repeat until no new
    point is marked.

    Returns
    -------
    ndarray of bool
        True for clipped points.
    """
    clipped = np.zeros(times.size, dtype=bool)
    if not sigma > 0:
        return clipped
    for _ in range(MAX_CLIP_ITERATIONS):
        trend = np.empty(times.size)
        for seg in segment_slices(segments):
            t, f, keep = times[seg], flux[seg], ~clipped[seg]
            if keep.sum() < 3:
                keep[:] = True
            trend[seg] = np.interp(t, t[keep], _running_median(t[keep], f[keep], window_days))
        resid = flux - trend
        free = ~clipped & ~protected
        if free.sum() < 3:
            break
        scatter = MAD_TO_SIGMA * np.median(np.abs(resid[free] - np.median(resid[free])))
        new = ~protected & (np.abs(resid) > sigma * scatter)
        if np.array_equal(new, clipped):
            break
        clipped = new
    return clipped
