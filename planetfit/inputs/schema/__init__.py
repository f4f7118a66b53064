"""The config schema, declared as pydantic models: the one place where the config's words are decoded.

``planetfit schema`` prints its JSON Schema (:func:`json_schema`), so editors
can check and complete a config while it is typed.
"""

from pydantic.json_schema import GenerateJsonSchema

from ..priors import Prior
from .base import Block
from .config import ConfigFile
from .datasets import (
    PHOTOMETRY_VARIANTS,
    ConstantBaselineBlock,
    LinearBaselineBlock,
    Matern32GP,
    OscillatorGP,
    PhotometryBlock,
    PolynomialBaselineBlock,
    QuadraticLaw,
    RegressorBaselineBlock,
    RotationGP,
    SharedGP,
    VelocitiesBlock,
)
from .dynamics import Dynamics
from .light import PlanetLightBlock
from .planets import PLANET_VARIANTS, CircularKeys, EccentricKeys, RvOnlyKeys, StarBlock, TransitKeys
from .settings import (
    Climate,
    LinearTrendBlock,
    McmcSettings,
    NestedSettings,
    NoTrend,
    QuadraticTrendBlock,
    RvActivity,
    Sampling,
    SamplingMethod,
    WalkerMoves,
)

__all__ = [
    "Block",
    "CircularKeys",
    "Climate",
    "ConfigFile",
    "ConstantBaselineBlock",
    "Dynamics",
    "EccentricKeys",
    "LinearBaselineBlock",
    "LinearTrendBlock",
    "Matern32GP",
    "McmcSettings",
    "NestedSettings",
    "NoTrend",
    "OscillatorGP",
    "PHOTOMETRY_VARIANTS",
    "PLANET_VARIANTS",
    "PlanetLightBlock",
    "PhotometryBlock",
    "PolynomialBaselineBlock",
    "QuadraticLaw",
    "QuadraticTrendBlock",
    "RegressorBaselineBlock",
    "RotationGP",
    "RvActivity",
    "RvOnlyKeys",
    "Sampling",
    "SamplingMethod",
    "SharedGP",
    "StarBlock",
    "TransitKeys",
    "VelocitiesBlock",
    "WalkerMoves",
    "json_schema",
]


class _ConfigJsonSchema(GenerateJsonSchema):
    """pydantic's JSON Schema generator, writing prior defaults in their config spelling."""

    def encode_default(self, dft):
        return dft.as_config() if isinstance(dft, Prior) else super().encode_default(dft)


def json_schema():
    """The JSON Schema (draft 2020-12) of a config file."""
    schema = ConfigFile.model_json_schema(schema_generator=_ConfigJsonSchema)
    trend = schema["properties"]["rv_trend"]  # also written as one word: 'rv_trend: linear'
    schema["properties"]["rv_trend"] = {"anyOf": [{"enum": ["none", "linear", "quadratic"]}, trend], "default": "none"}
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "planetfit config"
    return schema
