"""summary.json as typed data: a real run's file read and written back byte for byte, and what each block types.

# common practice, no published source: these check planetfit's own file contract (DESIGN.md), not physics.
"""

import copy
import json

import pytest

from planetfit.core.errors import InputError
from planetfit.report.summary_types import Evidence, Stat, Summary, read_summary
from planetfit.rundir import RunDirectory


def test_a_runs_summary_json_reads_and_writes_back_byte_for_byte(tiny_run):
    text = (tiny_run["dir"] / "summary.json").read_text()
    assert Summary.from_json(json.loads(text)).to_text() == text
    # pipeline.run's own typed summary is the file, and so is the one a finished run reads back.
    assert tiny_run["typed"].to_text() == text
    assert RunDirectory(tiny_run["dir"]).read_summary().to_text() == text


def test_the_blocks_are_typed(tiny_run):
    raw, summary = tiny_run["summary"], tiny_run["typed"]
    b = summary.planets["b"]
    assert b.stat("radius_ratio") == Stat(**raw["planets"]["b"]["radius_ratio"])
    assert b.transits is True and b.orbit == raw["planets"]["b"]["orbit"]
    assert summary.star.stats["teff_k"].prior_only is True
    assert summary.fitted_parameters["b.impact"].median == raw["fitted_parameters"]["b.impact"]["median"]
    s = summary.sampling
    assert (s.walkers, s.steps, s.converged, s.nested) == (24, raw["sampling"]["steps"], False, False)
    assert s.warnings == raw["sampling"]["warnings"] and s.warnings
    # STATs inside untyped blocks are Stats too
    assert isinstance(b.climate["surface_temp_k"], Stat)


def test_null_masses_nested_facts_and_unknown_keys_keep_their_place(tiny_run):
    raw = copy.deepcopy(tiny_run["summary"])
    b = raw["planets"]["b"]
    b.update(mass_earth=None, note="mass not measured", future_block={"x": 1})
    raw["sampling"]["ln_evidence"] = {"value": -12.5, "error": 0.2, "note": "ln Z"}
    raw["sampling"]["new_fact"] = 3
    raw["catalogue"] = [{"median": 1.0, "lower": 0.5, "upper": 2.0}]
    summary = Summary.from_json(raw)
    assert summary.to_json() == raw and list(summary.to_json()["planets"]["b"]) == list(b)
    assert summary.planets["b"].stats["mass_earth"] is None and summary.planets["b"].note == "mass not measured"
    assert summary.sampling.ln_evidence == Evidence(value=-12.5, error=0.2, note="ln Z") and summary.sampling.nested
    assert summary.sampling.extra == {"new_fact": 3} and isinstance(summary.extra["catalogue"][0], Stat)


def test_a_file_that_is_not_a_summary_is_an_input_error(tmp_path):
    path = tmp_path / "summary.json"
    path.write_text('{"system": "x"}')
    with pytest.raises(InputError, match="unreadable"):
        read_summary(path, fix="rerun")
    with pytest.raises(InputError, match="missing"):
        read_summary(tmp_path / "nowhere.json", fix="rerun")
