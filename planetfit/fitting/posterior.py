"""Parameter vector layout and the joint log-probability (the hot path).

The sampled vector holds, in order: the star's mass and radius; per planet
its period, transit (conjunction) time, radius ratio and impact parameter
(transiting planets only), RV semi-amplitude and, for eccentric orbits,
sqrt(e) cos w and sqrt(e) sin w; per photometric band Kipping's q1, q2; per
photometric dataset its baseline (flux level, slope), jitter, dilution and
Gaussian-process hyperparameters; per spectrograph its offset, jitter,
activity-indicator coefficients and activity amplitude; then the RV trend
and the shared RV activity process. Parameters with a fixed value are held
out of the vector.

Each dataset's model reads as the sum of its parts: photometry is
baseline x (1 - (1 - dilution) x the summed transit deficits of every
planet), RVs are every planet's Keplerian + trend + activity decorrelation
+ offset; what is left is scored by the dataset's noise model (white, or a
celerite2 Gaussian process).
a/R* follows from Kepler's third law with the sampled masses and period,
and the inclination from the impact parameter, so the transit shape
constrains the stellar density and stellar uncertainties propagate.
"""

import math

import numpy as np

from planetfit.fitting.models.baseline import BASELINES
from planetfit.core.geometry import CIRCULAR_OMEGA_RAD, eccentricity_omega, solve_orbit
from planetfit.fitting.models.gp import GaussianProcessNoise, Matern32Kernel, RotationKernel, SHOKernel
from planetfit.fitting.models.keplerian import periastron_bjd, radial_velocity_ms
from planetfit.fitting.models.noise import SparseResidualWhiteNoise, WhiteNoise
from planetfit.fitting.models.transit import TransitLightCurve, quadratic_coefficients
from planetfit.fitting.models.trend import LinearDecorrelation, PolynomialTrend
from planetfit.inputs.priors import Prior
from planetfit.core.units import PPM

class ParameterLayout:
    """Names and priors of every model parameter, fixed or free.

    The sampled vector ``theta`` holds each free parameter in its prior's
    sampler coordinate (``ln x`` for log-uniform priors, else ``x``);
    :meth:`values` converts to physical values.

    Parameters
    ----------
    entries : list of (name, Prior)
    """

    def __init__(self, entries):
        self.all_names = [n for n, _ in entries]
        self.priors = dict(entries)
        self.free = [n for n, p in entries if not p.fixed]
        self.fixed = {n: p.value for n, p in entries if p.fixed}
        self._free_priors = [self.priors[n] for n in self.free]

    @property
    def ndim(self):
        return len(self.free)

    @property
    def sampled_labels(self):
        """Names of the sampler coordinates (``ln(name)`` where log-transformed)."""
        return [f"ln({n})" if type(p).to_sampler is not Prior.to_sampler else n
                for n, p in zip(self.free, self._free_priors)]

    def values(self, theta):
        """Dict of every parameter's physical value (fixed ones filled in); works on (n, ndim) arrays too."""
        out = dict(self.fixed)
        columns = theta.T if isinstance(theta, np.ndarray) and theta.ndim > 1 else theta
        for name, prior, y in zip(self.free, self._free_priors, columns):
            out[name] = prior.from_sampler(y)
        return out

    def to_sampler(self, physical):
        """Sampler coordinates of a vector (or (n, ndim) array) of physical values."""
        physical = np.asarray(physical, dtype=float)
        return np.stack([p.to_sampler(x) for p, x in zip(self._free_priors, physical.T)], axis=-1)

    def log_prior(self, theta):
        total = 0.0
        for prior, y in zip(self._free_priors, theta):
            total += prior.log_density_sampler(y)
        return total

    def sample_prior(self, rng, size):
        """Draws from the prior in sampler coordinates, shape (size, ndim)."""
        return self.to_sampler(np.column_stack([p.sample(rng, size) for p in self._free_priors]))


