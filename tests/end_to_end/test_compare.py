"""``planetfit compare`` as a user runs it: three models of the same RVs, ranked by evidence, written three ways."""

import json

from rv_models import K_MS, PERIOD, TC, circular, eccentric, rv_data, second_planet, write_rv_model
from synthetic import planet_truth

from planetfit.cli import main


def test_compare_ranks_three_models_and_reuses_finished_runs(tmp_path, capsys):
    t, rv = rv_data(11, {"b": planet_truth(PERIOD, TC, K_MS, e=0.4, omega_deg=60.0)})
    models = {
        "circular": {"b": circular()},
        "eccentric": {"b": eccentric()},
        "two": {"b": circular(), "c": second_planet()},
    }
    configs = []
    for name, planets in models.items():
        config = write_rv_model(tmp_path / name, t, rv, planets, live_points=100, method="mcmc")
        configs.append(str(config.rename(config.with_name(f"{name}.yaml"))))
    out = tmp_path / "cmp"
    assert main(["compare", *configs, "--out", str(out), "--quiet"]) == 0
    printed = capsys.readouterr().out
    document = json.loads((out / "comparison.json").read_text())
    rows = document["models"]
    assert [r["model"] for r in rows][0] == "eccentric" and len(rows) == 3  # the data are eccentric
    assert [r["ln_evidence"] for r in rows] == sorted((r["ln_evidence"] for r in rows), reverse=True)
    assert {r["model"]: r["free_parameters"] for r in rows} == {"circular": 2, "eccentric": 4, "two": 5}
    assert rows[0]["reading"] == "best" and rows[0]["delta_ln_evidence"] == 0 and rows[0]["bayes_factor"] == 1
    assert all(r["delta_ln_evidence"] < -5 and r["reading"] == "very strong" for r in rows[1:])
    assert "Kass & Raftery" in document["scale"] and "Kass & Raftery" in printed
    table = (out / "comparison.md").read_text().splitlines()
    assert [line.split("|")[1].strip() for line in table if line.startswith("| ") and "+-" in line] == [
        r["model"] for r in rows
    ]
    tex = (out / "comparison.tex").read_text()
    body = [line.split(" & ")[0] for line in tex.splitlines() if r"\pm" in line]
    assert body == [r["model"] for r in rows]
    # Finished and unchanged: nothing is fitted again; the table is the same.
    assert main(["compare", *configs, "--out", str(out), "--quiet"]) == 0
    assert capsys.readouterr().out.count("reused") == 3
    assert json.loads((out / "comparison.json").read_text())["models"] == rows


def test_close_models_are_flagged():
    from planetfit.report.comparison import comparison_rows, comparison_warnings

    entries = [
        {"model": m, "ln_evidence": z, "ln_evidence_error": 0.3, "converged": True, "free_parameters": 2}
        for m, z in (("a", -10.0), ("b", -10.2), ("c", -20.0))
    ]
    rows = comparison_rows([dict(e, max_log_likelihood=0.0) for e in entries])
    warnings = comparison_warnings(rows)
    # combined error hypot(0.3, 0.3) = 0.42 > 0.2: a and b are not told apart; c is 10 below.
    assert len(warnings) == 1 and warnings[0].startswith("a and b differ by Delta ln Z = 0.20")
    # source: Kass & Raftery (1995, JASA 90, 773), sect. 3.2: 2 ln B of 0.4 and 20.
    assert [r["reading"] for r in rows] == ["best", "not worth more than a bare mention", "very strong"]
