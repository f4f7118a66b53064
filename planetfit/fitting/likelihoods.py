"""One likelihood object per dataset, each scoring a batch of walkers with one signature.

A photometric dataset's model reads as the sum of its parts:
baseline x (1 - (1 - dilution) x the summed flux deficits of its terms),
the terms being each transiting planet's transits and, where declared,
the planet's own light (a negative deficit). The RVs of every
spectrograph form one dataset (an activity process couples them): every
planet's Keplerian + trend + activity-indicator terms + offsets. What is
left is scored by the dataset's noise model. Every likelihood has
``log_likelihood(batch) -> (n,)``.

Parameters that enter a dataset's mean linearly (declared ``linear`` by
their components, which give their design columns) are marginalised
analytically once :meth:`LinearMean.marginalise` is called: the
likelihood is then the integral over them
(:class:`~planetfit.fitting.linear.LinearMarginal`), and
:meth:`LinearMean.draw_linear` draws them from their conditional posterior.
"""

import dataclasses

import numpy as np

from planetfit.fitting.keplerian import radial_velocity_ms
from planetfit.fitting.linear import LinearMarginal


@dataclasses.dataclass
class Batch:
    """A batch of walkers with physical orbits: each one's parameter values and solved orbits, as floats."""

    rows: list  # per walker: {name: float}
    orbit_rows: list  # per walker: {planet name: SolvedOrbit of floats}


class LinearMean:
    """A likelihood whose mean may hold linear parameters: scored plainly or marginalised over them.

    A subclass gives ``residual(values, orbits)`` (data minus model, in the
    noise model's order), ``linear_parameters`` and ``stack(values, orbits)``
    ((N, 1 + k): the residual with the marginalised parameters at zero, then
    their design columns).
    """

    marginal = None

    def marginalise(self, parameters, reference=None):
        """Marginalise these of its linear parameters (none: score every parameter as sampled).

        ``reference``: the values the stacks are centred on (default: the priors' centres).
        """
        self.marginal = LinearMarginal(parameters, reference) if parameters else None
        self._zero = dict.fromkeys(self.marginal.names, 0.0) if parameters else {}

    def gram(self, batch):
        """Gram matrices of the centred stacks under the noise model, and its log normalisations."""
        stacks = np.array([self.marginal.centre(self.stack(v, o)) for v, o in zip(batch.rows, batch.orbit_rows)])
        return self.noise.gram_many(stacks, batch.rows)

    def log_likelihood(self, batch):
        """Log-likelihood of each walker of ``batch`` (integrated over the marginalised parameters)."""
        if self.marginal is not None:
            return self.marginal.log_likelihood(*self.gram(batch))
        residuals = np.array([self.residual(v, o) for v, o in zip(batch.rows, batch.orbit_rows)])
        return self.noise.log_likelihood_many(residuals, batch.rows)

    def profile_log_likelihood(self, batch):
        """Log-likelihood of each walker maximised over the marginalised parameters (plain without them)."""
        if self.marginal is None:
            return self.log_likelihood(batch)
        return self.marginal.profile(*self.gram(batch))

    def draw_linear(self, batch, rng):
        """Marginalised parameters drawn from their conditional posterior: (draws (n, k), edge mass (n, k), clipped)."""
        gram, _ = self.gram(batch)
        beta, clipped = self.marginal.draw(gram, rng)
        return beta, self.marginal.edge_mass(gram), clipped


class PhotometryLikelihood(LinearMean):
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

    def residual(self, values, orbits):
        return self.data.flux - self.flux(values, orbits)

    @property
    def linear_parameters(self):
        return [p for p in self.baseline.parameters if p.linear]

    def _transmitted(self, values, orbits):
        """1 - the diluted deficit, at every point."""
        index, part = self.deficit(values, orbits)
        out = np.ones(self.data.time.size)
        out[index] -= part
        return out

    def stack(self, values, orbits):
        """The baseline's linear parameters enter as its columns times the transmitted fraction."""
        transmitted = self._transmitted(values, orbits)
        columns = self.baseline.columns(values)
        out = np.empty((transmitted.size, 1 + len(self.marginal.names)))
        out[:, 0] = self.data.flux - self.baseline.flux(dict(values, **self._zero)) * transmitted
        for j, name in enumerate(self.marginal.names, 1):
            out[:, j] = columns[name] * transmitted
        return out


