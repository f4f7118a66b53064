"""Separated modes in the samples of one parameter: a kernel-density valley test.

Used after sampling (MCMC or nested) to find modes the optimiser did not
find; it takes sample weights, so weighted samples (nested sampling's) work.
"""

import dataclasses
import math

import numpy as np
from scipy import ndimage, signal

#: A kernel-density valley deeper than this fraction of the lower neighbouring peak separates two modes of one
#: parameter's samples (two equal Gaussians about 5 sd apart, after the kernel's smoothing).
VALLEY_RATIO = 0.1
MIN_SAMPLE_FRACTION = 0.02  # a mode of one parameter's samples holds at least this fraction of them
MIN_SAMPLES = 50  # fewest (effective) samples for the density test
#: A mode whose median lies within this many kernel bandwidths of a prior bound is a pile-up against the bound
#: (the posterior reaching the prior's edge, or walkers sticking there), not a separate mode.
EDGE_BANDWIDTHS = 2.0


#: Unit text of a parameter from the end of its name.
_UNITS = {"days": " d", "bjd": " BJD_TDB", "ms": " m/s", "ppm": " ppm", "msun": " M_sun", "rsun": " R_sun"}


def value_text(name, value, sd):
    """``value`` with two significant digits of ``sd`` and the unit its name carries."""
    places = max(0, 1 - math.floor(math.log10(sd))) if sd > 0 and math.isfinite(sd) else 4
    return f"{value:.{places}f}{_UNITS.get(name.rsplit('_', 1)[-1], '')}"


@dataclasses.dataclass
class BoundaryPile:
    """Samples of parameter ``name`` piled up against its prior's bound: reported, not counted as a mode.

    ``bound`` and ``median`` are sampler coordinates (``prior`` converts them). Like a mode group it has a
    warning, no summary.json mode entries, and it never holds back convergence.
    """

    name: str
    prior: object
    bound: float
    fraction: float
    median: float
    mixed = True

    def warning(self):
        """The sentence: the parameter, the bound, how many samples pile up there and how close."""
        bound, median = (float(self.prior.from_sampler(v)) for v in (self.bound, self.median))
        distance = abs(median - bound)
        return (
            f"{self.name}: {100 * self.fraction:.1f}% of the samples pile up against its prior bound "
            f"{bound:.10g} (median {value_text(self.name, median, distance)}); they are "
            "counted with the posterior beside them, not as a separate mode. The posterior reaches the edge of the "
            "prior there, or walkers stick against it: if the bound is not a physical limit, widen the prior"
        )

    def entries(self):
        """No summary.json mode entries: a pile-up is not a mode."""
        return []


@dataclasses.dataclass
class SampleModes:
    """Separated modes of one parameter's samples: their medians, the valleys between them, their fractions."""

    locations: np.ndarray
    splits: np.ndarray
    fractions: np.ndarray
    piles: tuple = ()  # (bound, fraction, median) of each pile-up against a prior bound, counted with its neighbour

    def label(self, x):
        """Index of the mode of each value."""
        return np.searchsorted(self.splits, x)


def _weighted_quantiles(x, w, q):
    order = np.argsort(x)
    cdf = (np.cumsum(w[order]) - 0.5 * w[order]) / np.sum(w)
    return np.interp(q, cdf, x[order])


def _merge_peaks(density, mass, peaks):
    """Drop peaks until every valley is deeper than VALLEY_RATIO and every mode holds MIN_SAMPLE_FRACTION."""
    while len(peaks) > 1:
        valleys = [a + int(np.argmin(density[a : b + 1])) for a, b in zip(peaks[:-1], peaks[1:])]
        ratios = np.array([density[v] / min(density[a], density[b]) for v, a, b in zip(valleys, peaks[:-1], peaks[1:])])
        masses = np.diff(np.concatenate([[0.0], np.cumsum(mass)[valleys], [1.0]]))
        i = int(np.argmax(ratios))
        if ratios[i] >= VALLEY_RATIO:  # too shallow: the lower peak is part of its neighbour
            peaks.pop(i if density[peaks[i]] < density[peaks[i + 1]] else i + 1)
        elif masses.min() < MIN_SAMPLE_FRACTION:  # too small: merged across its shallower valley
            k = int(np.argmin(masses))
            peaks.pop(k)
        else:
            return peaks, valleys, masses
    return peaks, [], np.ones(1)


