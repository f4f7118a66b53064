"""Assembling the model of a config from its components: parameters declared once, structures built once.

:func:`build_model` turns the validated config and the data into the star,
the planets, each band's limb darkening, one likelihood per photometric
dataset and one for all RVs, and the :class:`ParameterLayout` of every
parameter the likelihoods use (in a fixed order: star, planets, bands,
photometric datasets, spectrographs, RV trend, RV activity). Parameters
no likelihood uses are ``prior_only``: drawn from their priors after the
fit, never sampled. Linear parameters with a normal or uniform prior are
marginalised in their likelihoods unless the config says
``sampling.linear_parameters: sampled``; ``sampled_layout`` leaves them out.
"""

import dataclasses

import numpy as np

from planetfit.core.units import PPM
from planetfit.fitting.components import exposure
from planetfit.fitting.components.baselines import BASELINES
from planetfit.fitting.components.gp import KERNELS, GaussianProcessNoise, RotationKernel
from planetfit.fitting.components.light import PlanetLight, PlanetLightTerm
from planetfit.fitting.components.noise import SumsOfSquares, WhiteNoise
from planetfit.fitting.components.photometry import DILUTIONS, JITTERS
from planetfit.fitting.components.planets import Planet, Star
from planetfit.fitting.components.registry import component_for
from planetfit.fitting.components.stability import STABILITY_PRIORS, HillStabilityPrior
from planetfit.fitting.components.timing import individual_transit_times
from planetfit.fitting.components.transit import LIMB_DARKENING, TransitLightCurve, TransitTerm
from planetfit.fitting.components.velocity import TRENDS, Spectrograph
from planetfit.fitting.likelihoods import PhotometryLikelihood, SummedPhotometryLikelihood, VelocityLikelihood
from planetfit.fitting.linear import marginalisable
from planetfit.fitting.parameters import ParameterLayout
from planetfit.inputs import schema
from planetfit.inputs.bands import band_of


@dataclasses.dataclass
class Model:
    """Every component of a config's model, its likelihoods and its parameter layout."""

    star: Star
    planets: list
    bands: dict  # band name -> limb-darkening component
    photometry: list  # one PhotometryLikelihood per photometric dataset
    velocity: VelocityLikelihood  # all RVs, or None
    layout: ParameterLayout
    prior_only: list  # Parameters drawn from their priors, never sampled
    exposures: dict  # photometric dataset -> its sub-exposure choice (supersample, error_ppm, warning)
    warnings: list  # of building the model (too few sub-exposures)
    lights: dict = dataclasses.field(default_factory=dict)  # (band, planet name) -> PlanetLight
    sampled_layout: ParameterLayout = None  # ``layout`` without the linear parameters marginalised analytically
    stability: HillStabilityPrior = None  # the prior that the system be Hill stable, or None

    @property
    def likelihoods(self):
        """Every likelihood, photometry first."""
        return self.photometry + ([self.velocity] if self.velocity is not None else [])

    @property
    def transiting(self):
        return [p for p in self.planets if p.transits]


def _light_curve(config, block, data, limb_darkening):
    """The dataset's transit light curve (times and sub-exposures, shared by its planets) and its choice."""
    q = (limb_darkening.q1.prior, limb_darkening.q2.prior)
    sharpest = exposure.sharpest_transits([p for p in config.planets if p.transits], config.star, *q)
    choice = exposure.choose_sampling(
        block.name, data.exposure_days, float(np.median(data.error)), sharpest, block.supersample
    )
    return TransitLightCurve(data.time, data.exposure_days, choice.supersample), choice


def _photometry(block, data, baseline, terms, kernel, owns_kernel):
    """One light curve's likelihood and its own parameters (baseline, jitter, dilution, kernel if it owns it).

    Fixed white noise with sparse terms is scored from sums.
    """
    jitter = component_for(block, JITTERS)(block)
    dilution = component_for(block, DILUTIONS)(block)
    params = baseline.parameters + jitter.parameters + dilution.parameters
    if kernel is not None:
        noise = GaussianProcessNoise(data.time, data.error, kernel, jitter.parameters, PPM)
        return PhotometryLikelihood(data, baseline, terms, dilution.parameter, noise), params + (
            kernel.parameters if owns_kernel else []
        )
    noise = WhiteNoise(data.error, jitter.parameters, PPM)
    if noise.fixed and all(t.sparse for t in terms):
        sums = SumsOfSquares(data.flux, baseline.basis, noise)
        return SummedPhotometryLikelihood(data, baseline, terms, dilution.parameter, noise, sums), params
    return PhotometryLikelihood(data, baseline, terms, dilution.parameter, noise), params


def _kernel(block, kernels):
    """(kernel, owned) of a photometric dataset: its own GP kernel, another dataset's, or (None, False)."""
    if isinstance(block, schema.SharedGP):
        return kernels[block.gp_shared_with], False
    if isinstance(block, tuple(KERNELS)):
        kernels[block.name] = component_for(block, KERNELS)(block)
        return kernels[block.name], True
    return None, False


