"""Value types of the config schema: priors, counts, finite numbers, file columns.

Each type validates one YAML value and fails with a sentence and a fix
(:func:`fail`); :mod:`planetfit.inputs.messages` turns that into an
:class:`~planetfit.errors.InputError` naming the file, key and line.
"""

import math
from typing import Annotated, Union

from pydantic import AfterValidator, BeforeValidator, Field, PlainSerializer, PlainValidator, WithJsonSchema
from pydantic_core import PydanticCustomError

from ..priors import PRIOR_KINDS, Normal, Prior, make_prior

#: The error type of planetfit's own validation failures (their context holds the fix).
ERROR_TYPE = "planetfit"
PRIOR_FIX = "write e.g. '{uniform: [lo, hi]}', '{normal: [mean, sd]}' or a number to fix it."


def fail(problem, fix, key=None):
    """Raise a validation error with planetfit's message and fix; ``key`` is a dotted key below the failing one
    (relative), or an absolute one when it starts with ``/``."""
    raise PydanticCustomError(ERROR_TYPE, "{problem}", {"problem": problem, "fix": fix, "key": key})


def _parse_prior(value):
    if isinstance(value, Prior):
        return value
    try:
        return make_prior(value)
    except ValueError as exc:
        fail(f"invalid prior: {exc}.", PRIOR_FIX)


_PRIOR_JSON = {
    "oneOf": [{"type": "number", "description": "a fixed value"}]
    + [
        {
            "type": "object",
            "additionalProperties": False,
            "required": [kind],
            "properties": {kind: {"type": "array", "items": {"type": "number"}, "minItems": n, "maxItems": n}},
        }
        for kind, (_, n) in PRIOR_KINDS.items()
    ]
}

#: A prior in its config spelling: ``{uniform: [lo, hi]}``, ``{normal: [mean, sd]}``, ... or a number (fixed).
PriorSpec = Annotated[
    Prior, PlainValidator(_parse_prior), PlainSerializer(lambda prior: prior.as_config()), WithJsonSchema(_PRIOR_JSON)
]


def lowest(prior):
    """Lowest value a prior reaches in practice: its lower bound, or mean - 5 sd for a normal."""
    return prior.mean - 5 * prior.sd if isinstance(prior, Normal) else prior.bounds[0]


def highest(prior):
    """Highest value a prior reaches in practice: its upper bound, or mean + 5 sd for a normal."""
    return prior.mean + 5 * prior.sd if isinstance(prior, Normal) else prior.bounds[1]


def positive_prior(what):
    """Validator: the prior stays above zero (a normal one within 5 sd)."""

    def check(prior):
        if not lowest(prior) > 0:
            fail(
                f"the prior reaches zero or below; {what} must be positive.",
                "raise the lower bound above zero (or use a normal prior with mean > 5 sd).",
            )
        return prior

    return AfterValidator(check)


def prior_within(lo, hi, problem, fix):
    """Validator: the prior's practical range lies inside [lo, hi]."""

    def check(prior):
        if lowest(prior) < lo or highest(prior) > hi:
            fail(problem, fix)
        return prior

    return AfterValidator(check)


def _integral(value):
    """An integer, or a float holding one (YAML writes 2.0e4 for 20000); never a boolean or text."""
    if isinstance(value, float) and math.isfinite(value) and value.is_integer():
        return int(value)
    return value


#: A finite number (an integer is accepted).
Number = Annotated[float, Field(allow_inf_nan=False)]
#: A positive finite number.
PositiveNumber = Annotated[float, Field(allow_inf_nan=False, gt=0)]
#: A positive whole number.
Count = Annotated[int, BeforeValidator(_integral), Field(gt=0)]
#: A file column: a header name, or a 1-based number in a table without a header line.
Column = Union[str, int]

#: Priors of a rotation kernel's quality difference and harmonic fraction (celerite2 RotationTerm's dQ and f).
NonNegativePrior = prior_within(0.0, math.inf, "must not be negative.", "use a lower bound of 0 or above.")
HarmonicFraction = prior_within(
    0.0, 1.0, "the fraction of power at half the period lies in [0, 1].", "keep the prior inside [0, 1]."
)