def prior_only_parameters(config):
    """(name, prior) of the parameters no likelihood term uses: drawn from their priors, never sampled.

    Without a transiting planet the star's mass and radius enter no model
    (they scale only the derived masses and sizes); a non-transiting
    planet's inclination prior turns its minimum mass into a true mass.
    """
    out = []
    if not any(p.transits for p in config.planets):
        out += [("star.mass_msun", config.star.mass_msun), ("star.radius_rsun", config.star.radius_rsun)]
    out += [(f"{p.name}.inclination_deg", p.inclination_deg) for p in config.planets
            if not p.transits and p.inclination_deg is not None]
    return out


def build_layout(config):
    """The parameter layout of a config (fixed and free); :func:`prior_only_parameters` are left out."""
    entries = []
    if any(p.transits for p in config.planets):
        entries += [("star.mass_msun", config.star.mass_msun), ("star.radius_rsun", config.star.radius_rsun)]
    for p in config.planets:
        entries += [(f"{p.name}.period_days", p.period_days), (f"{p.name}.transit_bjd", p.transit_bjd)]
        if p.transits:
            entries += [(f"{p.name}.radius_ratio", p.radius_ratio), (f"{p.name}.impact", p.impact)]
        entries.append((f"{p.name}.rv_amplitude_ms", p.rv_amplitude_ms))
        if p.orbit == "eccentric":
            entries += [(f"{p.name}.sqrt_e_cos_w", p.sqrt_e_cos_w), (f"{p.name}.sqrt_e_sin_w", p.sqrt_e_sin_w)]
    bands = {}
    for d in config.photometry:
        bands.setdefault(d.band, d)
    for band, d in bands.items():
        entries += [(f"{band}.limb_darkening_q1", d.q1), (f"{band}.limb_darkening_q2", d.q2)]
    for d in config.photometry:
        entries += BASELINES[d.baseline].entries(d)
        entries.append((f"{d.name}.jitter_ppm", d.jitter_ppm))
        if has_dilution(d):
            entries.append((f"{d.name}.dilution", d.dilution))
        if d.baseline == "gp" and d.gp_shared_with is None:
            entries += [(f"{d.name}.gp_sigma_ppm", d.gp_sigma_ppm), (f"{d.name}.gp_rho_days", d.gp_rho_days)]
            if d.gp_kernel == "sho":
                entries.append((f"{d.name}.gp_quality", d.gp_quality))
    for d in config.velocities:
        entries += [(f"{d.name}.offset_ms", d.offset_ms), (f"{d.name}.jitter_ms", d.jitter_ms)]
        entries += [(decorrelation_name(d.name, col), prior) for col, prior in d.decorrelate.items()]
        if config.rv_activity is not None:
            entries.append((f"{d.name}.activity_amplitude_ms", d.activity_amplitude_ms))
    trend = config.rv_trend
    if trend is not None:
        entries.append(("rv_trend.slope_ms_per_day", trend.slope_ms_per_day))
        if trend.kind == "quadratic":
            entries.append(("rv_trend.curvature_ms_per_day2", trend.curvature_ms_per_day2))
    act = config.rv_activity
    if act is not None:
        entries += [("rv_activity.rotation_period_days", act.rotation_period_days), ("rv_activity.quality", act.quality),
                    ("rv_activity.quality_difference", act.quality_difference), ("rv_activity.mix", act.mix)]
    return ParameterLayout(entries)


def has_dilution(cfg):
    """True unless the dataset's contaminating flux fraction is fixed at zero (the default)."""
    return not (cfg.dilution.fixed and cfg.dilution.value == 0.0)


def decorrelation_name(dataset, column):
    """Parameter name of a spectrograph's coefficient for one activity indicator (m/s per unit)."""
    return f"{dataset} {column}.activity_coefficient"


