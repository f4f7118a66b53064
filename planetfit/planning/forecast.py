"""The expected posterior after n new RVs, for parameter sets drawn from the run's posterior.

For each draw theta_i (taken as the truth): new RVs are scheduled in the
window, the Fisher information F of the RV model at theta_i is added to the
precision P of the existing posterior (its sample covariance inverted), and
Sigma = (P + F)^-1 is the expected posterior covariance. The new
spectrograph's zero point is one more parameter, with no prior information.
Mass and radius follow by linear propagation, so the stellar-mass
uncertainty stays in the planet's mass.

The composition verdict needs where the new posterior will sit, not only
its width. In the Gaussian approximation, data simulated from theta_i give
a posterior mean mu = theta_i + Sigma [P (mu_old - theta_i) + J^T C^-1 eps]
with eps = L u the simulated noise (L L^T = C, u standard normal): over draws and noise, mu is spread as the
preposterior distribution N(mu_old, Sigma_old - Sigma) (e.g. Chaloner &
Verdinelli 1995, Statist. Sci. 10, 273). ``p_rocky`` is the interior
verdict of :mod:`planetfit.context.interior` for (mass, radius) samples of
N(mu, Sigma) mapped to mass and radius.
"""

import dataclasses

import numpy as np

from planetfit.context.derived import planet_quantities
from planetfit.planning import fisher
from planetfit.planning.schedule import observation_times

#: Samples of each expected (mass, radius) posterior given to the composition verdict.
VERDICT_SAMPLES = 400


@dataclasses.dataclass
class Coordinates:
    """The parameters new RVs inform, or that mass and radius need, standardised by the run's posterior.

    Attributes
    ----------
    names : list of str
    centre, scale : ndarray
        Posterior mean and standard deviation of each.
    z : ndarray, shape (n, d)
        The posterior samples in standardised coordinates.
    precision : ndarray, shape (d + 1, d + 1)
        Inverse covariance of the existing posterior in z, the new
        spectrograph's offset last (no information); parameters in
        ``uninformed`` (a semi-amplitude drawn from a mass prior) get none.
    """

    names: list
    centre: np.ndarray
    scale: np.ndarray
    z: np.ndarray
    precision: np.ndarray


def planner_parameters(model, values):
    """Names of the varying parameters of every Keplerian and trend, known inclinations, the star and the transits'
    shape."""
    names = []
    for p in model.planets:
        names += [p.period.name, p.transit_time.name, p.amplitude.name] + [q.name for q in p.orbit.parameters]
    if model.velocity is not None and model.velocity.trend is not None:
        names += [q.name for q in model.velocity.trend.parameters]
    names += [p.inclination.name for p in model.planets if p.inclination is not None]
    names += [model.star.mass.name, model.star.radius.name]
    names += [q.name for p in model.transiting for q in (p.radius_ratio, p.impact)]
    return [n for n in dict.fromkeys(names) if np.ndim(values[n]) and np.ptp(values[n]) > 0]


def coordinates(values, names, uninformed=()):
    """:class:`Coordinates` of ``names`` from their posterior samples in ``values``."""
    x = np.column_stack([values[n] for n in names])
    centre, scale = x.mean(axis=0), x.std(axis=0)
    z = (x - centre) / scale
    informed = np.array([n not in uninformed for n in names] + [False])
    precision = np.zeros((len(names) + 1,) * 2)
    cov = np.atleast_2d(np.cov(z[:, informed[:-1]], rowvar=False))
    precision[np.ix_(informed, informed)] = np.linalg.pinv(
        cov, hermitian=True
    )  # pinv: no information along degenerate directions
    return Coordinates(list(names), centre, scale, z, precision)


@dataclasses.dataclass
class DrawResult:
    """One draw's expected posterior per count and planet.

    ``mass``/``radius``: the draw's true values; per count ``sigma_mass``,
    ``sigma_k``, the expected (mass, radius) posterior ``mean_mr`` and
    ``cov_mr``, and ``p_rocky_reweighted`` (NaN where too few old samples
    keep weight, or for a planet that does not transit).
    """

    mass: dict
    radius: dict
    sigma_mass: dict  # planet -> (counts,)
    sigma_k: dict
    mean_mr: dict  # planet -> (counts, 2)
    cov_mr: dict  # planet -> (counts, 2, 2)
    p_rocky_reweighted: dict


