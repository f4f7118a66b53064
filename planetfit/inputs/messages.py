"""pydantic's validation errors as planetfit messages: file, dotted key, YAML line, what is wrong, the fix.

This is the one place where a location in the schema (``('planets', 'b',
'variant:TransitingCircular', 'impact')``) becomes a config key
(``planets.b.impact``) and a line, and a failure type becomes a sentence.
"""

import difflib
import reprlib
import typing

from pydantic import BaseModel

from ..core.errors import InputError
from .schema.base import TAG_PREFIX
from .schema.fields import ERROR_TYPE
from .yamlfile import number_as_text

_SHORT = reprlib.Repr()
_SHORT.maxlevel, _SHORT.maxlist, _SHORT.maxdict, _SHORT.maxstring = 2, 4, 4, 40
show = _SHORT.repr

#: Failure type -> (problem, fix) templates; {value}, {name}, {limit} and {choices} are filled in.
_TEMPLATES = {
    "missing": ("the required key '{name}' is missing.", "add '{name}:' to this block (see README, config reference)."),
    "int_type": ("expected an integer, got {value}.", "write '{name}: <integer>'."),
    "float_type": ("expected a finite number, got {value}.", "write '{name}: <number>'."),
    "finite_number": ("expected a finite number, got {value}.", "write '{name}: <number>'."),
    "bool_type": ("expected true or false, got {value}.", "write '{name}: true' or 'false'."),
    "string_type": ("expected text, got {value}.", "write '{name}: <text>'."),
    "literal_error": ("{value} is not one of {choices}.", "use one of: {choices}."),
    "greater_than": ("must be above {limit}, got {value}.", "give a value above {limit}."),
    "greater_than_equal": ("must be at least {limit}, got {value}.", "give a value of {limit} or more."),
    "less_than": ("must be below {limit}, got {value}.", "give a value below {limit}."),
    "less_than_equal": ("must be at most {limit}, got {value}.", "give a value of {limit} or less."),
    "too_short": ("the block is empty.", "give at least one entry (see README, config reference)."),
    "too_long": ("expected at most {limit} values, got {value}.", "give at most {limit} values."),
    "model_type": ("expected a mapping of keys, got {value}.", "indent the keys of this block under it."),
    "model_attributes_type": ("expected a mapping of keys, got {value}.", "indent the keys of this block under it."),
    "dict_type": ("expected a mapping of keys, got {value}.", "indent the keys of this block under it."),
    "list_type": (
        "expected a list (lines starting with '- '), got {value}.",
        "write each entry under '{name}:' as '- ...'.",
    ),
}


#: Quoted YAML 1.1 booleans, and the value they were meant to be.
_QUOTED_BOOLEANS = dict.fromkeys(("true", "yes", "on"), "true") | dict.fromkeys(("false", "no", "off"), "false")


def dotted(loc):
    """``('photometry', 0, 'variant:X', 'name')`` -> ``photometry[0].name``."""
    out = ""
    for part in loc:
        if isinstance(part, str) and (part.startswith(TAG_PREFIX) or part == "[key]"):
            continue
        out += f"[{part}]" if isinstance(part, int) else (f".{part}" if out else str(part))
    return out


def _all_subclasses(cls):
    """Every subclass of ``cls``, once each (a class with several bases is reached more than once)."""
    out = []
    for sub in cls.__subclasses__():
        out += [c for c in [sub] + _all_subclasses(sub) if c not in out]
    return out


def _models_in(annotation):
    """The schema models an annotation can hold (through Optional, Union, list, dict and Annotated)."""
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return [annotation]
    return [m for arg in typing.get_args(annotation) for m in _models_in(arg)]


def _model_at(loc, root):
    """The schema model class of the block at ``loc`` (None if the location is not a block)."""
    current = [root]
    for part in loc:
        if isinstance(part, str) and part.startswith(TAG_PREFIX):
            current = [c for c in _all_subclasses(BaseModel) if c.__name__ == part[len(TAG_PREFIX) :]]
        elif isinstance(part, str) and part != "[key]":
            found = [m for c in current if part in c.model_fields for m in _models_in(c.model_fields[part].annotation)]
            current = found or current  # a mapping's key (a planet's name) keeps the block's class
    current = list(dict.fromkeys(current))
    return current[0] if len(current) == 1 else None


def _setting(key, value):
    """A setting as YAML writes it: ``transits: false``."""
    return f"{key}: {str(value).lower() if isinstance(value, bool) else value}"