def _fixed_values(priors, names):
    """The values of parameters ``names`` if every one is fixed, else None."""
    chosen = [priors[n] for n in names]
    return [p.value for p in chosen] if all(p.fixed for p in chosen) else None


def photometry_noise(cfg, data, priors):
    """The noise model a photometric dataset's config chooses: white, or white + a celerite2 GP.

    With ``gp_shared_with`` the GP's hyperparameters are the named dataset's.
    """
    jitter = f"{cfg.name}.jitter_ppm"
    if cfg.baseline != "gp":
        return WhiteNoise(data.error, [jitter], PPM, fixed_jitters=_fixed_values(priors, [jitter]))
    owner = cfg.gp_shared_with or cfg.name
    sigma, rho = f"{owner}.gp_sigma_ppm", f"{owner}.gp_rho_days"
    kernel = (SHOKernel(sigma, rho, f"{owner}.gp_quality", PPM) if cfg.gp_kernel == "sho"
              else Matern32Kernel(sigma, rho, PPM))
    return GaussianProcessNoise(data.time, data.error, kernel, [jitter], PPM)


def velocity_noise(config, velocities, priors, times, groups):
    """The noise model of all RVs, concatenated in spectrograph order, and the order it wants them in.

    Without ``rv_activity``: white noise with a jitter per spectrograph. With
    it, one rotation GP runs over all spectrographs' points in time order,
    with per-spectrograph amplitudes and jitters. ``times`` and ``groups``
    (the spectrograph of every point) are the concatenated ones.

    Returns
    -------
    (index, noise)
        ``noise`` scores ``residuals[index]``.
    """
    error = np.concatenate([d.error for d in velocities])
    jitters = [f"{d.name}.jitter_ms" for d in velocities]
    if config.rv_activity is None:
        return slice(None), WhiteNoise(error, jitters, 1.0, groups, fixed_jitters=_fixed_values(priors, jitters))
    order = np.argsort(times, kind="stable")
    kernel = RotationKernel("rv_activity.rotation_period_days", "rv_activity.quality",
                            "rv_activity.quality_difference", "rv_activity.mix")
    gp = GaussianProcessNoise(times[order], error[order], kernel, jitters, 1.0, groups=groups[order],
                              amplitude_names=[f"{d.name}.activity_amplitude_ms" for d in velocities])
    return order, gp


def planet_orbit(values, planet):
    """Orbit of one planet from parameter values (scalars or arrays).

    Returns
    -------
    dict
        ``e``, ``omega_rad``, ``periastron_bjd`` and, for transiting planets,
        ``a_over_rstar``, ``cos_i``, ``mass_kg``.
    """
    n = planet.name
    if planet.orbit == "eccentric":
        e, w = eccentricity_omega(values[f"{n}.sqrt_e_cos_w"], values[f"{n}.sqrt_e_sin_w"])
    else:
        e, w = 0.0, CIRCULAR_OMEGA_RAD
    out = {"e": e, "omega_rad": w,
           "periastron_bjd": periastron_bjd(values[f"{n}.transit_bjd"], values[f"{n}.period_days"], e, w)}
    if planet.transits:
        a_r, cos_i, mp = solve_orbit(values[f"{n}.period_days"], values[f"{n}.rv_amplitude_ms"],
                                     values[f"{n}.impact"], e, w,
                                     values["star.mass_msun"], values["star.radius_rsun"])
        out.update(a_over_rstar=a_r, cos_i=cos_i, mass_kg=mp)
    return out


def orbit_is_physical(values, planet, orbit):
    """Whether one planet's orbit is allowed (a boolean, or a boolean array for array values).

    e below the planet's cap and, for a transiting planet, a positive radius
    ratio, a transit (b < 1 + k) and periastron outside the star.
    """
    ok = np.asarray(orbit["e"]) < planet.eccentricity_max
    if not planet.transits:
        return ok
    k = values[f"{planet.name}.radius_ratio"]
    with np.errstate(invalid="ignore"):
        return (ok & (k > 0) & (values[f"{planet.name}.impact"] < 1 + k) & (np.abs(orbit["cos_i"]) < 1)
                & (orbit["a_over_rstar"] * (1 - orbit["e"]) > 1 + k))


