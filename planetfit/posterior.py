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

from .models.baseline import BASELINES
from .models.geometry import CIRCULAR_OMEGA_RAD, eccentricity_omega, solve_orbit
from .models.gp import GaussianProcessNoise, Matern32Kernel, RotationKernel, SHOKernel
from .models.keplerian import radial_velocity_ms
from .models.noise import WhiteNoise
from .models.transit import TransitLightCurve, quadratic_coefficients
from .models.trend import LinearDecorrelation, PolynomialTrend
from .priors import Prior
from .units import PPM

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


def build_layout(config):
    """The parameter layout of a config (fixed and free)."""
    entries = [("star.mass_msun", config.star.mass_msun), ("star.radius_rsun", config.star.radius_rsun)]
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
        if d.baseline == "gp":
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


def photometry_noise(cfg, data, priors):
    """The noise model a photometric dataset's config chooses: white, or white + a celerite2 GP."""
    jitter = f"{cfg.name}.jitter_ppm"
    if cfg.baseline != "gp":
        return WhiteNoise(data.error, jitter, PPM, _fixed_value(priors[jitter]))
    sigma, rho = f"{cfg.name}.gp_sigma_ppm", f"{cfg.name}.gp_rho_days"
    kernel = (SHOKernel(sigma, rho, f"{cfg.name}.gp_quality", PPM) if cfg.gp_kernel == "sho"
              else Matern32Kernel(sigma, rho, PPM))
    return GaussianProcessNoise(data.time, data.error, kernel, [jitter], PPM)


def velocity_noise(config, velocities, priors):
    """Noise models of the RVs as (index into the concatenated residuals, model) pairs.

    Without ``rv_activity`` each spectrograph has its own white noise; with
    it, one rotation GP runs over all spectrographs' points in time order,
    with per-spectrograph amplitudes and jitters.
    """
    sizes = np.cumsum([0] + [d.time.size for d in velocities])
    if config.rv_activity is None:
        return [(slice(a, b), WhiteNoise(d.error, f"{d.name}.jitter_ms", 1.0, _fixed_value(priors[f"{d.name}.jitter_ms"])))
                for a, b, d in zip(sizes[:-1], sizes[1:], velocities)]
    times = np.concatenate([d.time for d in velocities])
    order = np.argsort(times, kind="stable")
    groups = np.concatenate([np.full(d.time.size, i) for i, d in enumerate(velocities)])[order]
    error = np.concatenate([d.error for d in velocities])[order]
    kernel = RotationKernel("rv_activity.rotation_period_days", "rv_activity.quality",
                            "rv_activity.quality_difference", "rv_activity.mix")
    gp = GaussianProcessNoise(times[order], error, kernel, [f"{d.name}.jitter_ms" for d in velocities], 1.0,
                              groups=groups, amplitude_names=[f"{d.name}.activity_amplitude_ms" for d in velocities])
    return [(order, gp)]


def planet_orbit(values, planet):
    """Orbit of one planet from parameter values (scalars or arrays).

    Returns
    -------
    dict
        ``e``, ``omega_rad`` and, for transiting planets, ``a_over_rstar``,
        ``cos_i``, ``mass_kg``.
    """
    n = planet.name
    if planet.orbit == "eccentric":
        e, w = eccentricity_omega(values[f"{n}.sqrt_e_cos_w"], values[f"{n}.sqrt_e_sin_w"])
    else:
        e, w = 0.0, CIRCULAR_OMEGA_RAD
    out = {"e": e, "omega_rad": w}
    if planet.transits:
        a_r, cos_i, mp = solve_orbit(values[f"{n}.period_days"], values[f"{n}.rv_amplitude_ms"],
                                     values[f"{n}.impact"], e, w,
                                     values["star.mass_msun"], values["star.radius_rsun"])
        out.update(a_over_rstar=a_r, cos_i=cos_i, mass_kg=mp)
    return out


def orbit_is_physical(values, planet, orbit):
    """Whether one planet's orbit is allowed: e below its cap and, for a transiting
    planet, a positive radius ratio, a transit (b < 1 + k) and periastron outside the star."""
    if orbit["e"] >= planet.eccentricity_max:
        return False
    if not planet.transits:
        return True
    k = values[f"{planet.name}.radius_ratio"]
    if k <= 0 or values[f"{planet.name}.impact"] >= 1 + k or not abs(orbit["cos_i"]) < 1:
        return False
    return orbit["a_over_rstar"] * (1 - orbit["e"]) > 1 + k


def _fixed_value(prior):
    return prior.value if prior.fixed else None


