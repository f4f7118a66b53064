"""The base of every schema model, and the machinery of variants (discriminated unions).

Every block forbids unknown keys and takes YAML's types as they are (no
text read as a number). A block with variants (orbits, baselines, GP
kernels, trends) is a union of small models told apart by a few keys'
values (``orbit: eccentric``); each variant class records those settings
in ``variant``, so a key given to the wrong variant can be told where it
belongs, and :func:`variants` chooses among the classes from them alone.
"""

from typing import Annotated, ClassVar, Union

from pydantic import BaseModel, ConfigDict, Discriminator, Tag

#: Prefix of the union tags in pydantic's error locations (removed from the dotted keys of messages).
TAG_PREFIX = "variant:"


class Given(str):
    """A variant setting met by any value given for its key (of type ``kind``), never by a default.

    Its text is what messages show for it, e.g. ``Given("<another dataset>")``
    (``gp_shared_with`` names any dataset) or ``Given("<regressors: [...]>", dict)``
    (``baseline`` given as a mapping).
    """

    def __new__(cls, text, kind=object):
        self = super().__new__(cls, text)
        self.kind = kind
        return self

    def met_by(self, value):
        return isinstance(value, self.kind)


def _variant_json_schema(schema, cls):
    """In the JSON Schema, each variant's selecting keys take only its own value (so exactly one variant fits)."""
    for key, value in cls.variant.items():
        field = schema.get("properties", {}).get(key)
        if field is not None and not isinstance(value, Given):
            schema["properties"][key] = {k: v for k, v in field.items() if k in ("default", "title")} | {"const": value}


class Block(BaseModel):
    """A config block: unknown keys are errors, values keep their YAML types."""

    model_config = ConfigDict(
        extra="forbid",
        strict=True,
        arbitrary_types_allowed=True,
        validate_default=True,
        json_schema_extra=_variant_json_schema,
    )
    #: The settings that select this variant, e.g. ``{"orbit": "eccentric"}`` (empty for blocks without variants).
    variant: ClassVar[dict] = {}


_MISSING = object()


def _meets(setting, value):
    """Whether a given value meets a variant setting: a :class:`Given` one by its kind, else the same value and type
    (``transits: 0`` is not ``false``)."""
    if isinstance(setting, Given):
        return setting.met_by(value)
    return type(value) is type(setting) and value == setting


def _unmet_and_given(cls, raw):
    """(settings of ``cls`` the mapping ``raw`` does not meet, settings it meets by keys it gives).

    A key ``raw`` lacks takes the class's default (none: unmet); a :class:`Given` setting is met only by a given
    value.
    """
    unmet = given = 0
    for key, setting in cls.variant.items():
        if key in raw:
            met = _meets(setting, raw[key])
        else:
            field = cls.model_fields.get(key)
            has_default = field is not None and not field.is_required() and not isinstance(setting, Given)
            met = has_default and _meets(setting, field.get_default(call_default_factory=True))
        unmet += not met
        given += met and key in raw
    return unmet, given


def choose_variant(classes, raw):
    """The class of ``classes`` a raw config mapping selects, from their ``variant`` settings alone.

    A value no class declares for its key (a typo, a wrong type) counts as
    absent, so the choice follows the other keys and the defaults, and the
    chosen class's validation reports the value. A class fits when each of
    its settings is met, a missing key by the class's default for it
    (:func:`_unmet_and_given`); among those that fit, the one meeting the
    most keys the mapping gives wins (``baseline: gp`` with
    ``gp_shared_with`` selects the shared GP over the default kernel's,
    which meets ``gp_kernel: sho`` by its default only). When none fits,
    the one with the fewest unmet settings is taken. Remaining ties go to
    the class listed first.
    """
    known = {
        key: value
        for key, value in raw.items()
        if any(key in c.variant and _meets(c.variant[key], value) for c in classes)
    }
    scores = [_unmet_and_given(cls, known) for cls in classes]
    fitting = [(-given, i) for i, (unmet, given) in enumerate(scores) if unmet == 0]
    best = min(fitting) if fitting else min((unmet, i) for i, (unmet, _) in enumerate(scores))
    return classes[best[1]]


#: The classes of every union made by :func:`variants`, in their order (the tests run the chooser over each).
UNIONS = []


def variants(*classes):
    """A discriminated union of ``classes``, each chosen by its ``variant`` settings (:func:`choose_variant`).

    Tags are the classes' names; an input that is no mapping gets the first
    class, so the type error names the block.
    """
    UNIONS.append(classes)

    def tag(value):
        if isinstance(value, BaseModel):
            return TAG_PREFIX + type(value).__name__
        return TAG_PREFIX + (choose_variant(classes, value) if isinstance(value, dict) else classes[0]).__name__

    members = tuple(Annotated[c, Tag(TAG_PREFIX + c.__name__)] for c in classes)
    return Annotated[Union[members], Discriminator(tag)]
