"""``planetfit batch``: three small systems on a loopback LocalCluster, one of them broken."""

import csv
import json
import sys

import numpy as np
import pytest
from synthetic import TINY_TRUTH as TRUTH
from synthetic import write_tiny_system as write_system

from planetfit.batch import COLUMNS, run_batch, run_directories
from planetfit.cli import EXIT_INPUT, main
from planetfit.core.errors import InputError
from planetfit.core.geometry import solve_orbit
from planetfit.core.units import M_EARTH_KG, R_EARTH_M, R_SUN_M

pytest.importorskip("distributed")


def _true_mass_radius_earth():
    _, _, mass_kg = solve_orbit(
        TRUTH["period_days"],
        TRUTH["rv_amplitude_ms"],
        TRUTH["impact"],
        0.0,
        np.pi / 2,
        TRUTH["mass_msun"],
        TRUTH["radius_rsun"],
    )
    return mass_kg / M_EARTH_KG, TRUTH["radius_ratio"] * TRUTH["radius_rsun"] * R_SUN_M / R_EARTH_M


def test_batch_fits_the_good_systems_and_reports_the_broken_one(tmp_path, capsys):
    good = [write_system(tmp_path / f"system-{i}", seed=i, n_phot=150, max_steps=200) for i in (1, 2)]
    broken = write_system(tmp_path / "broken", seed=3, n_phot=150, max_steps=200)
    (tmp_path / "broken" / "rv.txt").unlink()  # the config names a file that is not there
    out = tmp_path / "out"

    code = main(["batch", str(good[0]), str(broken), str(good[1]), "--workers", "2", "--out", str(out)])

    assert code == EXIT_INPUT, capsys.readouterr()
    with open(out / "batch_summary.csv", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert len(rows) == 3 and list(rows[0]) == COLUMNS
    by_folder = {r["config"].split("/")[-2]: r for r in rows}
    bad = by_folder["broken"]
    assert bad["status"] == "input error" and "rv.txt" in bad["error"] and bad["mass_earth_median"] == ""
    assert not (out / "broken-config" / "summary.json").exists()
    true_mass, true_radius = _true_mass_radius_earth()
    for name in ("system-1", "system-2"):
        row = by_folder[name]
        assert row["status"] == "ok" and row["error"] == "" and row["planet"] == "b", row
        summary = json.loads((out / f"{name}-config" / "summary.json").read_text())
        b = summary["planets"]["b"]
        assert float(row["mass_earth_median"]) == pytest.approx(b["mass_earth"]["median"])
        assert float(row["p_rocky"]) + float(row["p_volatile_rich"]) == pytest.approx(1.0)
        assert int(row["independent_samples"]) == summary["sampling"]["independent_samples"]
        # common practice, no published source: the injected truth lies within 3 sigma of the posterior
        for key, truth in (("mass_earth", true_mass), ("radius_earth", true_radius)):
            lo, med, hi = (float(row[f"{key}_{s}"]) for s in ("lower", "median", "upper"))
            assert lo < med < hi and abs(med - truth) < 3 * 0.5 * (hi - lo), (name, key, lo, med, hi, truth)
    printed = capsys.readouterr().out
    assert "2 of 3 systems fitted" in printed


def test_run_directories_tell_configs_with_one_stem_apart(tmp_path):
    paths = [tmp_path / "a" / "system.yaml", tmp_path / "b" / "system.yaml"]
    assert [d.name for d in run_directories(paths, tmp_path / "out")] == ["a-system", "b-system"]
    assert run_directories(paths, None) == [None, None]
    with pytest.raises(InputError, match="listed twice"):
        run_directories([paths[0], paths[0]], tmp_path / "out")


def test_missing_dask_is_an_input_error_naming_the_extra(tmp_path, monkeypatch):
    config = write_system(tmp_path / "system", n_phot=150)
    monkeypatch.setitem(sys.modules, "distributed", None)  # import distributed -> ImportError
    with pytest.raises(InputError, match=r'pip install -e "\.\[cluster\]"'):
        run_batch([config], out_dir=tmp_path / "out")
