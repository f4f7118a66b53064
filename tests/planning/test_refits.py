"""The planner against full refits, and ``planetfit plan`` run as a user runs it.

A small RV system is fitted by the real pipeline (the "old" run). For 10 parameter sets drawn from
its posterior, 30 new RVs are simulated on the planner's schedule and the old and new RVs are
refitted together with emcee; the refits' mass precision must agree with the planner's expectation.
"""

import json

import emcee
import numpy as np
import pytest
from plan_systems import PERIOD_DAYS, TRANSIT_BJD, keplerian_ms, planet_block, write_rv_system

from planetfit import pipeline
from planetfit.cli import main
from planetfit.context.derived import derive
from planetfit.planning import plan
from planetfit.planning.fisher import PlannedRvNoise
from planetfit.planning.job import plan_warnings
from planetfit.planning.run import load_run
from planetfit.planning.schedule import observation_times

SIGMA_MS, K_TRUE, NEW_RVS, REFITS = 2.0, 6.0, 30, 10
WINDOW = (TRANSIT_BJD + 40, TRANSIT_BJD + 100)


def _planet():
    # Ephemeris priors as a transit would give them; K free.
    return planet_block({"normal": [PERIOD_DAYS, 0.0005]}, {"normal": [TRANSIT_BJD, 0.003]}, {"uniform": [0, 30]})


@pytest.fixture(scope="module")
def old_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("plan-run")
    rng = np.random.default_rng(11)
    t = np.sort(rng.uniform(TRANSIT_BJD - 15, TRANSIT_BJD + 15, 10))
    rv = keplerian_ms(t, K_TRUE) + 3.0 + rng.normal(0, SIGMA_MS, t.size)
    config = write_rv_system(folder, [("old", t, rv, SIGMA_MS)], _planet(), max_steps=3000)
    return pipeline.run(config, quiet=True, figures=False).path, (t, rv)


def _refit(folder, old, truth, rng):
    """Mass precision (sd / median) of a refit of the old RVs and 30 new ones simulated from ``truth``."""
    folder.mkdir()
    t_new = observation_times(rng, NEW_RVS, WINDOW, 1)
    rv_new = keplerian_ms(t_new, truth["b.rv_amplitude_ms"], truth["b.period_days"], truth["b.transit_bjd"])
    rv_new += rng.normal(0, SIGMA_MS, NEW_RVS)
    config = write_rv_system(folder, [("old", *old, SIGMA_MS), ("new", t_new, rv_new, SIGMA_MS)], _planet())
    checked = pipeline.check(config)
    layout = checked.log_probability.layout
    centre = layout.to_sampler([truth.get(n, 0.0) for n in layout.free])
    walkers = centre + 1e-3 * rng.standard_normal((16, layout.ndim)) * layout.geometry()[1]
    sampler = emcee.EnsembleSampler(16, layout.ndim, checked.log_probability.log_prob_many, vectorize=True)
    sampler.run_mcmc(walkers, 700, progress=False)
    samples = sampler.get_chain(discard=200, flat=True)
    mass = derive(checked.config, checked.log_probability.model, samples, rng)["planets"]["b"]["mass_earth"]
    return np.std(mass) / np.median(mass)


def test_planner_agrees_with_refits(old_run, tmp_path):
    run_dir, old = old_run
    run = load_run(run_dir)
    settings = plan.PlanSettings(SIGMA_MS, 0.0, [NEW_RVS], WINDOW, draws=100)
    expected = plan.make_plan(run, settings, PlannedRvNoise(SIGMA_MS, 0.0))[0]["b"]["counts"][0]["mass_precision"]
    rng = np.random.default_rng(12)
    rows = rng.choice(run.size, REFITS, replace=False)
    refits = [
        _refit(
            tmp_path / str(i),
            old,
            {n: float(np.asarray(v)[i]) if np.ndim(v) else v for n, v in run.values.items()},
            rng,
        )
        for i in rows
    ]
    # common practice, no published source: the Fisher approximation is exact for a linear Gaussian model;
    # here the ephemeris enters non-linearly and the refits' widths are Monte Carlo estimates.
    assert np.mean(refits) == pytest.approx(expected["median"], rel=0.25), (refits, expected)


def test_plan_command_writes_the_outputs(old_run, tmp_path):
    run_dir, _ = old_run
    out = tmp_path / "plan"
    code = main([
        "plan", str(run_dir), "--rv-error-ms", "2", "--counts", "5", "20", "60",
        "--draws", "60", "--window-days", "40", "100", "--target-precision", "0.15", "--out", str(out),
    ])  # fmt: skip
    assert code == 0
    result = json.loads((out / "plan.json").read_text())
    assert (out / "plan.md").exists() and (out / "plan.png").exists()
    rows = result["planets"]["b"]["counts"]
    precision = [r["mass_precision"]["median"] for r in rows]
    # common practice, no published source: adding RVs never widens the expected posterior
    assert (
        precision == sorted(precision, reverse=True) and precision[-1] < result["planets"]["b"]["now"]["mass_precision"]
    )
    needed = result["planets"]["b"]["n_rvs_for_target"]
    assert needed is not None
    for row, p in zip(rows, precision):
        assert (p <= 0.15 * 1.02) if row["n_rvs"] >= needed else (p > 0.15 * 0.98), (needed, rows)


def test_plan_command_names_a_missing_or_unfinished_run(tmp_path, capsys):
    assert main(["plan", str(tmp_path / "nowhere")]) == 2
    assert "does not exist" in capsys.readouterr().err
    (tmp_path / "half").mkdir()
    (tmp_path / "half" / "samples.h5").write_bytes(b"")
    assert main(["plan", str(tmp_path / "half")]) == 2
    err = capsys.readouterr().err
    assert "summary.json is missing" in err and "--resume" in err


def test_plan_warns_of_an_unconverged_run_and_a_falling_verdict(old_run):
    # common practice, no published source: a plan on a doubtful run, or one whose verdict gets less
    # decisive with more RVs, says so
    run = load_run(old_run[0])
    run.summary.sampling.converged, run.summary.sampling.modes = False, [{}, {}]
    planets = {
        "b": {
            "now": {"p_rocky": 0.97},
            "counts": [{"n_rvs": 10, "p_decisive": 0.99}, {"n_rvs": 40, "p_decisive": 0.85}],
            "p_decisive_mass_known": 0.86,
        }
    }
    last = run.last_data_bjd()
    text = " ".join(plan_warnings(run, planets, (last - 5, last + 60), last))
    assert "did not converge" in text and "several modes" in text and "before the run's last data point" in text
    assert "falls from 99% to 85% at 40 new RVs" in text and "mass known exactly: 86%" in text
    planets["b"]["counts"][1]["p_decisive"] = 0.99
    assert not any("falls" in w for w in plan_warnings(run, planets, (last + 1, last + 60), last))
