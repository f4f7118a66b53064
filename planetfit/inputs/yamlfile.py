"""Reading a YAML config safely: the data, and the line of every dotted key.

A safe loader only (tags that build Python objects are refused); nested
aliases that would expand to more than :data:`MAX_YAML_NODES` values or
:data:`MAX_YAML_CHARS` characters are refused before expansion; a key given twice in one block is an error (YAML
would keep the last silently).
"""

import re
from pathlib import Path

import numpy as np
import yaml

from ..core.errors import InputError, reading
from .files import check_readable

#: Most values a config may expand to; nested YAML aliases ("billion laughs") can reach billions.
MAX_YAML_NODES = 100_000
#: Most characters of text a config may expand to: 40,000 aliases of one 50 kB string are few values but 2 GB.
MAX_YAML_CHARS = 10_000_000
#: Largest config file read (MB).
MAX_CONFIG_MB = 10.0


#: A number in exponent form that YAML 1.1 reads as text: no dot in the mantissa, or no sign in the exponent.
_NUMBER_AS_TEXT = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)[eE][-+]?\d+$")


def number_as_text(value):
    """The spellings YAML reads as numbers, if ``value`` is text YAML read from a number (``3e2``, ``1e-2``).

    YAML 1.1 (PyYAML) reads a number in exponent form only with a dot in
    the mantissa and a sign in the exponent (``1.0e-2``, ``3.0e+2``).
    Returns None for any other value.
    """
    if not isinstance(value, str) or not _NUMBER_AS_TEXT.match(value.strip()):
        return None
    x = float(value)
    mantissa, exponent = np.format_float_scientific(x, exp_digits=1).split("e")
    scientific = f"{mantissa}{'0' if mantissa.endswith('.') else ''}e{exponent}"
    plain = str(int(x)) if x.is_integer() and abs(x) < 1e15 else np.format_float_positional(x)
    return f"write {plain} or {scientific} ('{value}' is text to YAML: it needs a dot and a signed exponent)"


def _count_nodes(node, memo):
    """(values, characters of text) ``node`` expands to, each alias counted in full (memoised per node)."""
    if id(node) not in memo:
        memo[id(node)] = (0, 0)  # a self-referencing alias counts once
        children = (
            node.value
            if isinstance(node, yaml.SequenceNode)
            else ([n for pair in node.value for n in pair] if isinstance(node, yaml.MappingNode) else [])
        )
        counts = [_count_nodes(c, memo) for c in children]
        own = len(node.value) if isinstance(node, yaml.ScalarNode) else 0
        memo[id(node)] = (1 + sum(n for n, _ in counts), own + sum(c for _, c in counts))
    return memo[id(node)]


def _key_lines(node, prefix=""):
    """Map dotted key paths to 1-based line numbers from a composed YAML node.

    Raises ValueError(key, line) for a key given twice in one mapping (YAML
    would silently keep the last).
    """
    lines = {}
    if isinstance(node, yaml.MappingNode):
        seen = set()
        for knode, vnode in node.value:
            key = f"{prefix}.{knode.value}" if prefix else str(knode.value)
            if knode.value in seen:
                raise ValueError(key, knode.start_mark.line + 1)
            seen.add(knode.value)
            lines[key] = knode.start_mark.line + 1
            lines.update(_key_lines(vnode, key))
    elif isinstance(node, yaml.SequenceNode):
        for i, vnode in enumerate(node.value):
            key = f"{prefix}[{i}]"
            lines[key] = vnode.start_mark.line + 1
            lines.update(_key_lines(vnode, key))
    return lines


def _parse(path, text):
    """(composed node, data) of YAML text, every parser failure turned into an :class:`InputError`."""
    try:
        node = yaml.compose(text, Loader=yaml.SafeLoader)
        values, chars = _count_nodes(node, {}) if node is not None else (0, 0)
        if values > MAX_YAML_NODES or chars > MAX_YAML_CHARS:
            raise InputError(
                f"the file expands to {values} values and {chars} characters of text through its aliases "
                f"('*name'), above the {MAX_YAML_NODES} values or {MAX_YAML_CHARS} characters a config may hold.",
                file=path,
                line=1,
                fix="write the config without nested anchors and aliases.",
            )
        return node, yaml.load(text, Loader=yaml.SafeLoader)
    except yaml.constructor.ConstructorError as exc:
        mark = exc.problem_mark
        raise InputError(
            f"a YAML tag is not accepted here ({exc.problem}); tags that build Python objects are never executed.",
            file=path,
            line=mark.line + 1 if mark else None,
            fix="remove the '!!' tag and write a plain value.",
        ) from None
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        problem = getattr(exc, "problem", None) or str(exc)
        raise InputError(
            f"the file is not valid YAML ({problem}).",
            file=path,
            line=mark.line + 1 if mark else None,
            fix="check indentation and that every 'key: value' pair has a space after the colon.",
        ) from None
    except RecursionError:
        raise InputError(
            "the file nests too deeply.",
            file=path,
            line=1,
            fix="write the config as a few levels of 'key: value' blocks.",
        ) from None


def read_yaml(path):
    """Read a YAML file safely; return (data, key->line map)."""
    path = Path(path)
    missing_fix = "check the path; run 'planetfit demo' for a working example."
    if path.exists():
        check_readable(path, "config file", MAX_CONFIG_MB)
    with reading(path, "config file", missing_fix, "give a readable UTF-8 YAML file."):
        text = path.read_text(encoding="utf-8-sig")
    node, data = _parse(path, text)
    if not isinstance(data, dict):
        raise InputError(
            "the config must be a YAML mapping of keys such as 'star', 'planets', 'photometry'.",
            file=path,
            line=1,
            fix="start from the demo config ('planetfit demo' writes one).",
        )
    try:
        lines = _key_lines(node)
    except ValueError as exc:
        key, line = exc.args
        raise InputError(
            "this key is given twice in the same block; YAML would silently keep only the last.",
            file=path,
            key=key,
            line=line,
            fix="delete one of the two.",
        ) from None
    return data, lines
