"""The run-wide blocks: RV trend, RV activity process, climate assumptions, sampling settings."""

import enum
import math
from typing import Annotated, ClassVar, Literal, Optional, Union

from pydantic import BeforeValidator, Field, model_validator

from planetfit.core.units import S_EARTH_W_M2, SIGMA_SB_SI

from ..priors import Fixed, LogUniform, Uniform
from .base import Block, variants
from .fields import Count, Number, PositiveNumber, PriorSpec, fail, positive_prior, prior_within

TRENDS = Literal["none", "linear", "quadratic"]


class NoTrend(Block):
    variant = {"kind": "none"}
    kind: TRENDS = "none"


class LinearTrendBlock(Block):
    """An RV trend c1 (t - t_ref), for a long-period companion; t_ref defaults to the middle of the RVs."""

    variant = {"kind": "linear"}
    kind: TRENDS
    slope_ms_per_day: PriorSpec = Uniform(-1.0, 1.0)
    reference_bjd: Optional[Number] = None


class QuadraticTrendBlock(LinearTrendBlock):
    """c1 (t - t_ref) + c2 (t - t_ref)^2."""

    variant = {"kind": "quadratic"}
    curvature_ms_per_day2: PriorSpec = Uniform(-0.01, 0.01)


def _trend_block(value):
    """``rv_trend: linear`` is short for ``rv_trend: {kind: linear}``."""
    return {"kind": value} if isinstance(value, str) else value


RvTrend = Annotated[variants(NoTrend, LinearTrendBlock, QuadraticTrendBlock), BeforeValidator(_trend_block)]


class RvActivity(Block):
    """Spot activity shared by all spectrographs: a rotation GP (celerite2 RotationTerm), each with its amplitude."""

    rotation_period_days: Annotated[PriorSpec, positive_prior("rotation_period_days")]
    quality: Annotated[PriorSpec, positive_prior("quality")] = LogUniform(0.5, 50.0)
    quality_difference: Annotated[
        PriorSpec, prior_within(0.0, math.inf, "must not be negative.", "use a lower bound of 0 or above.")
    ] = Fixed(1.0)
    mix: Annotated[
        PriorSpec,
        prior_within(
            0.0, 1.0, "the fraction of power at half the period lies in [0, 1].", "keep the prior inside [0, 1]."
        ),
    ] = Fixed(0.5)


#: Heat-redistribution factor f in T_eq^4 = f (1 - A) S / sigma, by name.
REDISTRIBUTION_FACTORS = {"full": 0.25, "dayside": 0.5}
#: f for heat spread over the whole planet (the convention of discovery papers' T_eq).
FULL_REDISTRIBUTION = REDISTRIBUTION_FACTORS["full"]
#: Largest meaningful factor: instantaneous re-radiation, no redistribution (Cowan & Agol 2011, ApJ 729, 54: f = 2/3).
MAX_REDISTRIBUTION_FACTOR = 2.0 / 3.0
#: Earth's global mean surface temperature, K (source: NASA Planetary Fact Sheet, Williams, NSSDCA).
EARTH_SURFACE_TEMP_K = 288.0
#: Bond albedo of the calibration below (the climate block's default).
EARTH_CALIBRATION_ALBEDO = 0.3
#: Default grey infrared optical depth: calibrated to Earth's 288 K, i.e. the tau for which
#: T_s = T_eq (1 + 3 tau / 4)^(1/4) gives 288 K at 1 Earth insolation, Bond albedo 0.3 and full
#: redistribution (about 0.85). No published source gives one grey tau for Earth; this is a calibration.
EARTH_CALIBRATED_TAU = (4.0 / 3.0) * (
    (EARTH_SURFACE_TEMP_K**4 * SIGMA_SB_SI / (FULL_REDISTRIBUTION * (1.0 - EARTH_CALIBRATION_ALBEDO) * S_EARTH_W_M2))
    - 1.0
)
#: Mean molecular weights (atomic mass units) of typical atmospheres, by name.
MEAN_MOLECULAR_WEIGHTS = {"h2_rich": 2.3, "water": 18.0, "n2": 28.0, "co2": 44.0}


class Climate(Block):
    """Assumptions of the climate and atmosphere screening (a Bond albedo, redistribution, grey optical depth)."""

    albedo: Annotated[Number, Field(ge=0, lt=1)] = EARTH_CALIBRATION_ALBEDO
    redistribution: Union[Literal["full", "dayside"], Annotated[Number, Field(gt=0, le=MAX_REDISTRIBUTION_FACTOR)]] = (
        "full"
    )
    tau: Union[
        Annotated[Number, Field(ge=0)],
        Annotated[list[Annotated[Number, Field(ge=0)]], Field(min_length=2, max_length=2)],
    ] = EARTH_CALIBRATED_TAU
    mean_molecular_weight: Union[Literal[tuple(MEAN_MOLECULAR_WEIGHTS)], PositiveNumber] = 2.3

    @model_validator(mode="after")
    def _tau_range_ordered(self):
        if isinstance(self.tau, list) and self.tau[0] > self.tau[1]:
            fail(
                f"the range [{self.tau[0]:g}, {self.tau[1]:g}] is reversed.",
                "write it as [lo, hi] with lo <= hi.",
                key="tau",
            )
        return self

    @property
    def redistribution_factor(self):
        """f: 1/4 for full redistribution, 1/2 for the dayside only, or the given number."""
        return REDISTRIBUTION_FACTORS.get(self.redistribution, self.redistribution)

    @property
    def tau_range(self):
        """(lo, hi) optical depth, drawn uniformly per sample; lo == hi for one value."""
        return tuple(self.tau) if isinstance(self.tau, list) else (self.tau, self.tau)

    @property
    def mu(self):
        """Mean molecular weight, atomic mass units."""
        return MEAN_MOLECULAR_WEIGHTS.get(self.mean_molecular_weight, self.mean_molecular_weight)