def _boundary_piles(x, w, splits, masses, bounds, h):
    """Fold an end mode whose median lies within EDGE_BANDWIDTHS h of a prior bound into its neighbour.

    Returns the remaining splits and fractions and the piles, (bound, fraction, median) each.
    """
    splits, masses, piles = list(splits), list(masses), []
    for end in (0, -1):
        while splits:
            inside = x <= splits[0] if end == 0 else x > splits[-1]
            median = _weighted_quantiles(x[inside], w[inside], [0.5])[0]
            if not abs(median - bounds[end]) <= EDGE_BANDWIDTHS * h:
                break
            piles.append((float(bounds[end]), float(masses[end]), float(median)))
            splits.pop(end)
            merged = masses.pop(end)
            masses[end] += merged
    return np.array(splits), np.array(masses), tuple(piles)


def sample_modes(x, weights=None, bounds=(-math.inf, math.inf)):
    """Separated modes in the samples of one parameter: a kernel-density valley test.

    The density is a Gaussian kernel estimate (binned) with Silverman's
    (1986, eq. 3.31) bandwidth 0.9 min(sd, IQR / 1.34) n^(-1/5). Two
    neighbouring peaks are separate modes when the density between them
    falls below :data:`VALLEY_RATIO` of the lower peak and each holds at
    least :data:`MIN_SAMPLE_FRACTION` of the samples; otherwise the lower
    (or smaller) one is merged into its neighbour.

    Parameters
    ----------
    x : ndarray
        Samples of one parameter.
    weights : ndarray, optional
        Sample weights (e.g. nested sampling's importance weights); the
        effective number of samples is (sum w)^2 / sum w^2.
    bounds : (float, float)
        The prior's support: an end mode piled up against a bound (its
        median within :data:`EDGE_BANDWIDTHS` bandwidths of it) is counted
        with its neighbour and listed in ``piles``.

    Returns
    -------
    SampleModes
    """
    x = np.asarray(x, dtype=float)
    w = np.full(x.size, 1.0 / max(x.size, 1)) if weights is None else np.asarray(weights, float) / np.sum(weights)
    if x.size == 0:
        return SampleModes(np.full(1, np.nan), np.empty(0), np.ones(1))
    single = SampleModes(_weighted_quantiles(x, w, [0.5]), np.empty(0), np.ones(1))
    q25, q75 = _weighted_quantiles(x, w, [0.25, 0.75])
    sd = math.sqrt(np.sum(w * (x - np.sum(w * x)) ** 2))
    spread = min(sd, (q75 - q25) / 1.34) or sd
    n_eff = 1.0 / np.sum(w**2)
    if n_eff < MIN_SAMPLES or not spread > 0:
        return single
    h = 0.9 * spread * n_eff**-0.2
    lo, hi = x.min() - 3 * h, x.max() + 3 * h
    bins = int(min(4096, max(64, math.ceil(4 * (hi - lo) / h))))
    mass, edges = np.histogram(x, bins=bins, range=(lo, hi), weights=w)
    density = ndimage.gaussian_filter1d(mass, h / (edges[1] - edges[0]), mode="constant")
    peaks = list(signal.find_peaks(np.concatenate([[0.0], density, [0.0]]))[0] - 1)
    peaks, valleys, masses = _merge_peaks(density, mass, peaks)
    if len(peaks) < 2:
        return single
    splits, masses, piles = _boundary_piles(x, w, 0.5 * (edges[1:] + edges[:-1])[valleys], masses, bounds, h)
    if not splits.size:
        return dataclasses.replace(single, piles=piles)
    labels = np.searchsorted(splits, x)
    medians = [_weighted_quantiles(x[labels == k], w[labels == k], [0.5])[0] for k in range(splits.size + 1)]
    return SampleModes(np.array(medians), splits, masses, piles)