def _extra_key(loc, name, model):
    """Problem and fix for an unknown key: the variant it belongs to, or a 'did you mean'."""
    cls = _model_at(loc[:-1], model)
    if cls is not None and cls.variant:
        siblings = [
            c
            for c in _all_subclasses(BaseModel)
            if getattr(c, "variant", None) and c is not cls and set(c.variant) & set(cls.variant)
        ]
        for other in siblings:
            if name in other.model_fields:
                needed = ", ".join(_setting(k, v) for k, v in other.variant.items() if cls.variant.get(k) != v)
                has = ", ".join(_setting(k, v) for k, v in cls.variant.items() if other.variant.get(k) != v)
                return (
                    f"this key is used only with '{needed}', and this block has '{has}'.",
                    f"remove '{name}', or change the block to '{needed}'.",
                )
    known = sorted(cls.model_fields) if cls is not None else []
    close = difflib.get_close_matches(name, known, n=1)
    hint = (
        f"did you mean '{close[0]}'?"
        if close
        else (f"allowed keys here: {', '.join(known)}." if known else "see README, config reference.")
    )
    return "unknown key.", hint


def to_input_error(error, path, lines, raw, model):
    """The :class:`InputError` of pydantic's first error ``error`` (a dict of ``ValidationError.errors()``).

    Parameters
    ----------
    error : dict
    path : Path
        The config file.
    lines : dict
        Dotted key -> line (:func:`planetfit.inputs.yamlfile.read_yaml`).
    raw : dict
        The YAML data, for the keys of blocks with a missing key.
    model : type
        The root schema model.
    """
    loc, kind, ctx = error["loc"], error["type"], error.get("ctx") or {}
    key = dotted(loc)
    name = next((str(p) for p in reversed(loc) if isinstance(p, str) and not p.startswith(TAG_PREFIX)), key)
    if kind == ERROR_TYPE:
        sub = ctx.get("key")
        if sub:
            key = sub[1:] if sub.startswith("/") else (f"{key}.{sub}" if key else sub)
        problem, fix = ctx["problem"], ctx["fix"]
    elif kind == "extra_forbidden":
        problem, fix = _extra_key(loc, name, model)
    elif kind == "union_tag_invalid" or kind not in _TEMPLATES:
        problem, fix = f"{error['msg']} (got {show(error.get('input'))}).", "see README, config reference."
    else:
        choices = ctx.get("expected", "").replace("'", "")
        limit = next((ctx[k] for k in ("gt", "ge", "lt", "le", "max_length") if k in ctx), "")
        value = show(error.get("input"))
        problem, fix = (t.format(value=value, name=name, limit=limit, choices=choices) for t in _TEMPLATES[kind])
        if kind == "missing":
            key, problem, fix = _missing(key, name, raw, problem, fix)
        elif number_as_text(error.get("input")):
            fix = number_as_text(error.get("input")) + "."
        elif (
            kind == "literal_error"
            and {"True", "False"} & set(choices.replace(",", " ").split())
            and str(error.get("input")).strip().lower() in _QUOTED_BOOLEANS
        ):
            word = _QUOTED_BOOLEANS[str(error["input"]).strip().lower()]
            problem = f"{value} is text (it is quoted), not the value {word}."
            fix = f"write '{name}: {word}' without quotes."
    return InputError(problem, file=path, key=key, line=_line(key, lines), fix=fix)


def _missing(key, name, raw, problem, fix):
    """A missing key that is probably misspelled: point at the misspelling instead."""
    parent = key.rpartition(".")[0]
    block = raw
    for part in parent.replace("[", ".").replace("]", "").split(".") if parent else []:
        block = (
            block.get(part)
            if isinstance(block, dict)
            else (block[int(part)] if isinstance(block, list) and part.isdigit() else None)
        )
    close = (
        difflib.get_close_matches(name, [str(k) for k in block or {} if k != name], n=1)
        if isinstance(block, dict)
        else []
    )
    if close:
        return (
            (f"{parent}.{close[0]}" if parent else close[0]),
            f"unknown key, and the required key '{name}' is missing.",
            f"did you mean '{name}'?",
        )
    return (parent or key), problem, fix


def _line(key, lines):
    """The line of ``key``, or of its nearest enclosing block."""
    while key and key not in lines:
        key = key.rpartition(".")[0] if "." in key else key.rpartition("[")[0]
    return lines.get(key)