class JointPosterior:
    """Log-probability of the joint transit + RV model.

    Parameters
    ----------
    config : Config
    photometry : list of Photometry
    velocities : list of Velocities

    Notes
    -----
    Callable on one parameter vector; returns ``-inf`` outside the prior
    support or for unphysical orbits (no transit for a transiting planet,
    periastron inside the star, e above the planet's cap).
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
        self.dilution_names = [f"{c.name}.dilution" if has_dilution(c) else None for c in config.photometry]
        self.decorrelations = [
            LinearDecorrelation([decorrelation_name(d.name, col) for col in c.decorrelate],
                                [d.indicators[col] for col in c.decorrelate])
            for c, d in zip(config.velocities, velocities)]
        self.trend = None
        if config.rv_trend is not None:
            reference = config.rv_trend.reference_bjd
            if reference is None:
                times = np.concatenate([d.time for d in velocities])
                reference = 0.5 * (times.min() + times.max())
            names = ["rv_trend.slope_ms_per_day"] + (["rv_trend.curvature_ms_per_day2"]
                                                     if config.rv_trend.kind == "quadratic" else [])
            self.trend = PolynomialTrend(names, reference)
        self.velocity_noise = velocity_noise(config, velocities, priors) if velocities else []

    def __call__(self, theta):
        lp = self.layout.log_prior(theta)
        if not math.isfinite(lp):
            return -math.inf
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            # Unphysical corners (e -> 1, grazing geometry) are rejected below, not warned about.
            ll = self.log_likelihood(self.layout.values(theta))
        return lp + ll if math.isfinite(ll) else -math.inf

    def orbits(self, values):
        """Per planet orbit dict, or None if any orbit is unphysical."""
        out = {}
        for p in self.planets:
            o = planet_orbit(values, p)
            if not orbit_is_physical(values, p, o):
                return None
            out[p.name] = o
        return out

    def photometry_model(self, values, orbits, i, planets=None):
        """Model flux of photometric dataset ``i``, with the transits of ``planets`` (default: all)."""
        d = self.photometry[i]
        u1, u2 = quadratic_coefficients(values[f"{d.band}.limb_darkening_q1"], values[f"{d.band}.limb_darkening_q2"])
        deficit = np.zeros(d.time.size)
        for p, lc in zip(self.transiting, self.light_curves[i]):
            if planets is not None and p.name not in planets:
                continue
            o = orbits[p.name]
            n = p.name
            per, t0, k = values[f"{n}.period_days"], values[f"{n}.transit_bjd"], values[f"{n}.radius_ratio"]
            sin_i = math.sqrt(1 - o["cos_i"] ** 2)
            idx = lc.window(per, t0, lc.half_window_days(per, o["a_over_rstar"], k, sin_i, o["e"], o["omega_rad"]))
            if idx.size:
                f = lc.flux(idx, per, t0, o["a_over_rstar"], math.acos(o["cos_i"]), o["e"], o["omega_rad"], k, u1, u2)
                deficit[idx] += 1 - f
        dilution = values[self.dilution_names[i]] if self.dilution_names[i] else 0.0
        return self.baselines[i].flux(values) * (1 - (1 - dilution) * deficit)

    def trend_ms(self, values, times):
        """The RV trend (m/s) at ``times`` (zeros without ``rv_trend``)."""
        return np.zeros(np.size(times)) if self.trend is None else self.trend.velocity_ms(values, times)

    def velocity_model(self, values, orbits, i, times=None):
        """Model RV (m/s, without the instrument offset) of spectrograph ``i``.

        At the spectrograph's times: every planet's Keplerian + trend +
        activity decorrelation. At other ``times``: Keplerians + trend.
        """
        t = self.velocities[i].time if times is None else times
        model = self.trend_ms(values, t)
        for p in self.planets:
            o = orbits[p.name]
            n = p.name
            model += radial_velocity_ms(t, values[f"{n}.period_days"], values[f"{n}.transit_bjd"],
                                        o["e"], o["omega_rad"], values[f"{n}.rv_amplitude_ms"])
        if times is None:
            model += self.decorrelations[i].velocity_ms(values)
        return model

    def velocity_residuals(self, values, orbits):
        """RVs minus offsets and models, all spectrographs concatenated."""
        return np.concatenate([d.rv - values[f"{d.name}.offset_ms"] - self.velocity_model(values, orbits, i)
                               for i, d in enumerate(self.velocities)])

    def photometry_noise_prediction(self, values, orbits, i):
        """The noise model's prediction of dataset ``i``'s residuals (the GP's variability; zeros if white)."""
        d = self.photometry[i]
        return self.photometry_noise[i].predict(d.flux - self.photometry_model(values, orbits, i), values)

    def velocity_noise_prediction(self, values, orbits):
        """Per spectrograph, the noise model's prediction of its residuals (the activity GP; zeros if white)."""
        resid = self.velocity_residuals(values, orbits)
        out = np.zeros(resid.size)
        for index, noise in self.velocity_noise:
            out[index] = noise.predict(resid[index], values)
        sizes = np.cumsum([d.time.size for d in self.velocities])[:-1]
        return np.split(out, sizes)

    def log_likelihood(self, values):
        """Gaussian log-likelihood of all datasets for one set of parameter values."""
        orbits = self.orbits(values)
        if orbits is None:
            return -math.inf
        total = 0.0
        for i, (d, noise) in enumerate(zip(self.photometry, self.photometry_noise)):
            total += noise.log_likelihood(d.flux - self.photometry_model(values, orbits, i), values)
        if self.velocities:
            resid = self.velocity_residuals(values, orbits)
            for index, noise in self.velocity_noise:
                total += noise.log_likelihood(resid[index], values)
        return total