#: Most walkers, and the most GiB of chain per free parameter (walkers x max_steps x 8 bytes), a config may ask for.
MAX_WALKERS, MAX_CHAIN_GIB_PER_PARAMETER = 100_000, 2.0


class SamplingMethod(enum.Enum):
    """``sampling.method``: how the posterior is sampled. Its value is the config's word and summary.json's."""

    MCMC = "mcmc"
    NESTED = "nested"

    @classmethod
    def of_facts(cls, facts):
        """The method of a run's sampling facts (samples.h5's or summary.json's ``sampling``).

        Nested-sampling facts carry ``method``; those of an MCMC run have never had it.
        """
        return cls(facts.get("method", cls.MCMC.value))

    @property
    def has_walkers(self):
        """Whether the samples are an ensemble's walkers: chain diagnostics (R-hat, ESS, posterior.nc), a
        convergence figure, ``planetfit export``, a chain to check before ``--resume``."""
        return self is SamplingMethod.MCMC

    @property
    def weighted(self):
        """Whether the sampler's points carry importance weights and the evidence ln Z (nested sampling)."""
        return self is SamplingMethod.NESTED


class WalkerMoves(enum.Enum):
    """``sampling.moves`` of an MCMC run; its value is the config's word and summary.json's ``sampling.moves``."""

    #: Differential evolution alone (planetfit.fitting.sampling.mcmc.walker_moves).
    DIFFERENTIAL_EVOLUTION = "differential_evolution"
    #: A burn-in of differential evolution fits a proposal, then differential evolution and independence moves
    #: from it (planetfit.fitting.sampling.burnin).
    FITTED_PROPOSAL = "fitted_proposal"


class Sampling(Block):
    """How the posterior is sampled and when the run counts as converged: the keys of every method.

    A variant per ``method`` (:class:`McmcSettings`, :class:`NestedSettings`).
    Each accepts the other method's keys, as the one block of earlier
    versions did: ``planetfit compare`` samples an MCMC config by nested
    sampling, and a config switched between methods keeps its keys.
    """

    method: Literal[tuple(m.value for m in SamplingMethod)] = SamplingMethod.MCMC.value
    walkers: Count = 48
    max_steps: Count = 20000
    check_every: Count = 200
    autocorr_factor: PositiveNumber = 50.0
    autocorr_tolerance: PositiveNumber = 0.01
    optimiser_starts: Count = 4
    moves: Literal[tuple(m.value for m in WalkerMoves)] = WalkerMoves.DIFFERENTIAL_EVOLUTION.value
    live_points: Count = 400
    dlogz: PositiveNumber = 0.1
    #: Effective samples a converged run has: for mcmc, the smallest bulk effective sample size over the sampled
    #: parameters (planetfit.fitting.sampling.ess); for nested sampling, those of its weighted points.
    min_effective_samples: Count = 1000
    max_likelihood_calls: Count = 50_000_000
    #: "marginalised": parameters entering a dataset's mean linearly (flux levels, RV offsets, trend and
    #: activity-indicator coefficients) with a normal or uniform prior are integrated out of the likelihood
    #: analytically and drawn from their conditional posterior afterwards; "sampled": the sampler moves them.
    linear_parameters: Literal["marginalised", "sampled"] = "marginalised"
    #: The method, typed (set by each variant).
    kind: ClassVar[SamplingMethod]

    @property
    def marginalise_linear(self):
        """Whether linear parameters are marginalised analytically rather than sampled."""
        return self.linear_parameters == "marginalised"

    @model_validator(mode="after")
    def _chain_fits_in_memory(self):
        """walkers x max_steps positions are kept (samples.h5, then read back for the outputs): 8 bytes each."""
        gib = self.walkers * self.max_steps * 8 / 2**30
        if self.walkers > MAX_WALKERS or gib > MAX_CHAIN_GIB_PER_PARAMETER:
            fail(
                f"{self.walkers} walkers x {self.max_steps} steps keep {self.walkers * self.max_steps:.3g} "
                f"positions: {gib:.3g} GiB for every free parameter (at most {MAX_WALKERS} walkers and "
                f"{MAX_CHAIN_GIB_PER_PARAMETER} GiB per parameter are accepted).",
                "use tens to hundreds of walkers (two to four times the free parameters is plenty) and fewer steps.",
                key="walkers",
            )
        return self


class McmcSettings(Sampling):
    """``method: mcmc`` (the default): emcee's walkers (``walkers``, ``moves``, ``optimiser_starts``) until the
    autocorrelation rule holds (``max_steps``, ``check_every``, ``autocorr_factor``, ``autocorr_tolerance``,
    ``min_effective_samples``)."""

    variant = {"method": SamplingMethod.MCMC.value}
    kind = SamplingMethod.MCMC


class NestedSettings(Sampling):
    """``method: nested``: dynesty's ``live_points`` until the evidence left in them is below ``dlogz`` (or
    ``max_likelihood_calls``), with ``min_effective_samples`` weighted points."""

    variant = {"method": SamplingMethod.NESTED.value}
    kind = SamplingMethod.NESTED
    method: Literal[tuple(m.value for m in SamplingMethod)]  # required: only 'method: nested' chooses this variant


#: The sampling block: one variant per method, told apart by ``method`` (absent: mcmc).
SamplingBlock = variants(McmcSettings, NestedSettings)
