"""The base of every schema model, and the machinery of variants (discriminated unions).

Every block forbids unknown keys and takes YAML's types as they are (no
text read as a number). A block with variants (orbits, baselines, GP
kernels, trends) is a union of small models told apart by one key's value
(``orbit: eccentric``); each variant class records that setting in
``variant``, so a key given to the wrong variant can be told where it
belongs.
"""

from typing import Annotated, ClassVar, Union

from pydantic import BaseModel, ConfigDict, Discriminator, Tag

#: Prefix of the union tags in pydantic's error locations (removed from the dotted keys of messages).
TAG_PREFIX = "variant:"


def _variant_json_schema(schema, cls):
    """In the JSON Schema, each variant's selecting keys take only its own value (so exactly one variant fits)."""
    for key, value in cls.variant.items():
        field = schema.get("properties", {}).get(key)
        if field is not None and not str(value).startswith("<"):
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


def variants(choose, *classes):
    """A discriminated union of ``classes``; ``choose(raw mapping)`` returns the chosen class's tag.

    Tags are the classes' names; an input that is no mapping gets the first
    class, so the type error names the block.
    """

    def tag(value):
        if isinstance(value, BaseModel):
            return TAG_PREFIX + type(value).__name__
        return TAG_PREFIX + (choose(value) if isinstance(value, dict) else classes[0].__name__)

    members = tuple(Annotated[c, Tag(TAG_PREFIX + c.__name__)] for c in classes)
    return Annotated[Union[members], Discriminator(tag)]
