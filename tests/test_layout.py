"""The layout DESIGN.md asks for: stages import only earlier stages, small modules and functions, one schema.

# common practice, no published source: these are planetfit's own architecture rules (DESIGN.md, STYLE.md).
"""

import ast
import importlib
import pkgutil
import re
from pathlib import Path

import pytest

import planetfit

ROOT = Path(planetfit.__file__).parent
#: Stage of each top-level package or module; a module may import its own stage and earlier ones only.
STAGES = {
    "core": 0,
    "inputs": 1,
    "fitting": 2,
    "context": 3,
    "report": 4,
    "rundir": 5,
    "pipeline": 5,
    "batch": 6,
    "compare": 6,
    "demo": 6,
    "planning": 6,
    "cli": 7,
}
MAX_MODULE_LINES = 400
MAX_FUNCTION_LINES = 60


def _modules():
    return sorted(m.name for m in pkgutil.walk_packages([str(ROOT)], prefix="planetfit."))


def _stage(module):
    return STAGES[module.split(".")[1]]


def _imports(path, module):
    """Absolute names of the planetfit modules a file imports."""
    package = module if path.name == "__init__.py" else module.rpartition(".")[0]
    out = set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")[: len(package.split(".")) - node.level + 1]
                name = ".".join(base + ([node.module] if node.module else []))
            else:
                name = node.module or ""
            out.add(name)
        elif isinstance(node, ast.Import):
            out.update(a.name for a in node.names)
    return {n for n in out if n.startswith("planetfit.") and n != "planetfit"}


def _path(module):
    rel = Path(*module.split(".")[1:])
    return ROOT / rel / "__init__.py" if (ROOT / rel).is_dir() else ROOT / rel.with_suffix(".py")


def test_every_module_imports():
    for module in _modules():
        if not module.endswith("__main__"):  # running it is the command line itself
            importlib.import_module(module)


@pytest.mark.parametrize("module", _modules())
def test_no_import_runs_back_up_a_stage(module):
    for imported in _imports(_path(module), module):
        assert _stage(imported) <= _stage(module), f"{module} (stage {_stage(module)}) imports {imported}"


def test_modules_and_functions_are_small():
    too_long = []
    for path in ROOT.rglob("*.py"):
        text = path.read_text()
        if text.count("\n") > MAX_MODULE_LINES:
            too_long.append(f"{path.relative_to(ROOT)}: {text.count(chr(10))} lines")
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                length = node.end_lineno - node.lineno + 1
                if length > MAX_FUNCTION_LINES:
                    too_long.append(f"{path.relative_to(ROOT)}:{node.lineno} {node.name}: {length} lines")
    assert not too_long, "\n".join(too_long)


@pytest.mark.parametrize("word", ["eccentric", "circular", "gp", "sho", "matern32", "quadratic", "full", "dayside"])
def test_mode_strings_are_decoded_only_in_the_schema(word):
    # batman's own argument (limb_dark = "quadratic", in the demo's data generator) is batman's word, not ours.
    places = {
        str(p.relative_to(ROOT))
        for p in ROOT.rglob("*.py")
        if re.search(f"(?<!limb_dark = )[\"']{word}[\"']", p.read_text())
    }
    assert all(p.startswith("inputs/schema/") for p in places), places


@pytest.mark.parametrize("word", ["mcmc", "nested", "fitted_proposal"])
def test_sampler_words_are_decoded_only_in_the_schema(word):
    # The sampling block is decoded once (its variants, SamplingMethod, WalkerMoves); the sampler is chosen by
    # planetfit.fitting.sampling.sampler_for, and code after it asks typed questions (has_walkers, weighted).
    # Templates count: report.html.j2 once compared the method's word.
    places = {
        str(p.relative_to(ROOT))
        for p in ROOT.rglob("*")
        if p.suffix in (".py", ".j2") and re.search(f"[\"']{word}[\"']", p.read_text())
    }
    assert all(p.startswith("inputs/schema/") for p in places), places
