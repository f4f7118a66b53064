"""What several figures share: posterior draws, folding, binning, credible bands."""

import corner
import numpy as np

from planetfit.core.stats import LOWER_PERCENTILE, UPPER_PERCENTILE

#: Posterior draws behind every model band (enough for a smooth 68% band, fast to evaluate).
N_DRAWS = 200
#: Probability inside the 1- and 2-sigma contours of a 2D Gaussian, 1 - exp(-n^2/2).
LEVELS_2D = (1 - np.exp(-0.5), 1 - np.exp(-2.0))


class PosteriorView:
    """Parameter values at the posterior median and at random posterior draws.

    Parameters
    ----------
    log_prob : LogProbability
    samples : ndarray, shape (n, ndim)
        Flat posterior samples as the sampler stores them.
    n_draws : int
    seed : int
        Seed of the draw selection, so a redraw picks the same draws.

    Attributes
    ----------
    median, median_orbits : dict
        Values of every parameter at the per-parameter posterior medians
        (the sample nearest to them if that combination is unphysical),
        and the orbits they give ({planet name: SolvedOrbit}).
    draws : list of (dict, dict)
        Values and orbits of up to ``n_draws`` physical posterior samples.
    """

    def __init__(self, log_prob, samples, n_draws=N_DRAWS, seed=0):
        layout = log_prob.model.layout  # samples with the marginalised parameters drawn in
        self.median = layout.values(np.median(samples, axis=0))
        self.median_orbits = log_prob.orbits(self.median)
        if self.median_orbits is None:
            scale = np.std(samples, axis=0)
            scale[scale == 0] = 1.0
            nearest = np.argmin(np.sum(((samples - np.median(samples, axis=0)) / scale) ** 2, axis=1))
            self.median = layout.values(samples[nearest])
            self.median_orbits = log_prob.orbits(self.median)
        rng = np.random.default_rng(seed)
        picks = rng.choice(len(samples), size=min(n_draws, len(samples)), replace=False)
        self.draws = []
        for row in samples[np.sort(picks)]:
            values = layout.values(row)
            orbits = log_prob.orbits(values)
            if orbits is not None:
                self.draws.append((values, orbits))


def phase_days(times, period_days, transit_bjd):
    """Time from the nearest mid-transit (conjunction), in days, in [-P/2, P/2)."""
    return np.mod(np.asarray(times) - transit_bjd + 0.5 * period_days, period_days) - 0.5 * period_days


def bin_points(x, y, width, min_points=3):
    """Mean of ``y`` in bins of ``x`` of the given width, with its standard error.

    Bins with fewer than ``min_points`` points are left out. Returns
    ``(centre, mean, error)`` arrays.
    """
    if x.size == 0:
        return np.empty(0), np.empty(0), np.empty(0)
    edges = np.arange(x.min(), x.max() + width, width)
    idx = np.digitize(x, edges)
    out = []
    for k in np.unique(idx):
        sel = idx == k
        n = int(sel.sum())
        if n >= min_points:
            out.append((x[sel].mean(), y[sel].mean(), y[sel].std(ddof=1) / np.sqrt(n)))
    if not out:
        return np.empty(0), np.empty(0), np.empty(0)
    return tuple(np.array(col) for col in zip(*out))


def band(curves):
    """Pointwise 15.87th and 84.13th percentiles of model curves (rows are draws)."""
    return np.percentile(np.asarray(curves), [LOWER_PERCENTILE, UPPER_PERCENTILE], axis=0)


def offset_for_display(x):
    """A round number to subtract before plotting values whose spread is tiny beside their size.

    Returns 0 when the values read well as they are.
    """
    med, spread = np.median(x), np.std(x)
    if spread == 0 or abs(med) < 1e3 * spread:
        return 0.0
    power = int(np.floor(np.log10(spread))) + 1
    return float(round(np.floor(med / 10.0**power) * 10.0**power, max(0, -power)))


def contours(ax, x, y, colour, scales):
    """Filled 1- and 2-sigma contours of paired samples (corner's hist2d), ``scales`` ("log"/"linear") per axis."""
    limits = [np.percentile(x, [0.1, 99.9]), np.percentile(y, [0.1, 99.9])]
    corner.hist2d(
        x,
        y,
        ax=ax,
        axes_scale=list(scales),
        levels=LEVELS_2D,
        color=colour,
        smooth=1.0,
        plot_datapoints=False,
        plot_density=False,
        fill_contours=True,
        bins=30,
        quiet=True,
        range=limits,
    )
