"""Separated modes of a posterior: found among the optimiser's end points, described, and assigned after sampling.

1. Each optimum is described by its Laplace approximation (covariance and
   evidence, :mod:`planetfit.fitting.sampling.laplace`).
2. Two optima are distinct modes when some parameter differs by more than
   :data:`SEPARATION_WIDTHS` Laplace standard deviations (the larger of the
   two optima's) and the log-probability along the straight line between
   them dips more than :data:`VALLEY_DEPTH` below the lower one (a flat
   direction, such as a jitter near zero, is one mode however far apart its
   end points lie). An optimum counts when its log-probability is within
   :data:`LOG_PROB_RANGE` of the best.
3. After sampling every sample is assigned to the nearest mode
   (Mahalanobis distance in the parameters that separate the modes); walker
   moves between modes after burn-in are counted, and each mode's fraction
   of the samples is reported (:func:`describe`).
4. :func:`planetfit.fitting.sampling.density_modes.sample_modes` finds separated
   modes in one parameter's samples, for modes the optimiser did not find.
"""

import dataclasses
import enum
import math

import numpy as np

from planetfit.fitting.sampling.density_modes import BoundaryPile, sample_modes, value_text
from planetfit.fitting.sampling.laplace import laplace_covariance, log_evidence

#: Two optima are distinct when some parameter differs by more than this many Laplace widths (sd).
SEPARATION_WIDTHS = 5.0
#: ... and the log-probability between them dips by more than this below the lower one (two equal Gaussians
#: 5 sd apart dip by 2.5^2 / 2 = 3.1 at the midpoint).
VALLEY_DEPTH = 2.0
#: An optimum is a mode when its log-probability is within this of the best: a mode of the same width this
#: much lower holds e^-5 = 0.7% of the probability.
LOG_PROB_RANGE = 5.0
VALLEY_POINTS = 9  # points between two optima at which the log-probability is evaluated
#: Walkers placed in each mode at least (fewer only when there are not enough walkers).
MIN_WALKERS_PER_MODE = 4
#: Largest standard deviation of a mode's fraction for the walkers' moves to show mixing. For a two-state
#: Markov chain that J moves into or out of a mode, sd(f) = 2 f (1 - f) / sqrt(J) (0.05 at f = 0.5 needs J = 100).
MAX_FRACTION_SD = 0.05
#: ... and at least this many moves into or out of every mode.
MIN_JUMPS = 10


@dataclasses.dataclass
class Mode:
    """One optimum: its position (sampler coordinates), log-probability and Laplace covariance."""

    theta: np.ndarray
    log_prob: float
    cov: np.ndarray

    @property
    def sd(self):
        return np.sqrt(np.diag(self.cov))

    @property
    def log_evidence(self):
        """Laplace evidence of the mode (:func:`planetfit.fitting.sampling.laplace.log_evidence`)."""
        return log_evidence(self.log_prob, self.cov)


def _apart(a, b, sd):
    """Whether positions ``a`` and ``b`` differ by more than :data:`SEPARATION_WIDTHS` of ``sd`` in some parameter."""
    return bool(np.any(np.abs(a - b) > SEPARATION_WIDTHS * sd))


def _valley_between(evaluate, a, b):
    """Whether the log-probability on the segment between modes ``a`` and ``b`` dips below both by VALLEY_DEPTH."""
    s = np.linspace(0, 1, VALLEY_POINTS + 2)[1:-1, None]
    lp = evaluate(a.theta + s * (b.theta - a.theta))
    return bool(np.min(lp) < min(a.log_prob, b.log_prob) - VALLEY_DEPTH)