def _lights(config, planets):
    """The planet's light per (band, planet name), from the dataset of the band that declares it."""
    by_name = {p.name: p for p in planets}
    return {
        (block.band_name, name): PlanetLight(by_name[name], block.band_name, light, band_of(block))
        for block in config.photometry
        for name, light in block.planet_light.items()
    }


def _photometry_models(config, photometry, planets, star, lights):
    """Limb darkening per band; per dataset its likelihood, own parameters and sub-exposure choice."""
    transiting = [p for p in planets if p.transits]
    bands, kernels, out = {}, {}, []
    for block, data in zip(config.photometry, photometry):
        if block.band_name not in bands:
            bands[block.band_name] = component_for(block.limb_darkening, LIMB_DARKENING)(
                block.band_name, block.limb_darkening_q1, block.limb_darkening_q2
            )
        ld = bands[block.band_name]
        curve, choice = _light_curve(config, block, data, ld)
        terms = [TransitTerm(p, curve, ld) for p in transiting]
        terms += [PlanetLightTerm(light, curve, star) for (band, _), light in lights.items() if band == block.band_name]
        baseline = component_for(block, BASELINES)(block, data)
        model, params = _photometry(block, data, baseline, terms, *_kernel(block, kernels))
        out.append((model, params, choice))
    return bands, out


def _velocity_model(config, velocities, planets):
    """The likelihood of every RV, or None without RVs."""
    if not velocities:
        return None
    spectrographs = [Spectrograph(b, d) for b, d in zip(config.velocities, velocities)]
    times = np.concatenate([d.time for d in velocities])
    groups = np.concatenate([np.full(d.time.size, i) for i, d in enumerate(velocities)])
    error = np.concatenate([d.error for d in velocities])
    trend = None if config.rv_trend is None else component_for(config.rv_trend, TRENDS)(config.rv_trend, times)
    jitters = [s.jitter for s in spectrographs]
    if config.rv_activity is None:
        noise, order = WhiteNoise(error, jitters, 1.0, groups), slice(None)
    else:
        order = np.argsort(times, kind="stable")
        noise = GaussianProcessNoise(
            times[order],
            error[order],
            RotationKernel(config.rv_activity),
            jitters,
            1.0,
            groups=groups[order],
            amplitudes=[s.activity_amplitude for s in spectrographs],
        )
    return VelocityLikelihood(velocities, spectrographs, planets, trend, noise, order)


def build_model(config, photometry, velocities):
    """The :class:`Model` of a validated config and its datasets."""
    star = Star(config.star)
    planets = [Planet(b) for b in config.planets]
    for planet, block in zip(planets, config.planets):
        if planet.transits and block.free_transit_times:
            planet.attach_timing(individual_transit_times(config, block, photometry))
    lights = _lights(config, planets)
    for planet in planets:  # the eclipse and phase curve leave b to the transit's shape: b^2 mixes better there
        if planet.transits and any(name == planet.name for _, name in lights):
            planet.sample_impact_squared()
    bands, phot = _photometry_models(config, photometry, planets, star, lights)
    rv = _velocity_model(config, velocities, planets)
    hill = config.dynamics.hill_prior and len(planets) > 1
    stability = component_for(config.dynamics, STABILITY_PRIORS)(planets, star) if hill else None
    # The star enters through a/R* of a transiting planet, or through the masses of a Hill-stability prior.
    transits = any(p.transits for p in planets) or stability is not None
    params = list(star.parameters) if transits else []
    params += [q for p in planets for q in p.parameters]
    params += [q for ld in bands.values() for q in ld.parameters]
    params += [q for light in lights.values() for q in light.parameters]
    params += [q for _, own, _ in phot for q in own]
    if rv is not None:
        params += [q for s in rv.spectrographs for q in s.parameters]
        params += list(rv.trend.parameters) if rv.trend is not None else []
        params += list(rv.noise.kernel.parameters) if config.rv_activity is not None else []
    prior_only = ([] if transits else list(star.parameters)) + [q for p in planets for q in p.prior_only]
    exposures = {m.data.name: c for m, _, c in phot}
    warnings = [c.warning for c in exposures.values() if c.warning]
    layout = ParameterLayout(params)
    marginalised = set()
    for likelihood in [m for m, _, _ in phot] + ([rv] if rv is not None else []):
        own = (
            [q for q in likelihood.linear_parameters if marginalisable(q)] if config.sampling.marginalise_linear else []
        )
        likelihood.marginalise(own)
        marginalised.update(q.name for q in own)
    return Model(
        star,
        planets,
        bands,
        [m for m, _, _ in phot],
        rv,
        layout,
        prior_only,
        exposures,
        warnings,
        lights,
        ParameterLayout(q for q in layout.parameters.values() if q.name not in marginalised),
        stability,
    )
