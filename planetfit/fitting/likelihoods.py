"""One likelihood object per dataset, each scoring a batch of walkers with one signature.

A photometric dataset's model reads as the sum of its parts:
baseline x (1 - (1 - dilution) x the summed flux deficits of its terms),
the terms being each transiting planet's transits and, where declared,
the planet's own light (a negative deficit). The RVs of every
spectrograph form one dataset (an activity process couples them): every
planet's Keplerian + trend + activity-indicator terms + offsets. What is
left is scored by the dataset's noise model. Every likelihood has
``log_likelihood(batch) -> (n,)``.
"""

import dataclasses

import numpy as np

from planetfit.fitting.keplerian import radial_velocity_ms


@dataclasses.dataclass
class Batch:
    """A batch of walkers with physical orbits: each one's parameter values and solved orbits, as floats."""

    rows: list  # per walker: {name: float}
    orbit_rows: list  # per walker: {planet name: {quantity: float}}


class PhotometryModel:
    """A light curve's model: baseline, flux-deficit terms (transits) and dilution.

    Parameters
    ----------
    data : Photometry
    baseline : ConstantBaseline or LinearBaseline
    terms : list of TransitTerm
    dilution : Parameter or None
        The contaminating flux fraction; None when fixed at zero.
    noise : WhiteNoise or GaussianProcessNoise
    """

    def __init__(self, data, baseline, terms, dilution, noise):
        self.data, self.baseline, self.terms, self.dilution, self.noise = data, baseline, terms, dilution, noise

    def deficit(self, values, orbits, planets=None, parts=None):
        """Summed flux deficit of the terms of ``planets`` and ``parts`` (default: all) for one walker.

        Returns
        -------
        index, deficit : ndarray
            The sorted points inside any term's window and the deficit
            there, diluted (zero everywhere else).
        """
        terms = [
            t
            for t in self.terms
            if (planets is None or t.planet.name in planets) and (parts is None or t.part in parts)
        ]
        pieces = [p for p in (t.deficit(values, orbits[t.planet.name]) for t in terms) if p is not None]
        n = self.data.time.size
        if len(pieces) == 1:
            index, deficit = pieces[0]
        elif any(p[0].size == n for p in pieces):  # a term covering every point (the planet's light)
            index = np.arange(n)
            deficit = np.zeros(n)
            for idx, part in pieces:
                deficit[idx] += part
        else:
            index = np.unique(np.concatenate([p[0] for p in pieces])) if pieces else np.empty(0, dtype=np.intp)
            deficit = np.zeros(index.size)
            for idx, part in pieces:
                deficit[index.searchsorted(idx)] += part
        return index, (1 - values[self.dilution.name]) * deficit if self.dilution else deficit

    def flux(self, values, orbits, planets=None, parts=None):
        """Model flux at every point for one walker, with the terms of ``planets`` and ``parts`` (default: all)."""
        index, part = self.deficit(values, orbits, planets, parts)
        deficit = np.zeros(self.data.time.size)
        deficit[index] = part
        return self.baseline.flux(values) * (1 - deficit)

    def log_likelihood(self, batch):
        """Log-likelihood of each walker of ``batch``: the noise model on data minus model."""
        residuals = np.array([self.data.flux - self.flux(v, o) for v, o in zip(batch.rows, batch.orbit_rows)])
        return self.noise.log_likelihood_many(residuals, batch.rows)


class SummedPhotometryModel(PhotometryModel):
    """A light curve with fixed white noise, scored from precomputed sums plus the points inside the windows.

    Parameters are those of :class:`PhotometryModel`, and ``sums``:
    :class:`~planetfit.fitting.components.noise.SumsOfSquares` of the data and baseline basis.
    """

    def __init__(self, data, baseline, terms, dilution, noise, sums):
        super().__init__(data, baseline, terms, dilution, noise)
        self.sums = sums

    def log_likelihood(self, batch):
        parts = [self.deficit(v, o) for v, o in zip(batch.rows, batch.orbit_rows)]
        coefficients = [self.baseline.coefficients(v) for v in batch.rows]
        return self.sums.score(coefficients, [p[0] for p in parts], [p[1] for p in parts])


class VelocityModel:
    """Every spectrograph's RVs: Keplerians of all planets, trend, indicator terms, offsets and noise.

    Parameters
    ----------
    data : list of Velocities
    spectrographs : list of Spectrograph
    planets : list of Planet
    trend : LinearTrend, QuadraticTrend or None
    noise : WhiteNoise or GaussianProcessNoise
        Scores ``residuals[order]`` (time order for an activity GP).
    order : slice or ndarray
    """

    def __init__(self, data, spectrographs, planets, trend, noise, order):
        self.data, self.spectrographs, self.planets, self.trend = data, spectrographs, planets, trend
        self.noise, self.order = noise, order
        self.times = np.concatenate([d.time for d in data])
        self.observed = np.concatenate([d.rv for d in data])
        self.group = np.concatenate([np.full(d.time.size, i) for i, d in enumerate(data)])
        self.has_indicators = any(s.coefficients for s in spectrographs)

    def keplerians_ms(self, values, orbits, times):
        """Sum of every planet's Keplerian RV (m/s) at ``times`` for one walker."""
        model = np.zeros(np.size(times))
        for p in self.planets:
            o = orbits[p.name]
            model += radial_velocity_ms(
                times, values[p.period.name], o["periastron_bjd"], o["e"], o["omega_rad"], values[p.amplitude.name]
            )
        return model

    def trend_ms(self, values, times):
        """The trend (m/s) at ``times`` (zeros without one)."""
        return np.zeros(np.size(times)) if self.trend is None else self.trend.velocity_ms(values, times)

    def residuals(self, values, orbits):
        """RVs minus offsets and models for one walker, all spectrographs concatenated."""
        offsets = np.array([values[s.offset.name] for s in self.spectrographs])[self.group]
        resid = self.observed - offsets - self.keplerians_ms(values, orbits, self.times)
        if self.trend is not None:
            resid -= self.trend.velocity_ms(values, self.times)
        if self.has_indicators:
            resid -= np.concatenate(
                [np.broadcast_to(s.indicator_ms(values), d.time.shape) for s, d in zip(self.spectrographs, self.data)]
            )
        return resid

    def log_likelihood(self, batch):
        residuals = np.array([self.residuals(v, o)[self.order] for v, o in zip(batch.rows, batch.orbit_rows)])
        return self.noise.log_likelihood_many(residuals, batch.rows)
