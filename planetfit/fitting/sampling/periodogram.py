"""Optimiser starts at the peaks of a generalised Lomb-Scargle periodogram of the RVs.

A period prior that holds several periodogram peaks (its width in
frequency exceeds 1 / the RVs' time span) gives a posterior with several
period aliases; starts from the prior alone find only some of them. For
each such planet fitted from RVs, the highest peaks within the prior of the
generalised Lomb-Scargle periodogram (Zechmeister & Kuerster 2009, A&A 496,
577: weighted by the errors, with a floating mean; astropy's
``LombScargle``) of the RVs, each spectrograph's median removed, become
starts: period at the peak, conjunction time and semi-amplitude from the
sinusoid fitted at that frequency.
"""

import math

import numpy as np
from astropy.timeseries import LombScargle
from scipy import optimize, signal

#: Periodogram peaks that become optimiser starts, per planet.
PEAKS = 3
#: Frequency grid points per periodogram peak width (1 / time span).
SAMPLES_PER_PEAK = 10


def _planets(log_prob, layout):
    """The planets fitted from RVs alone whose period and semi-amplitude are free."""
    if not log_prob.velocities:
        return []
    return [
        p
        for p in log_prob.planets
        if (not p.transits or not log_prob.photometry)
        and p.period.name in layout.free
        and p.amplitude.name in layout.free
    ]


def sinusoid(t, rv, error, frequency):
    """Conjunction time and semi-amplitude of the sinusoid fitted to ``rv`` at ``frequency`` (1/d).

    planetfit's circular orbit has RV = -K sin(2 pi f (t - Tc)) (transit
    at true anomaly pi/2 - omega with omega = pi/2). astropy's model is
    y0 + a sin(2 pi f t') + b cos(2 pi f t') in t' = t - t[0], so
    a = -K cos(phi), b = K sin(phi) with phi = 2 pi f (Tc - t[0]).

    Returns
    -------
    (tc, k) : float
        ``tc`` within one period after ``t[0]``.
    """
    t0 = float(t[0])
    _, a, b = LombScargle(t - t0, rv, error).model_parameters(frequency)
    phase = math.atan2(b, -a) % (2 * math.pi)
    return t0 + phase / (2 * math.pi * frequency), math.hypot(a, b)


def periodogram_peaks(t, rv, error, low, high, count=PEAKS):
    """Frequencies (1/d) of the ``count`` highest local maxima of the periodogram between ``low`` and ``high``.

    Found on a grid of :data:`SAMPLES_PER_PEAK` points per 1 / time span,
    each refined by a bounded search between its grid neighbours.
    """
    periodogram = LombScargle(t - t[0], rv, error)
    grid = np.linspace(low, high, max(3, math.ceil((high - low) * np.ptp(t) * SAMPLES_PER_PEAK)))
    power = periodogram.power(grid)
    peaks = signal.find_peaks(np.concatenate([[-np.inf], power, [-np.inf]]))[0] - 1
    out = []
    for i in peaks[np.argsort(-power[peaks], kind="stable")][:count]:
        bounds = (grid[max(i - 1, 0)], grid[min(i + 1, grid.size - 1)])
        best = optimize.minimize_scalar(
            lambda f: -periodogram.power(f),
            bounds=bounds,
            method="bounded",
            options={"xatol": 1e-6 * (bounds[1] - bounds[0])},
        )
        out.append(float(best.x) if -best.fun > power[i] else float(grid[i]))
    return np.array(out)


def _into_prior(prior, value, period=None):
    """``value`` moved into ``prior``'s bounds by whole ``period``s where possible, else clipped to them."""
    lo, hi = prior.bounds
    if period is not None and math.isfinite(lo) and math.isfinite(hi):
        centre = 0.5 * (lo + hi)
        shifted = value + period * round((centre - value) / period)
        if lo <= shifted <= hi:
            return shifted
    return float(np.clip(value, lo, hi))


def periodogram_starts(log_prob, layout, base):
    """Optimiser starts (sampler coordinates) at the periodogram peaks of every planet fitted from RVs.

    Parameters
    ----------
    log_prob : LogProbability
    layout : ParameterLayout
    base : ndarray
        The start's other parameters (the prior's centre); each
        spectrograph's free offset is set to its median RV.

    Returns
    -------
    list of ndarray
        Empty where no planet's period prior holds more than one peak.
    """
    planets = _planets(log_prob, layout)
    if not planets:
        return []
    t = np.concatenate([d.time for d in log_prob.velocities])
    rv = np.concatenate([d.rv - np.median(d.rv) for d in log_prob.velocities])
    error = np.concatenate([d.error for d in log_prob.velocities])
    start = np.array(base, dtype=float)
    for d, spectrograph in zip(log_prob.velocities, log_prob.model.velocity.spectrographs):
        name = spectrograph.offset.name
        if name in layout.free:
            start[layout.free.index(name)] = layout.priors[name].to_sampler(
                _into_prior(layout.priors[name], float(np.median(d.rv)))
            )
    starts = []
    for planet in planets:
        period_lo, period_hi = planet.period.prior.bounds
        if not (period_lo > 0 and math.isfinite(period_hi) and (1 / period_lo - 1 / period_hi) * np.ptp(t) > 1):
            continue  # the prior holds one peak at most
        low, high = 1 / period_hi, 1 / period_lo
        for frequency in periodogram_peaks(t, rv, error, low, high):
            tc, k = sinusoid(t, rv, error, frequency)
            x = start.copy()
            for param, value, period in (
                (planet.period, 1 / frequency, None),
                (planet.transit_time, tc, 1 / frequency),
                (planet.amplitude, k, None),
            ):
                name = param.name
                if name in layout.free:
                    prior = layout.priors[name]
                    x[layout.free.index(name)] = prior.to_sampler(_into_prior(prior, value, period))
            starts.append(x)
    return starts
