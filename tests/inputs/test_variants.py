"""The chooser generated from the variant classes' ``variant`` settings picks each class from its own settings."""

# common practice, no published source: these tests check software behaviour (which schema class a config
# mapping selects), no physics.

import pytest

from planetfit.inputs import schema
from planetfit.inputs.schema.base import UNIONS, Given, choose_variant


def _own_settings(cls):
    """A mapping giving exactly ``cls``'s settings (a :class:`Given` one as a value of its kind)."""
    given = {dict: {"regressors": ["airmass"]}, object: "other"}
    return {k: given[v.kind] if isinstance(v, Given) else v for k, v in cls.variant.items()}


def _rows():
    return [(classes, cls) for classes in UNIONS for cls in classes]


def test_every_variant_union_is_known():
    unions = {frozenset(c) for c in UNIONS}
    for expected in (schema.PHOTOMETRY_VARIANTS, schema.PLANET_VARIANTS):
        assert frozenset(expected) in unions
    assert frozenset((schema.NoTrend, schema.LinearTrendBlock, schema.QuadraticTrendBlock)) in unions


@pytest.mark.parametrize("classes,cls", _rows(), ids=lambda x: getattr(x, "__name__", ""))
def test_own_settings_choose_the_class(classes, cls):
    assert cls.variant, f"{cls.__name__} is in a union without 'variant' settings"
    assert choose_variant(classes, _own_settings(cls)) is cls


@pytest.mark.parametrize(
    "classes,raw,expected",
    [
        # defaults only: a missing key takes each class's default
        (schema.PLANET_VARIANTS, {}, "TransitingCircular"),
        (schema.PLANET_VARIANTS, {"transits": False}, "RvOnlyCircular"),
        (schema.PLANET_VARIANTS, {"orbit": "eccentric"}, "TransitingEccentric"),
        (schema.PHOTOMETRY_VARIANTS, {}, "ConstantBaselineBlock"),
        (schema.PHOTOMETRY_VARIANTS, {"baseline": "gp"}, "OscillatorGP"),
        ((schema.NoTrend, schema.LinearTrendBlock, schema.QuadraticTrendBlock), {}, "NoTrend"),
        # the most keys given wins
        (schema.PHOTOMETRY_VARIANTS, {"baseline": "gp", "gp_shared_with": "cam"}, "SharedGP"),
        (schema.PHOTOMETRY_VARIANTS, {"baseline": "gp", "gp_kernel": "matern32", "gp_shared_with": "c"}, "SharedGP"),
        # a value no class declares counts as absent: the class whose validation reports it
        (schema.PLANET_VARIANTS, {"orbit": "elliptic"}, "TransitingCircular"),
        (schema.PLANET_VARIANTS, {"transits": False, "orbit": "elliptic"}, "RvOnlyCircular"),
        (schema.PLANET_VARIANTS, {"transits": "false", "orbit": "eccentric"}, "TransitingEccentric"),
        (schema.PLANET_VARIANTS, {"transits": 0}, "TransitingCircular"),
        (schema.PHOTOMETRY_VARIANTS, {"baseline": "gp", "gp_kernel": "bogus"}, "OscillatorGP"),
        (schema.PHOTOMETRY_VARIANTS, {"baseline": "bogus", "gp_shared_with": "cam"}, "ConstantBaselineBlock"),
        (schema.PHOTOMETRY_VARIANTS, {"baseline": ["airmass"]}, "ConstantBaselineBlock"),
        (schema.PHOTOMETRY_VARIANTS, {"baseline": "gp", "gp_kernel": ["sho"]}, "OscillatorGP"),
    ],
)
def test_choice_from_defaults_and_ties(classes, raw, expected):
    assert choose_variant(classes, raw).__name__ == expected
