"""The layout DESIGN.md asks for: stages import only earlier stages, small modules and functions, one schema.

# common practice, no published source: these are planetfit's own architecture rules (DESIGN.md, STYLE.md).
"""

import ast
import dataclasses
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


#: The one module that parses summary.json; every other reader gets its typed Summary.
SUMMARY_PARSER = "report/summary_types.py"


def _summary_reads(root):
    """``file:line`` of every json.load(s) of something named summary, or read of a summary file's bytes or text."""
    places = []
    for path in root.rglob("*.py"):
        text = path.read_text()
        for node in ast.walk(ast.parse(text)):
            if not isinstance(node, ast.Call):
                continue
            func = node.func
            name = func.attr if isinstance(func, ast.Attribute) else getattr(func, "id", "")
            if name in ("load", "loads"):
                looked_at = ast.get_source_segment(text, node)  # json.loads(directory.summary.read_text())
            elif name in ("read_text", "read_bytes", "open") and isinstance(func, ast.Attribute):
                looked_at = ast.get_source_segment(text, func.value)  # directory.summary.read_text()
            else:
                continue
            if "summary" in looked_at.lower():
                places.append(f"{path.relative_to(root)}:{node.lineno}")
    return sorted(set(places))


def test_summary_json_is_parsed_in_one_module():
    # Before issue 25 this listed batch.py:97, cli/commands.py:14, compare.py:35 and :73, planning/run.py:90.
    places = _summary_reads(ROOT)
    assert all(p.startswith(SUMMARY_PARSER + ":") for p in places), places
    assert "json.loads(" in (ROOT / SUMMARY_PARSER).read_text()


def test_every_class_name_has_one_meaning():
    # A schema block and the component or data set built from it must not share a name (issue 25): the schema's
    # side is called ``...Block`` (``StarBlock`` configures ``Star``).
    places = {}
    for path in ROOT.rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.ClassDef) and not node.name.startswith("_"):
                places.setdefault(node.name, []).append(str(path.relative_to(ROOT)))
    assert not {name: where for name, where in places.items() if len(where) > 1}


def test_every_package_says_what_it_owns():
    folders = {p.parent for p in ROOT.rglob("*.py")}
    missing = [str(f.relative_to(ROOT.parent)) for f in folders if not (f / "__init__.py").is_file()]
    assert not missing, f"folders of modules without an __init__.py (and its docstring): {missing}"
    for init in ROOT.rglob("__init__.py"):
        doc = ast.get_docstring(ast.parse(init.read_text())) or ""
        assert len(doc.split()) >= 8 and "placeholder" not in doc.lower(), f"{init}: say what the package owns"


#: Files named in DEVELOPERS.md: a path from the repository or the package (``tests/...``, ``fitting/model.py``,
#: a folder ``report/``) or, in a row of its table, from the folder of the row's first path (``fitting/mcmc.py``,
#: ``ess.py``).
_FILE_NAME = re.compile(r"`([\w.-]+(?:/[\w.-]+)*(?:\.py|\.j2|/))`")


def _named_paths(text):
    """(name, folders it may be in) of every file or folder DEVELOPERS.md names."""
    for line in text.splitlines():
        names = _FILE_NAME.findall(line)
        first = _FILE_NAME.findall(line.split("|")[1]) if line.startswith("| `") else []
        base = (ROOT / first[0]) if first and first[0].endswith("/") else (ROOT / first[0]).parent if first else None
        for name in names:
            if base is not None or "/" in name:  # a bare name in prose has no folder to look in
                yield name, [ROOT.parent, ROOT] + ([base] if base is not None else [])


def test_developer_notes_name_only_files_that_exist():
    text = (ROOT.parent / "DEVELOPERS.md").read_text()
    named = list(_named_paths(text))
    assert len(named) > 50, "the notes' table was not found"
    missing = [name for name, folders in named if not any((f / name).exists() for f in folders)]
    assert not missing, f"DEVELOPERS.md names files that do not exist: {missing}"


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


#: Every class, module, parameter or attribute named with "posterior" in planetfit/, tests/ and benchmarks/, and
#: why: each is about posterior samples or their files. The object that scores parameter vectors is
#: ``LogProbability`` (fitting/log_probability.py), held as ``Checked.log_probability`` and passed as ``log_prob``.
POSTERIOR_NAMES = {
    "planetfit/report/figures/common.py: class PosteriorView": "the posterior samples' medians and draws, for figures",
    "planetfit/context/stellar_density.py: parameter posterior": "the density samples' median and percentiles",
    "tests/context/test_stellar_density.py: parameter posterior_scale": "a factor on the stand-in density samples",
}


def _posterior_names(path, rel):
    """``"path: kind name"`` of every module, class, parameter or attribute of ``path`` named with "posterior"."""
    found = [f"{rel}: module {path.stem}"] if "posterior" in path.stem.lower() else []
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ClassDef):
            names = [("class", node.name)] + [("attribute", t.target.id) for t in node.body if _annotated(t)]
        elif isinstance(node, ast.arguments):
            names = [("parameter", a.arg) for a in node.posonlyargs + node.args + node.kwonlyargs]
        elif isinstance(node, ast.Attribute) and isinstance(node.ctx, ast.Store):
            names = [("attribute", node.attr)]  # self.posterior = ...
        else:
            continue
        found += [f"{rel}: {kind} {name}" for kind, name in names if "posterior" in name.lower()]
    return found


def _annotated(statement):
    return isinstance(statement, ast.AnnAssign) and isinstance(statement.target, ast.Name)


def test_posterior_means_the_samples_only():
    # Issue 25: "posterior" named the log-probability object (its class, Checked.posterior, parameters
    # ``posterior``), the samples and their files. Names of functions about samples (read_posterior,
    # posterior_groups, write_posterior_csv) and arviz's ``idata.posterior`` are not checked here.
    repo = ROOT.parent
    found = {
        name
        for folder in ("planetfit", "tests", "benchmarks")
        for path in (repo / folder).rglob("*.py")
        for name in _posterior_names(path, path.relative_to(repo).as_posix())
    }
    assert found == set(POSTERIOR_NAMES), f"named 'posterior' but not about samples: {found - set(POSTERIOR_NAMES)}"
    old = "Joint" + "Posterior"  # split, so that this file does not hold the name it looks for
    texts = [p for f in ("planetfit", "tests", "benchmarks") for p in (repo / f).rglob("*.py")] + [
        repo / "DEVELOPERS.md",
        repo / "README.md",
    ]
    assert not [str(p.relative_to(repo)) for p in texts if re.search(rf"\b{old}\b", p.read_text())]


def test_the_checked_config_holds_its_log_probability_as_log_probability():
    from planetfit.fitting.log_probability import LogProbability
    from planetfit.pipeline import Checked

    hints = {f.name: f.type for f in dataclasses.fields(Checked)}
    assert hints.get("log_probability") is LogProbability, hints