def _rows(columns, n):
    """Dicts of Python floats, one per row, from a dict of length-``n`` arrays and scalars."""
    keys = list(columns)
    table = np.empty((n, len(keys)))
    for j, key in enumerate(keys):
        table[:, j] = columns[key]
    return [dict(zip(keys, row)) for row in table.tolist()]


class JointPosterior:
    """Log-probability of the joint transit + RV model.

    Parameters
    ----------
    config : Config
    photometry : list of Photometry
    velocities : list of Velocities

    Notes
    -----
    Callable on one parameter vector, and :meth:`log_prob_many` on a batch
    (the orbits of a batch are solved in one vectorised pass). Returns
    ``-inf`` outside the prior support or for unphysical orbits (no transit
    for a transiting planet, periastron inside the star, e above the
    planet's cap). Photometry with white noise of fixed jitter is scored in
    time proportional to its in-transit points
    (:class:`~planetfit.fitting.models.noise.SparseResidualWhiteNoise`).
    """

    def __init__(self, config, photometry, velocities):
        self.config = config
        self.layout = build_layout(config)
        self.planets = config.planets
        self.transiting = [p for p in self.planets if p.transits]
        self.photometry = photometry
        self.velocities = velocities
        self.light_curves = [
            [TransitLightCurve(d.time, d.exposure_days, d.supersample) for _ in self.transiting] for d in photometry]
        priors = self.layout.priors
        self.baselines = [BASELINES[c.baseline](c.name, d.time) for c, d in zip(config.photometry, photometry)]
        self.photometry_noise = [photometry_noise(c, d, priors) for c, d in zip(config.photometry, photometry)]
        self.sparse_noise = [
            SparseResidualWhiteNoise(d.flux, b.basis, n) if isinstance(n, WhiteNoise) and n.fixed else None
            for d, b, n in zip(photometry, self.baselines, self.photometry_noise)]
        self.dilution_names = [f"{c.name}.dilution" if has_dilution(c) else None for c in config.photometry]
        self.decorrelations = [
            LinearDecorrelation([decorrelation_name(d.name, col) for col in c.decorrelate],
                                [d.indicators[col] for col in c.decorrelate])
            for c, d in zip(config.velocities, velocities)]
        self.trend = None
        if velocities:
            self.rv_times = np.concatenate([d.time for d in velocities])
            self.rv_observed = np.concatenate([d.rv for d in velocities])
            self.rv_group = np.concatenate([np.full(d.time.size, i) for i, d in enumerate(velocities)])
            self.velocity_noise = velocity_noise(config, velocities, priors, self.rv_times, self.rv_group)
        if config.rv_trend is not None:
            reference = config.rv_trend.reference_bjd
            if reference is None:
                reference = 0.5 * (self.rv_times.min() + self.rv_times.max())
            names = ["rv_trend.slope_ms_per_day"] + (["rv_trend.curvature_ms_per_day2"]
                                                     if config.rv_trend.kind == "quadratic" else [])
            self.trend = PolynomialTrend(names, reference)

    def __call__(self, theta):
        return float(self.log_prob_many(np.reshape(theta, (1, -1)))[0])

    def log_prob_many(self, thetas):
        """Log-probabilities of an (n, ndim) array of sampler vectors, shape (n,)."""
        thetas = np.asarray(thetas, dtype=float)
        out = np.full(len(thetas), -math.inf)
        lp = np.array([self.layout.log_prior(t) for t in thetas])
        rows = np.flatnonzero(np.isfinite(lp))
        if rows.size == 0:
            return out
        # Unphysical corners (e -> 1, grazing geometry) are rejected, not warned about.
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            values = self.layout.values(thetas[rows])
            orbits = {p.name: planet_orbit(values, p) for p in self.planets}
            physical = np.ones(rows.size, dtype=bool)
            for p in self.planets:
                physical &= orbit_is_physical(values, p, orbits[p.name])
            good = np.flatnonzero(physical)
            if good.size == 0:
                return out
            all_values = _rows(values, rows.size)
            all_orbits = {name: _rows(orbit, rows.size) for name, orbit in orbits.items()}
            ll = self.log_likelihood_many([all_values[j] for j in good],
                                          [{name: o[j] for name, o in all_orbits.items()} for j in good])
        keep = rows[good]
        out[keep] = np.where(np.isfinite(ll), lp[keep] + ll, -math.inf)
        return out

    def orbits(self, values):
        """Per planet orbit dict for one set of parameter values, or None if any orbit is unphysical."""
        out = {}
        for p in self.planets:
            o = planet_orbit(values, p)
            if not orbit_is_physical(values, p, o):
                return None
            out[p.name] = o
        return out

    def transit_deficit(self, values, orbits, i, planets=None):
        """Summed flux deficit of the transits of ``planets`` (default: all) in photometric dataset ``i``.

        Returns
        -------
        index, deficit : ndarray
            The sorted points inside any planet's transit window and the
            deficit 1 - flux there (zero everywhere else).
        """
        d = self.photometry[i]
        u1, u2 = quadratic_coefficients(values[f"{d.band}.limb_darkening_q1"], values[f"{d.band}.limb_darkening_q2"])
        windows = []
        for p, lc in zip(self.transiting, self.light_curves[i]):
            if planets is not None and p.name not in planets:
                continue
            o, n = orbits[p.name], p.name
            per, t0, k = values[f"{n}.period_days"], values[f"{n}.transit_bjd"], values[f"{n}.radius_ratio"]
            sin_i = math.sqrt(1 - o["cos_i"] ** 2)
            idx = lc.window(per, t0, lc.half_window_days(per, o["a_over_rstar"], k, sin_i, o["e"], o["omega_rad"]))
            if idx.size:
                f = lc.flux(idx, per, t0, o["a_over_rstar"], math.acos(o["cos_i"]), o["e"], o["omega_rad"], k, u1, u2)
                windows.append((idx, 1 - f))
        if len(windows) == 1:
            return windows[0]
        index = np.unique(np.concatenate([w[0] for w in windows])) if windows else np.empty(0, dtype=np.intp)
        deficit = np.zeros(index.size)
        for idx, part in windows:
            deficit[index.searchsorted(idx)] += part
        return index, deficit

    def photometry_model(self, values, orbits, i, planets=None):
        """Model flux of photometric dataset ``i``, with the transits of ``planets`` (default: all)."""
        index, part = self.transit_deficit(values, orbits, i, planets)
        deficit = np.zeros(self.photometry[i].time.size)
        deficit[index] = part
        dilution = values[self.dilution_names[i]] if self.dilution_names[i] else 0.0
        return self.baselines[i].flux(values) * (1 - (1 - dilution) * deficit)

    def photometry_log_likelihoods(self, values_list, orbits_list, i):
        """Log-likelihood of photometric dataset ``i`` for each set of values and orbits, shape (n,)."""
        sparse = self.sparse_noise[i]
        if sparse is None:
            d = self.photometry[i]
            residuals = np.array([d.flux - self.photometry_model(v, o, i) for v, o in zip(values_list, orbits_list)])
            return self.photometry_noise[i].log_likelihood_many(residuals, values_list)
        indices, deficits = [], []
        for v, o in zip(values_list, orbits_list):
            index, deficit = self.transit_deficit(v, o, i)
            indices.append(index)
            deficits.append((1 - v[self.dilution_names[i]]) * deficit if self.dilution_names[i] else deficit)
        coefficients = [self.baselines[i].coefficients(v) for v in values_list]
        return sparse.log_likelihood_many(coefficients, indices, deficits)

    def trend_ms(self, values, times):
        """The RV trend (m/s) at ``times`` (zeros without ``rv_trend``)."""
        return np.zeros(np.size(times)) if self.trend is None else self.trend.velocity_ms(values, times)

    def keplerians_ms(self, values, orbits, times):
        """Sum of every planet's Keplerian RV (m/s) at ``times``."""
        model = np.zeros(np.size(times))
        for p in self.planets:
            o, n = orbits[p.name], p.name
            model += radial_velocity_ms(times, values[f"{n}.period_days"], o["periastron_bjd"],
                                        o["e"], o["omega_rad"], values[f"{n}.rv_amplitude_ms"])
        return model

    def velocity_model(self, values, orbits, i, times=None):
        """Model RV (m/s, without the instrument offset) of spectrograph ``i``.

        At the spectrograph's times: every planet's Keplerian + trend +
        activity decorrelation. At other ``times``: Keplerians + trend.
        """
        t = self.velocities[i].time if times is None else times
        model = self.keplerians_ms(values, orbits, t) + self.trend_ms(values, t)
        if times is None:
            model += self.decorrelations[i].velocity_ms(values)
        return model

    def velocity_residuals(self, values, orbits):
        """RVs minus offsets and models, all spectrographs concatenated."""
        t = self.rv_times
        offsets = np.array([values[f"{d.name}.offset_ms"] for d in self.velocities])[self.rv_group]
        resid = self.rv_observed - offsets - self.keplerians_ms(values, orbits, t)
        if self.trend is not None:
            resid -= self.trend.velocity_ms(values, t)
        if any(dec.names for dec in self.decorrelations):
            resid -= np.concatenate([np.broadcast_to(dec.velocity_ms(values), d.time.shape)
                                     for dec, d in zip(self.decorrelations, self.velocities)])
        return resid

    def photometry_noise_prediction(self, values, orbits, i):
        """The noise model's prediction of dataset ``i``'s residuals (the GP's variability; zeros if white)."""
        d = self.photometry[i]
        return self.photometry_noise[i].predict(d.flux - self.photometry_model(values, orbits, i), values)

    def velocity_noise_prediction(self, values, orbits):
        """Per spectrograph, the noise model's prediction of its residuals (the activity GP; zeros if white)."""
        resid = self.velocity_residuals(values, orbits)
        index, noise = self.velocity_noise
        out = np.zeros(resid.size)
        out[index] = noise.predict(resid[index], values)
        return np.split(out, np.cumsum([d.time.size for d in self.velocities])[:-1])

    def activity_prediction(self, values, orbits, times):
        """The RV activity process at ``times`` given the data: (mean, sd) per spectrograph (m/s), or None.

        The shared process has unit amplitude; each spectrograph sees it times
        its own ``activity_amplitude_ms``.
        """
        if self.config.rv_activity is None:
            return None
        index, noise = self.velocity_noise
        mean, sd = noise.predict(self.velocity_residuals(values, orbits)[index], values, times=times, return_sd=True)
        return [(values[f"{d.name}.activity_amplitude_ms"] * mean, values[f"{d.name}.activity_amplitude_ms"] * sd)
                for d in self.velocities]

    def log_likelihood_many(self, values_list, orbits_list):
        """Gaussian log-likelihood of all datasets for each set of parameter values and their orbits."""
        total = np.zeros(len(values_list))
        for i in range(len(self.photometry)):
            total += self.photometry_log_likelihoods(values_list, orbits_list, i)
        if self.velocities:
            index, noise = self.velocity_noise
            residuals = np.array([self.velocity_residuals(v, o)[index] for v, o in zip(values_list, orbits_list)])
            total += noise.log_likelihood_many(residuals, values_list)
        return total
