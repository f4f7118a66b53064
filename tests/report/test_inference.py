"""posterior.nc, R-hat and ESS, and ``planetfit export``: the posterior as other tools read it."""

import csv
import json

import numpy as np
import pytest

from planetfit.cli import main
from planetfit.report import inference

az = pytest.importorskip("arviz", reason="the optional 'stats' extra (arviz, h5netcdf) is not installed")


def _medians_match(values_by_name, fitted):
    for name, stat in fitted.items():
        # summary.json keeps full float precision, so the medians agree to rounding error.
        assert float(np.median(values_by_name[name])) == pytest.approx(stat["median"], rel=1e-12, abs=1e-12), name


def test_posterior_nc_holds_every_group_with_the_medians_of_summary_json(tiny_run):
    run_dir, summary = tiny_run["dir"], tiny_run["summary"]
    idata = az.from_netcdf(run_dir / "posterior.nc")
    fitted = summary["fitted_parameters"]
    assert set(idata.posterior.data_vars) == set(fitted)
    _medians_match({n: idata.posterior[n].values for n in fitted}, fitted)
    s = summary["sampling"]
    walkers, draws = idata.posterior.sizes["chain"], idata.posterior.sizes["draw"]
    assert walkers == s["walkers"] and walkers * draws == len(np.genfromtxt(run_dir / "posterior.csv", skip_header=1))
    derived = idata[inference.DERIVED_GROUP]
    for key in ("mass_earth", "radius_earth", "density_gcc"):
        assert float(np.median(derived[f"b.{key}"].values)) == pytest.approx(summary["planets"]["b"][key]["median"])
    assert float(np.median(derived["star.mass_msun"].values)) == pytest.approx(summary["star"]["mass_msun"]["median"])
    stats = idata.sample_stats
    assert stats["lp"].shape == (walkers, draws) and np.all(np.isfinite(stats["lp"].values))
    # Thinned kept steps against the whole chain's rate: the same sampler, so close.
    assert float(stats["accepted"].mean()) == pytest.approx(s["acceptance_fraction"], abs=0.08)
    points = summary["data"]["cam"]["points"]
    assert idata.observed_data["cam.flux"].shape == (points,)
    assert idata.observed_data["spec.rv_ms"].shape == (summary["data"]["spec"]["points"],)


def test_summary_json_gives_arviz_rhat_and_ess_beside_the_autocorrelation_times(tiny_run):
    run_dir, s = tiny_run["dir"], tiny_run["summary"]["sampling"]
    idata = az.from_netcdf(run_dir / "posterior.nc")
    rhat, bulk = az.rhat(idata.posterior, method="rank"), az.ess(idata.posterior, method="bulk")
    per = s["parameter_diagnostics"]
    assert set(per) == set(tiny_run["summary"]["fitted_parameters"])
    for name, d in per.items():
        assert d["rhat"] == pytest.approx(float(rhat[name]), abs=1e-4)
        assert d["ess_bulk"] == pytest.approx(float(bulk[name]), abs=1)
        assert d["autocorr_steps"] > 0 and d["ess_tail"] > 0
    assert s["rhat_max"] == max(d["rhat"] for d in per.values())
    # 200 steps of 24 walkers are far from converged: R-hat says so (the convergence rule warns about it).
    assert s["rhat_max"] > inference.RHAT_LIMIT


def _ar1(rng, phi, walkers, steps):
    """AR(1) chains x_t = phi x_(t-1) + e_t, started in their stationary distribution; shape (steps, walkers)."""
    x = np.empty((steps, walkers))
    x[0] = rng.normal(size=walkers) / np.sqrt(1 - phi**2)
    for t in range(1, steps):
        x[t] = phi * x[t - 1] + rng.normal(size=walkers)
    return x


def test_diagnostics_of_chains_with_known_answers():
    rng = np.random.default_rng(4)
    walkers, steps, phi = 8, 4000, 0.8
    chains = {"white": rng.normal(size=(steps, walkers)), "ar1": _ar1(rng, phi, walkers, steps)}
    idata = az.from_dict(posterior={k: v.T for k, v in chains.items()})
    d = inference.diagnostics(idata, np.stack(list(chains.values()), axis=-1), list(chains))
    # source: integrated autocorrelation time of an AR(1) process, tau = (1 + phi) / (1 - phi) (Sokal 1997,
    # "Monte Carlo methods in statistical mechanics", eq. 2.18 for an exponential autocorrelation; 9 for phi 0.8).
    assert d["ar1"]["autocorr_steps"] == pytest.approx((1 + phi) / (1 - phi), rel=0.15)
    assert d["white"]["autocorr_steps"] == pytest.approx(1.0, abs=0.15)
    # source: Vehtari et al. (2021, Bayesian Analysis 16, 667): ESS = S / tau, and R-hat near 1 for chains of
    # one stationary distribution.
    assert d["white"]["ess_bulk"] == pytest.approx(walkers * steps, rel=0.1)
    assert d["ar1"]["ess_bulk"] == pytest.approx(walkers * steps * (1 - phi) / (1 + phi), rel=0.2)
    assert d["white"]["rhat"] < 1.005 and d["ar1"]["rhat"] < inference.RHAT_LIMIT
    facts, warnings = inference.sampling_facts(d, steps)
    assert facts["rhat_max"] < inference.RHAT_LIMIT and warnings == []


