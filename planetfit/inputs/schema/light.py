"""The ``planet_light`` block of a photometric dataset: the planet's own light in that band.

Per planet, the eclipse depth (the planet's flux over the star's at
superior conjunction), the nightside flux (at inferior conjunction), the
offset of the phase curve's peak (eastward positive) and optional
ellipsoidal and Doppler-beaming amplitudes of the star, fitted or predicted
from the sampled mass (``star_terms_from_mass``, with coefficients of
order one that depend on the band). Datasets of one
``band`` share these parameters; one of them declares the block.
"""

import math
from typing import Annotated

from pydantic import model_validator

from ..priors import Fixed
from .base import Block
from .fields import PositiveNumber, PriorSpec, fail, prior_within

NonNegativeFlux = prior_within(
    0.0,
    math.inf,
    "a planet's flux cannot be negative.",
    "use a lower bound of 0 or above, e.g. '{uniform: [0, 3000]}'.",
)
#: The first-harmonic phase curve takes its conjunction values only for offsets below 90 degrees.
HotspotOffset = prior_within(
    -89.0,
    89.0,
    "the hotspot offset must stay within (-89, 89) degrees: the phase curve is fixed by its values at the two "
    "conjunctions, which a first harmonic cannot join beyond a quarter orbit.",
    "use e.g. '{uniform: [-60, 60]}'.",
)


class PlanetLightBlock(Block):
    """One planet's light in one band (ppm of the star's flux; offset in degrees, eastward positive)."""

    eclipse_depth_ppm: Annotated[PriorSpec, NonNegativeFlux]
    nightside_ppm: Annotated[PriorSpec, NonNegativeFlux] = Fixed(0.0)
    hotspot_offset_deg: Annotated[PriorSpec, HotspotOffset] = Fixed(0.0)
    ellipsoidal_ppm: Annotated[PriorSpec, NonNegativeFlux] = Fixed(0.0)
    beaming_ppm: PriorSpec = Fixed(0.0)
    star_terms_from_mass: bool = False
    ellipsoidal_coefficient: PositiveNumber = 1.0
    beaming_coefficient: PositiveNumber = 1.0

    @model_validator(mode="after")
    def _predicted_or_fitted(self):
        for key in ("ellipsoidal_ppm", "beaming_ppm"):
            if self.star_terms_from_mass and key in self.model_fields_set:
                fail(
                    f"with 'star_terms_from_mass: true' the {key.split('_')[0]} amplitude follows from the mass.",
                    f"remove '{key}', or set 'star_terms_from_mass: false' to fit it.",
                    key=key,
                )
        return self