class SummedPhotometryLikelihood(PhotometryLikelihood):
    """A light curve with fixed white noise, scored from precomputed sums plus the points inside the windows.

    Parameters are those of :class:`PhotometryLikelihood`, and ``sums``:
    :class:`~planetfit.fitting.components.noise.SumsOfSquares` of the data and baseline basis.
    """

    def __init__(self, data, baseline, terms, dilution, noise, sums):
        super().__init__(data, baseline, terms, dilution, noise)
        self.sums = sums

    def marginalise(self, parameters, reference=None):
        """As :meth:`LinearMean.marginalise`; the level centred on the data's weighted mean (the sums' centre)."""
        level = self.baseline.level.name
        super().marginalise(parameters, [self.sums.mean if p.name == level else p.prior.centre for p in parameters])

    def log_likelihood(self, batch):
        if self.marginal is not None:
            return super().log_likelihood(batch)
        parts = [self.deficit(v, o) for v, o in zip(batch.rows, batch.orbit_rows)]
        coefficients = [self.baseline.coefficients(v) for v in batch.rows]
        return self.sums.score(coefficients, [p[0] for p in parts], [p[1] for p in parts])

    def gram(self, batch):
        """The Gram matrices from the sums and the windows' points (the baseline linear in its marginalised
        parameters: its coefficients per unit of each, and at the stacks' reference values)."""
        parts = [self.deficit(v, o) for v, o in zip(batch.rows, batch.orbit_rows)]
        n = len(batch.rows)
        own = [p.name for p in self.baseline.parameters if p.name not in self.marginal.names]
        values = {name: np.array([v[name] for v in batch.rows]) for name in own}
        values.update(dict.fromkeys(self.marginal.names, np.zeros(n)))

        def coefficients():  # (n, k), every walker at once
            return np.column_stack([np.broadcast_to(c, n) for c in self.baseline.coefficients(values)])

        zero, units = coefficients(), []
        for name in self.marginal.names:
            values[name] = np.ones(n)
            units.append(coefficients() - zero)
            values[name] = np.zeros(n)
        units = np.stack(units, axis=1)
        base = zero + np.einsum("l,nlk->nk", self.marginal.reference, units)
        gram = self.sums.gram(units, base, [p[0] for p in parts], [p[1] for p in parts])
        return gram, np.full(len(gram), self.sums.constant)


class VelocityLikelihood(LinearMean):
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
                times, values[p.period.name], o.periastron_bjd, o.eccentricity, o.omega_rad, values[p.amplitude.name]
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

    def residual(self, values, orbits):
        return self.residuals(values, orbits)[self.order]

    @property
    def linear_parameters(self):
        own = [p for s in self.spectrographs for p in s.parameters if p.linear]
        return own + ([p for p in self.trend.parameters if p.linear] if self.trend is not None else [])

    def marginalise(self, parameters):
        """As :meth:`LinearMean.marginalise`; the design columns do not change and are built here once."""
        super().marginalise(parameters)
        columns = self.trend.columns(self.times) if self.trend is not None else {}
        for i, s in enumerate(self.spectrographs):
            for name, column in s.columns().items():
                columns[name] = np.zeros(self.times.size)
                columns[name][self.group == i] = column
        self.design = np.column_stack([columns[p.name][self.order] for p in parameters]) if parameters else None

    def stack(self, values, orbits):
        return np.column_stack([self.residual(dict(values, **self._zero), orbits), self.design])
