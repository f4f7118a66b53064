"""The ``star`` and ``planets`` blocks.

A planet is one of four variants: transiting or seen only in RVs
(``transits``), on a circular or eccentric orbit (``orbit``). The
eccentric variants take sqrt(e) cos w and sqrt(e) sin w; the transiting
ones the radius ratio and impact parameter; the others an optional
inclination prior (for a true mass).
"""

from typing import Annotated, Literal, Optional

from pydantic import AfterValidator, Field, PrivateAttr, model_validator

from ..priors import Fixed, Uniform
from ..stellar_relations import RelationError, resolve_mass_radius
from .base import Block, variants
from .fields import Number, PositiveNumber, PriorSpec, fail, lowest, positive_prior, prior_within

ORBITS = Literal["circular", "eccentric"]
_LOGG_PROBLEM = "the prior reaches beyond log g 2 to 6 (cgs): not the surface gravity of a planet host in cm/s^2."
_LOGG_FIX = "give log g in cgs (the Sun: 4.438), e.g. '{normal: [4.4, 0.1]}'."
_ABUNDANCE_PROBLEM = "the prior reaches beyond -5 to +1.5 dex: not a logarithmic abundance relative to the Sun."
_ABUNDANCE_FIX = "give [X/H] in dex relative to the Sun, e.g. '{normal: [0.0, 0.1]}'."

Unbound = prior_within(
    -1.0,
    1.0,
    "the prior reaches beyond [-1, 1], that is e > 1 (an unbound orbit).",
    "keep it inside [-1, 1], e.g. '{uniform: [-1, 1]}' (eccentricity_max caps e further).",
)


class StarBlock(Block):
    """The host star: mass and radius priors, or what is measured (Teff, log g, [Fe/H]; parallax and K magnitude)
    turned into them by published relations (:mod:`planetfit.inputs.stellar_relations`); magnitudes, sky position,
    and the refractory abundances [Mg/H], [Si/H] for the composition block."""

    mass_msun: Optional[Annotated[PriorSpec, positive_prior("mass_msun")]] = None
    radius_rsun: Optional[Annotated[PriorSpec, positive_prior("radius_rsun")]] = None
    teff_k: Annotated[PriorSpec, positive_prior("teff_k")]
    logg_cgs: Optional[Annotated[PriorSpec, prior_within(2.0, 6.0, _LOGG_PROBLEM, _LOGG_FIX)]] = None
    feh_dex: Optional[Annotated[PriorSpec, prior_within(-5.0, 1.5, _ABUNDANCE_PROBLEM, _ABUNDANCE_FIX)]] = None
    mgh_dex: Optional[Annotated[PriorSpec, prior_within(-5.0, 1.5, _ABUNDANCE_PROBLEM, _ABUNDANCE_FIX)]] = None
    sih_dex: Optional[Annotated[PriorSpec, prior_within(-5.0, 1.5, _ABUNDANCE_PROBLEM, _ABUNDANCE_FIX)]] = None
    parallax_mas: Optional[Annotated[PriorSpec, positive_prior("parallax_mas")]] = None
    age_gyr: Optional[PriorSpec] = None
    mag_j: Optional[Number] = None
    mag_k: Optional[Number] = None
    ra_deg: Optional[Annotated[Number, Field(ge=0, lt=360)]] = None
    dec_deg: Optional[Annotated[Number, Field(ge=-90, le=90)]] = None
    _mass_radius_source: dict = PrivateAttr(default_factory=dict)

    @model_validator(mode="after")
    def _mass_and_radius(self):
        try:
            priors, self._mass_radius_source = resolve_mass_radius(self)
        except RelationError as exc:
            fail(exc.problem, exc.fix + ".", key=exc.key)
        self.mass_msun, self.radius_rsun = priors["mass_msun"], priors["radius_rsun"]
        abundances = {"feh_dex": self.feh_dex, "mgh_dex": self.mgh_dex, "sih_dex": self.sih_dex}
        missing = [k for k, v in abundances.items() if v is None]
        if (self.mgh_dex is not None or self.sih_dex is not None) and missing:
            fail(
                "the star-built iron fraction needs [Fe/H], [Mg/H] and [Si/H] together.",
                f"add '{missing[0]}' (a prior in dex), or remove {', '.join(repr(k) for k in ('mgh_dex', 'sih_dex'))}.",
                key=missing[0],
            )
        return self

    @property
    def mass_radius_source(self):
        """Quantity -> where its prior came from (``from``, ``prior`` and, for a relation, ``intrinsic_scatter``)."""
        return self._mass_radius_source


def _non_negative_amplitude(prior):
    if lowest(prior) < 0:
        fail("the prior allows negative semi-amplitudes.", "use a lower bound of 0 or above.")
    return prior


