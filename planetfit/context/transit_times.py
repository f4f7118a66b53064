"""Individual transit times from the posterior: each transit's time, its O-C, and the test of a linear ephemeris.

For a planet with ``transit_times: free`` the n-th observed transit
happens at T0 + E_n P + d_n in every sample
(:mod:`planetfit.fitting.components.timing`). Its time is summarised by
the median and the 15.87th / 84.13th percentiles, its uncertainty sigma_n
by half their distance. The linear ephemeris is tested by the weighted
least-squares line through the median times: chi^2 = sum of the squared
residuals over sigma_n^2, with N - 2 degrees of freedom, and its p-value
(the chance of a chi^2 at least this large if the times lay on a line with
Gaussian errors sigma_n). The O-C values are those residuals.
"""

import dataclasses

import numpy as np
from scipy import stats

from planetfit.core.stats import LOWER_PERCENTILE, UPPER_PERCENTILE
from planetfit.core.units import MINUTES_PER_DAY

#: Trial periods of the sinusoid fit.
SINUSOID_GRID = 400


@dataclasses.dataclass
class TransitTimes:
    """One planet's individual transit times (days, BJD_TDB) and the linear-ephemeris test."""

    planet: str
    epochs: np.ndarray
    median: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    line: tuple  # (T0, P) of the weighted least-squares line through the median times
    sinusoid: dict = None  # best sinusoid of the O-C, when asked

    @property
    def sigma_days(self):
        return (self.upper - self.lower) / 2

    @property
    def linear_bjd(self):
        return self.line[0] + self.epochs * self.line[1]

    @property
    def o_minus_c_minutes(self):
        return (self.median - self.linear_bjd) * MINUTES_PER_DAY

    @property
    def chi2(self):
        return float(np.sum(((self.median - self.linear_bjd) / self.sigma_days) ** 2))

    @property
    def dof(self):
        return int(self.epochs.size - 2)

    def block(self):
        """The summary.json keys of the planet: ``ttv_rms_minutes``, ``ttv_chi2``, its dof and p-value."""
        out = {
            "transit_epochs": int(self.epochs.size),
            "ttv_rms_minutes": float(np.sqrt(np.mean(self.o_minus_c_minutes**2))),
            "ttv_chi2": self.chi2,
            "ttv_dof": self.dof,
            "ttv_p_value": float(stats.chi2.sf(self.chi2, self.dof)),
        }
        if self.sinusoid is not None:
            out["ttv_sinusoid"] = self.sinusoid
        return out


def _weighted_line(epochs, times, sigma):
    """(T0, P) of the weighted least-squares line times = T0 + epochs P."""
    ref = float(times[0])  # fitted relative to the first time: BJDs near 2.46e6 lose digits in the normal equations
    design = np.column_stack([np.ones(epochs.size), epochs]) / sigma[:, None]
    (t0, per), *_ = np.linalg.lstsq(design, (times - ref) / sigma, rcond=None)
    return ref + float(t0), float(per)


def fit_sinusoid(epochs, o_minus_c, sigma):
    """The weighted least-squares sinusoid plus line through O-C values, over a grid of periods.

    O-C = A sin(2 pi E / P_ttv + phase) + c0 + c1 E, with trial periods P_ttv
    from 2 epochs (the shortest sampled) to twice the span of the epochs.

    Returns
    -------
    dict
        ``period_epochs``, ``amplitude``, ``phase_rad``, ``offset``, ``slope``
        (per epoch) and ``chi2``, in the units of ``o_minus_c``.
    """
    span = float(epochs.max() - epochs.min())
    best = None
    for period in np.linspace(2.0, 2 * span, SINUSOID_GRID):
        design = sinusoid_design(epochs, period)
        coef, *_ = np.linalg.lstsq(design / sigma[:, None], o_minus_c / sigma, rcond=None)
        chi2 = float(np.sum(((o_minus_c - design @ coef) / sigma) ** 2))
        if best is None or chi2 < best[0]:
            best = (chi2, period, coef)
    chi2, period, (s, c, c0, c1) = best
    return {
        "period_epochs": float(period),
        "amplitude": float(np.hypot(s, c)),
        "phase_rad": float(np.arctan2(c, s)),
        "offset": float(c0),
        "slope": float(c1),
        "chi2": chi2,
    }


def sinusoid_design(epochs, period_epochs):
    """Columns sin, cos (2 pi E / period), 1, E of the sinusoid fit."""
    arg = 2 * np.pi * np.asarray(epochs, dtype=float) / period_epochs
    return np.column_stack([np.sin(arg), np.cos(arg), np.ones(arg.size), np.asarray(epochs, dtype=float)])


def transit_times(model, config, values):
    """The :class:`TransitTimes` of every planet with individual transit times.

    Parameters
    ----------
    model : Model
    config : Config
        Whether each planet asks for a sinusoid fit.
    values : dict
        Parameter name -> per-sample values (``derived["parameters"]``).
    """
    out = {}
    blocks = {b.name: b for b in config.planets}
    for p in model.planets:
        if p.timing is None:
            continue
        times = (
            values[p.transit_time.name][:, None]
            + values[p.period.name][:, None] * p.timing.epochs
            + p.timing.offsets_days(values)
        )
        lo, med, hi = np.percentile(times, [LOWER_PERCENTILE, 50.0, UPPER_PERCENTILE], axis=0)
        line = _weighted_line(p.timing.epochs, med, (hi - lo) / 2)
        result = TransitTimes(p.name, p.timing.epochs, med, lo, hi, line)
        if blocks[p.name].transit_times_sinusoid:
            fit = fit_sinusoid(result.epochs, result.o_minus_c_minutes, result.sigma_days * MINUTES_PER_DAY)
            result.sinusoid = {
                "period_epochs": fit["period_epochs"],
                "period_days": fit["period_epochs"] * line[1],
                "amplitude_minutes": fit["amplitude"],
                "phase_rad": fit["phase_rad"],
                "offset_minutes": fit["offset"],
                "slope_minutes_per_epoch": fit["slope"],
                "chi2": fit["chi2"],
            }
        out[p.name] = result
    return out