class Reweighting:
    """``p_rocky`` after the new RVs by weighting the run's own samples with the new RVs' likelihood.

    With the model linearised at the truth, the simulated RVs' log-likelihood of an old sample at
    z_j = z_truth + delta_j is b^T delta_j - delta_j^T F delta_j / 2 + const (b = J^T C^-1 eps, F the
    information), the new offset marginalised over a flat prior (Schur complement). This keeps the
    old posterior's own shape (a tail to low masses, the radius as sampled) that a Gaussian loses; it
    is used while the weights keep an effective sample size of ``MIN_EFFECTIVE`` (Kish 1965).

    Parameters
    ----------
    z : ndarray, shape (m, d)
        Old samples in standardised coordinates.
    flags : dict
        Per transiting planet the rocky flag of each of those samples (1, 0, NaN off the grid).
    """

    #: Effective sample size below which the Gaussian verdict is used. # common practice, no published source
    MIN_EFFECTIVE = 200

    def __init__(self, z, flags):
        self.z, self.flags = z, flags

    def p_rocky(self, z_truth, info, score):
        """Per planet the reweighted ``p_rocky`` (NaN when the effective sample size is too small)."""
        f_oo, f_do = info[-1, -1], info[:-1, -1]
        f = info[:-1, :-1] - np.outer(f_do, f_do) / f_oo
        b = score[:-1] - f_do * score[-1] / f_oo
        delta = self.z - z_truth[:-1]
        log_w = delta @ b - 0.5 * np.sum((delta @ f) * delta, axis=1)
        w = np.exp(log_w - log_w.max())
        if w.sum() ** 2 / np.sum(w * w) < self.MIN_EFFECTIVE:
            return dict.fromkeys(self.flags, np.nan)
        out = {}
        for name, flag in self.flags.items():
            ok = np.isfinite(flag)
            out[name] = float(np.sum(w[ok] * flag[ok]) / np.sum(w[ok])) if ok.any() else np.nan
        return out


@dataclasses.dataclass
class Forecaster:
    """Everything a draw needs: the model, the values and coordinates of the run, the new RVs' noise and schedule."""

    model: object
    values: dict
    coords: Coordinates
    noise: object  # fisher.PlannedRvNoise
    window_bjd: tuple
    per_night: int
    reweighting: Reweighting = None

    def _truth(self, row):
        truth = {n: (float(v[row]) if np.ndim(v) else v) for n, v in self.values.items()}
        now = {p.name: planet_quantities(p, self.model.star, truth) for p in self.model.planets}
        result = DrawResult(
            {n: float(q["mass_earth"]) for n, q in now.items()},
            {n: float(q.get("radius_earth", np.nan)) for n, q in now.items()},
            *({n: [] for n in now} for _ in range(5)),
        )
        return truth, result

    def draw(self, row, counts, rng):
        """The expected posterior after each of ``counts`` new RVs, with the run's sample ``row`` as the truth."""
        names, scale, d = self.coords.names, self.coords.scale, len(self.coords.names)
        truth, out = self._truth(row)
        moved = fisher.perturbed(truth, names, scale)
        times = observation_times(rng, max(counts), self.window_bjd, self.per_night)
        white = fisher.whitened(fisher.velocity_jacobian(self.model, moved, names, times), self.noise.covariance(times))
        u = rng.standard_normal(times.size)
        z_truth = np.append(self.coords.z[row], 0.0)
        grads = {p.name: fisher.mass_radius_gradients(p, self.model.star, moved, names) for p in self.model.planets}
        k_index = {
            p.name: names.index(p.amplitude.name) if p.amplitude.name in names else None for p in self.model.planets
        }
        for n_rvs in counts:
            info, score = white[:n_rvs].T @ white[:n_rvs], white[:n_rvs].T @ u[:n_rvs]
            sigma = np.linalg.inv(self.coords.precision + info)
            shift = sigma @ (self.coords.precision @ -z_truth + score)
            reweighted = {} if self.reweighting is None else self.reweighting.p_rocky(z_truth, info, score)
            for name, (g_m, g_r) in grads.items():
                g = np.vstack([g_m, np.zeros(d + 1) if g_r is None else g_r])
                out.cov_mr[name].append(g @ sigma @ g.T)
                out.sigma_mass[name].append(np.sqrt(out.cov_mr[name][-1][0, 0]))
                k = k_index[name]
                out.sigma_k[name].append(np.nan if k is None else np.sqrt(sigma[k, k]) * scale[k])
                out.mean_mr[name].append(np.array([out.mass[name], out.radius[name]]) + g @ shift)
                out.p_rocky_reweighted[name].append(reweighted.get(name, np.nan))
        return out


def p_rocky(composition, mean_mr, cov_mr, normals):
    """The composition verdict's ``p_rocky`` for (mass, radius) = mean + chol(cov) x ``normals`` (NaN off the grid)."""
    jitter = 1e-12 * np.eye(2) * max(np.trace(cov_mr), 1e-300)
    samples = mean_mr + normals @ np.linalg.cholesky(cov_mr + jitter).T
    value = composition(samples[:, 0], samples[:, 1])["p_rocky"]
    return np.nan if value is None else value