class PlanetBlock(Block):
    """What every planet has: its ephemeris and, with RVs, its RV semi-amplitude.

    A transiting planet fitted without RVs needs no ``rv_amplitude_ms``:
    its mass is then not sampled (K is held at 0) and not reported.
    """

    period_days: Annotated[PriorSpec, positive_prior("the period")]
    transit_bjd: PriorSpec
    rv_amplitude_ms: Optional[Annotated[PriorSpec, AfterValidator(_non_negative_amplitude)]] = None
    _name: str = PrivateAttr("")

    @property
    def name(self):
        """The planet's key in the ``planets`` block."""
        return self._name

    @property
    def amplitude_prior(self):
        """The prior of K: the config's, or fixed at 0 for a planet without one (no mass measured)."""
        return Fixed(0.0) if self.rv_amplitude_ms is None else self.rv_amplitude_ms

    @property
    def mass_measured(self):
        """Whether the planet's mass is measured: its semi-amplitude is sampled (a prior, not a fixed value)."""
        return self.rv_amplitude_ms is not None and not self.rv_amplitude_ms.fixed


class CircularKeys(Block):
    """A circular orbit (e = 0)."""

    orbit: ORBITS = "circular"


class EccentricKeys(Block):
    """An eccentric orbit, sampled as sqrt(e) cos w, sqrt(e) sin w, with e capped at ``eccentricity_max``."""

    orbit: ORBITS
    sqrt_e_cos_w: Annotated[PriorSpec, Unbound] = Uniform(-1, 1)
    sqrt_e_sin_w: Annotated[PriorSpec, Unbound] = Uniform(-1, 1)
    eccentricity_max: Annotated[Number, Field(gt=0, lt=1)] = 0.9


class TransitKeys(Block):
    """A transiting planet: radius ratio and impact parameter; its transit times on a line or each its own.

    ``transit_times: free`` gives every observed transit its own mid-time
    offset from the linear ephemeris, with a uniform prior of half-width
    ``transit_time_halfwidth_min`` (default: a quarter of the expected
    duration); ``transit_times_sinusoid: true`` adds a sinusoid fit to the
    O-C figure and summary.
    """

    transits: Literal[True] = True
    radius_ratio: Annotated[PriorSpec, positive_prior("the radius ratio")]
    impact: PriorSpec
    transit_times: Literal["linear", "free"] = "linear"
    transit_time_halfwidth_min: Optional[PositiveNumber] = None
    transit_times_sinusoid: bool = False

    @property
    def free_transit_times(self):
        """Whether each transit has its own mid-time."""
        return self.transit_times == "free"

    @model_validator(mode="after")
    def _timing_keys_need_free_times(self):
        for key in ("transit_time_halfwidth_min", "transit_times_sinusoid"):
            if key in self.model_fields_set and not self.free_transit_times:
                fail(
                    "this key applies to individual transit times only.",
                    "add 'transit_times: free' to the planet, or remove the key.",
                    key=key,
                )
        return self

    @model_validator(mode="after")
    def _transit_possible(self):
        k_hi = min(self.radius_ratio.bounds[1], 1.0)
        lo, hi = self.impact.bounds
        if lo < 0:
            fail("the impact parameter cannot be negative.", "use a lower bound of 0.", key="impact")
        if lo >= 1 + k_hi:
            fail(
                f"the whole prior lies beyond 1 + radius ratio ({1 + k_hi:g}): no transit is possible.",
                "use e.g. '{uniform: [0, 1]}'.",
                key="impact",
            )
        if hi > 1 + k_hi:
            fail(
                f"the prior reaches {hi:g}, beyond 1 + the largest radius ratio ({1 + k_hi:g}), where the planet "
                "would not transit.",
                f"cap the upper bound at {1 + k_hi:g} or below, e.g. '{{uniform: [0, 1]}}'.",
                key="impact",
            )
        return self


class RvOnlyKeys(Block):
    """A planet seen only in RVs; an inclination prior (e.g. from transits seen elsewhere) gives its true mass."""

    transits: Literal[False]
    inclination_deg: Optional[
        Annotated[
            PriorSpec,
            prior_within(
                1e-9,
                180.0,
                "the inclination must lie in (0, 180] degrees (0 is face-on, where no RV signal exists).",
                "give e.g. '{normal: [88.5, 0.5]}' from the planet's transits.",
            ),
        ]
    ] = None


class TransitingCircular(PlanetBlock, TransitKeys, CircularKeys):
    variant = {"transits": True, "orbit": "circular"}


class TransitingEccentric(PlanetBlock, TransitKeys, EccentricKeys):
    variant = {"transits": True, "orbit": "eccentric"}


class RvOnlyCircular(PlanetBlock, RvOnlyKeys, CircularKeys):
    variant = {"transits": False, "orbit": "circular"}


class RvOnlyEccentric(PlanetBlock, RvOnlyKeys, EccentricKeys):
    variant = {"transits": False, "orbit": "eccentric"}


#: One planet, its variant chosen by ``transits`` and ``orbit``.
PLANET_VARIANTS = (TransitingCircular, TransitingEccentric, RvOnlyCircular, RvOnlyEccentric)
AnyPlanetBlock = variants(*PLANET_VARIANTS)
