"""Individual transit times: each observed transit of a planet gets its own mid-time.

The n-th observed transit (epoch E_n, counted from the planet's
``transit_bjd``) happens at T0 + E_n P + d_n. The N offsets d_n and the
line (T0, P) together are degenerate in two directions (a constant and a
slope in the offsets shift onto T0 and P), so the offsets are confined to
the offsets with no least-squares line: d = Q z with Q an orthonormal basis
of the vectors orthogonal to (1, E) and N - 2 sampled coordinates z_k,
each with a uniform prior of the configured half-width. Then T0 + E P is
exactly the least-squares line through the individual times, and the
individual times are as free as N - 2 numbers can make them. Each z_k
spreads over the epochs with unit norm, so each d_n has about the prior
spread of a uniform offset of the same half-width (standard deviation
half-width / sqrt(3)).
"""

import math

import numpy as np

from planetfit.core.errors import InputError
from planetfit.core.geometry import solve_orbit, transit_duration_days
from planetfit.core.quantities import TRANSIT_TIME_MODE
from planetfit.core.units import MINUTES_PER_DAY
from planetfit.fitting.parameters import Parameter
from planetfit.inputs.priors import Uniform

#: Points a transit needs within half the expected duration of its predicted mid-time to get its own time.
MIN_POINTS_IN_TRANSIT = 5
#: The default prior half-width of an offset, as a fraction of the expected transit duration.
DEFAULT_HALFWIDTH_FRACTION = 0.25


def expected_duration_days(block, star):
    """The transit duration T14 at the centres of the planet's and the star's priors (circular orbit)."""
    per, k, b = block.period_days.centre, block.radius_ratio.centre, block.impact.centre
    a_r, cos_i, _ = solve_orbit(per, 0.0, b, 0.0, math.pi / 2, star.mass_msun.centre, star.radius_rsun.centre)
    return float(transit_duration_days(per, a_r, k, b, cos_i, 0.0, math.pi / 2))


def observed_epochs(times_list, period_days, transit_bjd, half_days):
    """Epochs with at least ``MIN_POINTS_IN_TRANSIT`` points within ``half_days`` of their predicted mid-time."""
    counts = {}
    for times in times_list:
        epoch = np.rint((np.asarray(times) - transit_bjd) / period_days)
        near = np.abs(times - (transit_bjd + epoch * period_days)) <= half_days
        for e, c in zip(*np.unique(epoch[near], return_counts=True)):
            counts[int(e)] = counts.get(int(e), 0) + int(c)
    return np.array(sorted(e for e, c in counts.items() if c >= MIN_POINTS_IN_TRANSIT), dtype=int)


def trend_free_basis(epochs):
    """Orthonormal columns spanning the vectors over ``epochs`` orthogonal to a constant and to the epoch."""
    trend = np.column_stack([np.ones(epochs.size), epochs - epochs.mean()])
    q, _ = np.linalg.qr(trend, mode="complete")
    return q[:, 2:]


class IndividualTransitTimes:
    """A planet's per-transit mid-time offsets from its linear ephemeris (see the module notes).

    Parameters
    ----------
    planet_name : str
    epochs : ndarray of int
        The observed transits, at least 3.
    halfwidth_days : float
        Prior half-width of each coordinate.
    """

    def __init__(self, planet_name, epochs, halfwidth_days):
        self.epochs = np.asarray(epochs, dtype=int)
        self.basis = trend_free_basis(self.epochs)
        self.halfwidth_days = float(halfwidth_days)
        prior = Uniform(-self.halfwidth_days, self.halfwidth_days)
        self.parameters = [
            Parameter(planet_name, f"transit_time_mode_{k + 1}_days", prior, TRANSIT_TIME_MODE, "timing")
            for k in range(self.basis.shape[1])
        ]
        #: The largest offset the priors allow, days.
        self.reach_days = self.halfwidth_days * float(np.abs(self.basis).sum(axis=1).max())
        # Epoch (shifted by 1 - first) -> its slot, or N (offset 0) for epochs without their own time.
        self._first = int(self.epochs.min()) - 1
        self._slots = np.full(int(self.epochs.max()) - self._first + 2, self.epochs.size)
        self._slots[self.epochs - self._first] = np.arange(self.epochs.size)
        self._names = [p.name for p in self.parameters]

    def offsets_days(self, values):
        """Offsets d_n of every observed epoch: shape (N,) for scalar values, (n, N) for arrays of n."""
        z = np.stack([np.asarray(values[name], dtype=float) for name in self._names], axis=-1)
        return z @ self.basis.T

    def point_offsets_days(self, values, times, period_days, transit_bjd):
        """The offset of the transit nearest each of ``times`` (one walker's float values; 0 for an epoch
        without its own time)."""
        offsets = np.append(self.basis @ np.array([values[name] for name in self._names]), 0.0)
        epoch = np.rint((times - transit_bjd) / period_days).astype(np.intp) - self._first
        return offsets[np.take(self._slots, epoch, mode="clip")]


def individual_transit_times(config, block, photometry):
    """The :class:`IndividualTransitTimes` of a planet with ``transit_times: free``, its epochs found in the data.

    Raises
    ------
    InputError
        If fewer than three transits are observed (two times are a line: nothing is left to vary).
    """
    duration = expected_duration_days(block, config.star)
    epochs = observed_epochs(
        [d.time for d in photometry], block.period_days.centre, block.transit_bjd.centre, duration / 2
    )
    if epochs.size < 3:
        key = f"planets.{block.name}.transit_times"
        raise InputError(
            f"only {epochs.size} transit(s) of planet {block.name} have at least {MIN_POINTS_IN_TRANSIT} points within "
            f"half the expected duration ({duration * 24:.2f} h) of their predicted times; individual transit times "
            "need at least 3.",
            file=config.path,
            key=key,
            line=config.line(key),
            fix="use 'transit_times: linear', or check the period and transit_bjd priors against the data.",
        )
    given = block.transit_time_halfwidth_min
    halfwidth = given / MINUTES_PER_DAY if given is not None else DEFAULT_HALFWIDTH_FRACTION * duration
    return IndividualTransitTimes(block.name, epochs, halfwidth)
