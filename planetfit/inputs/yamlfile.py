"""Reading a YAML config safely: the data, and the line of every dotted key.

A safe loader only (tags that build Python objects are refused); nested
aliases that would expand to more than :data:`MAX_YAML_NODES` values are
refused before expansion; a key given twice in one block is an error (YAML
would keep the last silently).
"""

from pathlib import Path

import yaml

from ..core.errors import InputError, reading

#: Most values a config may expand to; nested YAML aliases ("billion laughs") can reach billions.
MAX_YAML_NODES = 100_000


def _count_nodes(node, memo):
    """Number of values ``node`` expands to, each alias counted in full (memoised per node)."""
    if id(node) not in memo:
        memo[id(node)] = 0  # a self-referencing alias counts once
        children = (
            node.value
            if isinstance(node, yaml.SequenceNode)
            else ([n for pair in node.value for n in pair] if isinstance(node, yaml.MappingNode) else [])
        )
        memo[id(node)] = 1 + sum(_count_nodes(c, memo) for c in children)
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
        if node is not None and _count_nodes(node, {}) > MAX_YAML_NODES:
            raise InputError(
                f"the file expands to more than {MAX_YAML_NODES} values (nested aliases '*name').",
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
    with reading(path, "config file", missing_fix, "give a readable UTF-8 YAML file."):
        text = path.read_text()
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