def distinct_modes(evaluate, end_points, widths):
    """The distinct modes among the optimiser's end points, best first.

    Parameters
    ----------
    evaluate : callable
        (n, ndim) sampler vectors -> (n,) log-probabilities.
    end_points : list of (theta, log_prob)
        Best first.
    widths : ndarray
        Each parameter's natural scale (prior width), for the Hessian's steps.

    Returns
    -------
    list of Mode
        The best optimum first; a Laplace covariance is computed only for
        end points that are not already within the widths of a kept mode.
    """
    best = end_points[0][1]
    modes = []
    for theta, lp in end_points:
        if lp < best - LOG_PROB_RANGE:
            break
        if any(not _apart(theta, m.theta, m.sd) for m in modes):
            continue
        with np.errstate(invalid="ignore", over="ignore"):  # stencils that leave the support are handled
            mode = Mode(np.asarray(theta, dtype=float), float(lp), laplace_covariance(evaluate, theta, widths))
        if all(_apart(theta, m.theta, np.maximum(m.sd, mode.sd)) and _valley_between(evaluate, m, mode) for m in modes):
            modes.append(mode)
    return modes


def walker_counts(modes, nwalkers):
    """Walkers per mode, in proportion to its Laplace evidence, at least MIN_WALKERS_PER_MODE (if enough walkers)."""
    lnz = np.array([m.log_evidence for m in modes])
    share = np.exp(lnz - lnz.max())
    share = nwalkers * share / share.sum()
    floor = min(MIN_WALKERS_PER_MODE, nwalkers // len(modes))
    counts = np.maximum(floor, np.floor(share)).astype(int)
    while counts.sum() < nwalkers:
        counts[np.argmax(share - counts)] += 1
    while counts.sum() > nwalkers:
        counts[np.argmax(np.where(counts > floor, counts - share, -np.inf))] -= 1
    return counts


def separating_parameters(modes):
    """Indices of the parameters in which some pair of modes is apart, the most separated first."""
    score = np.zeros(modes[0].theta.size)
    for i, a in enumerate(modes):
        for b in modes[i + 1 :]:
            score = np.maximum(score, np.abs(a.theta - b.theta) / np.maximum(a.sd, b.sd))
    order = np.argsort(-score, kind="stable")
    return order[score[order] > SEPARATION_WIDTHS]


def assign(points, modes, parameters):
    """Index of the nearest mode of each point (..., ndim): Mahalanobis distance in ``parameters``."""
    distances = []
    for m in modes:
        precision = np.linalg.inv(m.cov[np.ix_(parameters, parameters)])
        diff = points[..., parameters] - m.theta[parameters]
        distances.append(np.einsum("...i,ij,...j->...", diff, precision, diff))
    return np.argmin(distances, axis=0)


def _moves(labels, k=None):
    """Walker moves from one step to the next between labels (those into or out of ``k`` if given)."""
    change = labels[1:] != labels[:-1]
    if k is not None:
        change &= (labels[1:] == k) | (labels[:-1] == k)
    return int(np.sum(change))


class FoundBy(enum.Enum):
    """Where a group of separated modes was found."""

    OPTIMISER = enum.auto()  # the optimiser's end points, as a chain sampled them
    CHAIN = enum.auto()  # an MCMC chain's samples, within one of the optimiser's modes
    WEIGHTS = enum.auto()  # weighted samples (nested sampling's), each mode weighed by its evidence


@dataclasses.dataclass
class ModeGroup:
    """Separated modes of the posterior, as the chain sampled them.

    ``names``: the parameters that separate them, the most separated first.
    Per mode: ``locations`` and ``sds`` (physical, in ``names[0]``),
    ``log_probs`` (the optimum's, or the best sample's), ``fractions`` of
    the samples, ``jumps`` (walker moves into or out of it after burn-in);
    ``moves``: every move between them.
    """

    names: list
    locations: list
    sds: list
    log_probs: list
    fractions: list
    jumps: list
    moves: int
    found_by: FoundBy

    @property
    def mixed(self):
        """Whether every mode's fraction is measured: at least MIN_JUMPS moves and sd(f) <= MAX_FRACTION_SD."""
        if self.found_by is FoundBy.WEIGHTS:  # weighed by their evidence, not by walkers moving between them
            return True
        return all(
            j >= MIN_JUMPS and 2 * f * (1 - f) / math.sqrt(j) <= MAX_FRACTION_SD
            for f, j in zip(self.fractions, self.jumps)
        )

    def warning(self):
        """The sentence naming the parameters, each mode's location, height and fraction, and the mixing."""
        name = self.names[0]
        listed = [
            f"{value_text(name, x, sd)} (ln p {lp:.1f}, {100 * f:.0f}%{' of samples' if i == 0 else ''})"
            for i, (x, sd, lp, f) in enumerate(zip(self.locations, self.sds, self.log_probs, self.fractions))
        ]
        text = f"{name} has {len(listed)} separated modes"
        if self.found_by is FoundBy.CHAIN:
            text += " in the posterior samples that the optimiser did not find"
        if len(self.names) > 1:
            text += f" (also separated in {', '.join(self.names[1:])})"
        text += ": " + (", ".join(listed[:-1]) + " and " + listed[-1])
        if self.found_by is FoundBy.WEIGHTS:
            return text + "; nested sampling weighs each mode by its evidence (fractions of the posterior weight)"
        if self.mixed:
            return text + f"; walkers moved between them {self.moves} times"
        if self.moves == 0:
            return text + (
                "; walkers never moved between them, so their relative weight is not measured: "
                "the run is reported as not converged"
            )
        return text + (
            f"; walkers moved between them only {self.moves} times, too few to measure their "
            f"relative weight (each mode's fraction to within {MAX_FRACTION_SD}): the run is reported as "
            "not converged"
        )

    def entries(self):
        """One dict per mode for summary.json: parameter, location, ln_p, fraction."""
        return [
            {"parameter": self.names[0], "location": float(x), "ln_p": round(float(lp), 2), "fraction": round(f, 4)}
            for x, lp, f in zip(self.locations, self.log_probs, self.fractions)
        ]


def _physical_sd(prior, theta, sd):
    return abs(float(prior.from_sampler(theta + sd)) - float(prior.from_sampler(theta)))


def _optimiser_group(chain, thin, modes, layout):
    """The optimiser's modes as sampled: (group, labels of every chain position)."""
    separating = separating_parameters(modes)
    labels = assign(chain, modes, separating)
    flat = labels[thin - 1 :: thin].ravel()
    j = separating[0]
    prior = layout.priors[layout.free[j]]
    group = ModeGroup(
        names=[layout.free[i] for i in separating],
        locations=[float(prior.from_sampler(m.theta[j])) for m in modes],
        sds=[_physical_sd(prior, m.theta[j], m.sd[j]) for m in modes],
        log_probs=[m.log_prob for m in modes],
        fractions=[float(np.mean(flat == k)) for k in range(len(modes))],
        jumps=[_moves(labels, k) for k in range(len(modes))],
        moves=_moves(labels),
        found_by=FoundBy.OPTIMISER,
    )
    return group, labels


def _same_partition(a, b):
    """Whether two labellings of the same samples split them alike (95% agreement up to renaming)."""
    if a.max() != b.max():
        return False
    table = np.zeros((a.max() + 1, b.max() + 1))
    np.add.at(table, (a, b), 1)
    return table.max(axis=1).sum() >= 0.95 * a.size


def _sample_group(chain, log_prob, thin, labels, k, params, split, layout):
    """The modes ``split`` of parameters ``params`` within the optimiser's mode ``k``, as sampled."""
    j, prior = params[0], layout.priors[layout.free[params[0]]]
    sub = np.where(labels == k, split.label(chain[..., j]), -1)  # -1: in another of the optimiser's modes
    flat_sub, flat_lp = sub[thin - 1 :: thin].ravel(), log_prob[thin - 1 :: thin].ravel()
    values = prior.from_sampler(chain[thin - 1 :: thin, :, j].ravel())
    indices = range(split.locations.size)
    return ModeGroup(
        names=[layout.free[i] for i in params],
        locations=[float(prior.from_sampler(x)) for x in split.locations],
        sds=[float(np.std(values[flat_sub == m])) for m in indices],
        log_probs=[float(np.max(flat_lp[flat_sub == m])) for m in indices],
        fractions=[float(np.mean(flat_sub == m)) for m in indices],
        jumps=[_moves(sub, m) for m in indices],
        moves=_moves(sub),
        found_by=FoundBy.CHAIN,
    )


def _partitions(samples, layout, weights=None, piles=None):
    """Separated modes of single parameters, parameters whose modes split the samples alike taken together.

    Pile-ups against a prior bound are not modes: they go into ``piles`` (a list) as :class:`BoundaryPile`.

    Returns
    -------
    list of (list of int, SampleModes)
        The parameters of each partition (the first the one whose modes are given) and its modes.
    """
    found = []  # (parameter indices, SampleModes of the first, its labels of the samples)
    for j, name in enumerate(layout.free):
        prior = layout.priors[name]
        split = sample_modes(samples[:, j], weights, bounds=prior.to_sampler(np.array(prior.bounds, dtype=float)))
        if piles is not None:
            piles += [BoundaryPile(name, prior, *pile) for pile in split.piles]
        if split.splits.size:
            own = split.label(samples[:, j])
            same = [f for f in found if _same_partition(f[2], own)]
            if same:
                same[0][0].append(j)
            else:
                found.append(([j], split, own))
    return [(params, split) for params, split, _ in found]


def _sample_groups(chain, log_prob, thin, labels, layout):
    """Modes of single parameters within each of the optimiser's modes: the groups the optimiser did not find."""
    samples = chain[thin - 1 :: thin].reshape(-1, chain.shape[-1])
    flat_labels = labels[thin - 1 :: thin].ravel()
    groups, piles = [], []
    for k in np.unique(flat_labels):
        found = _partitions(samples[flat_labels == k], layout, piles=piles)
        groups += [_sample_group(chain, log_prob, thin, labels, k, params, split, layout) for params, split in found]
    return groups + piles


def describe_weighted(samples, weights, log_prob, layout):
    """Every group of separated modes of single parameters in weighted samples (nested sampling's dead points).

    Each mode's fraction is its share of the weights: nested sampling
    weighs separated modes by their evidence without moving between them,
    so every group counts as mixed.

    Parameters
    ----------
    samples : ndarray, shape (n, ndim)
        Sampler coordinates.
    weights : ndarray, shape (n,)
        Importance weights (any normalisation).
    log_prob : ndarray, shape (n,)
        Log posterior density (unnormalised) of each sample.
    layout : ParameterLayout

    Returns
    -------
    list of ModeGroup
    """
    weights = np.asarray(weights, dtype=float) / np.sum(weights)
    groups, piles = [], []
    for params, split in _partitions(samples, layout, weights, piles):
        j, prior = params[0], layout.priors[layout.free[params[0]]]
        labels, values = split.label(samples[:, j]), prior.from_sampler(samples[:, j])
        fractions = [float(np.sum(weights[labels == m])) for m in range(split.locations.size)]
        sds = [
            float(np.sqrt(np.cov(values[labels == m], aweights=weights[labels == m]))) for m in range(len(fractions))
        ]
        groups.append(
            ModeGroup(
                names=[layout.free[i] for i in params],
                locations=[float(prior.from_sampler(x)) for x in split.locations],
                sds=sds,
                log_probs=[float(np.max(log_prob[labels == m])) for m in range(split.locations.size)],
                fractions=fractions,
                jumps=[0] * len(fractions),
                moves=0,
                found_by=FoundBy.WEIGHTS,
            )
        )
    return groups + piles


def describe(chain, log_prob, thin, modes, layout):
    """Every group of separated modes in a chain after burn-in.

    Parameters
    ----------
    chain : ndarray, shape (steps, walkers, ndim)
        Sampler coordinates after burn-in, not thinned.
    log_prob : ndarray, shape (steps, walkers)
    thin : int
        The posterior samples are ``chain[thin - 1::thin]``.
    modes : list of Mode
        The optimiser's distinct modes (one or more).
    layout : ParameterLayout

    Returns
    -------
    list of ModeGroup and BoundaryPile
        The optimiser's modes first (when there are several), then modes
        of single parameters found in the samples of any one of them, then
        pile-ups against a prior bound (reported, not modes).
    """
    if len(modes) > 1:
        group, labels = _optimiser_group(chain, thin, modes, layout)
        groups = [group]
    else:
        groups, labels = [], np.zeros(chain.shape[:2], dtype=int)
    return groups + _sample_groups(chain, log_prob, thin, labels, layout)