def test_a_walker_stuck_elsewhere_raises_rhat_and_a_warning():
    rng = np.random.default_rng(5)
    x = rng.normal(size=(2000, 8))
    x[:, 0] += 1.5  # one walker sits 1.5 standard deviations away
    idata = az.from_dict(posterior={"x": x.T})
    facts, warnings = inference.sampling_facts(inference.diagnostics(idata, x[..., None], ["x"]), 2000)
    # source: Vehtari et al. (2021): R-hat > 1.01 signals chains that do not share one distribution.
    assert facts["rhat_max"] > 1.05
    assert len(warnings) == 1 and "largest" in warnings[0] and "for x" in warnings[0]


def test_a_walker_that_never_moved_is_undefined_and_warned_not_a_crash():
    # common practice, no published source: a 40-step chain with a walker stuck at its start has autocorrelation
    # times of its whole length, so one draw per walker is kept and arviz gives NaN for R-hat and ESS; the summary
    # gets nulls and a warning, where the run once stopped with "cannot convert float NaN to integer".
    x = np.random.default_rng(5).normal(size=(1, 8))
    idata = az.from_dict(posterior={"x": x.T})
    facts, warnings = inference.sampling_facts(inference.diagnostics(idata, x[..., None], ["x"]), 1)
    assert facts["rhat_max"] is None and facts["ess_bulk_min"] is None
    assert len(warnings) == 1 and "a walker never moved" in warnings[0]


def test_rhat_of_chains_as_long_as_the_convergence_rule_asks_raises_no_warning():
    # AR(1) chains 50 autocorrelation times long (the default rule): R-hat ~ sqrt(1 + 2 tau / N) = 1.02 > 1.01,
    # explained by the length alone, so no warning; the same chains with one walker shifted by 1 sd do warn.
    rng = np.random.default_rng(6)
    phi = 0.9  # tau = (1 + phi) / (1 - phi) = 19 (Sokal 1997, eq. 2.18)
    x = _ar1(rng, phi, 32, 950) * np.sqrt(1 - phi**2)
    d = inference.diagnostics(az.from_dict(posterior={"x": x.T}), x[..., None], ["x"])
    assert inference.rhat_expected(d["x"]["autocorr_steps"], 950) == pytest.approx(1.02, abs=0.006)
    assert inference.sampling_facts(d, 950)[1] == []
    x[:, 0] += 1.0
    d = inference.diagnostics(az.from_dict(posterior={"x": x.T}), x[..., None], ["x"])
    assert len(inference.sampling_facts(d, 950)[1]) == 1


@pytest.mark.parametrize("fmt", ["csv", "json", "nc"])
def test_export_writes_the_posterior_each_format_with_the_summary_medians(tiny_run, tmp_path, fmt):
    run_dir, fitted = tiny_run["dir"], tiny_run["summary"]["fitted_parameters"]
    out = tmp_path / f"posterior.{fmt}"
    assert main(["export", str(run_dir), "--format", fmt, "--out", str(out)]) == 0
    if fmt == "csv":
        with open(out, newline="") as fh:
            rows = list(csv.DictReader(fh))
        values = {n: [float(r[f"posterior/{n}"]) for r in rows] for n in fitted}
        assert {"chain", "draw", "sample_stats/lp", "derived/b.mass_earth"} <= set(rows[0])
    elif fmt == "json":
        data = json.loads(out.read_text())
        values = {n: np.ravel(data["posterior"][n]) for n in fitted}
        assert data["attrs"]["system"] == tiny_run["summary"]["system"] and "observed_data" in data
    else:
        idata = az.from_netcdf(out)
        values = {n: idata.posterior[n].values for n in fitted}
    _medians_match(values, fitted)


def test_export_of_a_folder_without_a_run_is_an_input_error(tmp_path, capsys):
    assert main(["export", str(tmp_path), "--format", "csv"]) == 2
    assert "samples.h5" in capsys.readouterr().err
