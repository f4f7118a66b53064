"""Property tests: any config text or data table gives a result or an InputError, nothing else."""

# common practice, no published source: property tests of planetfit's input contract; no physics is checked.

import copy

import numpy as np
import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from planetfit.core.errors import InputError
from planetfit.inputs import datasets as data
from planetfit.inputs.config import load_config

FUZZ = settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])

BASE = {
    "system": "Fuzz-1",
    "seed": 1,
    "output": "run",
    "star": {
        "mass_msun": {"normal": [0.9, 0.03]},
        "radius_rsun": {"normal": [0.85, 0.02]},
        "teff_k": {"normal": [5300, 80]},
    },
    "planets": {
        "b": {
            "period_days": {"uniform": [2.99, 3.01]},
            "transit_bjd": {"uniform": [2460001.4, 2460001.6]},
            "radius_ratio": {"uniform": [0.005, 0.1]},
            "impact": {"uniform": [0.0, 1.0]},
            "rv_amplitude_ms": {"uniform": [0.0, 30.0]},
            "orbit": "eccentric",
        }
    },
    "photometry": [
        {
            "name": "cam",
            "file": "phot.csv",
            "columns": {"time": "t", "flux": "f", "error": "e"},
            "time_offset_days": 2457000.0,
            "exposure_min": 2.0,
        }
    ],
    "velocities": [
        {
            "name": "spec",
            "file": "rv.txt",
            "columns": {"time": "t", "rv": "v", "error": "e"},
            "offset_ms": {"uniform": [-20, 20]},
            "jitter_ms": {"loguniform": [0.01, 10]},
        }
    ],
    "sampling": {"walkers": 24, "max_steps": 300},
    "climate": {"albedo": 0.3},
}
KEYS = sorted(
    {
        "uniform",
        "normal",
        "loguniform",
        "truncnormal",
        "name",
        "file",
        "columns",
        "orbit",
        "transits",
        "eccentricity_max",
        "sqrt_e_cos_w",
        "walkers",
        "b",
        "star",
        "planets",
    }
    | set(BASE)
)

scalars = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**6), 10**6),
    st.floats(allow_nan=True),
    st.text(max_size=12),
    st.sampled_from(["circular", "eccentric", "phot.csv", "nan", "-inf"]),
)
values = st.recursive(
    scalars,
    lambda inner: st.one_of(
        st.lists(inner, max_size=5),
        st.dictionaries(st.one_of(st.sampled_from(KEYS), st.text(max_size=8)), inner, max_size=5),
    ),
    max_leaves=20,
)


def _paths(node, prefix=()):
    """Every path (tuple of keys / indices) into a nested config."""
    yield prefix
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, prefix + (i,))


PATHS = [p for p in _paths(BASE) if p]


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    d = tmp_path_factory.mktemp("fuzz")
    t = np.linspace(3001.0, 3002.0, 50)
    np.savetxt(
        d / "phot.csv", np.column_stack([t, np.ones(50), np.full(50, 1e-3)]), delimiter=",", header="t,f,e", comments=""
    )
    np.savetxt(d / "rv.txt", np.column_stack([t + 2457000.0, np.zeros(50), np.ones(50)]), header="t v e", comments="")
    return d


def _load(path):
    try:
        return load_config(path)
    except InputError as exc:
        assert exc.message()  # the message itself must build
        return None


def test_base_config_is_valid(folder):
    (folder / "base.yaml").write_text(yaml.safe_dump(BASE))
    assert _load(folder / "base.yaml") is not None


@FUZZ
@given(text=st.text(max_size=300))
def test_any_text_as_config(folder, text):
    path = folder / "text.yaml"
    path.write_text(text)
    _load(path)


@FUZZ
@given(doc=values)
def test_any_yaml_document_as_config(folder, doc):
    path = folder / "doc.yaml"
    path.write_text(yaml.safe_dump(doc))
    _load(path)


@FUZZ
@given(where=st.sampled_from(PATHS), value=values, delete=st.booleans())
def test_valid_config_with_one_value_replaced(folder, where, value, delete):
    doc = copy.deepcopy(BASE)
    node = doc
    for k in where[:-1]:
        node = node[k]
    if delete and isinstance(node, dict):
        del node[where[-1]]
    else:
        node[where[-1]] = value
    path = folder / "mutated.yaml"
    path.write_text(yaml.safe_dump(doc))
    config = _load(path)
    if config is not None:  # what passes must be usable by the model
        assert isinstance(config.sampling.walkers, int) and config.sampling.walkers >= 1
        for p in config.planets:
            assert 0 < getattr(p, "eccentricity_max", 0.5) < 1  # eccentric orbits only
            if p.transits:
                b_lo, b_hi = p.impact.bounds
                assert b_lo >= 0 and b_hi <= 1 + p.radius_ratio.bounds[1]


cells = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers().map(str),
    st.sampled_from(["", "nan", "NaN", "inf", "-inf", "1e400", "x", "1,5", "#", "0", "-1"]),
    st.text(max_size=6),
)
tables = st.builds(
    lambda header, rows, sep: sep.join(header) + "\n" + "\n".join(sep.join(r) for r in rows),
    st.sampled_from([["t", "f", "e"], ["t", "v", "e"], ["t", "f"], ["t", "f", "e", "x"], ["a b"]]),
    st.lists(st.lists(cells, min_size=0, max_size=4), max_size=8),
    st.sampled_from([",", " ", "\t"]),
)


@FUZZ
@given(text=st.one_of(tables, st.text(max_size=300)))
def test_any_text_as_data_table(folder, text):
    config = load_config(_write_base(folder))
    (folder / "phot.csv").write_text(text)
    (folder / "rv.txt").write_text(text)
    for load, cfg in ((data.load_photometry, config.photometry[0]), (data.load_velocities, config.velocities[0])):
        try:
            out = load(cfg)
        except InputError:
            continue
        assert np.all(np.isfinite(out.time)) and np.all(out.error > 0) and np.all(np.diff(out.time) > 0)


def _write_base(folder):
    path = folder / "base.yaml"
    path.write_text(yaml.safe_dump(BASE))
    return path
